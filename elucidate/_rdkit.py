"""RDKit in one place: the names the project uses and a context manager that silences its log.

Import RDKit only through this module so the rest of the code does not depend on its layout,
and so commands that never touch structures (``formulas``, ``check`` without SMARTS) start fast.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from typing import Any

__all__ = ["Chem", "Descriptors", "rdMolDescriptors", "quiet_rdkit", "mol_from_smiles", "mol_from_smarts"]

from rdkit import Chem, RDLogger  # noqa: E402
from rdkit.Chem import Descriptors, rdMolDescriptors  # noqa: E402


@contextlib.contextmanager
def quiet_rdkit() -> Iterator[None]:
    """Silence RDKit's warnings and errors on stderr for the duration of the block."""
    logger = RDLogger.logger()
    logger.setLevel(RDLogger.CRITICAL)
    try:
        yield
    finally:
        logger.setLevel(RDLogger.WARNING)


def mol_from_smiles(smiles: str) -> Any:
    """Parse SMILES quietly; ``None`` when RDKit cannot read it."""
    with quiet_rdkit():
        return Chem.MolFromSmiles(smiles)


def mol_from_smarts(smarts: str) -> Any:
    """Parse SMARTS quietly; ``None`` when RDKit cannot read it."""
    with quiet_rdkit():
        return Chem.MolFromSmarts(smarts)
