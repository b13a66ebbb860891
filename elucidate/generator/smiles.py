"""Writing structures as RDKit molecules and canonical SMILES.

A higher valence state marked ``charge_separated`` in ``constraints/valence_states.yaml`` (N(V):
nitro groups, N-oxides) is written with its oxo bond as X+ - O-.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from .labelling import Structure
from .plans import default_valence_states

if TYPE_CHECKING:
    from .._rdkit import RWMol

__all__ = ["sanitized", "to_mol", "to_smiles"]


def to_mol(structure: Structure) -> RWMol:
    """An RDKit molecule, not yet sanitized; the oxo bond of a charge-separated state (N(V)) is
    written X+ - O-."""
    from .._rdkit import Chem

    states = default_valence_states()
    mol = Chem.RWMol()
    for sym, h in zip(structure.elements, structure.hydrogens, strict=True):
        atom = Chem.Atom(sym)
        atom.SetNoImplicit(True)
        atom.SetNumExplicitHs(h)
        mol.AddAtom(atom)
    bond_types = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    orders = {(a, b): o for a, b, o in structure.bonds}
    degree = [0] * len(structure.elements)
    for a, b, _ in structure.bonds:
        degree[a] += 1
        degree[b] += 1
    for i, label in enumerate(zip(structure.elements, structure.valences, strict=True)):
        state = states.get(label)
        if state is None or not state.charge_separated:
            continue
        for (a, b), o in sorted(orders.items()):
            other = b if a == i else a if b == i else None
            if other is not None and o == 2 and structure.elements[other] in state.partners and degree[other] == 1:
                orders[(a, b)] = 1
                mol.GetAtomWithIdx(i).SetFormalCharge(1)
                mol.GetAtomWithIdx(other).SetFormalCharge(-1)
                break
    for (a, b), o in orders.items():
        mol.AddBond(a, b, bond_types[o])
    return mol


def sanitized(structure: Structure, *, kekule: bool = False) -> RWMol:
    """The molecule sanitized by RDKit: aromaticity perceived, or left in Kekulé form."""
    from .._rdkit import Chem

    mol = to_mol(structure)
    if kekule:
        Chem.SanitizeMol(mol, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY)
    else:
        Chem.SanitizeMol(mol)
    return mol


def to_smiles(structure: Structure, *, kekule: bool = False) -> str:
    """Canonical SMILES (RDKit): aromatic by default, Kekulé form with ``kekule=True``."""
    from .._rdkit import Chem, quiet_rdkit

    with quiet_rdkit():
        return str(Chem.MolToSmiles(sanitized(structure, kekule=kekule), kekuleSmiles=kekule))
