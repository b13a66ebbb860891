"""End to end: reference compounds of varied classes, one case file each under
tests/reference_cases/ (evidence recalled from handbook and library spectra: "from memory";
isotope peaks by the 1.1 %-per-carbon rule of thumb). With the declared groups and the 13C count
the true structure must never be eliminated, and must be in the top 3 for at least 90 % of them.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

import pytest
from rdkit import Chem

from elucidate import Case, load_case
from elucidate.solver import Solution, solve

HERE = Path(__file__).parent / "reference_cases"

#: case file -> the true structure (the compound the evidence was recalled for)
TRUTH = [
    ("toluene", "Cc1ccccc1"),
    ("acetophenone", "CC(=O)c1ccccc1"),
    ("hexan-2-one", "CCCCC(C)=O"),
    ("butanal", "CCCC=O"),
    ("butan-1-amine", "CCCCN"),
    ("butan-1-ol", "CCCCO"),
    ("ethyl-acetate", "CCOC(C)=O"),
    ("methyl-benzoate", "COC(=O)c1ccccc1"),
    ("benzaldehyde", "O=Cc1ccccc1"),
    ("benzoic-acid", "OC(=O)c1ccccc1"),
    ("acetanilide", "CC(=O)Nc1ccccc1"),
    ("benzonitrile", "N#Cc1ccccc1"),
    ("nitrobenzene", "O=[N+]([O-])c1ccccc1"),
    ("anisole", "COc1ccccc1"),
    ("phenol", "Oc1ccccc1"),
    ("mesityl-oxide", "CC(C)=CC(C)=O"),
    ("cyclohexanone", "O=C1CCCCC1"),
    ("chlorobenzene", "Clc1ccccc1"),
    ("propanoic-acid", "CCC(=O)O"),
    ("triethylamine", "CCN(CC)CC"),
    ("diethyl-ether", "CCOCC"),
    ("2-methylbutan-2-ol", "CCC(C)(C)O"),
    ("propylbenzene", "CCCc1ccccc1"),
    ("cyclohexadiene", "C1=CCCC=C1"),
    # conjugated diene, aryl-conjugated enal, alkyl bromide, small solvent, aliphatic amine, a
    # tertiary alcohol with no M+
    ("isoprene", "C=CC(C)=C"),
    ("cinnamaldehyde", "O=CC=Cc1ccccc1"),
    ("1-bromobutane", "CCCCBr"),
    ("dichloromethane", "ClCCl"),
    ("diethylamine", "CCNCC"),
    ("2-methylpropan-2-ol", "CC(C)(C)O"),
]

#: held out: added after the weights in constraints/scoring.yaml were set and never used to set
#: them (small solvents, Cl and Br clusters, an enal, a diamine, an aryl ester, a terpene with DEPT)
HELD_OUT = [
    ("acetone", "CC(C)=O"),
    ("butan-2-one", "CCC(C)=O"),
    ("methanol", "CO"),
    ("chloroform", "ClC(Cl)Cl"),
    ("1-chlorobutane", "CCCCCl"),
    ("bromobenzene", "Brc1ccccc1"),
    ("benzyl-chloride", "ClCc1ccccc1"),
    ("crotonaldehyde", "CC=CC=O"),
    ("ethylenediamine", "NCCN"),
    ("ethyl-benzoate", "CCOC(=O)c1ccccc1"),
    ("limonene", "C=C(C)C1CC=C(C)CC1"),
]
#: the NMR part: C9-C13 compounds (terpenes, aryl ketones and esters, alkyl aromatics, a lactone,
#: a tertiary amide) with MS, declared IR groups, a UV maximum, 13C with DEPT, 1H and the carbon
#: types; written after the NMR tables and weights were first set (changes made after seeing
#: their results are listed in docs/solver.md)
NMR_PART = [
    ("limonene-nmr", "C=C(C)C1CC=C(C)CC1"),
    ("camphor", "CC1(C)C2CCC1(C)C(=O)C2"),
    ("menthone", "CC(C)C1CCC(C)CC1=O"),
    ("p-cymene", "Cc1ccc(C(C)C)cc1"),
    ("linalool", "C=CC(C)(O)CCC=C(C)C"),
    ("alpha-terpineol", "CC1=CCC(CC1)C(C)(C)O"),
    ("carvone", "C=C(C)C1CC=C(C)C(=O)C1"),
    ("cineole", "CC12CCC(CC1)C(C)(C)O2"),
    ("thymol", "Cc1ccc(C(C)C)c(O)c1"),
    ("4-methylacetophenone", "CC(=O)c1ccc(C)cc1"),
    ("4-methoxyacetophenone", "COc1ccc(C(C)=O)cc1"),
    ("propiophenone", "CCC(=O)c1ccccc1"),
    ("benzylacetone", "CC(=O)CCc1ccccc1"),
    ("ethyl-phenylacetate", "CCOC(=O)Cc1ccccc1"),
    ("phenethyl-acetate", "CC(=O)OCCc1ccccc1"),
    ("methyl-cinnamate", "COC(=O)C=Cc1ccccc1"),
    ("anethole", "CC=Cc1ccc(OC)cc1"),
    ("cinnamyl-alcohol", "OCC=Cc1ccccc1"),
    ("gamma-nonalactone", "CCCCCC1CCC(=O)O1"),
    ("deet", "CCN(CC)C(=O)c1cccc(C)c1"),
]
TUNING = list(TRUTH)
TRUTH = TUNING + HELD_OUT + NMR_PART


@functools.cache
def staged(name: str) -> Solution:
    """The case solved as the command line does (shortlist of 10, scored in passes), with the
    true structure watched so that its exact rank is known wherever it falls."""
    return solve(load_case(HERE / f"{name}.yaml"), watch=(dict(TRUTH)[name],))


@pytest.fixture(scope="session")
def rank_of() -> Callable[[str], tuple[int | None, int]]:
    """(rank of the true structure or None, number of candidates) for a reference case, each
    case solved once per test process."""

    def rank(name: str) -> tuple[int | None, int]:
        solution = staged(name)
        true = Chem.MolToSmiles(Chem.MolFromSmiles(dict(TRUTH)[name]))
        found = next((c.rank for c in solution.candidates if c.smiles == true), None)
        return found, solution.candidate_count

    return rank


def test_every_reference_case_has_a_truth_and_classes_vary():
    assert sorted(p.stem for p in HERE.glob("*.yaml")) == sorted(n for n, _ in TRUTH)
    assert len(TRUTH) >= 40 and len(HELD_OUT) >= 10 and len(NMR_PART) >= 15
    assert all("Held out" in (HERE / f"{n}.yaml").read_text(encoding="utf-8") for n, _ in HELD_OUT)
    for name, smiles in NMR_PART:
        case = load_case(HERE / f"{name}.yaml")
        carbons = sum(1 for atom in Chem.MolFromSmiles(smiles).GetAtoms() if atom.GetAtomicNum() == 6)
        assert 9 <= carbons <= 13, name
        assert case.nmr is not None and case.nmr.c13 and case.nmr.h1 and case.nmr.carbon_types, name
        assert all(s.type is not None for s in case.nmr.c13), name


def _group(name: str) -> str:
    """The test process that solves a case: the NMR part in a process of its own."""
    return "reference_nmr" if name in dict(NMR_PART) else "reference_cases"


# one test process solves each case once: the aggregate tests reuse its cache
@pytest.mark.slow
@pytest.mark.parametrize("name", [pytest.param(n, marks=pytest.mark.xdist_group(_group(n))) for n, _ in TRUTH])
def test_true_structure_is_never_eliminated(name, rank_of):
    rank, total = rank_of(name)
    assert rank is not None, f"{name}: the true structure is not among the {total} candidates"


@pytest.mark.slow
@pytest.mark.parametrize("name", [pytest.param(n, marks=pytest.mark.xdist_group(_group(n))) for n, _ in TRUTH])
def test_scoring_in_passes_gives_the_shortlist_of_full_scoring(name):
    # branch and bound (elucidate.solver.passes) against every candidate scored on every
    # technique: the same places, structures, scores and ties (self-consistency)
    quick = staged(name)
    full = solve(load_case(HERE / f"{name}.yaml"), shortlist=0)
    assert quick.candidate_count == full.candidate_count == len(full.candidates)
    places = len(quick.candidates)
    assert places >= min(10, full.candidate_count)
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[:places]]
    # with no shortlist nothing is settled early: the last pass runs on every candidate
    assert not full.scoring_passes or full.scoring_passes[-1].scored == full.candidate_count


def _rates(rank_of: Callable[[str], tuple[int | None, int]], part: list[tuple[str, str]]) -> dict[str, object]:
    ranks = {name: rank_of(name)[0] for name, _ in part}
    return {
        "top1": sum(r == 1 for r in ranks.values()) / len(ranks),
        "top3": sum(r is not None and r <= 3 for r in ranks.values()) / len(ranks),
        "missed": {n: r for n, r in ranks.items() if r is None or r > 3},
    }


@pytest.mark.xdist_group("reference_cases")
@pytest.mark.slow
@pytest.mark.parametrize("part", ["tuning", "held_out"])
def test_true_structure_in_top_three_for_ninety_percent_of_each_part(part, rank_of):
    # top-1 and top-3 are measured apart on the cases used to set the weights and on those held out
    rates = _rates(rank_of, TUNING if part == "tuning" else HELD_OUT)
    print(f"{part}: top-1 {rates['top1']:.0%}, top-3 {rates['top3']:.0%}, outside the top 3: {rates['missed']}")
    assert rates["top3"] >= 0.9, rates


@pytest.mark.xdist_group("reference_nmr")
@pytest.mark.slow
def test_nmr_part_top_one_and_top_three(rank_of):
    # the NMR part's promise: the truth first for at least 80 % and in the top 3 for at least 95 %
    rates = _rates(rank_of, NMR_PART)
    print(f"NMR part: top-1 {rates['top1']:.0%}, top-3 {rates['top3']:.0%}, outside the top 3: {rates['missed']}")
    assert rates["top1"] >= 0.8 and rates["top3"] >= 0.95, rates


LEVELS = {
    "ms": ("mass_spec", "formula"),
    "ms+ir": ("mass_spec", "formula", "infrared"),
    "ms+ir+uv": ("mass_spec", "formula", "infrared", "uv_vis"),
    "full": ("mass_spec", "formula", "infrared", "uv_vis", "nmr"),
}


def _eliminated_by(case: Case, smiles: str) -> str | None:
    """The hard constraint that removes the structure from this case's search, without
    enumerating: the molecular-ion hypotheses, the formula stage and the formulas the solver
    works, the declared groups and SMARTS and the plausibility profile."""
    from elucidate.evidence import TECHNIQUES
    from elucidate.formula import parse_formula
    from elucidate.formula_search import case_query, check_formula, derive_formulas
    from elucidate.generator.groups import default_groups
    from elucidate.solver import hard_selection, molecular_ion_hypotheses
    from elucidate.solver.ranking import formulas_to_enumerate

    mol = Chem.MolFromSmiles(smiles)
    formula = parse_formula(Chem.rdMolDescriptors.CalcMolFormula(mol))
    m = formula.nominal_mass()
    if m not in molecular_ion_hypotheses(case):
        return f"molecular ion {m} not among the hypotheses"
    query = case_query(case, m)
    verdict = check_formula(formula, query)
    if verdict is not None:
        return f"formula stage: {verdict[1]}"
    chosen = formulas_to_enumerate(derive_formulas(query, top=20).kept, 5)
    if formula not in [c.formula for c in chosen]:
        return "formula not among those the solver works"
    failed = hard_selection(case, [cls() for cls in TECHNIQUES]).compile(default_groups()).first_failure(mol)
    return None if failed is None else f"declared constraint: {failed}"


@pytest.mark.parametrize("level", list(LEVELS))
@pytest.mark.parametrize("name", [n for n, _ in TRUTH])
def test_true_structure_is_never_eliminated_at_any_evidence_level(name, level):
    # the same case with only the sections of that level: less evidence may rank the truth lower
    # but never removes it (soft evidence never eliminates; only declared constraints do)
    full = load_case(HERE / f"{name}.yaml")
    keep = LEVELS[level]
    case = replace(full, **{key: None for key in ("infrared", "uv_vis", "nmr") if key not in keep})
    assert _eliminated_by(case, dict(TRUTH)[name]) is None


def test_the_elimination_check_names_what_removes_a_wrong_structure():
    # the check above can fail: in the acetophenone case (M 120, ketone and aromatic ring declared)
    # 2-phenylethanol has the wrong mass, and 4-methylbenzaldehyde (C8H8O) lacks the ketone
    case = load_case(HERE / "acetophenone.yaml")
    assert "not among the hypotheses" in (_eliminated_by(case, "OCCc1ccccc1") or "")
    assert "declared constraint" in (_eliminated_by(case, "Cc1ccc(C=O)cc1") or "")
