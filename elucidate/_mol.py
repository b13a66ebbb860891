"""A molecule's atoms and bonds as lists, read by index: iterating ``GetAtoms()`` or
``GetBonds()`` goes through RDKit's Python sequence wrapper and costs two to three times as
much (about 17 µs against 7 µs for eleven atoms), which counts in per-candidate scoring. Same
order as the iteration (by index). No RDKit import here: the molecule brings it."""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from ._rdkit import Atom, Bond, Mol

__all__ = ["atoms_of", "bonds_of"]


def atoms_of(mol: Mol) -> list[Atom]:
    """The atoms in index order."""
    return [mol.GetAtomWithIdx(i) for i in range(mol.GetNumAtoms())]


def bonds_of(mol: Mol) -> list[Bond]:
    """The bonds in index order."""
    return [mol.GetBondWithIdx(i) for i in range(mol.GetNumBonds())]
