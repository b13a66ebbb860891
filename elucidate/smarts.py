"""Compiled SMARTS patterns, cached; RDKit is imported only when a pattern is first needed."""

from __future__ import annotations

from functools import lru_cache
from typing import Any

from .errors import ElucidateError

__all__ = ["compiled_smarts"]


@lru_cache(maxsize=None)
def compiled_smarts(smarts: str) -> Any:
    """The RDKit query for ``smarts``; :class:`ElucidateError` if RDKit cannot read it."""
    from ._rdkit import mol_from_smarts

    pattern = mol_from_smarts(smarts)
    if pattern is None:
        raise ElucidateError(f"RDKit cannot read the SMARTS {smarts!r}")
    return pattern
