"""The one domain error of elucidate.

Every problem with user input (a case file, a command-line value) or with a knowledge table is an
:class:`ElucidateError`. It is a :class:`ValueError` so callers that already handle bad values keep
working, and it carries where the problem is: the file, the 1-based line and the dotted key path.
"""

from __future__ import annotations

__all__ = ["ElucidateError", "TooLarge"]


class ElucidateError(ValueError):
    """Bad input, located by file, line and key path."""

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        line: int | None = None,
        key: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.key = key

    def in_file(self, file: str, line: int | None = None) -> ElucidateError:
        """The same error, placed in ``file`` (for checks that run after a table is loaded)."""
        return ElucidateError(self.message, file=file, line=line if line is not None else self.line, key=self.key)

    def __str__(self) -> str:
        where = ""
        if self.file is not None:
            where = self.file
            if self.line is not None:
                where += f":{self.line}"
            where += ": "
        elif self.line is not None:
            where = f"line {self.line}: "
        key = f"{self.key}: " if self.key else ""
        return f"{where}{key}{self.message}"


class TooLarge(ElucidateError):
    """A question refused because its space is above the size limit (the command line exits 4)."""
