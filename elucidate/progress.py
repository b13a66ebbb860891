"""Progress on long work: the solver says how far each stage has got, the command line draws it.

The core only calls a :data:`Progress` function, ``progress(stage, done, total)`` (``total``
None when not known beforehand); :func:`silent` ignores it. :class:`TerminalProgress` draws one
bar per stage on a terminal stream (stderr), and nothing at all when the stream is not a
terminal (piped, redirected, or captured by a test), so output on stdout is never mixed with it.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, TextIO

if TYPE_CHECKING:
    from tqdm import tqdm

__all__ = ["STAGES", "Progress", "TerminalProgress", "silent"]

#: the solver's stages, in order, as the bars name them
STAGES = ("formulas", "generation", "scoring")

#: what each stage counts
UNITS = {"formulas": " ions", "generation": " structures", "scoring": " candidates"}

Progress = Callable[[str, int, "int | None"], None]


def silent(stage: str, done: int, total: int | None) -> None:
    """A progress function that shows nothing."""
    return None


class TerminalProgress:
    """One bar per stage on ``stream`` when it is a terminal; quiet otherwise."""

    def __init__(self, stream: TextIO) -> None:
        isatty = getattr(stream, "isatty", None)
        self.enabled = bool(isatty and isatty())
        self.stream = stream
        self._stage: str | None = None
        self._bar: tqdm | None = None

    def __call__(self, stage: str, done: int, total: int | None) -> None:
        if not self.enabled:
            return
        from tqdm import tqdm

        if stage != self._stage or self._bar is None:
            self.close()
            self._stage = stage
            self._bar = tqdm(total=total, desc=f"{stage:10s}", file=self.stream, unit=UNITS.get(stage, ""), leave=True)
        bar = self._bar
        if total is not None and bar.total != total:
            bar.total = total
        bar.update(done - bar.n)

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> TerminalProgress:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
