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
    "plain_mol",
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


#: RDKit's SMILES reading without its own sanitization and hydrogen removal (:func:`plain_mol`)
def _unsanitized() -> Chem.SmilesParserParams:
    params = Chem.SmilesParserParams()
    for step in ("sanitize", "removeHs"):  # (RDKit's type stubs mistype these attributes)
        setattr(params, step, False)
    return params


_UNSANITIZED = _unsanitized()


def plain_mol(smiles: str) -> Mol:
    """The molecule of a SMILES with no hydrogen atom and no stereo written (as the generator and
    RDKit's canonical SMILES of its structures write it), read and then sanitized in full: the
    molecule RDKit's default reading gives, atoms, bonds, rings and aromaticity alike, less the
    two steps that find nothing on such a string (removing hydrogen atoms, perceiving stereo),
    about a quarter sooner (tests/test_rdkit.py compares both on every isomer of a formula).
    ``ValueError`` when RDKit cannot read it or its valences are wrong."""
    mol: Mol | None = Chem.MolFromSmiles(smiles, _UNSANITIZED)
    if mol is None:
        raise ValueError(f"RDKit cannot read the SMILES {smiles!r}")
    Chem.SanitizeMol(mol)
    return mol


def mol_from_smarts(smarts: str) -> Mol | None:
    """Parse SMARTS quietly; ``None`` when RDKit cannot read it."""
    with quiet_rdkit():
        mol: Mol | None = Chem.MolFromSmarts(smarts)
    return mol
