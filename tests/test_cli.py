"""The command line, run in-process, and the promises README makes about it."""

from __future__ import annotations

import io
import json
import re
import shutil
from pathlib import Path

import pytest

from elucidate.cli import main
from elucidate.formula_search.search import composition_count


def test_check_all_demo_cases(cli, cases_dir):
    res = cli("check", *sorted(str(p) for p in cases_dir.glob("*.yaml")))
    assert res.code == 0, res.err
    assert res.out.count("ok: ") == len(list(cases_dir.glob("*.yaml")))


def test_check_reports_each_bad_file_and_fails(cli, tmp_path, cases_dir):
    good = tmp_path / "good.yaml"
    shutil.copy(cases_dir / "cr-0417-a.yaml", good)
    bad = tmp_path / "bad.yaml"
    bad.write_text("schema: 1\nid: b1\nmass_spec:\n  molecular_ion: 112\n  peaks: {112: 100, 113: 6,6}\n")
    res = cli("check", str(good), str(bad))
    assert res.code == 1
    assert "ok: " in res.out
    assert f"{bad}:5: mass_spec.peaks.6:" in res.err
    assert "1 of 2 case file(s) invalid" in res.err
    assert "Traceback" not in res.err


def test_check_accepts_revisions_of_one_unknown(cli, tmp_path, cases_dir):
    """Revisions of one unknown share its id (common practice: one id per sample, evidence added
    over time); check names them as revisions, and a byte-identical copy as a copy."""
    a, b, c = tmp_path / "a.yaml", tmp_path / "b.yaml", tmp_path / "c.yaml"
    shutil.copy(cases_dir / "cr-0417-a.yaml", a)
    shutil.copy(cases_dir / "cr-0417-a.yaml", b)
    c.write_text(a.read_text() + "uv_vis:\n  lambda_max: 264\n")
    res = cli("check", str(a), str(b), str(c))
    assert res.code == 0, res.err
    lines = res.out.splitlines()
    assert lines[1] == f"ok: {b} (cr-0417-a, the same text as {a})"
    assert lines[2] == f"ok: {c} (cr-0417-a, another revision of the unknown in {a})"


def test_formulas_text_table_and_caution(cli, cases_dir):
    res = cli("formulas", str(cases_dir / "cr-0417-a.yaml"))
    assert res.code == 0
    assert re.search(r"^\s+1\s+C6H5Cl\s+4\s+112\s+112\.007978", res.out, re.M)
    assert "best read as Cl1" in res.out
    assert "reference standard" in res.out and "toxic" in res.out


def test_formulas_without_molecular_ion_says_what_to_do(cli, cases_dir):
    res = cli("formulas", str(cases_dir / "cr-0421-g.yaml"))
    assert res.code == 1 and "--molecular-ion" in res.err
    res = cli("formulas", str(cases_dir / "cr-0421-g.yaml"), "--molecular-ion", "74", "--json")
    assert res.code == 0
    assert "C4H10O" in [c["formula"] for c in res.json()]


@pytest.mark.parametrize(
    "argv,message",
    [
        (["formulas", "112", "--peaks", "112:100 113:6,6"], "--peaks: cannot read '6'"),
        (["formulas", "112", "--peaks", "112:90"], "largest must be 100"),
        (["formulas", "112", "--elements", "C:0-10,Q:0-1"], "unknown element 'Q'"),
        (["formulas", "112", "--dbe", "9-2"], "--dbe"),
        (["formulas", "112", "--exact-mass", "140.0"], "cannot belong"),
        (["formulas", "nonsense"], "neither a nominal mass"),
        (["formulas", "missing.yaml"], "file not found"),
        (["formulas", "112", "--why", "C6H5Q"], "unknown element"),
    ],
)
def test_bad_values_give_one_clear_error(cli, argv, message):
    res = cli(*argv)
    assert res.code == 1
    assert message in res.err and "Traceback" not in res.err


def test_usage_errors_exit_2(cli):
    assert cli("formulas").code == 2
    assert cli("frobnicate").code == 2
    assert cli("formulas", "112", "--element-ratios", "loose").code == 2
    assert cli().code == 2


def test_json_lists_best_first_with_required_keys(cli, cases_dir):
    res = cli("formulas", str(cases_dir / "cr-0502-h.yaml"), "--json")
    data = res.json()
    assert isinstance(data, list) and data[0]["formula"] == "C8H8O"
    # ranked by the isotope fit after any element-ratio demotion, in classes of 0.01
    classes = [round(d["ranking_score"] / 0.01) for d in data]
    assert classes == sorted(classes, reverse=True)
    assert all(d["ranking_score"] <= d["score"] for d in data)
    assert [d["rank"] for d in data] == list(range(1, len(data) + 1))


def test_explain_in_json_marks_rejected(cli):
    data = cli("formulas", "58", "--json", "--explain").json()
    statuses = {d["status"] for d in data}
    assert statuses == {"kept", "rejected"}
    assert all(d["reason"] for d in data if d["status"] == "rejected")


def test_same_input_same_output(cli, cases_dir):
    a = cli("formulas", str(cases_dir / "cr-0417-b.yaml"), "--top", "0").out
    b = cli("formulas", str(cases_dir / "cr-0417-b.yaml"), "--top", "0").out
    assert a == b


def test_python_dash_m_entry_point(project_root):
    import subprocess
    import sys

    proc = subprocess.run(
        [sys.executable, "-m", "elucidate", "formulas", "78", "--json", "--top", "1"],
        capture_output=True,
        text=True,
        cwd=project_root,
        check=False,
    )
    assert proc.returncode == 0, proc.stderr
    assert '"C6H6"' in proc.stdout


def _readme_commands(project_root):
    text = (project_root / "README.md").read_text()
    block = re.search(r"```(?:sh|bash)\n(.*?)```", text, re.S)
    assert block, "README has no shell block with the set-up commands"
    return [line for line in block.group(1).splitlines() if line.strip() and not line.startswith("#")]


def test_readme_has_exactly_two_setup_commands_and_ci_runs_the_test_one(project_root):
    commands = _readme_commands(project_root)
    assert len(commands) == 2
    assert "pytest" in commands[1]
    ci = (project_root / ".ci" / "run").read_text()
    assert commands[1] in ci


def test_readme_demo_command_targets_an_existing_case(project_root):
    demo = _readme_commands(project_root)[0]
    paths = re.findall(r"cases/[\w.-]+\.yaml", demo)
    assert paths and all((project_root / p).is_file() for p in paths)


def test_known_formula_without_molecular_ion(cli, tmp_path):
    case = tmp_path / "k.yaml"
    case.write_text("schema: 1\nid: k1\nmass_spec:\n  peaks: {105: 100, 77: 60}\nformula:\n  known: C8H8O\n")
    res = cli("formulas", str(case), "--json")
    assert res.code == 0, res.err
    assert [d["formula"] for d in res.json()] == ["C8H8O"]


def test_wide_limits_at_a_small_mass_are_answered(cli):
    # 41 x 61^5 combinations of the ranges (35 billion), but only those weighing 400 are built
    limits = "C:0-40,H:0-80,N:0-60,O:0-60,S:0-60,Cl:0-60,Br:0-60"
    res = cli("formulas", "400", "--elements", limits)
    assert res.code == 0, res.err
    wide = {"C": (0, 40), "H": (0, 80), "N": (0, 60), "O": (0, 60), "S": (0, 60), "Cl": (0, 60), "Br": (0, 60)}
    n = composition_count(400, wide)
    assert f"compositions at nominal mass 400: {n};" in res.out


def test_isomers_streams_smiles_and_counts(cli):
    res = cli("isomers", "C4H10")
    assert res.code == 0 and res.out.splitlines() == ["CC(C)C", "CCCC"]
    res = cli("isomers", "C6H6", "--kekule", "--count")
    assert res.out.strip().splitlines()[-1] == "217"  # C6H6 as graphs (published count)
    res = cli("isomers", "C6H14", "--no-rings", "--count")
    assert res.out.strip() == "5"  # hexanes, OEIS A000602


def test_isomers_engines_write_the_same_smiles(cli):
    # C7H8O: 13,175 isomers with Kekule forms merged (the generator's own count, checked against
    # the Python labelling in tests/test_kernel.py)
    python = cli("isomers", "C7H8O", "--engine", "python")
    compiled = cli("isomers", "C7H8O", "--engine", "compiled")
    assert python.code == compiled.code == 0
    assert compiled.out == python.out and len(python.out.splitlines()) == 13175
    bad = cli("isomers", "C7H8O", "--engine", "fast")
    assert bad.code == 2  # an argparse usage error, listing the choices


def test_isomers_lowest_valence_switch(cli):
    full = cli("isomers", "CH3NO2").out.splitlines()
    lowest = cli("isomers", "CH3NO2", "--lowest-valence").out.splitlines()
    assert "C[N+](=O)[O-]" in full and "C[N+](=O)[O-]" not in lowest
    assert set(lowest) < set(full)


def test_isomers_json_and_sort(cli):
    data = cli("isomers", "C3H6O", "--json").json()
    assert data["formula"] == "C3H6O" and data["count"] == 9 == len(data["smiles"])
    assert data["smiles"] == sorted(data["smiles"])
    assert cli("isomers", "C3H6O", "--sort").out.splitlines() == data["smiles"]


@pytest.mark.parametrize(
    "argv,message",
    [(["isomers", "C6H6Q"], "unknown element"), (["isomers", "C6H6", "--max-rings", "-1"], "--max-rings")],
)
def test_isomers_bad_input(cli, argv, message):
    res = cli(*argv)
    assert res.code == 1 and message in res.err


def test_isomers_refuses_large_spaces_with_the_estimate(cli):
    res = cli("isomers", "C10H12O", "--count")
    assert res.code == 4  # refused as too large: its own exit code (README)
    assert "estimated" in res.err and "--limit" in res.err


def test_isomers_limit_can_be_raised(cli):
    res = cli("isomers", "C6H6", "--limit", "10", "--count")
    assert res.code == 4 and "--limit" in res.err
    assert cli("isomers", "C6H6", "--limit", "1000", "--count").out.strip() == "217"


class _Terminal(io.StringIO):
    """A captured stream that says it is a terminal."""

    def isatty(self) -> bool:
        return True


def test_solve_draws_a_bar_per_stage_on_a_terminal_and_keeps_stdout_json() -> None:
    case = str(Path(__file__).resolve().parents[1] / "cases" / "cr-0611-j.yaml")
    out, err = io.StringIO(), _Terminal()
    assert main(["solve", case, "--json"], stdout=out, stderr=err) == 0
    data = json.loads(out.getvalue())  # stdout holds the JSON and nothing else
    bars = err.getvalue()
    for stage in ("formulas", "generation", "scoring"):
        assert stage in bars
    assert f"{data['candidate_count']}/{data['candidate_count']}" in bars  # scoring ran to the end
    piped = io.StringIO()
    assert main(["solve", case, "--json"], stdout=io.StringIO(), stderr=piped) == 0
    # not a terminal: no bar, only the line naming the run record
    assert [line.split(":")[0] for line in piped.getvalue().splitlines()] == ["run recorded"]


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (("isomers", "C3H7", "--count"), "half-integer DBE (0.5)"),  # DBE = C - H/2 + N/2 + 1 (IUPAC Gold Book)
        (("isomers", "C3H8", "--limit", "0"), "--limit must be 1 or more"),
    ],
)
def test_isomers_refuses_impossible_questions(cli, argv, message):
    res = cli(*argv)
    assert res.code == 1 and message in res.err and res.out == ""


def test_check_runs_what_solve_checks_before_any_work(cli, tmp_path):
    """A case with neither a molecular ion nor peaks loads, but solve cannot start: check says so
    with the same message and exit code."""
    case = tmp_path / "c.yaml"
    case.write_text("schema: 1\nid: c\ntitle: t\nformula:\n  elements: {C: 0-10, H: 0-20}\n")
    checked = cli("check", str(case))
    solved = cli("solve", str(case), "--no-record", "--no-cache")
    assert checked.code == solved.code == 1
    message = "mass_spec: no molecular ion and no peaks"
    assert message in checked.err and message in solved.err


def test_more_13c_signals_than_carbons_is_refused_by_check_and_solve(cli, tmp_path):
    # each 13C signal needs its own carbon, and M 150 holds at most 150 // 12 = 12 carbons (common practice)
    case = tmp_path / "c.yaml"
    case.write_text(
        "schema: 1\nid: c\ntitle: t\nmass_spec:\n  molecular_ion: 150\n  peaks: {150: 100}\nnmr:\n  c13_signals: 40\n"
    )
    for command in ("check", "solve"):
        res = cli(command, str(case), *(["--no-record", "--no-cache"] if command == "solve" else []))
        assert res.code == 1 and "nmr.c13_signals: 40 13C signals need at least 40 carbons" in res.err
        assert "allow at most 12" in res.err


def test_an_odd_molecular_ion_with_nitrogen_excluded_names_the_nitrogen_rule(cli, tmp_path):
    # nitrogen rule: an odd nominal mass needs an odd number of N (McLafferty & Turecek, 4th ed., ch. 3)
    case = tmp_path / "c.yaml"
    case.write_text(
        "schema: 1\nid: c\ntitle: t\nmass_spec:\n  molecular_ion: 135\n  peaks: {135: 40, 136: 4, 120: 100}\n"
        "formula:\n  elements: {C: 0-12, H: 0-30, O: 0-3}\n"
    )
    res = cli("solve", str(case), "--no-record", "--no-cache")
    assert res.code == 3
    assert "M 135 is odd: by the nitrogen rule" in res.out and "formula.elements excludes N" in res.out
