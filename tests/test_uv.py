"""UV-Vis predictions against published observed lambda max (sources beside each row)."""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate.evidence.uv import default_uv, predict_lambda_max

OBSERVED = [
    # (SMILES, observed lambda max nm, rule family, source)
    ("CC(C)=CC(C)=O", 237, "Woodward (α", "mesityl oxide, EtOH: maxbrainchemistry Woodward tutorial"),
    ("O=C1CCCC=C1", 225, "Woodward (α", "2-cyclohexen-1-one, EtOH (from memory)"),
    ("C=CC=C", 217, "Woodward-Fieser", "1,3-butadiene, hexane (from memory)"),
    ("C=CC(C)=C", 220, "Woodward-Fieser", "isoprene (from memory)"),
    ("CC(=O)c1ccccc1", 243, "Scott", "acetophenone, EtOH 240-246 (from memory)"),
    ("CC(=O)c1ccc(Cl)cc1", 254, "Scott", "p-chloroacetophenone (from memory; calc. as in Yadav)"),
    (
        "CC1=C(C(C)(C)CCC1)/C=C/C(C)=C/C=C/C(C)=C/C=C/C=C(C)/C=C/C=C(C)/C=C/C2=C(C)CCCC2(C)C",
        452,
        "Fieser-Kuhn",
        "beta-carotene, hexane (from memory)",
    ),
    # aryl-conjugated enones: the aryl increment is fitted on cinnamaldehyde and benzalacetone
    # (so those two check the fit only); cinnamic acid was not used to fit it
    ("O=C/C=C/c1ccccc1", 285, "Woodward (α", "cinnamaldehyde, EtOH (from memory; fitted)"),
    ("CC(=O)/C=C/c1ccccc1", 286, "Woodward (α", "benzalacetone, EtOH (from memory; fitted)"),
    ("OC(=O)/C=C/c1ccccc1", 273, "Woodward (α", "trans-cinnamic acid, EtOH (from memory; not fitted)"),
]


@pytest.mark.parametrize("smiles,observed,rule,source", OBSERVED, ids=[r[3].split(",")[0] for r in OBSERVED])
def test_prediction_within_the_rules_accuracy(smiles, observed, rule, source):
    p = predict_lambda_max(Chem.MolFromSmiles(smiles))
    assert p.rule.startswith(rule)
    assert p.lambda_max == pytest.approx(observed, abs=default_uv().tolerance)


CALCULATED = [
    # worked examples: the calculation a textbook shows (increments of constraints/uv.yaml)
    ("CC(C)=CC(C)=O", 239.0),  # 215 + 2 beta alkyl 24 (maxbrainchemistry tutorial)
    ("CC1=CC(=O)CCC1", 239.0),  # 215 + beta ring residue 12 + beta methyl 12 (common practice)
    ("C1=CCC=C1", 263.0),  # homoannular 253 + 2 ring residues 10
    ("CC(=O)c1ccc(Cl)cc1", 256.0),  # 246 + p-Cl 10 (Yadav, Scott table)
    ("COc1ccc(C(C)=O)cc1", 271.0),  # 246 + p-OMe 25 (Scott table)
    ("O=Cc1ccccc1", 250.0),  # ArCHO parent (Scott table)
    ("COC(=O)c1ccccc1", 230.0),  # ArCO2R parent (Scott table)
]


@pytest.mark.parametrize("smiles,expected", CALCULATED)
def test_worked_calculations(smiles, expected):
    assert predict_lambda_max(Chem.MolFromSmiles(smiles)).lambda_max == pytest.approx(expected)


@pytest.mark.parametrize("smiles", ["CCCCCC", "CC(C)=O", "C=CCC=C", "CCOCC"])
def test_no_conjugated_chromophore_no_maximum(smiles):
    assert predict_lambda_max(Chem.MolFromSmiles(smiles)).lambda_max is None


def test_enone_solvent_correction_hexane():
    # ethanol value minus 11 in hexane (CRC correction table)
    mol = Chem.MolFromSmiles("CC(C)=CC(C)=O")
    assert predict_lambda_max(mol, solvent="hexane").lambda_max == pytest.approx(228.0)


def test_table_validates():
    default_uv().validate()


def _uv_assessment(smiles, uv_section):
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    from elucidate import parse_case, parse_formula
    from elucidate.evidence import UvVis, make_subject
    from elucidate.generator.groups import default_groups

    case = parse_case(f"schema: 1\nid: t\nuv_vis:\n{uv_section}")
    mol = Chem.MolFromSmiles(smiles)
    subject = make_subject(smiles, mol, parse_formula(CalcMolFormula(mol)), default_groups(), None)
    return case, UvVis().assess(subject, case)


def test_several_maxima_main_band_is_the_strongest():
    case, _ = _uv_assessment("Cc1ccccc1", "  maxima: [{nm: 261, strength: weak}, {nm: 206, log_eps: 3.9}]\n")
    assert case.uv_vis.lambda_max == (206.0, 206.0) and case.uv_vis.others == ((261.0, 261.0),)


def test_a_benzenoid_strong_band_does_not_count_against_it():
    # toluene, ethanol: E2 band about 206 nm (log ε 3.9) and B band about 261 nm (log ε 2.4)
    # (common practice, from memory); the primary band below 210 nm is not predicted as observable
    _, a = _uv_assessment("Cc1ccccc1", "  maxima: [{nm: 206, log_eps: 3.9}, {nm: 261, log_eps: 2.4}]\n")
    assert a.against == 0.0 and 0 < a.unexplained < 1.0


def test_an_explicit_range_is_read_as_one_maximum():
    case, a = _uv_assessment("CC(C)=CC(C)=O", "  lambda_max: 235-240\n")
    assert case.uv_vis.lambda_max == (235.0, 240.0) and a.against == 0.0


# Doub & Vandenbelt, J. Am. Chem. Soc. 69, 2714 (1947), as tabulated in Silverstein, Bassler &
# Morrill (values from memory): primary (K/E2) and secondary (B) bands of monosubstituted benzenes
@pytest.mark.parametrize(
    "name,smiles,primary,secondary",
    [
        ("aniline", "Nc1ccccc1", 230, 280),
        ("anisole", "COc1ccccc1", 217, 269),
        ("benzonitrile", "N#Cc1ccccc1", 224, 271),
        ("styrene", "C=Cc1ccccc1", 244, 282),
        ("chlorobenzene", "Clc1ccccc1", 210, 264),
    ],
)
def test_benzenoids_get_both_bands(name, smiles, primary, secondary):
    p = predict_lambda_max(Chem.MolFromSmiles(smiles))
    tol = default_uv().benzenoid_tolerance
    assert p.lambda_max == pytest.approx(secondary, abs=tol)
    assert len(p.also) == 1 and p.also[0] == pytest.approx(primary, abs=tol)


def test_a_strong_primary_band_alone_is_explained_by_the_benzenoid_table():
    # benzonitrile reported with its strong band only (224 nm) fits; both bands are explained;
    # toluene (B band 261 nm, primary band below 210 nm) does not fit the same observation
    _, alone = _uv_assessment("N#Cc1ccccc1", "  lambda_max: 224\n")
    assert alone.against == 0.0 and alone.unexplained == 0.0
    _, both = _uv_assessment("Nc1ccccc1", "  maxima: [{nm: 230, log_eps: 3.9}, {nm: 280, log_eps: 3.2}]\n")
    assert both.against == 0.0 and both.unexplained == 0.0
    _, wrong = _uv_assessment("Cc1ccccc1", "  maxima: [{nm: 230, log_eps: 3.9}, {nm: 280, log_eps: 3.2}]\n")
    assert wrong.against + wrong.unexplained > both.against + both.unexplained
