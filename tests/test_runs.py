"""Run records, ``history`` and ``diff`` (elucidate.runs, elucidate.reports.run_diff).

What a record must hold for an audit trail is common practice in regulated labs (the input as
run, the software version, the reference data used, the settings and a UTC time); the hashes are
checked against Python's hashlib SHA-256 (FIPS 180-4) computed independently here.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import time
from datetime import UTC, datetime
from pathlib import Path

import pytest

from elucidate.errors import ElucidateError
from elucidate.runs import RUN_SCHEMA, case_runs, make_record, read_record, revisions, write_record

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "cr-0509-i.yaml"


def _records(folder: Path) -> list[Path]:
    return sorted(folder.glob("*.json"))


def _solve(cli, case: Path, runs: Path, *extra: str):
    return cli("solve", str(case), "--runs", str(runs), "--top", "5", "--details", "0", *extra)


@pytest.fixture
def demo(tmp_path: Path) -> Path:
    case = tmp_path / "unknown.yaml"
    shutil.copy(DEMO, case)
    return case


def test_solve_writes_one_complete_record_and_leaves_the_case_alone(cli, demo, tmp_path):
    before = demo.read_bytes()
    stamp = demo.stat().st_mtime_ns
    runs = tmp_path / "runs"
    res = _solve(cli, demo, runs, "--json")
    assert res.code == 0, res.err
    [path] = _records(runs)
    assert f"run recorded: {path}" in res.err
    record = json.loads(path.read_text(encoding="utf-8"))
    assert record["schema"] == RUN_SCHEMA
    assert record["case"]["text"] == before.decode("utf-8")
    assert record["case"]["sha256"] == hashlib.sha256(before).hexdigest()
    assert record["case"]["id"] == "cr-0509-i"
    tables = {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in (ROOT / "constraints").glob("*.yaml")}
    assert record["tables"] == tables
    assert record["tool"]["version"]
    assert record["options"]["top"] == 5 and record["options"]["limit"] > 0
    created = datetime.strptime(record["created_utc"], "%Y-%m-%dT%H:%M:%S.%fZ").replace(tzinfo=UTC)
    assert abs((datetime.now(UTC) - created).total_seconds()) < 600
    assert record["result"] == res.json()  # the shortlist with components and reasons, as printed
    assert record["result"]["candidates"][0]["components"]
    assert record["previous"] is None and record["followed"] == []
    assert demo.read_bytes() == before and demo.stat().st_mtime_ns == stamp
    assert not [p for p in runs.iterdir() if p.suffix != ".json"]  # no temporary file left


def test_runs_go_beside_the_case_by_default_and_no_record_writes_none(cli, demo, monkeypatch):
    monkeypatch.delenv("ELUCIDATE_RUNS")
    assert cli("solve", str(demo), "--top", "3", "--details", "0", "--no-record").code == 0
    assert not (demo.parent / "runs").exists()
    assert cli("solve", str(demo), "--top", "3", "--details", "0").code == 0
    assert len(_records(demo.parent / "runs")) == 1


def test_contradicting_options_are_refused(cli, demo, tmp_path):
    res = cli("solve", str(demo), "--runs", str(tmp_path), "--no-record")
    assert res.code == 1 and "--runs and --no-record" in res.err


def test_history_numbers_revisions_and_marks_the_current_text(cli, demo, tmp_path):
    runs = tmp_path / "runs"
    assert _solve(cli, demo, runs).code == 0
    assert _solve(cli, demo, runs).code == 0
    demo.write_text(demo.read_text().replace("lambda_max: 252", "lambda_max: 250"))
    assert _solve(cli, demo, runs).code == 0
    res = cli("history", str(demo), "--runs", str(runs), "--json")
    assert res.code == 0, res.err
    rows = res.json()["runs"]
    assert [r["revision"] for r in rows] == [1, 1, 2]
    assert [r["current_text"] for r in rows] == [False, False, True]
    assert rows[0]["top"]["smiles"] == "CC(=O)c1ccc(C)cc1"
    text = cli("history", str(demo), "--runs", str(runs)).out
    assert "3 run(s)" in text and " 2*" in text


def test_history_of_a_case_being_edited_and_of_no_run(cli, demo, tmp_path):
    demo.write_text(demo.read_text().replace("c13_signals: 7", "c13_signals: 9"))  # now invalid
    res = cli("history", str(demo), "--runs", str(tmp_path / "none"))
    assert res.code == 0 and "0 run(s)" in res.out and "none yet" in res.out


def test_record_of_a_newer_schema_is_refused_by_name(tmp_path, demo, cli):
    runs = tmp_path / "runs"
    assert _solve(cli, demo, runs).code == 0
    [path] = _records(runs)
    data = json.loads(path.read_text())
    data["schema"] = RUN_SCHEMA + 1
    newer = runs / "newer.json"
    newer.write_text(json.dumps(data))
    with pytest.raises(ElucidateError, match=r"schema 2, written by a newer elucidate.*upgrade") as info:
        read_record(newer)
    assert info.value.file == str(newer)
    res = cli("history", str(demo), "--runs", str(runs))
    assert res.code == 0 and "1 run(s)" in res.out
    assert "warning: skipped" in res.err and "newer elucidate" in res.err
    res = cli("diff", str(path), str(newer))
    assert res.code == 1 and "newer elucidate" in res.err and "Traceback" not in res.err


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("{not json", "invalid JSON"),
        ('{"kind": "something else"}', "not a run record"),
        ('{"kind": "elucidate run record", "schema": 1}', "needs 'created_utc'"),
    ],
)
def test_unreadable_records_name_the_file(tmp_path, content, message):
    path = tmp_path / "r.json"
    path.write_text(content)
    with pytest.raises(ElucidateError, match=message) as info:
        read_record(path)
    assert info.value.file == str(path)


def test_a_write_interrupted_leaves_no_partial_record(tmp_path, monkeypatch):
    record = make_record(
        case_path="x.yaml",
        case_text="schema: 1\nid: x\n",
        case_id="x",
        title="t",
        version="0",
        options={},
        result={"candidates": []},
        tables={},
    )

    def interrupted(fd: int) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "fsync", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_record(record, tmp_path)
    assert list(tmp_path.iterdir()) == []


def test_records_are_never_overwritten(tmp_path):
    made = datetime(2026, 1, 2, 3, 4, 5, tzinfo=UTC)
    kwargs = dict(case_path="x.yaml", case_id="x", title="t", version="0", options={}, tables={}, created=made)
    a = write_record(make_record(case_text="a", result={"candidates": []}, **kwargs), tmp_path)
    b = write_record(make_record(case_text="b", result={"candidates": []}, **kwargs), tmp_path)
    assert a != b and read_record(a).case_text == "a" and read_record(b).case_text == "b"
    runs = case_runs(tmp_path, "x")
    assert [r.path for r in runs] == [a, b]
    assert revisions(runs) == {runs[0].case_sha256: 1, runs[1].case_sha256: 2}


def test_diff_names_the_constraint_that_eliminated_the_leader(cli, demo, tmp_path):
    runs = tmp_path / "runs"
    assert _solve(cli, demo, runs).code == 0
    text = demo.read_text()
    demo.write_text(text.replace("structure:\n", 'structure:\n  forbid_smarts: ["Cc1ccc(cc1)C(C)=O"]\n'))
    assert _solve(cli, demo, runs).code == 0
    res = cli("diff", str(demo), "--runs", str(runs), "--top", "5", "--json")
    assert res.code == 0, res.err
    d = res.json()
    assert d["evidence"] == [
        {"path": "structure.forbid_smarts", "kind": "added", "before": None, "after": '["Cc1ccc(cc1)C(C)=O"]'}
    ]
    first = d["moves"][0]
    assert first["smiles"] == "CC(=O)c1ccc(C)cc1" and first["rank_a"] == "1" and first["rank_b"] is None
    # the whole molecule matches: every atom of its SMILES is named
    assert first["verdict"] == (
        "eliminated by forbid SMARTS Cc1ccc(cc1)C(C)=O: a match at atoms C8, C7, C6, C5, C4, C10, C9, C2, C1, O3 "
        "(numbered from 1 in the order of its SMILES)"
    )
    moved = {m["smiles"]: m for m in d["moves"]}
    assert moved["CC(=O)c1cccc(C)c1"]["rank_b"] == "1="  # the meta isomer moves up
    counts = {c["label"]: (c["a"], c["b"]) for c in d["counts"]}
    assert counts["removed by forbid SMARTS Cc1ccc(cc1)C(C)=O"] == (0, 1)
    text_out = cli("diff", str(demo), "--runs", str(runs), "--top", "5").out
    assert '+ structure.forbid_smarts: ["Cc1ccc(cc1)C(C)=O"]' in text_out


def test_diff_of_two_records_with_soft_evidence_changed(cli, demo, tmp_path):
    runs = tmp_path / "runs"
    assert _solve(cli, demo, runs).code == 0
    demo.write_text(demo.read_text().replace("lambda_max: 252", "lambda_max: 280"))
    assert _solve(cli, demo, runs).code == 0
    a, b = _records(runs)
    d = cli("diff", str(a), str(b), "--json").json()
    assert d["evidence"] == [{"path": "uv_vis.lambda_max", "kind": "changed", "before": "252", "after": "280"}]
    counts = {c["label"]: (c["a"], c["b"]) for c in d["counts"]}
    assert counts["candidates"][0] == counts["candidates"][1]  # soft evidence never eliminates
    leader = d["leaders"][0]
    assert leader["smiles"] == "CC(=O)c1ccc(C)cc1"
    assert [c["technique"] for c in leader["components"]] == ["uv_vis"]  # only the UV part moved


def test_diff_needs_two_runs(cli, demo, tmp_path):
    res = cli("diff", str(demo), "--runs", str(tmp_path / "runs"))
    assert res.code == 1 and "0 recorded run(s)" in res.err and "2 needed" in res.err


def test_ctrl_c_during_solve_leaves_no_record_and_a_sound_cache(tmp_path):
    """SIGINT while structures are being generated: exit 130, no record, no temporary file,
    and the cache file passes SQLite's integrity check."""
    case = tmp_path / "big.yaml"
    case.write_text(
        "schema: 1\nid: big\ntitle: a large MS-only space\n"
        "mass_spec:\n  molecular_ion: 152\n  peaks: {152: 40, 153: 4.5, 137: 100, 109: 60}\n"
        "formula:\n  elements: {C: 0-12, H: 0-30, O: 0-2}\n"
        "solve:\n  limit: 50000000\n  formulas: 1\n"
    )
    runs, cache = tmp_path / "runs", tmp_path / "c.sqlite"
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen(
        [sys.executable, "-m", "elucidate", "solve", str(case), "--runs", str(runs), "--cache", str(cache)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=env,
        cwd=tmp_path,
    )
    deadline = time.monotonic() + 120
    while not cache.exists() and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.05)  # the cache is opened once solving has begun
    time.sleep(1.0)
    assert proc.poll() is None, proc.communicate()
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 130, err
    assert "interrupted" in err and "Traceback" not in err
    assert not runs.exists() or list(runs.iterdir()) == []
    with sqlite3.connect(cache) as db:
        assert db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
