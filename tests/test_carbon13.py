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
