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
