"""EI fragmentation: classic diagnostic ions (common practice) must be predicted strongly."""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError
from elucidate.evidence.fragments import default_fragments, load_fragments, predict_ions

DIAGNOSTIC = [
    ("Cc1ccccc1", 91, "toluene: tropylium"),
    ("CCc1ccccc1", 91, "ethylbenzene: benzylic cleavage"),
    ("CC(=O)c1ccccc1", 105, "aryl methyl ketone: benzoyl ion"),
    ("CC(=O)c1ccccc1", 77, "aryl methyl ketone: phenyl cation"),
    ("CCCCC(C)=O", 58, "2-alkanone: McLafferty ion"),
    ("CCCCC(C)=O", 43, "methyl ketone: acetyl ion"),
    ("CCCCC=O", 44, "straight-chain aldehyde: McLafferty ion"),
    ("CCCCN", 30, "primary amine: CH2=NH2+"),
    ("CCCCCO", 31, "primary alcohol: CH2=OH+"),
    ("CCCc1ccccc1", 92, "propylbenzene: McLafferty ion"),
    ("CCCCC(=O)OC", 74, "methyl ester: McLafferty ion"),
    ("C1=CCCCC1", 54, "cyclohexene: retro-Diels-Alder"),
    ("O=[N+]([O-])c1ccccc1", 77, "nitrobenzene: M - NO2"),
    ("CC(=O)Nc1ccccc1", 93, "acetanilide: M - ketene"),
]


@pytest.mark.parametrize("smiles,mz,why", DIAGNOSTIC, ids=[d[2] for d in DIAGNOSTIC])
def test_diagnostic_ion_predicted(smiles, mz, why):
    ions = predict_ions(Chem.MolFromSmiles(smiles))
    assert mz in ions and ions[mz].weight >= 0.4, (why, {k: v.weight for k, v in ions.items()})


def test_larger_radical_loss_preferred():
    # 2-hexanone: losing butyl (-> 43) beats losing methyl (-> 85) (common practice)
    ions = predict_ions(Chem.MolFromSmiles("CCCCC(C)=O"))
    assert ions[43].weight > ions[85].weight


def test_mclafferty_needs_a_gamma_hydrogen():
    # 3,3-dimethylbutan-2-one has no gamma-H: no m/z 58 rearrangement ion
    assert 58 not in predict_ions(Chem.MolFromSmiles("CC(=O)C(C)(C)C"))


def test_table_validates_and_bad_rule_is_located(tmp_path):
    default_fragments().validate()
    bad = tmp_path / "fragments.yaml"
    bad.write_text(
        "strong_weight: 0.7\nmissing_penalty: 0.5\nlowest_mz: 26\nrules:\n"
        "  - {name: x, kind: cleave, smarts: 'CC', weight: 0.5, what: w}\n"
    )
    with pytest.raises(ElucidateError) as info:
        load_fragments(bad)
    assert info.value.line == 5 and "mapped atoms" in info.value.message
