"""`elucidate solve`, run in-process: report content, JSON keys, suspects, the
explanation when nothing survives, and molecular-ion hypotheses."""

from __future__ import annotations

from pathlib import Path

import pytest

from elucidate import parse_case
from elucidate.solver import molecular_ion_hypotheses, rank_hypotheses, solve

DEMO = str(Path(__file__).resolve().parents[1] / "cases" / "cr-0509-i.yaml")


@pytest.fixture(scope="module")
def demo_run(cli):
    res = cli("solve", DEMO, "--json", "--top", "5")
    assert res.code == 0, res.err
    return res


@pytest.fixture(scope="module")
def demo_json(demo_run):
    # same case, same output: tests/test_golden.py compares every demo case's solve --json
    # with the recorded bytes, a stronger check than two runs in one process
    return demo_run.json()


def test_json_has_the_promised_keys(demo_json):
    for key in ("case_id", "formulas", "generated", "eliminated", "candidates"):
        assert key in demo_json
    assert demo_json["case_id"] == "cr-0509-i"
    first = demo_json["candidates"][0]
    for key in ("rank", "rank_label", "smiles", "inchikey", "formula", "score", "log_likelihood", "components"):
        assert key in first
    assert "reasons" in first
    for part in first["components"].values():
        assert set(part) == {"score", "against", "unexplained", "weight"}
    cands = demo_json["candidates"]
    logs = [c["log_likelihood"] for c in cands]
    assert logs == sorted(logs, reverse=True)
    # competition ranking: equal log-likelihoods share a rank, printed "2=" (common practice)
    for i, c in enumerate(cands):
        tied = [d for d in cands if d["log_likelihood"] == c["log_likelihood"]]
        assert c["rank"] == 1 + sum(1 for d in cands if d["log_likelihood"] > c["log_likelihood"])
        assert c["rank_label"] == (f"{c['rank']}=" if len(tied) > 1 else str(c["rank"])), i


def test_demo_ranks_the_para_isomer_first_and_reports_suspects(demo_json):
    # 4'-methylacetophenone: 7 13C signals (common practice), Scott 246 + p-alkyl 10
    assert demo_json["candidates"][0]["smiles"] == "CC(=O)c1ccc(C)cc1"
    assert demo_json["candidates"][0]["inchikey"] == "GNKZMNRKLCTJAY-UHFFFAOYSA-N"  # RDKit InChIKey
    suspects = {s["given"]: s for s in demo_json["suspects"]}
    assert suspects["CC(=O)c1ccc(C)cc1"]["rank"] == 1
    assert suspects["CCC(=O)c1ccccc1"]["rank"] is not None  # propiophenone: ranked, lower
    toluene = suspects["Cc1ccccc1"]
    assert toluene["rank"] is None and toluene["eliminated_by"] == "formula"
    assert "92" in toluene["why"]


def test_text_report_has_caution_shortlist_and_details(cli):
    res = cli("solve", DEMO, "--top", "3")
    assert res.code == 0
    assert "reference standard" in res.out and "toxic" in res.out
    assert "shortlist (3 of" in res.out
    assert "#1  CC(=O)c1ccc(C)cc1" in res.out
    assert "EI  m/z  119" in res.out
    assert "removed by require aromatic_ring" in res.out
    assert "suspects" in res.out


def test_contradictory_constraints_are_named(tmp_path, cli):
    case = tmp_path / "c.yaml"
    case.write_text(
        "schema: 1\nid: c1\nmass_spec:\n  molecular_ion: 72\n  peaks: {72: 50, 73: 2.2, 43: 100}\n"
        "formula:\n  elements: {C: 0-8, H: 0-20, O: 0-2}\n"
        "infrared:\n  require: [ketone]\nstructure:\n  forbid_smarts: ['[CX3]=O']\n"
    )
    # provable from the patterns (every ketone has [CX3]=O): refused before any work
    res = cli("solve", str(case), "--json")
    assert res.code == 1 and "every structure with the required group ketone (line 9" in res.err
    # written as a recursive SMARTS the implication is not proven up front; the run ends empty
    # and the diagnosis finds the contradiction
    case.write_text(case.read_text().replace("'[CX3]=O'", "'[$([CX3]=O)]'"))
    res = cli("solve", str(case), "--json")
    assert res.code == 3  # nothing survives: its own exit code, the report still says why
    data = res.json()
    assert data["candidates"] == []
    text = " ".join(data["empty_reason"])
    assert "require ketone and forbid_smarts [$([CX3]=O)] contradict each other" in text


def test_unknown_molecular_ion_hypotheses():
    case = parse_case("schema: 1\nid: u\nmass_spec:\n  molecular_ion: unknown\n  peaks: {73: 25, 59: 100, 55: 40}\n")
    # the highest peak + CH3 15, OH 17, H2O 18 explain 73, 59 and 55 by usual losses (Lange's
    # 7.8.2.4); 73 itself as M would need a loss of 14 u to the base peak, which no usual
    # fragmentation gives (McLafferty & Turecek, from memory), so it is not tried
    assert molecular_ion_hypotheses(case)[:3] == (88, 90, 91)
    assert 73 not in molecular_ion_hypotheses(case)


# 2-methyl-2-butanol, EI (from memory: 73 M-15, 59 M-29 base, 55 M-18-15, 45, 43, 41, 31; no M+ 88)
TERT_AMYL = {73: 25, 59: 100, 55: 40, 45: 10, 43: 30, 41: 25, 31: 20}


def test_hypotheses_are_ranked_by_the_upper_spectrum_and_every_one_is_said():
    ranked = rank_hypotheses(TERT_AMYL)
    assert ranked[0].m == 88 and ranked[0].loss == 15
    dropped = {h.m: h for h in ranked if not h.kept}
    assert 73 in dropped and dropped[73].implausible == (59,)
    assert "worse than M 88" in (dropped[73].why or "")
    # every first loss of the table was considered: 0 and the nine usual first losses
    assert sorted(h.loss for h in ranked) == [0, 15, 17, 18, 29, 31, 43, 45, 59, 60]
    assert sum(h.kept for h in ranked) <= 4


def test_a_chlorine_partner_is_not_taken_as_the_highest_peak():
    # a C-Cl fragment pair 93/95 at about 3:1 (35Cl/37Cl, IUPAC abundances): 95 is the partner
    ranked = rank_hypotheses({95: 10, 93: 30, 57: 100, 41: 50})
    assert {h.highest for h in ranked} == {93}


def test_the_report_names_every_hypothesis_and_every_formula_not_tried(cli, tmp_path):
    case = tmp_path / "u3.yaml"
    case.write_text(
        "schema: 1\nid: u3\nmass_spec:\n  molecular_ion: unknown\n  peaks: {73: 25, 59: 100, 55: 40}\n"
        "formula:\n  elements: {C: 0-8, H: 0-20, N: 0-2, O: 0-3}\ninfrared:\n  bands: [3380]\n  require: [alcohol]\n",
        encoding="utf-8",
    )
    res = cli("solve", str(case), "--json", "--formulas", "2")
    data = res.json()
    considered = data["molecular_ion_considered"]
    assert [h["m"] for h in considered if h["kept"]] == data["molecular_ion_hypotheses"]
    assert any(not h["kept"] and h["why"] for h in considered)
    untried = data["formulas_not_tried"]
    assert untried and all("parsimony" in u["why"] for u in untried)
    tried = {(f["formula"], f["molecular_ion"]) for f in data["formulas"]}
    assert not tried & {(u["formula"], u["molecular_ion"]) for u in untried}
    text = cli("solve", str(case), "--formulas", "2").out
    assert "not tried: M 73" in text and "formulas not tried" in text


def test_unknown_molecular_ion_candidates_say_which_m(tmp_path):
    text = (
        "schema: 1\nid: u2\nmass_spec:\n  molecular_ion: unknown\n  peaks: {73: 25, 59: 100, 55: 40, 45: 10, 31: 20}\n"
        "formula:\n  elements: {C: 0-8, H: 0-20, O: 0-1}\ninfrared:\n  bands: [3380, 2970]\n  require: [alcohol]\n"
        "nmr:\n  c13_signals: 4\n"
    )
    solution = solve(parse_case(text))
    ms = {c.molecular_ion for c in solution.candidates}
    assert 88 in ms  # C5H12O alcohols: M = 73 + 15
    assert any(c.smiles == "CCC(C)(C)O" for c in solution.candidates)


def test_bad_options_are_errors(cli):
    assert cli("solve", DEMO, "--top", "-1").code == 1
    assert cli("solve", "missing.yaml").code == 1


def test_the_case_can_store_its_solve_options_and_the_command_line_overrides_them(tmp_path, cli):
    text = Path(DEMO).read_text().replace("structure:\n", "solve: {formulas: 1, limit: 5}\nstructure:\n")
    case = tmp_path / "c.yaml"
    case.write_text(text.replace("  require: [ketone, aromatic_ring]\n", ""))
    res = cli("solve", str(case), "--json")
    assert res.code == 4  # every formula above the limit: refused as too large (README exit codes)
    stored = res.json()
    assert len(stored["formulas"]) == 1 and "above the limit 5" in stored["formulas"][0]["skipped"]
    overridden = cli("solve", str(case), "--json", "--formulas", "2").json()
    assert len(overridden["formulas"]) == 2
    # the best-fitting formula is over the limit; the next is over it too or held behind it
    assert "above the limit 5" in overridden["formulas"][0]["skipped"]
    assert all(f["structures"] == 0 and f["skipped"] for f in overridden["formulas"])
    # a formula left out is said first, before the tables, since the answer may be in it
    text = cli("solve", str(case)).out
    assert text.index("note: C9H10O (M 134) not enumerated") < text.index("formulas kept")


def test_bad_solve_options_are_refused(tmp_path, cli):
    text = Path(DEMO).read_text().replace("structure:\n", "solve: {formulaz: 2}\nstructure:\n")
    case = tmp_path / "c.yaml"
    case.write_text(text)
    res = cli("check", str(case))
    assert res.code == 1 and "formulaz" in res.err
    assert cli("solve", DEMO, "--limit", "0").code == 1


MS_ONLY_100 = (
    "schema: 1\nid: ms100\nmass_spec:\n  molecular_ion: 100\n"
    "  peaks: {100: 20, 101: 1.4, 102: 0.2, 85: 30, 58: 100, 43: 80}\n"
    "formula:\n  elements: {C: 0-10, H: 0-24, O: 0-2}\n"
)


def test_a_formula_skipped_for_size_is_named_first_with_advice_and_worse_ones_wait(cli, tmp_path):
    # C8H4 (M 100) has 5,308 structures to test (Knuth estimate about 1,800); with --limit 3000
    # its enumeration stops at the limit and it is skipped, with advice, and the formula ranked
    # below it (C7O, demoted by Kind & Fiehn) is held back unless asked
    case = tmp_path / "ms100.yaml"
    case.write_text(MS_ONLY_100, encoding="utf-8")
    text = cli("solve", str(case), "--limit", "3000", "--details", "0").out
    notes = [line for line in text.splitlines() if line.startswith("note:")]
    first_table = text.index("formulas kept")
    assert notes and all(text.index(n) < first_table for n in notes)
    assert any(
        "C8H4 (M 100) not enumerated" in n
        and "more than 3,000 structures to test" in n
        and ("requiring one of these groups" in n or "no single group" in n)
        for n in notes
    )
    assert any("C7O (M 100) not enumerated" in n and "ranks below C8H4" in n for n in notes)
    data = cli("solve", str(case), "--limit", "3000", "--json").json()
    held = {f["formula"]: f for f in data["formulas"]}
    assert held["C7O"]["structures"] == 0 and "--worse-formulas" in held["C7O"]["skipped"]
    asked = cli("solve", str(case), "--limit", "3000", "--json", "--worse-formulas").json()
    assert {f["formula"]: f for f in asked["formulas"]}["C7O"]["structures"] > 0
    # the case can ask for the same in its solve section
    case.write_text(MS_ONLY_100 + "solve:\n  worse_formulas: true\n  limit: 3000\n", encoding="utf-8")
    stored = cli("solve", str(case), "--json").json()
    assert {f["formula"]: f for f in stored["formulas"]}["C7O"]["structures"] > 0


def test_the_next_formulas_size_worked_out_during_generation_changes_nothing(monkeypatch):
    # with worker processes, the solver's own process estimates the next formula (and its group
    # advice when it is over the limit) while the workers generate; one process works them out
    # in turn. The answers must be the same (common practice: a result never depends on the
    # number of workers)
    from elucidate.reports.solution_report import solve_json
    from elucidate.solver import ranking

    case = parse_case(MS_ONLY_100)
    started: list[str] = []
    start = ranking._Ahead.start

    def spy(self, formula, *, advise):
        started.append(str(formula))
        return start(self, formula, advise=advise)

    monkeypatch.setattr(ranking._Ahead, "start", spy)
    one = solve(case, workers=1, limit=3000)
    assert started == []
    two = solve(case, workers=2, limit=3000)
    assert "C8H4" in started  # worked out ahead
    advised = [n for n in two.notes if "C8H4 (M 100) not enumerated" in n]
    assert advised and ("requiring one of these groups" in advised[0] or "no single group" in advised[0])
    assert solve_json(one) == solve_json(two)


@pytest.mark.parametrize("workers", [1, 2])
def test_the_limit_holds_while_enumerating_when_the_estimate_is_too_low(tmp_path, monkeypatch, workers):
    # Knuth's estimate reads far too low where its random walks dead-end; the limit must then
    # still stop the enumeration (every formula estimated 0 here on purpose; C5H8O2 has far
    # more than 1,000 structures to test, C6H12O and C7H16 fewer)
    import elucidate.generator as generator
    from elucidate import load_case
    from elucidate.solver import solve

    case_file = tmp_path / "ms100.yaml"
    case_file.write_text(MS_ONLY_100, encoding="utf-8")
    # (solve reads estimate_space; patching estimate_structures, as this test once did, left the
    # real estimate in place, which happened to read C5H8O2 under the limit)
    monkeypatch.setattr(generator, "estimate_space", lambda *args, **kwargs: generator.SpaceEstimate(0.0, 0.0))
    solution = solve(load_case(case_file), limit=1000, workers=workers)
    kept = {str(k.formula): k for k in solution.formulas}
    assert kept["C6H12O"].structures > 0 and kept["C6H12O"].skipped is None
    stopped = kept["C5H8O2"]
    assert stopped.structures == 0 and "more than 1,000 structures to test" in (stopped.skipped or "")
    # no part of its space is ranked, and the worse formulas are held behind it, as for any skip
    assert not any(str(c.formula) == "C5H8O2" for c in solution.candidates)
    assert all("ranks below C5H8O2" in (kept[f].skipped or "") for f in ("C8H4", "C7O"))


def _spy_on_generation(monkeypatch):
    """The formulas the solver counts against its limit and those it generates, in call order
    (the generator's own functions run, wrapped)."""
    import elucidate.generator as generator

    counted, generated = [], []
    real_count, real_generate = generator.within_budget, generator.isomer_smiles

    def count(formula, *args, **kwargs):
        counted.append(str(formula))
        return real_count(formula, *args, **kwargs)

    def generate(formula, *args, **kwargs):
        generated.append(str(formula))
        return real_generate(formula, *args, **kwargs)

    monkeypatch.setattr(generator, "within_budget", count)
    monkeypatch.setattr(generator, "isomer_smiles", generate)
    return counted, generated


def test_a_space_estimated_near_the_limit_is_counted_before_it_is_generated(tmp_path, monkeypatch):
    # every formula estimated at 900 structures on purpose (under the limit of 1,000 but at or
    # above COUNT_FIRST_SHARE of it): each is counted first, C5H8O2 (far more than 1,000) is
    # skipped on its count and never generated, C6H12O (fewer) is counted, then generated
    import elucidate.generator as generator
    from elucidate import load_case
    from elucidate.solver import solve
    from elucidate.solver.ranking import COUNT_FIRST_SHARE

    assert COUNT_FIRST_SHARE * 1000 <= 900
    case_file = tmp_path / "ms100.yaml"
    case_file.write_text(MS_ONLY_100, encoding="utf-8")
    monkeypatch.setattr(generator, "estimate_space", lambda *args, **kwargs: generator.SpaceEstimate(900.0, 0.0))
    counted, generated = _spy_on_generation(monkeypatch)
    solution = solve(load_case(case_file), limit=1000, workers=1)
    kept = {str(k.formula): k for k in solution.formulas}
    assert "C5H8O2" in counted and "C5H8O2" not in generated
    assert "more than 1,000 structures to test" in (kept["C5H8O2"].skipped or "")
    assert "C6H12O" in counted and "C6H12O" in generated
    assert kept["C6H12O"].structures > 0 and kept["C6H12O"].skipped is None


@pytest.mark.parametrize("workers", [1, 2])
def test_a_space_the_estimate_reads_far_too_low_is_counted_once_generation_proves_it(tmp_path, monkeypatch, workers):
    # every formula estimated at 50 structures on purpose (far under the truth): generation
    # stops once it has taken more than max(RECOUNT_AFTER x 50, COUNT_FLOOR_SHARE x 600) = 150
    # structures, and the space is counted against the limit of 600: C5H8O2 (1,168 structures
    # to test) is skipped on its count, C6H12O (211) is counted, then generated again in full
    import elucidate.generator as generator
    from elucidate import load_case
    from elucidate.solver import solve
    from elucidate.solver.ranking import COUNT_FIRST_SHARE, COUNT_FLOOR_SHARE, RECOUNT_AFTER

    assert max(RECOUNT_AFTER * 50, COUNT_FLOOR_SHARE * 600) < 211 and COUNT_FIRST_SHARE * 600 > 50
    case_file = tmp_path / "ms100.yaml"
    case_file.write_text(MS_ONLY_100, encoding="utf-8")
    monkeypatch.setattr(generator, "estimate_space", lambda *args, **kwargs: generator.SpaceEstimate(50.0, 0.0))
    counted, generated = _spy_on_generation(monkeypatch)
    solution = solve(load_case(case_file), limit=600, workers=workers)
    kept = {str(k.formula): k for k in solution.formulas}
    assert "C5H8O2" in counted and generated.count("C5H8O2") == 1
    assert "more than 600 structures to test" in (kept["C5H8O2"].skipped or "")
    assert not any(str(c.formula) == "C5H8O2" for c in solution.candidates)
    assert "C6H12O" in counted and generated.count("C6H12O") == 2
    assert kept["C6H12O"].skipped is None
    # the second generation alone is kept: the same structures as a run that never stopped
    monkeypatch.setattr(generator, "estimate_space", lambda *args, **kwargs: generator.SpaceEstimate(300.0, 0.0))
    counted.clear()
    plain = solve(load_case(case_file), limit=600, workers=workers)
    # an estimate read right (211 structures, under 2 x 300) and not near the limit is never counted
    assert COUNT_FIRST_SHARE * 600 > 300 and "C6H12O" not in counted
    assert {str(k.formula): k.structures for k in plain.formulas}["C6H12O"] == kept["C6H12O"].structures > 0
    ours = [c.smiles for c in solution.candidates if str(c.formula) == "C6H12O"]
    assert ours == [c.smiles for c in plain.candidates if str(c.formula) == "C6H12O"]


def test_group_advice_names_only_groups_the_formula_can_hold():
    # C8H4 (no O, no halogen) can hold a C≡C but never a ketone or a halide (IUPAC Gold Book
    # group definitions, groups.yaml); each size given is the Knuth estimate the solver itself
    # uses with that group declared, and every group named has a positive exact count. (Its
    # aromatic ring, 5 isomers, reads 0 in the advice's 64 walks: every walk dead-ends.)
    from elucidate.formula import parse_formula
    from elucidate.generator import GeneratorOptions, count_isomers
    from elucidate.generator.groups import default_groups
    from elucidate.generator.selection import Selection
    from elucidate.solver.advice import could_hold, group_estimates

    options = GeneratorOptions(selection=Selection(profile="stable"))
    sizes = dict(group_estimates(parse_formula("C8H4"), options, default_groups()))
    assert "alkyne" in sizes
    assert not {"ketone", "alkyl_halide", "aryl_halide"} & set(sizes)
    for group in sizes:
        exact = count_isomers(
            parse_formula("C8H4"), GeneratorOptions(selection=Selection(require=(group,), profile="stable"))
        )
        assert exact > 0
    assert could_hold("[CX4][F,Cl,Br,I]", parse_formula("C4H9Br"))
    assert not could_hold("[CX4][F,Cl,Br,I]", parse_formula("C4H10O"))
