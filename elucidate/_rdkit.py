"""RDKit in one place: the names the project uses, type aliases, and a context manager that
silences RDKit's log.

Import RDKit only through this module so the rest of the code does not depend on its layout,
and so commands that never touch structures (``formulas``, ``check`` without SMARTS) start fast:
other modules import it inside the functions that need it, or under ``TYPE_CHECKING`` for the
aliases.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from typing import TypeAlias

from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors, rdDepictor, rdMolDescriptors
from rdkit.Chem.Draw import rdMolDraw2D

__all__ = [
    "Atom",
    "Bond",
    "BondType",
    "Chem",
    "Descriptors",
    "Mol",
    "RWMol",
    "mol_from_smarts",
    "mol_from_smiles",
    "quiet_rdkit",
    "rdDepictor",
    "rdMolDescriptors",
    "rdMolDraw2D",
]

#: a molecule (aromaticity perceived unless said otherwise, hydrogens implicit)
Mol: TypeAlias = Chem.Mol
#: an editable molecule
RWMol: TypeAlias = Chem.RWMol
Atom: TypeAlias = Chem.Atom
Bond: TypeAlias = Chem.Bond
BondType: TypeAlias = Chem.BondType


@contextlib.contextmanager
def quiet_rdkit() -> Iterator[None]:
    """Silence RDKit's warnings and errors on stderr for the duration of the block."""
    logger = RDLogger.logger()
    logger.setLevel(RDLogger.CRITICAL)
    try:
        yield
    finally:
        logger.setLevel(RDLogger.WARNING)


def mol_from_smiles(smiles: str) -> Mol | None:
    """Parse SMILES quietly; ``None`` when RDKit cannot read it."""
    with quiet_rdkit():
        mol: Mol | None = Chem.MolFromSmiles(smiles)
    return mol


def mol_from_smarts(smarts: str) -> Mol | None:
    """Parse SMARTS quietly; ``None`` when RDKit cannot read it."""
    with quiet_rdkit():
        mol: Mol | None = Chem.MolFromSmarts(smarts)
    return mol
