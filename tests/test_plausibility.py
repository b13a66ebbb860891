"""The plausibility profile: each rule removes what its reason says and keeps the near misses.

Chemistry: keto-enol tautomerism, instability of gem-diols and peroxides, linear sp centres in
small rings, Bredt's rule (J. Bredt, Liebigs Ann. 437, 1, 1924) with Fawcett's S-number
(bicyclo[3.3.1]non-1-ene, S = 7, is the classic isolable limit) — common practice.
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError, parse_formula
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.plausibility import TEST_NEEDS, TESTS, bridgehead_double_bond, default_profiles, load_profiles
from elucidate.generator.selection import Selection

STABLE = {r.name: r for r in default_profiles()["stable"]}

CASES = {
    "enol": (["OC=C", "CC(O)=C(C)C"], ["Oc1ccccc1", "CC=O", "OCC=C"]),
    "ynol": (["OC#C"], ["OCC#C"]),
    "gem_diol": (["CC(O)O", "OC(O)(C)C"], ["OCCO", "CC(O)=O"]),
    "peroxide": (["COOC", "CCOO"], ["COC", "CC(=O)OC"]),
    "triple_bond_in_small_ring": (["C1#CCCCC1", "C1#CCCCCC1"], ["C1#CCCCCCC1", "CC#CC1CC1"]),
    "allene_in_small_ring": (["C1=C=CCCC1", "C1=C=CC1"], ["C=C=CC1CCC1", "C1=CCCCC1", "O=C=C1CC1"]),
    # norbornene-1 (S = 5), bicyclo[2.2.2]oct-1-ene (S = 6) removed; bicyclo[3.3.1]non-1-ene (S = 7),
    # norborn-2-ene and fused-ring double bonds kept
    "bredt": (
        ["C1=C2CCC1C2", "C1CC2=CCC1C2", "C1=C2CCC(C1)CC2", "CC(=O)c1cc2ccc1o2", "c1cc2ccc1C2"],
        [
            "C1=CC2CCC1C2",
            "C1=C2CCCCC2CCC1",
            "C1CC2CCCC(=C1)C2",
            "c1ccc2ccccc2c1",
            "c1ccc2c(c1)CC2",
            "c1cc2ccc1CCCCCCCC2",
        ],
    ),
    "fused_three_ring_alkene": (["C1=C2CC12", "O=CC1=C2CC12", "C1CC2=CC2C1"], ["C1=CC1", "C1CC2CC2C1", "C1=CC2CC2C1"]),
    "antiaromatic_three_ring": (["C1=CN1", "C1=CO1", "CC1=CS1"], ["C1CN1", "C1CO1", "C1=CC1"]),
    "hetero_three_ring_on_arene": (
        ["CC(=O)c1cccc2c1O2", "c1ccc2c(c1)N2"],
        ["c1ccc2c(c1)C2", "C1=CC2OC2C=C1", "c1ccc(C2CO2)cc1"],
    ),
    "chorded_aromatic_ring": (["CC(=O)c1c(O)c2ccc1=2"], ["c1ccc2c(c1)CC2", "c1ccc2c(c1)C2", "c1ccccc1"]),
    "monosubstituted_diazene": (["CN=N", "N=NCC1CC1=O"], ["CN=NC", "C=NN"]),
}


def test_profile_table_validates():
    default_profiles().validate()
    assert set(CASES) == set(STABLE)
    assert all(rule.reason for rule in STABLE.values())


PAIRS = [(r, s, True) for r, (pos, _) in CASES.items() for s in pos] + [
    (r, s, False) for r, (_, neg) in CASES.items() for s in neg
]


@pytest.mark.parametrize("rule,smiles,expected", PAIRS, ids=[f"{r}-{s}-{e}" for r, s, e in PAIRS])
def test_rules(rule, smiles, expected):
    mol = Chem.MolFromSmiles(smiles)
    assert STABLE[rule].matches(mol) is expected


def test_every_named_test_says_what_a_structure_it_flags_has():
    # the generator decides a rule without running it when a structure lacks these
    # (tests/test_implication.py checks them on a corpus where every rule fires)
    assert set(TEST_NEEDS) == set(TESTS)


def test_bredt_keeps_fused_ring_double_bonds():
    assert not bridgehead_double_bond(Chem.MolFromSmiles("C1CCC2=C(C1)CCCC2"))  # octahydronaphthalene


def test_profile_filter_counts_each_rule():
    removed: dict[str, int] = {}
    kept = list(
        isomer_smiles(parse_formula("C3H6O"), GeneratorOptions(selection=Selection(profile="stable")), removed=removed)
    )
    assert "CC=CO" not in kept and "C=C(C)O" not in kept  # enols
    assert "CC(C)=O" in kept
    assert removed["implausible enol"] == 2  # C=C(C)O and CC=CO; allyl alcohol is no enol
    assert len(kept) + sum(removed.values()) == 9


def test_unknown_profile_and_bad_tables(tmp_path, cli):
    res = cli("isomers", "C3H6O", "--profile", "stabel")
    assert res.code == 1 and "profiles: stable" in res.err
    bad = tmp_path / "plausibility.yaml"
    bad.write_text("profiles:\n  x:\n    - {name: a, reason: r, test: nope}\n")
    with pytest.raises(ElucidateError, match="unknown test"):
        load_profiles(bad)
