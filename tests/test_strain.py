"""Strain and rarity (constraints/strain.yaml) against published ring strain energies.

Cycloalkane strain energies, kcal/mol: Eliel & Wilen, Stereochemistry of Organic Compounds
(Wiley, 1994): cyclopropane 27.5, cyclobutane 26.3, cyclopentane 6.2, cyclohexane 0,
cycloheptane 6.3, cyclooctane 9.7. Cyclopropene about 54.5, methylenecyclopropane about 41,
bicyclo[1.1.0]butane about 66.5 (Wiberg 1986, from memory).
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError
from elucidate.evidence import Strain, strain_energy
from elucidate.evidence.base import make_subject
from elucidate.evidence.strain import default_strain, load_strain
from elucidate.formula import parse_formula
from elucidate.generator.groups import default_groups


@pytest.mark.parametrize(
    "smiles,kcal",
    [
        ("C1CC1", 27.5),
        ("C1CCC1", 26.3),
        ("C1CCCC1", 6.2),
        ("C1CCCCC1", 0.0),
        ("C1CCCCCC1", 6.3),
        ("C1CCCCCCC1", 9.7),
        ("C1=CC1", 54.5),  # from memory
        ("C=C1CC1", 41.0),  # from memory
        ("C1C2CC12", 66.5),  # from memory
        ("c1ccccc1", 0.0),  # aromatic rings count no strain (common practice)
        ("CCCCCC", 0.0),
    ],
)
def test_strain_matches_published_values(smiles, kcal):
    assert strain_energy(Chem.MolFromSmiles(smiles))[0] == pytest.approx(kcal, abs=0.05)


def test_strained_isomers_are_ranked_down_not_out():
    # C4H6 isomers: buta-1,3-diene (ordinary) against cyclobutene and bicyclobutane (strained)
    technique = Strain()
    groups = default_groups()

    def against(smiles):
        mol = Chem.MolFromSmiles(smiles)
        return technique.assess(make_subject(smiles, mol, parse_formula("C4H6"), groups, 54), None).against

    assert against("C=CC=C") == 0
    assert 0 < against("C1=CCC1") < against("C1C2CC12")


def test_table_validates_and_a_missing_ring_size_is_located(tmp_path):
    default_strain().validate()
    bad = tmp_path / "strain.yaml"
    bad.write_text(
        "kcal_per_nat: 15\nrings: {3: 27.5, 4: 26.3}\nendocyclic_double_bond: {3: 27}\n"
        "exocyclic_double_bond: {3: 13.5}\nfused_small_rings: 11.5\nsmall_ring_triple_bond: 30\n"
        "cumulated_double_bond: 10\n"
    )
    with pytest.raises(ElucidateError, match="every ring size") as info:
        load_strain(bad)
    assert info.value.line == 2
