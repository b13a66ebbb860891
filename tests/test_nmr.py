"""The NMR section of the case file and the NMR technique (elucidate/evidence/nmr.py).

Spectra are handbook values recalled from memory (CDCl3; Pretsch, Buehlmann & Badertscher,
Structure Determination of Organic Compounds; SDBS-style library spectra), rounded.
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from elucidate import load_case
from elucidate._rdkit import Chem
from elucidate.case import multiplet_lines, parse_case, parse_multiplet
from elucidate.errors import ElucidateError
from elucidate.evidence import Nmr, make_subject
from elucidate.evidence.nmr import coupled_h
from elucidate.formula import parse_formula
from elucidate.generator.groups import default_groups

ROOT = Path(__file__).resolve().parent.parent

HEAD = textwrap.dedent(
    """\
    schema: 1
    id: t-nmr
    formula:
      elements: {C: 0-12, H: 0-30, O: 0-3}
    """
)

# ethyl acetate, CDCl3 (from memory): 13C 171.1 C, 60.4 CH2, 21.0 CH3, 14.2 CH3;
# 1H 4.12 q 2H, 2.05 s 3H, 1.26 t 3H
ETHYL_ACETATE = HEAD + textwrap.dedent(
    """\
    nmr:
      solvent: CDCl3
      c13:
        - {ppm: 171.1, type: C}
        - {ppm: 60.4, type: CH2}
        - {ppm: 21.0, type: CH3}
        - {ppm: 14.2, type: CH3}
      h1:
        - {ppm: 4.12, integral: 2, multiplicity: q, j_hz: 7.1}
        - {ppm: 2.05, integral: 3, multiplicity: s}
        - {ppm: 1.26, integral: 3, multiplicity: t, j_hz: 7.1}
    """
)


@pytest.mark.parametrize(
    ("text", "code", "lines"),
    [
        # the trade's usual abbreviations (common practice)
        ("s", "s", 1),
        ("d", "d", 2),
        ("t", "t", 3),
        ("q", "q", 4),
        ("quint", "quint", 5),
        ("sext", "sext", 6),
        ("sept", "sept", 7),
        ("dd", "dd", 4),
        ("dt", "dt", 6),
        ("td", "td", 6),
        ("ddd", "ddd", 8),
        ("m", "m", None),
        ("br s", "br s", 1),
        ("brs", "br s", 1),
        ("br", "br", None),
        ("triplet", "t", 3),
        ("septet", "sept", 7),
        ("x", None, None),
        ("dddd", None, None),
        ("sx", None, None),
    ],
)
def test_multiplet_codes(text: str, code: str | None, lines: int | None) -> None:
    assert parse_multiplet(text) == code
    if code is not None:
        assert multiplet_lines(code) == lines


@pytest.mark.parametrize(
    ("code", "neighbours"),
    [("s", 0), ("d", 1), ("t", 2), ("dd", 2), ("q", 3), ("dt", 3), ("sept", 6), ("m", None), ("br s", None)],
)
def test_coupled_h_of_a_code(code: str, neighbours: int | None) -> None:
    assert coupled_h(code) == neighbours


def test_the_nmr_section_loads() -> None:
    case = parse_case(ETHYL_ACETATE)
    nmr = case.nmr
    assert nmr is not None and nmr.solvent == "CDCl3"
    assert [s.ppm for s in nmr.c13] == [171.1, 60.4, 21.0, 14.2]
    assert nmr.c13_signals == 4
    assert nmr.c13_multiplicity == {"CH3": 2, "CH2": 1, "CH": 0, "C": 1}
    assert nmr.h1[0].multiplicity == "q" and nmr.h1[0].j_hz == (7.1,)


@pytest.mark.parametrize(
    ("section", "key", "words"),
    [
        ("nmr:\n  h1:\n    - {ppm: 1.2, multiplicity: tripplet}\n", "nmr.h1[0].multiplicity", ["did you mean 't'"]),
        ("nmr:\n  h1:\n    - {ppm: 1.2, multiplicity: qq7}\n", "nmr.h1[0].multiplicity", ["unknown multiplicity"]),
        ("nmr:\n  c13:\n    - {ppm: 20.1, type: CH4}\n", "nmr.c13[0].type", ["CH3, CH2, CH, C", "did you mean"]),
        ("nmr:\n  c13: [20.1, 300]\n", "nmr.c13[1]", ["-10 to 250"]),
        ("nmr:\n  solvent: CDCL\n", "nmr.solvent", ["did you mean 'CDCl3'"]),
        ("nmr:\n  carbon_types: {CH3: 2, CH2: 1}\n", "nmr.carbon_types", ["missing required key 'CH'"]),
        ("nmr:\n  carbon_types: {CH3: 2, CH2: 1, CH: 1, C: 20}\n", "nmr.carbon_types", ["24 C", "cannot hold"]),
        ("nmr:\n  c13_regions: {carbonyls: 1}\n", "nmr.c13_regions.carbonyls", ["did you mean 'carbonyl'"]),
        ("nmr:\n  exchangeable_h: 2-1\n", "nmr.exchangeable_h", ["exceeds"]),
        (
            "nmr:\n  c13: [20.1, 30.2, 40.3]\n  carbon_types: {CH3: 1, CH2: 1, CH: 0, C: 0}\n",
            "nmr.carbon_types",
            ["fewer than the 3 13C signals"],
        ),
        (
            (
                "nmr:\n  c13: [{ppm: 20, type: CH3}, {ppm: 21, type: CH3}]\n"
                "  carbon_types: {CH3: 1, CH2: 1, CH: 0, C: 0}\n"
            ),
            "nmr.carbon_types.CH3",
            ["2 CH3 signals"],
        ),
        ("nmr:\n  c13: [20.1, 30.2]\n  c13_signals: 3\n", "nmr.c13_signals", ["holds 2"]),
    ],
)
def test_nmr_section_errors_name_the_key(section: str, key: str, words: list[str]) -> None:
    with pytest.raises(ElucidateError) as info:
        parse_case(HEAD + section, file="unk.yaml")
    assert info.value.key == key, str(info.value)
    for word in words:
        assert word in str(info.value)


def _assess(case_text: str, smiles: str) -> tuple[float, float, tuple[str, ...]]:
    case = parse_case(case_text)
    mol = Chem.MolFromSmiles(smiles)
    formula = parse_formula(Chem.rdMolDescriptors.CalcMolFormula(mol))
    a = Nmr().assess(make_subject(smiles, mol, formula, default_groups(), None), case)
    return a.against, a.unexplained, a.reasons


@pytest.mark.parametrize(
    ("truth", "others"),
    [
        # C4H8O2 esters and the acid: the ethyl acetate spectra fit ethyl acetate best
        ("CCOC(C)=O", ["COC(=O)CC", "CCCC(=O)O", "CC(C)C(=O)O", "CCC(=O)OC"]),
    ],
)
def test_the_true_structure_fits_its_spectra_best(truth: str, others: list[str]) -> None:
    best, _, _ = _assess(ETHYL_ACETATE, truth)
    for other in others:
        against, _, _ = _assess(ETHYL_ACETATE, other)
        assert against > best + 2.0, other


@pytest.mark.parametrize(
    ("smiles", "missed"),
    [
        # counted by hand against the windows of constraints/nmr13c.yaml (common practice)
        ("CCOC(C)=O", 0),  # every signal in the window of a carbon of its type
        ("CCCC(=O)O", 2),  # 60.4 (CH2) is past the alkyl window, and there is one CH3 for two
        ("CCC(=O)OC", 2),  # its CH2 is alkyl (60.4 is past that window), its OCH3 is not at 14.2
    ],
)
def test_the_estimate_counts_the_signals_no_carbon_window_holds(smiles: str, missed: int) -> None:
    from elucidate.evidence.base import Perception
    from elucidate.generator.counts import carbon_profile

    case = parse_case(ETHYL_ACETATE)
    mol = Chem.MolFromSmiles(smiles)
    formula = parse_formula(Chem.rdMolDescriptors.CalcMolFormula(mol))
    seen = Perception(frozenset(), frozenset(), None, carbon_profile(mol))
    nmr = Nmr()
    guess = nmr.estimate(make_subject(smiles, None, formula, default_groups(), None, seen=seen), case)
    assert guess is not None and guess.against == pytest.approx(missed * nmr.tables.c13.costs.deviation_cap)
    # nothing to guess from without the carbons generation read
    assert nmr.estimate(make_subject(smiles, mol, formula, default_groups(), None), case) is None


def test_dept_type_is_a_must_match() -> None:
    """Ethyl acetate's list against methyl propanoate: both have C, CH2, CH3, CH3, so only the
    shifts tell; a typed list with a type that no class has costs the type mismatch."""
    wrong = ETHYL_ACETATE.replace("{ppm: 60.4, type: CH2}", "{ppm: 60.4, type: CH}")
    right, _, _ = _assess(ETHYL_ACETATE, "CCOC(C)=O")
    mismatched, _, _ = _assess(wrong, "CCOC(C)=O")
    assert mismatched >= right + 3.5  # the table's type_mismatch is 4 nats


def test_more_signals_than_classes_cost_and_overlap_is_mild() -> None:
    extra = ETHYL_ACETATE.replace(
        "    - {ppm: 14.2, type: CH3}\n", "    - {ppm: 14.2, type: CH3}\n    - {ppm: 35.0, type: CH2}\n"
    )
    base, _, _ = _assess(ETHYL_ACETATE, "CCOC(C)=O")
    more, _, _ = _assess(extra, "CCOC(C)=O")
    assert more >= base + 2.0  # extra_signal
    fewer = ETHYL_ACETATE.replace("    - {ppm: 14.2, type: CH3}\n", "")
    _, unexplained, reasons = _assess(fewer, "CCOC(C)=O")
    assert unexplained == pytest.approx(0.3)  # overlap
    assert any("13C" in r for r in reasons)


def test_assignment_table_is_in_the_detail() -> None:
    case = parse_case(ETHYL_ACETATE)
    mol = Chem.MolFromSmiles("CCOC(C)=O")
    technique = Nmr()
    a = technique.assess(make_subject("CCOC(C)=O", mol, parse_formula("C4H8O2"), default_groups(), None), case)
    rows = a.detail["c13"]
    assert {r["observed_ppm"] for r in rows} == {171.1, 60.4, 21.0, 14.2}
    by_obs = {r["observed_ppm"]: r for r in rows}
    assert by_obs[60.4]["type"] == "CH2" and by_obs[60.4]["carbons"] == [1]
    h1 = {r["observed_ppm"]: r for r in a.detail["h1"]}
    assert h1[4.12]["neighbours"] == 3 and h1[1.26]["neighbours"] == 2
    lines = technique.detail_lines(a)
    assert any("13C assignment" in line for line in lines) and any("1H assignment" in line for line in lines)


def test_a_wrong_multiplicity_costs() -> None:
    singlet = ETHYL_ACETATE.replace("multiplicity: t, j_hz: 7.1", "multiplicity: s")
    base, _, _ = _assess(ETHYL_ACETATE, "CCOC(C)=O")
    worse, _, reasons = _assess(singlet, "CCOC(C)=O")
    assert worse > base
    assert any("neighbouring H" in r for r in reasons)


def test_the_reading() -> None:
    case = parse_case(ETHYL_ACETATE.replace("elements: {C: 0-12, H: 0-30, O: 0-3}", "known: C4H8O2"))
    reading = Nmr().read(case)
    assert reading is not None
    text = "\n".join(reading.lines)
    assert "DEPT: CH3 2, CH2 1, CH 0, C 1" in text
    assert "171.1 (acid, ester or amide)" in text
    assert "integrals sum to 8; C4H8O2 has 8 H" in text
    assert reading.data["windows"]["heteroatom_sp3"] == 1
    assert reading.data["heteroatom_sp3_certain"] == 1  # 60.4 lies above the alkyl window
    assert "O/N-bearing sp3 C: 1 signal at 60-95 ppm; 0 signals at 40-60 ppm" in text


def test_solve_json_carries_the_assignment_and_the_reading(cli, project_root) -> None:
    import json

    case = project_root / "tests" / "reference_cases" / "propiophenone.yaml"
    res = cli("solve", str(case), "--json", "--top", "2")
    assert res.code == 0, res.err
    data = json.loads(res.out)
    first = data["candidates"][0]
    assert first["smiles"] == "CCC(=O)c1ccccc1"
    rows = first["nmr_assignment"]["c13"]
    assert {r["observed_ppm"] for r in rows} == {200.8, 137.0, 132.9, 128.6, 128.0, 31.8, 8.3}
    assert all(r["type"] == r["observed_type"] for r in rows)  # DEPT types honoured
    assert data["nmr_reading"]["dept_signals"] == {"CH3": 1, "CH2": 1, "CH": 3, "C": 2}
    assert "nmr" in first["components"]


def test_carbon_types_name_the_formulas_they_rule_out() -> None:
    """A formula that cannot hold the declared carbon types is named, with the reason, and not
    enumerated (the types fix the carbon count and the H on carbon)."""
    from elucidate.solver import solve

    text = HEAD.replace("elements: {C: 0-12, H: 0-30, O: 0-3}", "elements: {C: 0-12, H: 0-30, O: 0-3, N: 0-2}")
    text += textwrap.dedent(
        """\
        mass_spec:
          molecular_ion: 134
          peaks: {134: 20, 135: 2.0, 105: 100, 77: 45}
        nmr:
          carbon_types: {CH3: 1, CH2: 1, CH: 5, C: 2}
          c13_regions: {carbonyl: 1, sp2: 6}
        """
    )
    solution = solve(parse_case(text), workers=1)
    assert {str(k.formula) for k in solution.formulas if k.skipped is None} == {"C9H10O"}
    assert all(k.formula.get("C") == 9 for k in solution.formulas)
    assert "CCC(=O)c1ccccc1" in [c.smiles for c in solution.candidates]


def test_an_empty_result_names_the_declared_counts() -> None:
    """When the declared counts alone leave no structure, the empty-result reason says so."""
    from elucidate.solver import solve

    text = HEAD + textwrap.dedent(
        """\
        mass_spec:
          molecular_ion: 134
          peaks: {134: 20, 135: 2.0, 105: 100, 77: 45}
        nmr:
          carbon_types: {CH3: 1, CH2: 1, CH: 5, C: 2}
          c13_regions: {carbonyl: 1, sp2: 6, heteroatom_sp3: 1}
        """
    )
    solution = solve(parse_case(text), workers=1)
    assert solution.candidates == ()
    assert any("declared NMR counts" in line and "alone leaves no structure" in line for line in solution.empty_reason)
    assert not any("carbon types" in label for label in solution.eliminated)  # pruned, never counted


@pytest.mark.parametrize(
    "smiles", ["C=C(C)C1CC=C(C)C(=O)C1", "CC1=CCC(CC1)C(C)(C)O", "CCN(CC)C(=O)c1cccc(C)c1", "CC(=O)c1ccc(C)cc1"]
)
def test_carbon_cost_matrix_equals_the_pairwise_rule(smiles: str) -> None:
    # the vectorised matrix against the rule of constraints/nmr13c.yaml (scoring) and the DEPT
    # rule, pair by pair (self-consistency)
    from elucidate.case import C13Signal
    from elucidate.evidence.nmr import carbon_costs
    from elucidate.evidence.nmr_predict import predict_c13

    costs = Nmr().tables.c13.costs
    predicted = predict_c13(Chem.MolFromSmiles(smiles))
    observed = [C13Signal(ppm, kind) for ppm, kind in ((199.8, "C"), (144.0, "CH"), (110.0, "CH2"), (31.2, None))]
    matrix = carbon_costs(observed, predicted, costs)
    for r, o in enumerate(observed):
        for c, p in enumerate(predicted):
            sigma = p.uncertainty / 2
            want = min(0.5 * ((o.ppm - p.ppm) / sigma) ** 2, costs.deviation_cap)
            want += costs.type_mismatch if o.type is not None and o.type != p.type else 0.0
            assert matrix[r, c] == pytest.approx(want, abs=1e-12)


def _reference_search(place, fill, dev, absent, hydrogens, slots, per_h, rounds):
    """The 1H local search written out change by change (the form it had before the array
    version): per round, every move then every swap weighed in order, the first least taken."""

    def delta(c, new):
        old, h = place[c], hydrogens[c]
        change = 0.0
        if old is not None:
            change -= dev[old][c] + per_h * (abs(slots[old] - fill[old]) - abs(slots[old] - fill[old] + h))
        else:
            change -= absent[c]
        if new is not None:
            change += dev[new][c] + per_h * (abs(slots[new] - fill[new] - h) - abs(slots[new] - fill[new]))
        else:
            change += absent[c]
        return change

    def move(c, new):
        old, h = place[c], hydrogens[c]
        if old is not None:
            fill[old] -= h
        if new is not None:
            fill[new] += h
        place[c] = new

    n_obs = len(slots)
    for _ in range(rounds):
        best = (-1e-9, -1, -1, None)
        for c in range(len(place)):
            for r in [*range(n_obs), None]:
                if r != place[c]:
                    d = delta(c, r)
                    if d < best[0]:
                        best = (d, c, -1, r)
            for c2 in range(c + 1, len(place)):
                r1, r2 = place[c], place[c2]
                if r1 == r2 or r1 is None or r2 is None:
                    continue
                d = delta(c, r2)
                move(c, r2)
                d += delta(c2, r1)
                move(c, r1)
                if d < best[0]:
                    best = (d, c, c2, r2)
        if best[1] < 0:
            break
        _, c, c2, target = best
        if c2 >= 0:
            r1 = place[c]
            move(c, target)
            move(c2, r1)
        else:
            move(c, target)


@pytest.mark.parametrize("seed", range(60))
def test_the_array_local_search_makes_the_same_changes_as_the_written_out_one(seed: int) -> None:
    # self-consistency: random problems, with ties (costs on a coarse grid, capped deviations)
    import random

    import numpy as np

    from elucidate.evidence.nmr import _improve

    rng = random.Random(seed)
    n_obs, n_c = rng.randint(1, 7), rng.randint(1, 9)
    dev = [[rng.choice([0.0, 0.5, 1.0, 2.0, 4.0, rng.random() * 4]) for _ in range(n_c)] for _ in range(n_obs)]
    hydrogens = [rng.choice([1, 1, 2, 3]) for _ in range(n_c)]
    absent = [rng.choice([0.0, 1.5 * h]) for h in hydrogens]
    slots = [rng.randint(1, 4) for _ in range(n_obs)]
    place = [rng.choice([*range(n_obs), None]) for _ in range(n_c)]
    fill = [sum(h for c, h in enumerate(hydrogens) if place[c] == r) for r in range(n_obs)]
    want_place, want_fill = place[:], fill[:]
    _reference_search(want_place, want_fill, dev, absent, hydrogens, slots, 1.5, 4 * n_c + 4)
    _improve(place, fill, np.array(dev), np.array(absent), hydrogens, slots, 1.5, rounds=4 * n_c + 4)
    assert (place, fill) == (want_place, want_fill)


@pytest.fixture(scope="module")
def c6h10o_isomers():
    from elucidate import parse_formula
    from elucidate.generator import isomer_smiles

    return [Chem.MolFromSmiles(s) for s in isomer_smiles(parse_formula("C6H10O"))]


@pytest.mark.parametrize("case_name", ["carvone", "alpha-terpineol", "4-methylacetophenone"])
def test_the_early_13c_bound_never_exceeds_the_assignment(case_name, c6h10o_isomers) -> None:
    # self-consistency: the dual bound of _carbon_bound is a lower bound of the 13C against of
    # the optimal assignment (Kuhn 1955: any feasible dual is a lower bound), for observed
    # lists of reference cases against every C6H10O isomer, at several levels
    from elucidate.evidence.nmr_predict import NmrPrediction

    case = load_case(ROOT / "tests" / "reference_cases" / f"{case_name}.yaml")
    observed = case.nmr.c13
    nmr = Nmr()
    stopped = 0
    for mol in c6h10o_isomers:
        against = nmr._carbon(observed, NmrPrediction(mol).c13)[0]
        for enough in (0.0, 2.0, 5.0, 10.0, 15.0):
            bound = nmr._carbon_bound(observed, NmrPrediction(mol), enough)
            if bound is not None:
                stopped += 1
                assert enough < bound <= against, (Chem.MolToSmiles(mol), enough)
    assert stopped > len(c6h10o_isomers)  # the bound does stop early


@pytest.fixture(scope="module")
def c7h14o_one_ring():
    """The C7H14O isomers with at most one ring (both kinds of symmetry split occur)."""
    from elucidate import parse_formula
    from elucidate.generator import isomer_smiles

    mols = [Chem.MolFromSmiles(s) for s in isomer_smiles(parse_formula("C7H14O"))]
    return [m for m in mols if m.GetRingInfo().NumRings() <= 1]


def test_with_one_ring_the_carbons_of_a_graph_class_are_predicted_alike(c7h14o_one_ring) -> None:
    # what begin's first bound, on the graph's symmetry classes, rests on: every carbon of such
    # a class gets the prediction its first carbon gets (self-consistency, on every isomer)
    from elucidate.evidence.carbon13 import graph_ranks
    from elucidate.evidence.nmr_predict import _carbon, _Context
    from elucidate.evidence.nmr_tables import default_nmr_tables

    tables = default_nmr_tables()
    shared = 0
    for mol in c7h14o_one_ring:
        ctx = _Context(mol, tables)
        ranks = graph_ranks(mol)
        classes: dict[int, list[int]] = {}
        for atom in mol.GetAtoms():
            if atom.GetAtomicNum() == 6:
                classes.setdefault(ranks[atom.GetIdx()], []).append(atom.GetIdx())
        for atoms in classes.values():
            if len(atoms) > 1:
                shared += 1
                predicted = {tuple(round(x, 2) for x in _carbon(ctx, i)[:2]) for i in atoms}
                assert len(predicted) == 1, (Chem.MolToSmiles(mol), atoms, predicted)
    assert shared > 100


@pytest.mark.parametrize("case_name", ["linalool", "carvone"])
def test_the_bound_on_graph_classes_never_exceeds_the_assignment(case_name, c7h14o_one_ring) -> None:
    # self-consistency: on the graph's classes (coarser where a spectrum split applies) the
    # dual bound is a lower bound of the 13C against of the optimal assignment on the
    # spectrum's classes (Kuhn 1955: any feasible dual is); begin reports a part complete
    # exactly when neither bound settles it
    from elucidate.evidence.carbon13 import graph_ranks, symmetry_ranks
    from elucidate.evidence.nmr_predict import NmrPrediction

    case = load_case(ROOT / "tests" / "reference_cases" / f"{case_name}.yaml")
    observed = case.nmr.c13
    nmr = Nmr()
    formula = parse_formula("C7H14O")
    split = settled = 0
    for mol in c7h14o_one_ring:
        graph, fine = graph_ranks(mol), symmetry_ranks(mol)
        split += graph != fine
        smiles = Chem.MolToSmiles(mol)
        against = nmr._carbon(observed, NmrPrediction(mol, ranks=fine).c13)[0]
        for enough in (2.0, 6.0, 12.0, 20.0):
            coarse_bound = nmr._carbon_bound(observed, NmrPrediction(mol, ranks=graph), enough)
            fine_bound = nmr._carbon_bound(observed, NmrPrediction(mol, ranks=fine), enough)
            if coarse_bound is not None:
                settled += 1
                assert enough < coarse_bound <= against, (smiles, enough)
            subject = make_subject(smiles, Chem.MolFromSmiles(smiles), formula, default_groups(), 114, 0.0)
            complete = coarse_bound is None and fine_bound is None
            assert nmr.begin(subject, case, enough=enough).complete == complete, (smiles, enough)
    assert split > 10 and settled > len(c7h14o_one_ring)


def test_an_incomplete_13c_part_is_compared_never_finished() -> None:
    case = load_case(ROOT / "tests" / "reference_cases" / "carvone.yaml")
    mol = Chem.MolFromSmiles("CCCCCCCCCC=O")  # far from carvone's list
    subject = make_subject("CCCCCCCCCC=O", mol, parse_formula("C10H20O"), default_groups(), 156, 0.0)
    nmr = Nmr()
    partial = nmr.begin(subject, case, enough=1.0)
    assert not partial.complete and partial.against > 1.0
    assert partial.against <= nmr.begin(subject, case).against
    with pytest.raises(AssertionError):
        nmr.finish(subject, case, partial)
