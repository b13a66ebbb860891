"""Scoring in passes (elucidate.solver.passes): branch and bound must give exactly the shortlist
of full scoring. Checked on every reference case in tests/test_reference_cases.py, and here on
random cases: reference cases with their evidence perturbed at random (seeded), a random
shortlist length and a random suspect, against the same case scored in full (self-consistency:
full scoring is the definition the passes must reproduce)."""

from __future__ import annotations

import math
import random
from pathlib import Path

import pytest
import yaml

from elucidate.case import parse_case
from elucidate.evidence import TECHNIQUES, Nmr
from elucidate.solver import solve
from elucidate.solver.passes import pass_order, technique_passes

HERE = Path(__file__).parent / "reference_cases"
#: small spaces with every kind of evidence between them (NMR, fragments, IR, UV)
BASES = ["benzylacetone", "menthone", "acetophenone", "propylbenzene", "2-methylbutan-2-ol", "hexan-2-one"]


def _perturbed(name: str, rng: random.Random) -> dict:
    doc = yaml.safe_load((HERE / f"{name}.yaml").read_text(encoding="utf-8"))
    ms = doc["mass_spec"]
    peaks = {int(k): float(v) for k, v in ms["peaks"].items()}
    m = ms.get("molecular_ion")
    m = m if isinstance(m, int) else max(peaks)  # "none": M+ not seen
    for mz in list(peaks):
        if mz < m:  # the isotope cluster stays; fragment intensities move
            peaks[mz] = round(min(100.0, peaks[mz] * rng.uniform(0.4, 1.6)), 1)
    peaks[rng.randrange(27, m - 14)] = round(rng.uniform(5, 90), 1)
    top = max(peaks.values())  # % of the base peak again; the cluster's ratios are kept
    ms["peaks"] = {mz: round(100 * v / top, 2) for mz, v in peaks.items()}
    ir = doc.get("infrared")
    if ir:
        moved = [{**b, "at": b["at"] + rng.randint(-25, 25)} for b in ir["bands"] if rng.random() > 0.25]
        ir["bands"] = moved or ir["bands"][:1]
    uv = doc.get("uv_vis")
    if uv and isinstance(uv.get("lambda_max"), int):
        uv["lambda_max"] = uv["lambda_max"] + rng.randint(-25, 25)
    nmr = doc.get("nmr")
    if nmr:
        for s in nmr.get("c13", []):
            s["ppm"] = round(s["ppm"] + rng.uniform(-6, 6), 1)
        for s in nmr.get("h1", []):
            s["ppm"] = round(max(0.2, s["ppm"] + rng.uniform(-0.4, 0.4)), 2)
    return doc


@pytest.mark.slow
@pytest.mark.parametrize("seed", range(10))
def test_random_cases_give_the_shortlist_of_full_scoring(seed: int) -> None:
    rng = random.Random(seed)
    name = BASES[seed % len(BASES)]
    doc = _perturbed(name, rng)
    full = solve(parse_case(yaml.safe_dump(doc, sort_keys=False)), shortlist=0)
    assert full.candidates, name
    suspect = rng.choice(full.candidates).smiles
    doc.setdefault("structure", {})["suspects"] = [suspect]
    case = parse_case(yaml.safe_dump(doc, sort_keys=False))
    full = solve(case, shortlist=0)
    places = rng.randint(1, 15)
    quick = solve(case, shortlist=places, workers=1 + seed % 2)
    assert quick.candidate_count == full.candidate_count
    shown = len(quick.candidates)
    assert shown >= min(places, full.candidate_count)
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[:shown]]
    assert quick.suspects == full.suspects and quick.suspects[0].rank is not None
    # what the passes settled adds up: every candidate settled exactly once, before the passes
    # on its promise or in one pass
    before = quick.settled_before_passes
    assert sum(p.settled for p in quick.scoring_passes) + before == quick.candidate_count
    assert quick.scoring_passes[0].scored + before == quick.candidate_count


def test_passes_start_cheapest_first_and_hold_each_technique_once() -> None:
    techniques = [cls() for cls in TECHNIQUES]
    passes = technique_passes(techniques)
    numbers = [group[0].scoring_pass for group in passes]
    assert numbers == sorted(set(numbers))
    assert sorted(t.name for group in passes for t in group) == sorted(t.name for t in techniques)
    # the expensive techniques come after the cheap ones (common practice: cost measured in bench/)
    by_name = {t.name: t.scoring_pass for t in techniques}
    assert by_name["nmr"] > by_name["infrared"] and by_name["fragments"] > by_name["strain"]


@pytest.mark.parametrize(
    ("parts", "threshold", "costs", "order"),
    [
        # hand-checked: each candidate runs passes until its running sum is below -5; costs
        # 1, 10, 5. Order (2, 1, 0) costs 5 + 15 + 5 + 16 = 41, the least of the six orders
        # ((0, 1, 2): 49; (0, 2, 1): 44; (1, 0, 2) and (1, 2, 0): 46; (2, 0, 1): 42)
        ([(-1, -9, -9), (-2, -9, -1), (-1, -9, -8), (-1, -1, -1)], -5.0, [1, 10, 5], (2, 1, 0)),
        # equal costs: (1, 0, 2) and (1, 2, 0) both cost 30; the first in permutation order wins
        ([(-1, -9, -9), (-2, -9, -1), (-1, -9, -8), (-1, -1, -1)], -5.0, [5, 5, 5], (1, 0, 2)),
        # nothing settles anything: every order costs the same, the first stays
        ([(-1, -1, -1)], -5.0, [3, 2, 1], (0, 1, 2)),
        # a sum exactly at the threshold does not settle (the bound must fall below it)
        ([(-5.0, -6.0)], -5.0, [1, 1], (1, 0)),
        ([], -5.0, [1, 1], (0, 1)),
    ],
)
def test_pass_order_is_the_cheapest_on_the_candidates_seen(parts, threshold, costs, order) -> None:
    assert pass_order(parts, threshold, costs) == order


def _every_order(parts, threshold, costs):
    """The definition, by trying every permutation (ties: the first in permutation order)."""
    import itertools

    best, best_cost = tuple(range(len(costs))), math.inf
    for sequence in itertools.permutations(range(len(costs))):
        total = 0.0
        for p in parts:
            running = 0.0
            for k in sequence:
                total += costs[k]
                running += p[k]
                if running < threshold - 1e-6:
                    break
        if total < best_cost - 1e-9:
            best, best_cost = sequence, total
    return best


@pytest.mark.parametrize("seed", range(40))
def test_pass_order_by_sets_equals_trying_every_order(seed: int) -> None:
    # the dynamic programme over sets of passes run against the brute force over permutations
    # (self-consistency); parts on a coarse grid so that ties between orders occur
    rng = random.Random(seed)
    count = rng.randint(1, 6)
    parts = [tuple(-rng.randint(0, 8) / 2 for _ in range(count)) for _ in range(rng.randint(1, 30))]
    costs = [rng.choice([1, 2, 5, 10, 60, 120, 2700]) for _ in range(count)]
    threshold = -rng.randint(1, 12) / 2
    assert pass_order(parts, threshold, costs) == _every_order(parts, threshold, costs)


def test_an_nmr_case_runs_its_nmr_pass_first_with_the_shortlist_unchanged() -> None:
    # menthone with 13C and DEPT: on the spread first batch the NMR pass settles most for its
    # cost, so it moves ahead of the cheap pass; the shortlist is still that of full scoring
    case = parse_case((HERE / "menthone.yaml").read_text(encoding="utf-8"))
    quick = solve(case, shortlist=5, workers=1)
    full = solve(case, shortlist=0)
    assert quick.scoring_passes[0].techniques == ("nmr",)
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[: len(quick.candidates)]]
    assert sum(p.settled for p in quick.scoring_passes) == quick.candidate_count
    # the order is chosen from scores, not times: the same for any number of workers
    assert solve(case, shortlist=5, workers=2).scoring_passes == quick.scoring_passes


class _TwoWorkersHere:
    """A runner that says it has two workers and runs every job in this process when its
    results are read, noting whether a batch was sent before the one before it was read."""

    workers = 2

    def __init__(self) -> None:
        self.unread = 0
        self.sent_ahead = 0

    def map(self, fn, jobs):
        jobs = list(jobs)
        self.sent_ahead += self.unread > 0
        self.unread += 1

        def results():
            self.unread -= 1
            yield from (fn(job) for job in jobs)

        return results()

    def close(self) -> None:
        return None


def test_batches_sent_ahead_keep_the_shortlist_and_do_not_depend_on_timing() -> None:
    # with several workers the next batch is sent before the last is read, once T holds steady;
    # it is judged against an older (lower) T, so it may settle less, never another shortlist.
    # camphor: 2,229 candidates in nine batches, T steady early (self-consistency against one
    # worker and against a real pool of three processes). With the candidates in order of
    # promise, T no longer rises after it first holds steady here, so the batches sent ahead
    # settle what they would have settled read in turn
    case = parse_case((HERE / "camphor.yaml").read_text(encoding="utf-8"))
    one = solve(case, shortlist=10, workers=1)
    runner = _TwoWorkersHere()
    ahead = solve(case, shortlist=10, runner=runner)
    assert runner.sent_ahead > 0
    assert [c.as_dict() for c in ahead.candidates] == [c.as_dict() for c in one.candidates]
    assert sum(p.settled for p in ahead.scoring_passes) + ahead.settled_before_passes == ahead.candidate_count
    # what was sent ahead depends on the scores alone: a pool of processes does the same
    assert solve(case, shortlist=10, workers=3).scoring_passes == ahead.scoring_passes


@pytest.mark.parametrize(
    ("smiles", "signals", "floor_against"),
    [
        # 2,2-dimethylpropane: 2 carbon classes (CH3, C); four observed CH3 signals leave three
        # with no CH3 class of their own: at least 3 x min(extra_signal, type_mismatch)
        ("CC(C)(C)C", [(27.0, "CH3"), (28.0, "CH3"), (29.0, "CH3"), (30.0, "CH3"), (31.0, "C")], 3),
        # pentane: 3 classes (CH3, CH2, CH2); three signals of the right types: nothing owed
        ("CCCCC", [(14.0, "CH3"), (22.0, "CH2"), (34.0, "CH2")], 0),
        # pentane with four untyped signals: one beyond the three classes
        ("CCCCC", [(14.0, None), (22.0, None), (34.0, None), (50.0, None)], 1),
    ],
)
def test_nmr_floor_never_exceeds_the_assessment(smiles: str, signals: list, floor_against: int) -> None:
    from elucidate._rdkit import Chem
    from elucidate.evidence import make_subject
    from elucidate.formula import parse_formula
    from elucidate.generator.groups import default_groups

    c13 = "\n".join(f"    - {{ppm: {p}{', type: ' + t if t else ''}}}" for p, t in signals)
    case = parse_case(f"schema: 1\nid: t\nmass_spec: {{molecular_ion: 72, peaks: {{72: 100}}}}\nnmr:\n  c13:\n{c13}\n")
    mol = Chem.MolFromSmiles(smiles)
    formula = parse_formula(Chem.rdMolDescriptors.CalcMolFormula(mol))
    subject = make_subject(smiles, mol, formula, default_groups(), 72)
    technique = Nmr()
    against, unexplained = technique.floor(subject, case)
    costs = technique.tables.c13.costs
    assert against == pytest.approx(floor_against * min(costs.extra_signal, costs.type_mismatch))
    full = technique.assess(subject, case)
    assert full.against >= against - 1e-9 and full.unexplained >= unexplained - 1e-9
    assert math.isfinite(full.against)


@pytest.mark.parametrize(
    "smiles",
    # menthone, its isomers of other shapes, and C10H18O structures far from its spectra
    ["CC(C)C1CCC(C)CC1=O", "CC(C)C1CC(C)CCC1=O", "CCCCCCCCCC=O", "CC1(C)C2CCC1(C)C(O)C2", "C=CC(C)(O)CCC=C(C)C"],
)
def test_the_first_part_of_the_nmr_assessment_is_a_lower_bound(smiles: str) -> None:
    # the solver stops after the 13C part when it already settles a candidate: sound only if
    # the 1H part never lowers what the 13C part found (self-consistency)
    from elucidate._rdkit import Chem
    from elucidate.evidence import make_subject
    from elucidate.formula import parse_formula
    from elucidate.generator.groups import default_groups

    case = parse_case((HERE / "menthone.yaml").read_text(encoding="utf-8"))
    mol = Chem.MolFromSmiles(smiles)
    subject = make_subject(smiles, mol, parse_formula("C10H18O"), default_groups(), 154)
    technique = Nmr()
    partial = technique.begin(subject, case)
    full = technique.assess(subject, case)
    assert full == technique.finish(subject, case, technique.begin(subject, case))
    assert case.nmr is not None and case.nmr.h1  # the case has a 1H part to add
    assert full.against >= partial.against and full.unexplained >= partial.unexplained
    assert partial.against > 0 or smiles.startswith("CC(C)C1CCC(C)CC1=O")


def test_the_nmr_pass_stops_after_its_13c_part_with_the_shortlist_unchanged(monkeypatch) -> None:
    # menthone, 423 candidates: the first 256 are scored in full (they set the threshold); of
    # the rest, those settled by their 13C part alone, or by any later pass, never run their 1H
    # part; the shortlist is still that of full scoring
    case = parse_case((HERE / "menthone.yaml").read_text(encoding="utf-8"))
    full = solve(case, shortlist=0)
    calls = {"finish": 0, "early": 0}
    begun: set[str] = set()
    begin, finish = Nmr.begin, Nmr.finish

    def counted_begin(self, subject, case, **options):
        begun.add(subject.smiles)
        partial = begin(self, subject, case, **options)
        calls["early"] += not partial.complete
        return partial

    def counted_finish(self, subject, case, partial):
        calls["finish"] += 1
        return finish(self, subject, case, partial)

    monkeypatch.setattr(Nmr, "begin", counted_begin)
    monkeypatch.setattr(Nmr, "finish", counted_finish)
    quick = solve(case, shortlist=5, workers=1)
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[: len(quick.candidates)]]
    assert len(begun) == quick.candidate_count == 423
    assert calls["finish"] <= len(begun) - 50, calls  # measured: 116 stopped after the 13C part
    # the 1H part waits until after the last pass, so only the candidates that pass the last
    # pass's bound run it; the parts waiting are then finished one at a time, each after a bound
    # check, so some candidates are settled after their 1H part without finishing the fragments
    # (measured: 273 1H parts, 256 candidates scored in full)
    complete = sum(p.complete for p in quick.scoring_passes)
    assert complete < calls["finish"] <= quick.scoring_passes[-1].settled, calls
    # some stopped inside it, on the bound of the classes predicted so far
    assert calls["early"] > 0, calls


@pytest.mark.slow
def test_the_pass_order_is_chosen_again_when_the_threshold_passes_the_one_it_was_chosen_for(monkeypatch) -> None:
    # alpha-terpineol: every candidate of the spread first batch has its NMR part at the cap,
    # so on that sample NMR settles no more than the cheap passes and does not come first; once
    # T rises above the sample's best (better candidates scored since), the order is chosen
    # again on the same sample against T and the NMR pass moves first (measured before: 0 of
    # 6,926 settled by the cheap techniques when they stayed first)
    import elucidate.solver.passes as passes

    calls: list[tuple[float, tuple[int, ...]]] = []
    chosen = passes.pass_order

    def spy(parts, threshold, costs):
        order = chosen(parts, threshold, costs)
        calls.append((threshold, order))
        return order

    monkeypatch.setattr(passes, "pass_order", spy)
    case = parse_case((HERE / "alpha-terpineol.yaml").read_text(encoding="utf-8"))
    solution = solve(case, workers=1)
    assert len(calls) >= 2
    assert [t for t, _ in calls] == sorted(t for t, _ in calls)  # chosen again only as T rises
    assert calls[0][1][0] != calls[-1][1][0]  # the order chosen on the sample alone did not start with NMR
    assert solution.scoring_passes[0].techniques == ("nmr",)
    counts = solution.scoring_passes
    assert counts[0].scored == solution.candidate_count
    assert sum(p.settled for p in counts) == solution.candidate_count
    assert counts[-1].complete <= counts[-1].settled and not any(p.complete for p in counts[:-1])


def test_the_promise_bounds_every_score_and_settles_candidates_before_any_pass(monkeypatch) -> None:
    # cyclohexanone (MS, IR): each candidate's promise, what the formula, the IR groups and the
    # ring shape read in generation say, is at least its full score (every other component is 0
    # or less); candidates whose promise is below T are settled before any pass, and the
    # shortlist is still that of full scoring
    from elucidate.reports.solution_report import solve_json, solve_text
    from elucidate.solver import passes

    told: list[tuple[str, float]] = []
    promise = passes._promise

    def spy(items, evaluator, techniques):
        values, guesses = promise(items, evaluator, techniques)
        told.extend((item.smiles, value) for item, value in zip(items, values, strict=True))
        assert guesses == values  # no technique guesses here (no 13C list)
        return values, guesses

    monkeypatch.setattr(passes, "_promise", spy)
    case = parse_case((HERE / "cyclohexanone.yaml").read_text(encoding="utf-8"))
    full = solve(case, shortlist=0)
    score = {c.smiles: c.log_likelihood for c in full.candidates}
    assert len(told) == full.candidate_count - passes.SAMPLE  # all but the spread sample scored first
    assert len({value for _, value in told}) > 1  # the promise tells candidates apart
    assert all(value >= score[smiles] - 1e-9 for smiles, value in told)
    quick = solve(case, shortlist=10, workers=1)
    assert quick.settled_before_passes > 0
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[: len(quick.candidates)]]
    assert quick.scoring_passes[0].scored + quick.settled_before_passes == quick.candidate_count
    said = "before the passes: settled on the formula and the groups and rings read in generation: "
    said += f"{quick.settled_before_passes:,}"
    assert said in solve_text(quick)
    assert solve_json(quick)["settled_before_passes"] == quick.settled_before_passes
    assert solve(case, shortlist=10, workers=2).settled_before_passes == quick.settled_before_passes


def test_a_partial_ring_shape_lowers_the_promise_by_its_strain_and_still_bounds_the_score(monkeypatch) -> None:
    # cyclohexanone (MS, IR): a candidate with two rings of at most four atoms gets a partial
    # ring shape in generation (which pairs of small rings RDKit's set holds may depend on the
    # atom order), so strain cannot be foreseen; its promise is the isotope and IR parts of its
    # full score less the strain of the partial shape (ring strains: constraints/strain.yaml,
    # 15 kcal/mol a nat, capped at 3 nats by constraints/scoring.yaml), and still at least the
    # full score
    from elucidate.generator import kernel
    from elucidate.solver import passes

    monkeypatch.setattr(kernel, "worth_starting", lambda *a, **k: True)  # shapes come from the compiled core
    told: list[tuple[object, float]] = []
    promise = passes._promise

    def spy(items, evaluator, techniques):
        values, guesses = promise(items, evaluator, techniques)
        told.extend(zip(items, values, strict=True))
        return values, guesses

    monkeypatch.setattr(passes, "_promise", spy)
    case = parse_case((HERE / "cyclohexanone.yaml").read_text(encoding="utf-8"))
    full = {c.smiles: c for c in solve(case, shortlist=0).candidates}
    partial = [(item, value) for item, value in told if item.seen.shape is not None and item.seen.shape.partial]
    assert len(partial) > 40
    kcal = {3: 27.5, 4: 26.3, 5: 6.2, 6: 0.0}  # constraints/strain.yaml, from memory there
    for item, value in partial:
        parts = full[item.smiles].components
        shape = item.seen.shape
        floor = (
            sum(kcal[size] for size in shape.rings)
            + sum(27.0 if size == 3 else 2.0 if size == 4 else 0.0 for order, size, _ in shape.bonds if order == 2)
            + sum(13.5 * ends.count(3) for order, size, ends in shape.bonds if order == 2 and not size)
        )
        expected = parts["formula"].log_likelihood + parts["infrared"].log_likelihood - min(floor / 15, 3.0)
        assert value == pytest.approx(expected, abs=1e-9), item.smiles
        assert value >= full[item.smiles].log_likelihood - 1e-9


def test_what_the_foreseeing_techniques_said_is_not_assessed_again(monkeypatch) -> None:
    # menthone (MS, IR, NMR): generation perceived every candidate's IR groups, so the IR
    # assessment is made only through foresee, once per perception and formula in a job, counts
    # in the bounds from the first pass on, and is not made again in its pass; the shortlist is
    # still that of full scoring
    from elucidate.evidence import Infrared

    case = parse_case((HERE / "menthone.yaml").read_text(encoding="utf-8"))
    full = solve(case, shortlist=0)
    calls = {"assess": 0, "foresee": 0}
    assess, foresee = Infrared.assess, Infrared.foresee

    def counted_assess(self, subject, case):
        calls["assess"] += 1
        return assess(self, subject, case)

    def counted_foresee(self, subject, case):
        calls["foresee"] += 1
        return foresee(self, subject, case)

    monkeypatch.setattr(Infrared, "assess", counted_assess)
    monkeypatch.setattr(Infrared, "foresee", counted_foresee)
    quick = solve(case, shortlist=5, workers=1)
    assert [c.as_dict() for c in quick.candidates] == [c.as_dict() for c in full.candidates[: len(quick.candidates)]]
    assert 0 < calls["assess"] == calls["foresee"] < quick.candidate_count, calls


def test_the_report_says_what_each_pass_ran_on_settled_and_scored_in_full() -> None:
    from elucidate.reports.solution_report import solve_text

    case = parse_case((HERE / "menthone.yaml").read_text(encoding="utf-8"))
    solution = solve(case, shortlist=5, workers=1)
    text = solve_text(solution)
    counts = solution.scoring_passes
    last = counts[-1]
    assert f"ran on {counts[0].scored:,}, settled (cannot reach the shortlist): {counts[0].settled:,}" in text
    assert f"scored in full: {last.complete:,}" in text
