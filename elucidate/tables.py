"""Where the knowledge tables live, and the one way a loaded table is validated.

In a checkout the tables are the top-level ``constraints/`` folder next to the package. A wheel
ships the same files as the package data ``elucidate/_constraints`` (see ``pyproject.toml``).
``ELUCIDATE_TABLES`` may name another folder (for a lab's own reviewed copy).
"""

from __future__ import annotations

import os
from collections.abc import Callable
from importlib import resources
from pathlib import Path
from typing import Protocol, TypeVar

from .errors import ElucidateError
from .yamlnodes import Located

__all__ = ["Validating", "table_path", "tables_dir", "validated"]

_ENV = "ELUCIDATE_TABLES"


def tables_dir() -> Path:
    """The folder holding the knowledge tables."""
    override = os.environ.get(_ENV)
    if override:
        path = Path(override)
        if not path.is_dir():
            raise ElucidateError(f"{_ENV}={override!r} is not a folder")
        return path
    checkout = Path(__file__).resolve().parent.parent / "constraints"
    if (checkout / "elements.yaml").is_file():
        return checkout
    try:
        packaged = Path(str(resources.files("elucidate") / "_constraints"))
    except (ModuleNotFoundError, TypeError) as exc:  # pragma: no cover - broken install
        raise ElucidateError("cannot locate the knowledge tables") from exc
    if (packaged / "elements.yaml").is_file():
        return packaged
    raise ElucidateError(
        f"cannot find the knowledge tables (looked in {checkout} and {packaged}); reinstall elucidate or set {_ENV}"
    )


def table_path(name: str) -> Path:
    """The path of one table, e.g. ``table_path('elements.yaml')``."""
    path = tables_dir() / name
    if not path.is_file():
        raise ElucidateError(f"knowledge table {name!r} is missing from {path.parent}")
    return path


class Validating(Protocol):
    def validate(self) -> None: ...


T = TypeVar("T", bound=Validating)


def validated(table: T, root: Located, *, check: Callable[[], None] | None = None) -> T:
    """``table`` after its ``validate()`` (or ``check``, a call of it with arguments); an error it
    raises is placed in the table's file, on the line of the deepest key of its key path that
    the file has."""
    try:
        (check or table.validate)()
    except ElucidateError as exc:
        found = root.find(exc.key) if exc.key else None
        raise exc.in_file(root.file, found.line if found is not None else exc.line) from exc
    return table
