"""Where the knowledge tables live, found the same way from a checkout and from a wheel.

In a checkout the tables are the top-level ``constraints/`` folder next to the package. A wheel
ships the same files as the package data ``elucidate/_constraints`` (see ``pyproject.toml``).
``ELUCIDATE_TABLES`` may name another folder (for a lab's own reviewed copy).
"""

from __future__ import annotations

import os
from importlib import resources
from pathlib import Path

from .errors import ElucidateError

__all__ = ["tables_dir", "table_path"]

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
        f"cannot find the knowledge tables (looked in {checkout} and {packaged}); "
        f"reinstall elucidate or set {_ENV}"
    )


def table_path(name: str) -> Path:
    """The path of one table, e.g. ``table_path('elements.yaml')``."""
    path = tables_dir() / name
    if not path.is_file():
        raise ElucidateError(f"knowledge table {name!r} is missing from {path.parent}")
    return path
