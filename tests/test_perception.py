"""What generation perceives on each molecule for the IR pass (evidence/infrared.py Perceiver,
generator isomer_smiles(perceive=...)) equals what scoring finds on RDKit's reading of the
candidate's canonical SMILES, the reference (RDKit, the registry's general-purpose library),
and scoring with it gives the same assessments without reading the SMILES.

Facts used: an RDKit substructure match does not depend on the atom order of the molecule it
searches (common practice); the IR bands are those of constraints/infrared.yaml."""

from __future__ import annotations

from pathlib import Path

import pytest
from rdkit import Chem

from elucidate import load_case, parse_formula
from elucidate.evidence.base import make_subject
from elucidate.evidence.infrared import Infrared, Perceiver
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.groups import default_groups
from elucidate.generator.selection import Selection

CASES = Path(__file__).resolve().parent / "reference_cases"
GROUPS = default_groups()


def _perceived(formula: str, workers: int, engine: str = "auto") -> tuple[list[str], list[object]]:
    f = parse_formula(formula)
    perceive = Perceiver(f, GROUPS, Infrared().table)
    options = GeneratorOptions(selection=Selection(profile="stable"), rdkit_smiles=True, workers=workers, engine=engine)
    seen: list[object] = []
    smiles = list(isomer_smiles(f, options, perceive=perceive, perceived=seen))
    return smiles, seen


@pytest.mark.parametrize(("formula", "workers"), [("C5H8O", 1), ("C5H8O", 2), ("C4H7NO", 1), ("C6H6O", 2)])
def test_generation_perceives_what_the_canonical_molecule_shows(formula: str, workers: int) -> None:
    smiles, seen = _perceived(formula, workers)
    assert len(seen) == len(smiles) > 50
    perceive = Perceiver(parse_formula(formula), GROUPS, Infrared().table)
    # the shape generation read off the bond orders (tests/test_shape.py) rides along as given
    assert seen == [perceive(Chem.MolFromSmiles(s), p.shape) for s, p in zip(smiles, seen)]  # type: ignore[attr-defined]
    # conditional bands (conjugated or ring carbonyls, free O-H) are among what is perceived
    assert any(p.bands for p in seen)  # type: ignore[attr-defined]


def test_the_perceived_list_is_the_same_for_any_number_of_workers() -> None:
    assert _perceived("C5H8O", 1) == _perceived("C5H8O", 2)
    # and whoever labelled the structures, ring shapes included (tests/test_shape.py)
    python, compiled = _perceived("C5H8O", 1, "python"), _perceived("C5H8O", 1, "compiled")
    assert python == compiled
    assert any(p.shape for p in python[1])  # type: ignore[attr-defined]


@pytest.mark.parametrize("name", ["cyclohexanone", "acetophenone", "ethyl-acetate"])
def test_the_ir_pass_on_what_generation_perceived_equals_reading_the_smiles(name: str) -> None:
    case = load_case(CASES / f"{name}.yaml")
    formula = parse_formula("C5H8O2")
    smiles, seen = _perceived("C5H8O2", 1)
    technique = Infrared()
    for text, perception in zip(smiles, seen, strict=True):
        lazy = make_subject(text, None, formula, GROUPS, None, seen=perception)  # type: ignore[arg-type]
        read = make_subject(text, Chem.MolFromSmiles(text), formula, GROUPS, None)
        assert technique.assess(lazy, case) == technique.assess(read, case)
        assert "mol" not in vars(lazy)  # the SMILES was never read
        assert lazy.groups == read.groups


def test_a_subject_without_a_molecule_reads_its_smiles_when_asked() -> None:
    subject = make_subject("CC(=O)c1ccccc1", None, parse_formula("C8H8O"), GROUPS, 120)
    assert Chem.MolToSmiles(subject.mol) == "CC(=O)c1ccccc1"
    assert subject.groups == GROUPS.present(Chem.MolFromSmiles("CC(=O)c1ccccc1"), parse_formula("C8H8O"))


def test_perceive_is_refused_with_kekule_forms() -> None:
    f = parse_formula("C6H6O")
    options = GeneratorOptions(kekule=True)
    with pytest.raises(ValueError, match="kekule"):
        list(isomer_smiles(f, options, perceive=Perceiver(f, GROUPS, Infrared().table), perceived=[]))


@pytest.mark.parametrize(
    ("formula", "require", "forbid"),
    [("C6H8O", ("ketone", "alkene"), ("alcohol",)), ("C5H10O2", ("ester",), ("alkene", "hydroxyl"))],
)
def test_required_and_forbidden_groups_are_perceived_without_a_search(formula, require, forbid) -> None:
    # every structure generated under required and forbidden groups has and lacks them, so the
    # solver's perceiver takes them (and the groups a required one implies: a ketone is a
    # carbonyl) without a search; it must find exactly what searching every group finds
    f = parse_formula(formula)
    selection = Selection(require=require, forbid=forbid, profile="stable")
    told = Perceiver(f, GROUPS, Infrared().table, having=frozenset(require), lacking=frozenset(forbid))
    searched = Perceiver(f, GROUPS, Infrared().table)
    seen: list[object] = []
    smiles = list(
        isomer_smiles(f, GeneratorOptions(selection=selection, rdkit_smiles=True), perceive=told, perceived=seen)
    )
    assert len(smiles) >= 9  # the nine esters C5H10O2 (common practice)
    assert seen == [searched(Chem.MolFromSmiles(s), p.shape) for s, p in zip(smiles, seen)]  # type: ignore[attr-defined]
    calls = []
    mol = Chem.MolFromSmiles(smiles[0])

    class Counting:
        def __getattr__(self, name):
            if name == "HasSubstructMatch":
                calls.append(1)
            return getattr(mol, name)

    GROUPS.present(Counting(), f)  # type: ignore[arg-type]
    every = len(calls)
    calls.clear()
    GROUPS.present(Counting(), f, having=frozenset(require), lacking=frozenset(forbid))  # type: ignore[arg-type]
    assert len(calls) < every  # the shortcut is taken, not only correct
