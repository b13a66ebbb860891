"""pattern_implies: sound (never claims an implication that fails) and strong enough to catch
the contradictions a chemist writes (require ketone, forbid C=O).

Expected answers are read off the SMARTS (Daylight SMARTS theory manual: an upper-case symbol is
aliphatic, lower-case aromatic, an unwritten bond single or aromatic, ``,`` or, ``;`` and, ``!``
not); the group facts (a ketone is a carbonyl compound, an alcohol has a hydroxyl) are the IUPAC
Gold Book class definitions."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st
from rdkit import Chem

from elucidate.generator.groups import default_groups
from elucidate.generator.implication import pattern_implies

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
