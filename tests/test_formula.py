"""Formulas: parsing, Hill order, masses and DBE.

Monoisotopic masses are checked against RDKit's Descriptors.ExactMolWt (a general-purpose
reference library) and against sums of AME2020 isotope masses written out here by hand.
"""

from __future__ import annotations

from fractions import Fraction

import pytest

from elucidate import ElucidateError, Formula, parse_formula


@pytest.mark.parametrize(
    "smiles,formula",
    [
        ("c1ccccc1", "C6H6"),
        ("CC(=O)c1ccccc1", "C8H8O"),
        ("Clc1ccccc1", "C6H5Cl"),
        ("Brc1ccccc1", "C6H5Br"),
        ("ClCCl", "CH2Cl2"),
        ("c1ccsc1", "C4H4S"),
        ("CN(C)C=O", "C3H7NO"),
        ("O=[N+]([O-])c1ccccc1", "C6H5NO2"),
        ("C[Si](C)(C)OC", "C4H12OSi"),
        ("FC(F)(F)c1ccccc1I", "C7H4F3I"),
        ("OP(O)(O)=O", "H3O4P"),
        ("CCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCC", "C40H82"),
    ],
)
def test_monoisotopic_mass_matches_rdkit(smiles, formula):
    from rdkit import Chem
    from rdkit.Chem import Descriptors, rdMolDescriptors

    mol = Chem.MolFromSmiles(smiles)
    assert rdMolDescriptors.CalcMolFormula(mol) == formula  # Hill order, as RDKit writes it
    assert str(parse_formula(formula)) == formula
    assert parse_formula(formula).monoisotopic_mass() == pytest.approx(Descriptors.ExactMolWt(mol), abs=2e-5)


@pytest.mark.parametrize(
    "formula,expected",
    [
        # sums of AME2020 masses: 12C 12, 1H 1.007825031898, 16O 15.99491461926,
        # 35Cl 34.968852694, 79Br 78.918337574
        ("C8H8O", 8 * 12 + 8 * 1.007825031898 + 15.99491461926),
        ("C6H5Cl", 6 * 12 + 5 * 1.007825031898 + 34.968852694),
        ("C6H5Br", 6 * 12 + 5 * 1.007825031898 + 78.918337574),
    ],
)
def test_monoisotopic_mass_against_ame2020(formula, expected):
    assert parse_formula(formula).monoisotopic_mass() == pytest.approx(expected, abs=1e-9)


def test_mz_removes_one_electron():
    f = parse_formula("C8H8O")
    assert f.monoisotopic_mass() - f.mz() == pytest.approx(0.000548579909, abs=1e-12)


@pytest.mark.parametrize(
    "formula",
    # molar masses from molmass (average of IUPAC isotopic compositions)
    ["C8H8O", "C6H5Cl", "CH2Cl2", "C4H4S", "C3H7NO", "C6H5Br"],
)
def test_average_mass_matches_molmass(formula):
    import molmass

    assert parse_formula(formula).average_mass() == pytest.approx(molmass.Formula(formula).mass, abs=2e-3)


@pytest.mark.parametrize(
    "formula,dbe",
    # DBE = C + 1 + N/2 - (H + X)/2 (common practice)
    [
        ("C6H6", 4),
        ("C8H8O", 5),
        ("C3H7NO", 1),
        ("CH2Cl2", 0),
        ("C5H5N", 4),
        ("C6H5NO2", 5),
        ("C2H6", 0),
        ("C9H13", Fraction(7, 2)),
        ("CH3O", Fraction(1, 2)),
    ],
)
def test_dbe(formula, dbe):
    assert parse_formula(formula).dbe() == dbe


@pytest.mark.parametrize(
    "text,expected",
    [("C2H5OH", "C2H6O"), ("HCl", "ClH"), ("ClCH3", "CH3Cl"), ("H2O", "H2O"), ("BrC6H5", "C6H5Br")],
)
def test_hill_order(text, expected):
    # Hill system: C, H, then alphabetical; without C all alphabetical (IUPAC/CAS convention)
    assert str(parse_formula(text)) == expected


@pytest.mark.parametrize("text", ["", "c6h6", "C6H6+", "C6(H5)2", "Xx2", "C0H4", "C6 H6"])
def test_bad_formulas_raise_domain_error(text):
    with pytest.raises(ElucidateError):
        parse_formula(text)


def test_formula_is_a_mapping():
    f = Formula.of({"H": 8, "C": 8, "O": 1, "N": 0})
    assert dict(f) == {"C": 8, "H": 8, "O": 1}
    assert f.get("N") == 0 and f["C"] == 8 and len(f) == 3
    assert f.nominal_mass() == 120
