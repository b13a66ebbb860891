"""Compiled SMARTS patterns, cached; RDKit is imported only when a pattern is first needed."""

from __future__ import annotations

from functools import cache
from typing import TYPE_CHECKING

from .errors import ElucidateError

if TYPE_CHECKING:
    from ._rdkit import Mol

__all__ = ["compiled_smarts"]


@cache
def compiled_smarts(smarts: str) -> Mol:
    """The RDKit query for ``smarts``; :class:`ElucidateError` if RDKit cannot read it."""
    from ._rdkit import mol_from_smarts

    pattern = mol_from_smarts(smarts)
    if pattern is None:
        raise ElucidateError(f"RDKit cannot read the SMARTS {smarts!r}")
    return pattern
