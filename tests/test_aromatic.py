"""The test of which structures may be aromatic (elucidate/generator/aromatic.py) against
RDKit's aromaticity model (RDKit, a reference library from the package registry; the model as
The RDKit Book states it, "The RDKit Aromaticity Model").

The test may flag a structure RDKit does not call aromatic, never miss one RDKit does: the
generator writes the unflagged ones itself, so a miss would leave two Kekulé forms of one
compound unmerged.
"""

from __future__ import annotations

import pytest
from rdkit import Chem, RDLogger

from elucidate import parse_formula
from elucidate.generator import structures, to_smiles
from elucidate.generator.aromatic import ring_may_be_aromatic, share
from elucidate.generator.writer import Template

RDLogger.DisableLog("rdApp.*")


def _aromatic(smiles: str) -> bool:
    mol = Chem.MolFromSmiles(smiles)
    assert mol is not None
    return any(atom.GetIsAromatic() for atom in mol.GetAtoms())


@pytest.mark.parametrize(
    ("smiles", "aromatic"),
    [
        # the verdicts the shares and the candidate rule are read off (aromatic.py)
        ("C=C1C=C1", False),  # methylenecyclopropene: 2 + the exocyclic carbon's share
        ("C=C1C=CC=C1", False),  # fulvene: 4 + share
        ("C=C1C=CC=CC=C1", False),  # heptafulvene: 6 + share, so the share is not 0
        ("C=C1OC=CC1=C", True),  # 3,4-dimethylenefuran: 2 + 1 + 1 + 2 shares of 1
        ("C1#CC=CC=C1", True),  # benzyne: the triple-bonded carbons give 1 each
        ("C1#CC=CC=CC=C1", False),  # cyclooctatrienyne: 8
        ("C1=C=CC=CC=1", False),  # 4 + two cumulated carbons (aromatic if each gave 1)
        ("C1=C=CC=C1", False),  # 4 + one (aromatic if it gave 2)
        ("C1=C=COC=C1", False),  # 6 + one (aromatic if it gave 0)
        # the RDKit Book's table: c(a)a 1, n(a)a 1, An(a)a 2, o(a)a 2, O=c(a)a 0, N=c(a)a 0
        ("C1=CC=CC=C1", True),
        ("C1=CC=NC=C1", True),
        ("C1=CNC=C1", True),
        ("C1=COC=C1", True),
        ("O=C1C=CC=CC=C1", True),  # tropone: 6 + 0
        ("O=C1C=CC(=O)C=C1", False),  # p-benzoquinone: 4
        ("N=C1C=CC=CC=C1", True),
        ("O=C1C=C1", True),  # cyclopropenone: 2
        ("O=C1C=CC=C1", False),  # cyclopentadienone: 4
    ],
)
def test_rdkit_verdicts_the_rule_rests_on(smiles: str, aromatic: bool) -> None:
    assert _aromatic(smiles) == aromatic


@pytest.mark.parametrize(
    ("smiles", "flagged"),
    [
        ("C1=CC=CC=C1", True),
        ("C=C1C=CC=C1", False),
        ("C=C1C=CC=CC=C1", False),
        ("O=C1C=CC(=O)C=C1", False),
        ("O=C1C=CC=CC=C1", True),
        ("C1=CC=COC=C1", False),  # oxepine: 8
        ("C1=C=CC=CC=1", False),
        ("C1=CC2=CC=C12", True),  # fused: left to RDKit
    ],
)
def test_the_rule_on_single_molecules(smiles: str, flagged: bool) -> None:
    mol = Chem.MolFromSmiles(smiles)
    Chem.Kekulize(mol, clearAromaticFlags=True)
    edges = [(b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in mol.GetBonds()]
    orders = [int(b.GetBondTypeAsDouble()) for b in mol.GetBonds()]
    ring = mol.GetRingInfo()
    on_cycle = [ring.NumBondRings(b.GetIdx()) > 0 for b in mol.GetBonds()]
    elements = [a.GetSymbol() for a in mol.GetAtoms()]
    assert ring_may_be_aromatic(mol.GetNumAtoms(), edges, on_cycle, orders, elements) == flagged


def test_shares_of_the_rdkit_book_table() -> None:
    # pyrrole in Kekulé form: N1 C2=C3 C4=C5, ring bonds all alive
    edges = [(0, 1), (1, 2), (2, 3), (3, 4), (4, 0)]
    orders = [1, 2, 1, 2, 1]
    alive = on_cycle = [True] * 5
    elements = ["N", "C", "C", "C", "C"]
    assert [share(v, edges, on_cycle, alive, orders, elements) for v in range(5)] == [2, 1, 1, 1, 1]


@pytest.mark.parametrize("formula", ["C7H5N", "C5H4N2O", "C8H6", "C6H6O2", "C5H3NO"])
def test_no_structure_rdkit_calls_aromatic_is_missed(formula: str) -> None:
    current, template = None, None
    flagged = aromatic = 0
    for s in structures(parse_formula(formula)):
        edges = tuple((a, b) for a, b, _ in s.bonds)
        if edges != current:
            current, template = edges, Template(len(s.elements), edges)
        assert template is not None
        smiles = to_smiles(s)
        is_aromatic = _aromatic(smiles)
        if template.may_be_aromatic(s.elements, s.bonds, s.hydrogens, s.valences):
            flagged += 1
            aromatic += is_aromatic
        else:
            assert not is_aromatic, smiles
    assert aromatic > 0 and flagged > aromatic
