"""pattern_implies: sound (never claims an implication that fails) and strong enough to catch
the contradictions a chemist writes (require ketone, forbid C=O).

Expected answers are read off the SMARTS (Daylight SMARTS theory manual: an upper-case symbol is
aliphatic, lower-case aromatic, an unwritten bond single or aromatic, ``,`` or, ``;`` and, ``!``
not); the group facts (a ketone is a carbonyl compound, an alcohol has a hydroxyl) are the IUPAC
Gold Book class definitions."""

from __future__ import annotations

from collections import Counter

import pytest
from hypothesis import given
from hypothesis import strategies as st
from rdkit import Chem

from elucidate import parse_formula
from elucidate.evidence.fragments import default_fragments
from elucidate.generator import structures
from elucidate.generator.groups import default_groups
from elucidate.generator.implication import (
    Features,
    PatternNeeds,
    excluded_by,
    features_of,
    pattern_implies,
    pattern_needs,
)
from elucidate.generator.plausibility import default_profiles
from elucidate.generator.selection import Selection
from elucidate.generator.smiles import sanitized

GROUPS = default_groups()


@pytest.mark.parametrize(
    ("required", "forbidden", "implied"),
    [
        ("[C&$(C=O)]", "O", False),  # the O lies inside a recursive SMARTS: not an atom of the match
        ("[C&$(C=O)]", "C", True),
        ("[C;!$(C=O)]", "C", True),
        ("[C,N]", "C", False),  # either element
        ("C=O", "[C,N]=O", False),  # alternatives in the implied pattern are not read
        ("[CH3]C", "[CH3]", True),
        ("CC", "[CH3]", False),
        ("c1ccccc1", "c", True),
        ("c1ccccc1", "c:c", False),  # unwritten ring bonds allow single or aromatic
        ("C1CC1", "C@C", False),  # ring primitives are not read
        ("C=O", "O=C", True),
        ("[C;H1,H2]=O", "[CH1]=O", False),  # formaldehyde has H2
        ("[#6]=O", "C=O", False),  # an aromatic carbon may carry the O
        ("C(=O)O", "C.O.O", True),  # disconnected: three distinct atoms
        ("C=O", "C.O.O", False),
    ],
)
def test_pattern_implication(required, forbidden, implied):
    assert pattern_implies(Chem.MolFromSmarts(required), Chem.MolFromSmarts(forbidden)) is implied


@pytest.mark.parametrize(
    ("group", "smarts", "implied"),
    [
        ("ketone", "C=O", True),
        ("ketone", "[#6]=O", True),
        ("ketone", "[OH]", False),
        ("ketone", "CC", False),  # benzophenone has no aliphatic C-C bond
        ("ester", "C(=O)O", True),
        ("aldehyde", "[CH]=O", False),  # formaldehyde
        ("alkene", "C=C", True),
        ("alkene", "[CH2]=C", False),
        ("aromatic_ring", "cc", True),
        ("aromatic_ring", "C", False),
    ],
)
def test_group_against_smarts(group, smarts, implied):
    assert pattern_implies(GROUPS[group].pattern, Chem.MolFromSmarts(smarts)) is implied


# IUPAC Gold Book: ketones, aldehydes, acids, esters, amides, acyl halides and anhydrides are
# carbonyl compounds; alcohols, phenols and carboxylic acids carry a hydroxy group
@pytest.mark.parametrize(
    ("group", "implied_group"),
    [("ketone", "carbonyl"), ("aldehyde", "carbonyl"), ("ester", "carbonyl"), ("amide", "carbonyl"),
     ("alcohol", "hydroxyl"), ("phenol", "hydroxyl"), ("carboxylic_acid", "hydroxyl"),
     ("terminal_alkyne", "alkyne")],
)  # fmt: skip
def test_group_implies_group(group, implied_group):
    assert pattern_implies(GROUPS[group].pattern, GROUPS[implied_group].pattern)


def test_the_converse_of_a_group_implication_is_not_claimed():
    # a carbonyl need not be a ketone, a hydroxyl need not be an alcohol (Gold Book classes)
    for group, implied_group in [("ketone", "carbonyl"), ("alcohol", "hydroxyl"), ("terminal_alkyne", "alkyne")]:
        assert not pattern_implies(GROUPS[implied_group].pattern, GROUPS[group].pattern)


_MOLECULES = ["CC(=O)c1ccccc1", "O=C(c1ccccc1)c1ccccc1", "C=O", "OCC=CC#C", "CC(=O)OC", "c1ccncc1", "C1CC1C=O",
              "NC(=O)C", "OC(=O)CCl", "CC(C)(C)O", "Oc1ccccc1", "C#CC(N)=O", "FC(F)(F)S(=O)(=O)O"]  # fmt: skip
_SMARTS = ["C=O", "[#6]=O", "[OH]", "CC", "cc", "c", "C", "O", "[CH3]", "[CH2]", "C=C", "C#C", "N", "[#7]",
           "C(=O)O", "[OX1]", "[CX3]=[OX1]", "c:c", "Cl", "[#6][#6]", "C-O", "O=C-N", "S=O"]  # fmt: skip


@given(st.sampled_from(_SMARTS), st.sampled_from(_SMARTS + [GROUPS[n].smarts for n in GROUPS.names]))
def test_an_implication_claimed_holds_on_every_molecule(forbidden, required):
    # soundness: whenever P => F is claimed, every molecule matching P matches F
    p, f = Chem.MolFromSmarts(required), Chem.MolFromSmarts(forbidden)
    if pattern_implies(p, f):
        for smiles in _MOLECULES:
            mol = Chem.MolFromSmiles(smiles)
            assert not mol.HasSubstructMatch(p) or mol.HasSubstructMatch(f), (required, forbidden, smiles)


# ---------------------------------------------------------------- ruled out by a group present

KETONE = "[#6][CX3](=[OX1])[#6]"  # groups.yaml's ketone


@pytest.mark.parametrize(
    ("having", "other", "atoms", "excluded"),
    [
        # read off the patterns by the SMARTS rules (module note): with one O, a ketone's O has one
        # connection (X1); a hydroxyl O has two (X2), an ether O two and no H
        (KETONE, "[OX2H1]", {6: 6, 8: 1}, True),
        (KETONE, "[OX2H0]([#6])[#6]", {6: 6, 8: 1}, True),
        (KETONE, "[OX2H1]", {6: 6, 8: 2}, False),  # a second O may be the hydroxyl's
        (KETONE, "[CX3H1]=[OX1]", {6: 6, 8: 1}, False),  # the O agrees; the carbon is not read
        (KETONE, "[CX3]=[CX3]", {6: 6, 8: 1}, False),  # an alkene needs no O
        (KETONE, "o", {6: 6, 8: 1}, True),  # aromatic against aliphatic
        ("[NX3H2][CX4]", "[NX2]=[#6]", {6: 4, 7: 1}, True),  # primary amine N against an imine N
        ("[CX3](=[OX1])[OX2H1]", "[OX2H0]", {6: 4, 8: 2}, True),  # an acid takes both O; H0 fits neither
        ("[CX3](=[OX1])[OX2H1]", "[OX1]", {6: 4, 8: 2}, False),  # ... its C=O is one
        ("[OD2]", "[OX1]", {6: 4, 8: 1}, True),  # two heavy neighbours, one connection in all
        ("[OX1]", "[OH2]", {6: 4, 8: 1}, True),  # two hydrogens, one connection
    ],
)
def test_a_group_present_rules_out_another(having, other, atoms, excluded):
    assert excluded_by(Chem.MolFromSmarts(having), Chem.MolFromSmarts(other), atoms) is excluded


@pytest.mark.parametrize("formula", ["C5H8O", "C4H8O2", "C4H9NO"])
def test_a_group_ruled_out_is_never_found_beside_the_group_present(formula):
    # soundness against RDKit's matcher on every isomer: whenever excluded_by claims that a
    # group present rules another out, no isomer matches both
    f = parse_formula(formula)
    atoms = {Chem.GetPeriodicTable().GetAtomicNumber(e): n for e, n in f.counts if n}
    patterns = {name: Chem.MolFromSmarts(GROUPS[name].smarts) for name in GROUPS.names_for(f)}
    claims = [(a, b) for a in patterns for b in patterns if a != b and excluded_by(patterns[a], patterns[b], atoms)]
    assert claims  # the test is not empty
    mols = [sanitized(s) for s in structures(f)]
    for a, b in claims:
        both = [m for m in mols if m.HasSubstructMatch(patterns[a]) and m.HasSubstructMatch(patterns[b])]
        assert not both, (formula, a, b, Chem.MolToSmiles(both[0]))


# ---------------------------------------------------------------- what a match needs


@pytest.mark.parametrize(
    ("smarts", "elements", "double", "triple", "rings", "aromatic"),
    [
        # read off the pattern by the Daylight SMARTS theory manual's rules (see the module note)
        ("[OX2H1][CX3]=[CX3]", ((6, 2), (8, 1)), True, False, 0, False),
        ("[OX2][OX2]", ((8, 2),), False, False, 0, False),
        ("[r3,r4,r5,r6,r7]#;@[r3,r4,r5,r6,r7]", (), False, True, 1, False),  # "@": a ring bond
        ("[CX2;r3,r4,r5,r6,r7](=*)=*", ((6, 1),), True, False, 1, False),  # every alternative a ring
        ("[#7X3,#8X2,#16X2]1[#6]=[#6]1", ((6, 2),), True, False, 1, False),  # a ring closure
        ("c1ccccc1", ((6, 6),), False, False, 1, True),
        ("[a;r3]@[O,N,S,o,n,s;r3]", (), False, False, 1, True),
        ("[C;!R]", ((6, 1),), False, False, 0, False),  # a negation requires nothing
        ("[R0]", (), False, False, 0, False),
        ("[C,N]=O", ((8, 1),), True, False, 0, False),  # alternatives name no element
        ("C~C", ((6, 2),), False, False, 0, False),  # any bond: no order needed
        ("[#6]=,#[#6]", ((6, 2),), False, False, 0, False),  # double or triple: neither certain
    ],
)
def test_pattern_needs(smarts, elements, double, triple, rings, aromatic):
    assert pattern_needs(Chem.MolFromSmarts(smarts)) == PatternNeeds(elements, double, triple, rings, aromatic)


def _corpus_structures():
    """Every isomer (Kekulé form, then the molecule with aromaticity perceived) of a few small
    formulas that hold aromatic rings, triple bonds, nitrogen and two oxygens."""
    for text in ("C5H6O", "C4H5N", "C6H6", "C3H4O2", "C4H4N2", "C3H3NO"):
        for s in structures(parse_formula(text)):
            yield s, sanitized(s, kekule=False)


def _features(s, mol):
    """The features as generation computes them (tasks._features), the aromatic flag from the
    molecule itself."""
    elements = Counter(a.GetAtomicNum() for a in mol.GetAtoms())
    orders = [o for _, _, o in s.bonds]
    aromatic = any(a.GetIsAromatic() for a in mol.GetAtoms())
    return Features(dict(elements), 2 in orders, 3 in orders, len(orders) - len(s.elements) + 1, aromatic)


_PATTERNS = sorted(
    set(_SMARTS)
    | {GROUPS[n].smarts for n in GROUPS.names}
    | {r.smarts for r in default_profiles()["stable"] if r.smarts is not None}
    | {r.smarts for r in default_fragments().rules}
)


def test_a_structure_that_matches_a_pattern_has_what_it_needs():
    # soundness of the shortcut: RDKit's own match is never ruled out by the needs
    corpus = list(_corpus_structures())
    assert len(corpus) > 1000
    needs = [(smarts, Chem.MolFromSmarts(smarts)) for smarts in _PATTERNS]
    needs = [(smarts, pattern, pattern_needs(pattern)) for smarts, pattern in needs]
    ruled_out = 0
    for s, mol in corpus:
        # as generation reads a structure, and as fragment prediction reads a molecule
        for features in (_features(s, mol), features_of(mol)):
            for smarts, pattern, need in needs:
                allowed = features.allows(need)
                ruled_out += not allowed
                assert allowed or not mol.HasSubstructMatch(pattern), (smarts, Chem.MolToSmiles(mol))
    assert ruled_out > len(corpus)  # the shortcut does rule out searches


@pytest.mark.parametrize(
    "selection",
    [
        Selection(profile="stable"),
        Selection(require=("ketone",), forbid=("alkyne",), profile="stable"),
        Selection(require_smarts=("[#6]#[#6]",), forbid_smarts=("[OX2][OX2]", "c1ccccc1")),
    ],
)
def test_the_finished_molecule_tests_decide_the_same_with_the_shortcuts(selection):
    compiled = selection.compile()
    for s, mol in _corpus_structures():
        assert compiled.first_failure(mol, _features(s, mol)) == compiled.first_failure(mol), Chem.MolToSmiles(mol)


def test_the_corpus_holds_a_structure_each_plausibility_rule_flags():
    # otherwise the comparison above could not catch a wrong need of a rule
    molecules = [mol for _, mol in _corpus_structures()]
    for rule in default_profiles()["stable"]:
        assert any(rule.matches(mol) for mol in molecules), rule.name
