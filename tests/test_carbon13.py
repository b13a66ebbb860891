"""13C signal counts from symmetry classes: known signal counts of named compounds (common
practice: the counts of their routine proton-decoupled 13C spectra)."""

from __future__ import annotations

from collections import Counter

import pytest
from rdkit import Chem

from elucidate.evidence.carbon13 import carbon_classes

COUNTS = [
    ("Cc1ccccc1", 5, "toluene"),
    ("Cc1ccc(C)cc1", 3, "p-xylene"),
    ("Cc1cc(C)cc(C)c1", 3, "mesitylene"),
    ("c1ccc2ccccc2c1", 3, "naphthalene"),
    ("CC(C)=O", 2, "acetone"),
    ("O=C1CCCCC1", 4, "cyclohexanone"),
    ("CCOCC", 2, "diethyl ether"),
    ("CCc1ccccc1", 6, "ethylbenzene"),
    ("C=C(C)C", 3, "isobutylene: the two methyls are equivalent"),
    ("CC=C(C)C", 5, "2-methylbut-2-ene: the two C2 methyls are cis and trans to C4"),
    ("CCC(CC)=CC", 7, "3-ethylpent-2-ene: the two ethyls differ"),
    ("CC(C)=C(C)C", 2, "2,3-dimethylbut-2-ene"),
    ("CC(=O)c1ccccc1", 6, "acetophenone"),
    ("CC(C)(C)O", 2, "tert-butanol"),
]


@pytest.mark.parametrize("smiles,expected,name", COUNTS, ids=[c[2].split(":")[0] for c in COUNTS])
def test_signal_counts(smiles, expected, name):
    assert len(carbon_classes(Chem.MolFromSmiles(smiles))) == expected


def test_multiplicities_from_hydrogen_counts():
    kinds = Counter(k for _, k, _ in carbon_classes(Chem.MolFromSmiles("CC(=O)c1ccccc1")))
    assert kinds == {"CH3": 1, "C": 2, "CH": 3}


def test_class_sizes_add_up_to_the_carbon_count():
    mol = Chem.MolFromSmiles("CC=C(C)CC(C)(C)c1ccccc1")
    assert sum(n for _, _, n in carbon_classes(mol)) == 14


# Spectra that tell identical groups apart (common practice: the signal counts of their routine
# 13C spectra; counts from memory)
SPLIT_COUNTS = [
    ("CC(O)C(C)C", 5, "3-methylbutan-2-ol: the isopropyl methyls beside the stereocentre differ"),
    ("CC(C)CC(C)C", 3, "2,4-dimethylpentane: no stereocentre, the four methyls alike"),
    ("CC(C)=CCC(C)=O", 7, "5-methylhex-4-en-2-one: the =C(CH3)2 methyls differ"),
    ("CC1=CCC(C(C)=C)CC1", 10, "limonene"),
    ("CC1(C)C2CCC1(C)C(=O)C2", 10, "camphor: the bridge methyls differ"),
]


# Classes the graph's symmetry gives (common practice: equivalent carbons by the molecule's
# symmetry), where a ranking that only refines neighbour invariants lumps ring and chain atoms
GRAPH_COUNTS = [
    ("C1C(C1)CCC1CC1", 3, "1,2-dicyclopropylethane: CH, ring CH2, chain CH2"),
    ("C1CC1CCCC1CC1", 4, "1,3-dicyclopropylpropane: CH, ring CH2, two chain CH2"),
    ("C1CC1C1CC1", 2, "bicyclopropyl: CH, CH2"),
]


@pytest.mark.parametrize(
    "smiles,expected,name", SPLIT_COUNTS + GRAPH_COUNTS, ids=[c[2].split(":")[0] for c in SPLIT_COUNTS + GRAPH_COUNTS]
)
def test_split_and_graph_signal_counts(smiles, expected, name):
    assert len(carbon_classes(Chem.MolFromSmiles(smiles))) == expected


def _orbits(mol):
    """The automorphism orbits of the atoms, from every match of the molecule onto itself."""
    parent = list(range(mol.GetNumAtoms()))

    def find(x):
        while parent[x] != x:
            x = parent[x]
        return x

    for match in mol.GetSubstructMatches(mol, uniquify=False, useChirality=False, maxMatches=100000):
        for i, j in enumerate(match):
            a, b = find(i), find(j)
            if a != b:
                parent[a] = b
    return [find(i) for i in range(mol.GetNumAtoms())]


@pytest.mark.parametrize("formula", ["C8H14", "C7H12O"])
def test_graph_ranks_are_the_automorphism_orbits(formula):
    """Self-consistency on every isomer: two atoms share a graph rank exactly when a match of
    the molecule onto itself maps one onto the other."""
    from elucidate import parse_formula
    from elucidate.evidence.carbon13 import graph_ranks
    from elucidate.generator import isomer_smiles

    lumped = 0
    for smiles in isomer_smiles(parse_formula(formula)):
        mol = Chem.MolFromSmiles(smiles)
        ranks, orbits = graph_ranks(mol), _orbits(mol)
        pairs = [(i, j) for i in range(len(ranks)) for j in range(i)]
        assert all((ranks[i] == ranks[j]) == (orbits[i] == orbits[j]) for i, j in pairs), smiles
        plain = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
        lumped += len(set(plain)) < len(set(ranks))
    if formula == "C8H14":
        assert lumped >= 1  # 1,2-dicyclopropylethane is among them


def _reference_ranks(mol):
    """symmetry_ranks read the plain way, bond by bond and atom by atom (the fast path searches
    SMARTS instead): the reference the corpus test compares it with."""
    from elucidate.evidence.carbon13 import _split_amide_nitrogen, graph_ranks

    def alkene_split(work, ranks, done):
        for bond in work.GetBonds():
            if bond.GetBondType() != Chem.BondType.DOUBLE or bond.GetIsAromatic():
                continue
            a, b = bond.GetBeginAtom(), bond.GetEndAtom()
            if a.GetAtomicNum() != 6 or b.GetAtomicNum() != 6:
                continue
            for x, y in ((a, b), (b, a)):
                subs = [n for n in x.GetNeighbors() if n.GetIdx() != y.GetIdx()]
                if len(subs) != 2 or x.GetTotalNumHs() or ranks[subs[0].GetIdx()] != ranks[subs[1].GetIdx()]:
                    continue
                others = [ranks[n.GetIdx()] for n in y.GetNeighbors() if n.GetIdx() != x.GetIdx()]
                others += [-1] * y.GetTotalNumHs()
                if len(others) == 2 and others[0] != others[1]:
                    first = min(subs[0].GetIdx(), subs[1].GetIdx())
                    if first not in done:
                        return first
        return None

    gate = Chem.MolFromSmarts("[CX3;H0](-[#6,#7,#8,#9,#15,#16,#17,#35,#53])(-[#6,#7,#8,#9,#15,#16,#17,#35,#53])=[C]")
    work = mol
    if mol.HasSubstructMatch(gate):
        done = set()
        while (first := alkene_split(work, graph_ranks(work), done)) is not None:
            done.add(first)
            work = Chem.RWMol(work) if work is mol else work
            work.GetAtomWithIdx(first).SetIsotope(work.GetAtomWithIdx(first).GetIsotope() + 1000)
    work = _split_amide_nitrogen(work)
    ranks = graph_ranks(work)
    final = work
    for atom in work.GetAtoms():
        if atom.GetAtomicNum() != 6 or atom.GetIsAromatic() or atom.GetDegree() + atom.GetTotalNumHs() != 4:
            continue
        groups = {}
        for nb in atom.GetNeighbors():
            if not work.GetBondBetweenAtoms(atom.GetIdx(), nb.GetIdx()).IsInRing():
                groups.setdefault(ranks[nb.GetIdx()], []).append(nb.GetIdx())
        for members in groups.values():
            if len(members) != 2:
                continue
            probe = Chem.RWMol(final)
            first = min(members)
            probe.GetAtomWithIdx(first).SetIsotope(probe.GetAtomWithIdx(first).GetIsotope() + 2000)
            centres = [
                s.centeredOn for s in Chem.FindPotentialStereo(probe) if s.type == Chem.StereoType.Atom_Tetrahedral
            ]
            if atom.GetIdx() in centres and len(centres) >= 2:
                final = probe
    return graph_ranks(final)


@pytest.mark.parametrize("formula", ["C7H14O", "C7H12O", "C8H14", "C6H13NO", "C6H8O2"])
def test_symmetry_ranks_equal_the_plain_reading_on_every_isomer(formula):
    """The fast splits (SMARTS searches) against the plain bond-by-bond reading, on every
    isomer of the formula; the corpus holds both kinds of split (checked)."""
    from elucidate import parse_formula
    from elucidate.evidence.carbon13 import graph_ranks, symmetry_ranks
    from elucidate.generator import isomer_smiles

    split = 0
    for smiles in isomer_smiles(parse_formula(formula)):
        mol = Chem.MolFromSmiles(smiles)
        expected = _reference_ranks(mol)
        assert symmetry_ranks(mol) == expected, smiles
        split += len(set(expected)) != len(set(graph_ranks(mol)))
    assert split > 0
