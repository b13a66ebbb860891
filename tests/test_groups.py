"""The group vocabulary: each SMARTS on reference molecules, positives and near-miss negatives.

Class definitions follow the IUPAC Gold Book entries named in constraints/groups.yaml; the
boundaries tested here (an ester is not an ether plus a ketone, an acid is not an alcohol, a
phenol is not an enol, ...) are common practice.
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError
from elucidate.generator.groups import default_groups, load_groups

GROUPS = default_groups()

CASES = {
    # group: (molecules that have it, near misses that do not)
    "alkene": (["C=CC", "CC=C(C)C", "C=CC(C)=O"], ["c1ccccc1", "C=C=C", "CC=O"]),
    "alkyne": (["C#C", "CC#CC"], ["CC#N", "C=C"]),
    "terminal_alkyne": (["C#CC", "C#C"], ["CC#CC"]),
    "aromatic_ring": (["c1ccccc1", "Cc1ccccc1", "c1ccc2ccccc2c1"], ["C1=CCCC=C1", "c1ccncc1", "c1ccoc1"]),
    "carbonyl": (["CC=O", "CC(C)=O", "CC(=O)O", "CC(=O)N", "C=C=O"], ["CCO", "COC", "CC=N"]),
    "aldehyde": (["CC=O", "C=O", "O=Cc1ccccc1"], ["CC(C)=O", "OC=O", "NC=O", "COC=O"]),
    "ketone": (["CC(C)=O", "O=C1CCCCC1", "CC(=O)c1ccccc1"], ["CC=O", "CC(=O)OC", "CC(N)=O", "CC(=O)O"]),
    "carboxylic_acid": (["CC(=O)O", "OC(=O)c1ccccc1", "OC=O"], ["CC(=O)OC", "CCO", "CC(=O)OC(C)=O"]),
    "ester": (
        ["CC(=O)OC", "COC=O", "O=C1CCCO1", "COC(=O)c1ccccc1"],
        ["CC(=O)O", "CC(=O)OC(C)=O", "COC(=O)OC", "CC(C)=O", "COCC(C)=O"],
    ),
    "lactone": (["O=C1CCCO1", "O=C1CCO1"], ["CC(=O)OC", "O=C1CCCC1"]),
    "amide": (["CC(N)=O", "CN(C)C=O", "O=C1CCCN1", "NC(N)=O"], ["CC(C)=O", "CCN", "CC(=N)C"]),
    "acid_chloride": (["CC(=O)Cl"], ["CCCl", "ClC1=CC=CC1"]),
    "anhydride": (["CC(=O)OC(C)=O", "O=C1CCC(=O)O1"], ["CC(=O)OC", "CC(=O)O"]),
    "alcohol": (["CCO", "CC(C)(C)O", "OC1CCCCC1"], ["CC(=O)O", "Oc1ccccc1", "OC=C", "COC"]),
    "phenol": (["Oc1ccccc1", "Cc1ccc(O)cc1"], ["OC1=CCCC=C1", "OCc1ccccc1", "COc1ccccc1"]),
    "hydroxyl": (["CCO", "Oc1ccccc1", "CC(=O)O", "OC=C", "CC=NO"], ["COC", "CC=O", "CC(=O)OC"]),
    "ether": (["COC", "CCOCC", "COc1ccccc1", "C1CCOC1"], ["CC(=O)OC", "c1ccoc1", "CCO", "CC(=O)OC(C)=O"]),
    "primary_amine": (["CCN", "Nc1ccccc1"], ["CC(N)=O", "CNC", "NN"]),
    "secondary_amine": (["CNC", "C1CCNC1"], ["CN(C)C", "c1cc[nH]c1", "CNC(C)=O"]),
    "tertiary_amine": (["CN(C)C", "CN1CCCC1"], ["CNC", "CN(C)C=O", "C[N+](C)(C)[O-]"]),
    "nitrile": (["CC#N", "N#Cc1ccccc1"], ["C#C", "[C-]#[N+]C"]),
    "nitro": (["C[N+](=O)[O-]", "O=[N+]([O-])c1ccccc1"], ["CON=O", "CN=O"]),
    "imine": (["CC=N", "CC(C)=NC", "CC=NO"], ["CC#N", "c1ccncc1", "CC(N)=O"]),
    "thiol": (["CCS", "Sc1ccccc1"], ["CSC", "CC(=O)S"]),
    "sulfide": (["CSC", "C1CCSC1"], ["CCS", "c1ccsc1", "CS(C)=O"]),
    "sulfoxide": (["CS(C)=O"], ["CSC", "CS(C)(=O)=O"]),
    "sulfone": (["CS(C)(=O)=O"], ["CS(C)=O", "CS(=O)(=O)O"]),
    "alkyl_halide": (["CCCl", "CBr", "FC(F)(F)C"], ["Clc1ccccc1", "CC(=O)Cl", "C=CCl"]),
    "aryl_halide": (["Clc1ccccc1", "Brc1ccccc1"], ["CCCl", "ClCc1ccccc1"]),
}


def test_vocabulary_validates_and_has_the_stable_names():
    GROUPS.validate()
    assert set(CASES) <= set(GROUPS.names)
    for name in GROUPS.names:
        assert GROUPS[name].definition and GROUPS[name].source


PAIRS = [(g, smi, True) for g, (pos, _) in CASES.items() for smi in pos] + [
    (g, smi, False) for g, (_, neg) in CASES.items() for smi in neg
]


@pytest.mark.parametrize("group,smiles,expected", PAIRS, ids=[f"{g}-{s}-{e}" for g, s, e in PAIRS])
def test_group_patterns(group, smiles, expected):
    mol = Chem.MolFromSmiles(smiles)
    assert mol is not None
    assert mol.HasSubstructMatch(GROUPS[group].pattern) is expected


def test_unknown_group_suggests_the_near_name():
    with pytest.raises(ElucidateError, match="did you mean 'ketone'"):
        GROUPS["ketne"]


def test_broken_smarts_names_file_line_and_key(tmp_path):
    bad = tmp_path / "groups.yaml"
    bad.write_text(
        "groups:\n  ok_group:\n    smarts: 'C=O'\n    definition: d\n    source: s\n"
        "  broken:\n    smarts: '[C;=O'\n    definition: d\n    source: s\n"
    )
    with pytest.raises(ElucidateError) as info:
        load_groups(bad)
    assert info.value.file == str(bad) and info.value.key == "groups.broken.smarts" and info.value.line == 7


def _labelled_skeleton(mol):
    """Heavy atoms with element labels, all bonds single, no hydrogens: what the generator sees
    before bond orders are chosen."""
    rw = Chem.RWMol()
    for atom in mol.GetAtoms():
        a = Chem.Atom(atom.GetSymbol())
        a.SetNoImplicit(True)
        rw.AddAtom(a)
    for bond in mol.GetBonds():
        rw.AddBond(bond.GetBeginAtomIdx(), bond.GetEndAtomIdx(), Chem.BondType.SINGLE)
    rw.UpdatePropertyCache(strict=False)
    return rw


SKELETAL = [name for name in GROUPS.names if GROUPS[name].skeleton is not None]


@pytest.fixture(scope="session")
def isomer_corpus():
    from elucidate import parse_formula
    from elucidate.generator import isomer_smiles

    smiles = []
    for formula in ("C7H6O", "C4H7NO", "C4H6O2", "C3H5NO"):
        smiles += list(isomer_smiles(parse_formula(formula)))
    return tuple(smiles)


@pytest.mark.parametrize("group", SKELETAL)
def test_skeleton_condition_is_implied_by_the_group(group, isomer_corpus):
    # every molecule with the group must pass the group's skeleton condition: reference
    # positives plus every isomer of a few formulas that carries the group
    molecules = [Chem.MolFromSmiles(s) for s in CASES.get(group, ([], []))[0] + list(isomer_corpus)]
    hits = [m for m in molecules if m.HasSubstructMatch(GROUPS[group].pattern)]
    assert hits
    for mol in hits:
        assert _labelled_skeleton(mol).HasSubstructMatch(GROUPS[group].skeleton_pattern), Chem.MolToSmiles(mol)


# ------------------------------------------------ conditions on the generator's multigraph


@pytest.fixture(scope="session")
def structure_corpus():
    """Every multigraph (Kekulé forms apart, all valence states) of formulas that reach each
    conditioned group — including N(V) and S(IV)/S(VI) states, fused and exocyclic π systems —
    with its sanitized molecule (atom order kept, so aromaticity flags index the multigraph)."""
    from elucidate import parse_formula
    from elucidate.generator import structures
    from elucidate.generator.smiles import sanitized

    out = []
    for formula in (
        "C7H6O",
        "C8H8",
        "C7H8",
        "C6H4O2",
        "C4H7NO",
        "C4H6O2",
        "C3H5NO",
        "C4H4O2",
        "C4H4O3",
        "C3H3N",
        "C3H3ClO",
        "C2H3NO2",
        "C3H5NO2",
        "CH3NO2",
        "C2H5NO2",
        "C3H7NO2",
        "C2H6O2S",
        "C3H6OS",
    ):
        for s in structures(parse_formula(formula)):
            out.append((s, sanitized(s, kekule=False)))
    return tuple(out)


def _multigraph(structure):
    """The labelled skeleton with the multigraph's bond orders, nothing perceived: what the
    generator tests a `kekule` condition on."""
    rw = Chem.RWMol()
    for sym in structure.elements:
        a = Chem.Atom(sym)
        a.SetNoImplicit(True)
        rw.AddAtom(a)
    types = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    for a, b, o in structure.bonds:
        rw.AddBond(a, b, types[o])
    rw.UpdatePropertyCache(strict=False)
    return rw


def _pi_by_class(structure, mol):
    counts = dict.fromkeys(("aromatic", "aliphatic", "aliphatic_cc", "aliphatic_cx", "carbon", "hetero"), 0)
    for a, b, o in structure.bonds:
        ends = [mol.GetAtomWithIdx(a), mol.GetAtomWithIdx(b)]
        carbon = [x for x in ends if x.GetAtomicNum() == 6]
        if not carbon:
            counts["hetero"] += o - 1
            continue
        counts["carbon"] += o - 1
        if any(x.GetIsAromatic() for x in carbon):
            counts["aromatic"] += o - 1
        elif not any(x.GetIsAromatic() for x in ends):
            counts["aliphatic"] += o - 1
            counts["aliphatic_cc" if len(carbon) == 2 else "aliphatic_cx"] += o - 1
    return counts


KEKULE = [name for name in GROUPS.names if GROUPS[name].kekule is not None]
PI = [name for name in GROUPS.names if GROUPS[name].pi_bonds is not None]


@pytest.mark.slow
@pytest.mark.parametrize("group", KEKULE)
def test_kekule_condition_is_implied_by_the_group(group, structure_corpus):
    # the condition is tested on the generator's own multigraphs, so what it skips is exactly
    # what would have failed the group's SMARTS afterwards
    hits = [(s, m) for s, m in structure_corpus if m.HasSubstructMatch(GROUPS[group].pattern)]
    assert len(hits) >= 3
    for s, _ in hits:
        graph = _multigraph(s)
        assert graph.HasSubstructMatch(GROUPS[group].kekule_pattern), s
        assert graph.HasSubstructMatch(GROUPS[group].skeleton_pattern), s


@pytest.mark.slow
@pytest.mark.parametrize("group", PI)
def test_pi_bond_bound_is_implied_by_the_group(group, structure_corpus):
    at_least, among = GROUPS[group].pi_bonds
    hits = [(s, m) for s, m in structure_corpus if m.HasSubstructMatch(GROUPS[group].pattern)]
    assert hits
    for s, m in hits:
        assert _pi_by_class(s, m)[among] >= at_least, s


@pytest.mark.parametrize(
    "required,oxo,bound",
    [
        ((), 0, 0),
        ((), 2, 2),  # two N(V) atoms: two oxo bonds
        (("aromatic_ring", "ketone"), 0, 4),  # disjoint classes add up
        (("ketone", "ester"), 0, 1),  # one class: the larger bound only (a keto ester may share nothing, but need not)
        (("ketone", "alkene"), 0, 2),  # C=O and C=C: disjoint parts of `aliphatic` add up
        (("nitrile", "alkyne"), 0, 4),  # C#N and C#C
        (("alkene", "alkyne"), 0, 2),  # one part: the larger bound only
        (("aromatic_ring", "ketone", "alkene"), 0, 5),
        (("aromatic_ring", "carbonyl"), 0, 3),  # `carbon` overlaps `aromatic`
        (("alkyne", "carbonyl"), 0, 2),
        (("nitro", "alkene"), 1, 3),  # the nitro group's N=O are its oxo bonds: not counted twice
        (("sulfone",), 0, 2),
        (("phenol",), 0, 0),  # no bound declared
    ],
)
def test_min_pi_bonds_combines_classes(required, oxo, bound):
    from elucidate.generator.groups import min_pi_bonds

    assert min_pi_bonds(required, GROUPS, oxo=oxo) == bound


@pytest.mark.parametrize(
    "group,needs",
    [
        ("ketone", {6: 3, 8: 1}),
        ("ester", {6: 2, 8: 2}),
        ("amide", {6: 1, 7: 1, 8: 1}),
        ("aromatic_ring", {6: 6}),
        ("hydroxyl", {8: 1}),
    ],
)
def test_elements_a_group_needs(group, needs):
    # read from the skeleton condition: one atom per single-element bracket atom
    assert GROUPS[group].elements == needs


@pytest.mark.parametrize("group", GROUPS.names)
def test_element_needs_are_met_by_every_molecule_with_the_group(group, isomer_corpus):
    # the element counts a group is said to need (used to skip formulas that cannot hold it)
    # are a lower bound on every molecule that matches its SMARTS: reference positives and the
    # isomer corpus, counted by RDKit
    need = GROUPS[group].elements
    molecules = [Chem.MolFromSmiles(s) for s in CASES.get(group, ([], []))[0] + list(isomer_corpus)]
    for mol in (m for m in molecules if m.HasSubstructMatch(GROUPS[group].pattern)):
        have = {}
        for atom in mol.GetAtoms():
            have[atom.GetAtomicNum()] = have.get(atom.GetAtomicNum(), 0) + 1
        assert all(have.get(z, 0) >= n for z, n in need.items()), Chem.MolToSmiles(mol)


def test_groups_ruled_out_by_a_formula_never_match_its_molecules(isomer_corpus):
    # names_for(formula) leaves out the groups whose atoms need elements the formula lacks; the
    # solver then never tests them, so each left-out group must match no molecule of that
    # formula (reference positives of every group and the isomer corpus, matched by RDKit)
    from rdkit.Chem import rdMolDescriptors

    from elucidate import parse_formula

    smiles = [s for positives, _ in CASES.values() for s in positives] + list(isomer_corpus)
    left_out = 0
    for text in smiles:
        mol = Chem.MolFromSmiles(text)
        formula = parse_formula(rdMolDescriptors.CalcMolFormula(mol))
        kept = set(GROUPS.names_for(formula))
        for name in GROUPS.names:
            if name not in kept:
                left_out += 1
                assert not mol.HasSubstructMatch(GROUPS[name].pattern), (name, text)
    assert left_out > 0


def test_present_equals_matching_every_group(isomer_corpus):
    # GroupTable.present skips a group whose match needs more atoms of an element than the
    # formula has, or whose pattern implies a group not found; it must name exactly the groups
    # RDKit matches one by one (every reference molecule, near misses and the isomer corpus)
    from rdkit.Chem import rdMolDescriptors

    from elucidate import parse_formula
    from elucidate.generator.groups import _search_plan

    smiles = [s for pair in CASES.values() for side in pair for s in side] + list(isomer_corpus)
    skipped_by_implication = 0
    for text in smiles:
        mol = Chem.MolFromSmiles(text)
        formula = parse_formula(rdMolDescriptors.CalcMolFormula(mol))
        expected = frozenset(name for name in GROUPS.names if mol.HasSubstructMatch(GROUPS[name].pattern))
        found = GROUPS.present(mol, formula)
        assert found == expected, text
        plan = _search_plan(GROUPS._smarts_by_name, formula)
        skipped_by_implication += sum(1 for _, _, implied in plan if not implied <= found)
    assert skipped_by_implication > 1000  # the shortcut is taken, not only correct


def test_present_searches_a_group_after_the_groups_it_implies():
    # ketone and aldehyde imply carbonyl, alcohol and phenol imply hydroxyl, terminal alkyne
    # implies alkyne (their SMARTS in constraints/groups.yaml); ester needs two O
    from elucidate import parse_formula
    from elucidate.generator.groups import _search_plan

    plan = {name: implied for name, _, implied in _search_plan(GROUPS._smarts_by_name, parse_formula("C10H14O"))}
    assert {"carbonyl"} <= plan["ketone"] and {"carbonyl"} <= plan["aldehyde"]
    assert {"hydroxyl"} <= plan["alcohol"] and {"alkyne"} <= plan["terminal_alkyne"]
    assert "ester" not in plan
    assert "ester" in {name for name, _, _ in _search_plan(GROUPS._smarts_by_name, parse_formula("C4H8O2"))}


@pytest.mark.slow
@pytest.mark.parametrize("group", KEKULE)
def test_kekule_condition_read_off_the_bond_orders_equals_rdkit(group, structure_corpus):
    # the generator matches a kekule condition with its bond symbols relaxed once per labelled
    # skeleton and then reads each multigraph's orders (labelling.SkeletonTest.kekule_ok); RDKit
    # matching the condition itself on each multigraph (from the package registry) is the reference
    from elucidate.generator.labelling import SkeletonTest, _relaxed

    g = GROUPS[group]
    patterns = ((g.shape_pattern, g.skeleton_pattern, g.kekule_pattern),)
    relaxed = _relaxed(g.kekule_pattern) is not None
    # only a condition with a recursive query other than "carries a multiple bond" or "carries
    # none" needs RDKit per multigraph
    assert relaxed == ("$(" not in g.kekule.replace("$(*=,#*)", "").replace(";!$(*=*);!$(*#*)", ""))
    outcomes = []
    for s, _ in structure_corpus[::3]:  # every third structure: the same formulas, a third of the time
        labels = sorted(set(s.elements))
        test = SkeletonTest(patterns, [(sym, 0) for sym in labels])
        # as the generator asks: the orders only of a labelled skeleton that meets the condition
        if not test.bare_ok(len(s.elements), tuple((a, b) for a, b, _ in s.bonds)):
            continue
        if not test.labelled_ok([labels.index(sym) for sym in s.elements]):
            continue
        expected = _multigraph(s).HasSubstructMatch(g.kekule_pattern)
        assert test.kekule_ok([o for _, _, o in s.bonds]) == expected, s
        outcomes.append(expected)
    # the comparison ran on multigraphs that match (and, for most groups, on some that do not)
    assert outcomes.count(True) >= 3
