"""`elucidate solve`, run in-process: report content, JSON keys, suspects, the
explanation when nothing survives, and molecular-ion hypotheses."""

from __future__ import annotations

from pathlib import Path

import pytest

from elucidate import parse_case
from elucidate.solver import molecular_ion_hypotheses, solve

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
    res = cli("solve", str(case), "--json")
    assert res.code == 3  # nothing survives: its own exit code, the report still says why
    data = res.json()
    assert data["candidates"] == []
    text = " ".join(data["empty_reason"])
    assert "require ketone and forbid_smarts [CX3]=O contradict each other" in text


def test_unknown_molecular_ion_hypotheses():
    case = parse_case("schema: 1\nid: u\nmass_spec:\n  molecular_ion: unknown\n  peaks: {73: 25, 59: 100, 55: 40}\n")
    # the highest peak and that peak + CH3 15, OH 17, H2O 18 (common practice)
    assert molecular_ion_hypotheses(case) == (73, 88, 90, 91)


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
    stored = cli("solve", str(case), "--json").json()
    assert len(stored["formulas"]) == 1 and "above the limit 5" in stored["formulas"][0]["skipped"]
    overridden = cli("solve", str(case), "--json", "--formulas", "2").json()
    assert len(overridden["formulas"]) == 2
    assert all("above the limit 5" in f["skipped"] for f in overridden["formulas"])
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
