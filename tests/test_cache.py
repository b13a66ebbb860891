"""The candidate cache (elucidate.cache): reruns read generated sets back, and a bad cache file
never breaks a run.

Reference: SQLite's own file format and locking (sqlite.org, "Database File Format" and "File
Locking And Concurrency"): the header string "SQLite format 3", ``PRAGMA integrity_check``, the
``application_id`` and ``user_version`` header fields. The equality checks compare against a run
without the cache (the program's own reference path).
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from elucidate.cache import CACHE_SCHEMA, CandidateCache

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "cr-0509-i.yaml"


@pytest.fixture
def demo(tmp_path: Path) -> Path:
    case = tmp_path / "unknown.yaml"
    shutil.copy(DEMO, case)
    return case


def _solve(cli, case: Path, cache: Path | None):
    extra = ["--cache", str(cache)] if cache is not None else ["--no-cache"]
    return cli("solve", str(case), "--json", "--top", "5", "--no-record", *extra)


def _no_generation(monkeypatch: pytest.MonkeyPatch) -> None:
    import elucidate.generator as generator

    def refuse(*args: object, **kwargs: object) -> None:
        raise AssertionError("generated again")

    monkeypatch.setattr(generator, "isomer_smiles", refuse)


def _entries(cache: Path) -> int:
    with sqlite3.connect(cache) as db:
        return int(db.execute("SELECT COUNT(*) FROM sets").fetchone()[0])


def test_a_rerun_with_new_soft_evidence_is_scored_from_the_cache(cli, demo, tmp_path, monkeypatch):
    cache = tmp_path / "c.sqlite"
    cold = _solve(cli, demo, cache)
    assert cold.code == 0, cold.err
    entries = _entries(cache)
    assert entries == len([f for f in cold.json()["formulas"] if not f["skipped"]])
    demo.write_text(demo.read_text().replace("lambda_max: 252", "lambda_max: 258"))  # soft: UV only
    with monkeypatch.context() as patched:
        _no_generation(patched)
        warm = _solve(cli, demo, cache)
    assert warm.code == 0, warm.err
    assert warm.out == _solve(cli, demo, None).out  # identical to a run without the cache
    assert _entries(cache) == entries


def test_a_new_hard_constraint_generates_again(cli, demo, tmp_path):
    cache = tmp_path / "c.sqlite"
    assert _solve(cli, demo, cache).code == 0
    before = _entries(cache)
    demo.write_text(demo.read_text().replace("structure:\n", 'structure:\n  forbid_smarts: ["[CH3]c"]\n'))
    res = _solve(cli, demo, cache)
    assert res.code == 0, res.err
    assert _entries(cache) > before  # the forbidden SMARTS shaped generation: a new key


@pytest.mark.parametrize(
    ("make", "what"),
    [
        (lambda p: p.write_bytes(b"\x00garbage, not SQLite" * 50), "not a usable elucidate cache"),
        (lambda p: sqlite3.connect(p).execute("CREATE TABLE accounts (x)").connection.commit(), "another program"),
    ],
    ids=["corrupt", "foreign"],
)
def test_a_corrupt_or_foreign_file_is_set_aside_and_rebuilt(cli, demo, tmp_path, make, what):
    cache = tmp_path / "c.sqlite"
    make(cache)
    original = cache.read_bytes()
    res = _solve(cli, demo, cache)
    assert res.code == 0 and "Traceback" not in res.err
    assert what in res.err and "set aside" in res.err
    [aside] = tmp_path.glob("c.sqlite.unusable-*")
    assert aside.read_bytes() == original  # kept for inspection, never deleted
    assert cache.read_bytes()[:16] == b"SQLite format 3\x00" and _entries(cache) > 0


def test_a_cache_from_a_newer_version_is_left_alone(cli, demo, tmp_path):
    cache = tmp_path / "c.sqlite"
    assert _solve(cli, demo, cache).code == 0
    with sqlite3.connect(cache) as db:
        db.execute(f"PRAGMA user_version = {CACHE_SCHEMA + 1}")
    original = cache.read_bytes()
    res = _solve(cli, demo, cache)
    assert res.code == 0
    assert "newer elucidate" in res.err and "not used this run" in res.err
    assert cache.read_bytes() == original


def test_a_damaged_entry_is_generated_again(tmp_path):
    seen: list[str] = []
    cache = CandidateCache(tmp_path / "c.sqlite", warn=seen.append)
    key = cache.key("C2H6O", "selection")
    cache.put(key, "C2H6O", ["CCO", "COC"], {"profile": 0})
    entry = cache.get(key)
    assert entry is not None and entry.smiles == ("CCO", "COC") and entry.tested == 2
    with sqlite3.connect(tmp_path / "c.sqlite") as db:
        db.execute("UPDATE sets SET count = 5")
    assert cache.get(key) is None
    assert "cannot be read" in seen[-1]
    cache.close()


def test_what_generation_perceived_is_kept_and_read_back_whole(tmp_path):
    # perceptions (groups, conditional bands by position, ring shape or none) survive the file,
    # one object per distinct perception; another perceiver's, a count that does not match, or a
    # damaged record is not used (a warning, and scoring reads the molecules)
    from elucidate.evidence.base import Perception
    from elucidate.generator.shape import RingShape

    warned: list[str] = []
    cache = CandidateCache(tmp_path / "c.sqlite", warn=warned.append)
    key = cache.key("C4H6O", "selection")
    ring = RingShape((3, 5), 1, ((2, 0, (3, 5)), (2, 5, ())), 0)
    first = Perception(frozenset({"ketone", "carbonyl"}), frozenset({("ketone", 2)}), ring)
    second = Perception(frozenset({"alkene"}), frozenset(), None)
    third = Perception(frozenset({"alkene"}), frozenset(), None, (("alkyl", "CH3", 2), ("sp2", "CH", 2)))
    partial = Perception(frozenset({"ketone"}), frozenset(), RingShape((3, 3), 0, (), 0, partial=True))
    cache.put(key, "C4H6O", ["a", "b", "c", "d", "e"], {})
    cache.put_seen(key, "perceiver-1", [first, second, first, third, partial])
    back = cache.get_seen(key, "perceiver-1", 5)
    assert back == [first, second, first, third, partial] and back[0] is back[2] and back[3].carbons == third.carbons
    assert back[4].shape.partial and not back[0].shape.partial
    assert cache.get_seen(key, "perceiver-2", 5) is None and not warned
    assert cache.get_seen(key, "perceiver-1", 6) is None and "cannot be read" in warned[-1]
    with sqlite3.connect(tmp_path / "c.sqlite") as db:
        db.execute("UPDATE seen SET blob = ?", (b"not zlib",))
    assert cache.get_seen(key, "perceiver-1", 5) is None and "read from the molecules" in warned[-1]
    cache.close()


def test_a_rerun_from_the_cache_perceives_nothing_and_scores_as_the_first_run(demo, tmp_path, monkeypatch):
    # the demo case has IR bands: generation perceives each candidate, and the rerun reads the
    # perceptions back instead of reading every molecule, so the passes settle exactly as before
    from elucidate import load_case
    from elucidate.evidence.infrared import Perceiver
    from elucidate.solver import ranking, solve

    calls = []
    perceive = Perceiver.__call__

    def counted(self, mol, shape=None, features=None):
        calls.append(1)
        return perceive(self, mol, shape, features)

    scored: list[list] = []  # per run: each candidate's SMILES and perception as scoring gets them
    score = ranking.score_candidates

    def spy(found, *args, **kwargs):
        scored.append([(item.smiles, item.seen) for item in found])
        return score(found, *args, **kwargs)

    monkeypatch.setattr(Perceiver, "__call__", counted)
    monkeypatch.setattr(ranking, "score_candidates", spy)
    case = load_case(demo)
    with CandidateCache(tmp_path / "c.sqlite") as cache:
        cold = solve(case, workers=1, cache=cache)
    assert len(calls) == cold.candidate_count > 0
    with sqlite3.connect(tmp_path / "c.sqlite") as db:
        assert db.execute("SELECT COUNT(*) FROM seen").fetchone()[0] == _entries(tmp_path / "c.sqlite")
    calls.clear()
    with CandidateCache(tmp_path / "c.sqlite") as cache, monkeypatch.context() as patched:
        _no_generation(patched)
        warm = solve(case, workers=1, cache=cache)
    assert not calls
    assert scored[1] == scored[0] and all(seen is not None for _, seen in scored[1])
    assert [c.as_dict() for c in warm.candidates] == [c.as_dict() for c in cold.candidates]
    assert warm.scoring_passes == cold.scoring_passes
    assert warm.settled_before_passes == cold.settled_before_passes


def test_a_13c_list_added_later_reuses_the_perceptions_kept_without_it(tmp_path, monkeypatch):
    # menthone first without its 13C list (its carbon types kept: the same structures), then with
    # it: the rerun takes the structures and what was perceived on them from the cache (less the
    # carbons by kind, which only order the scoring), perceives nothing, and ranks as a run
    # without the cache
    import yaml

    from elucidate.case import parse_case
    from elucidate.evidence.infrared import Perceiver
    from elucidate.solver import ranking, solve

    text = (Path(__file__).parent / "reference_cases" / "menthone.yaml").read_text(encoding="utf-8")
    full = yaml.safe_load(text)
    first = yaml.safe_load(text)
    del first["nmr"]["c13"]
    with CandidateCache(tmp_path / "c.sqlite") as cache:
        solve(parse_case(yaml.safe_dump(first)), workers=1, cache=cache)
    calls = []
    perceive = Perceiver.__call__
    monkeypatch.setattr(
        Perceiver,
        "__call__",
        lambda self, mol, shape=None, features=None: calls.append(1) or perceive(self, mol, shape, features),
    )
    scored: list[list] = []
    score = ranking.score_candidates

    def spy(found, *args, **kwargs):
        scored.append([item.seen for item in found])
        return score(found, *args, **kwargs)

    monkeypatch.setattr(ranking, "score_candidates", spy)
    case = parse_case(yaml.safe_dump(full))
    with CandidateCache(tmp_path / "c.sqlite") as cache, monkeypatch.context() as patched:
        _no_generation(patched)
        warm = solve(case, workers=1, cache=cache)
    assert not calls
    assert scored[0] and all(seen is not None and seen.carbons is None for seen in scored[0])
    cold = solve(case, workers=1)
    assert calls and all(seen is not None and seen.carbons is not None for seen in scored[1])
    assert [c.as_dict() for c in warm.candidates] == [c.as_dict() for c in cold.candidates]


def test_keys_differ_by_formula_and_by_generation():
    cache = CandidateCache(Path("unused.sqlite"))
    assert cache.key("C2H6O", "a") == cache.key("C2H6O", "a")
    assert cache.key("C2H6O", "a") != cache.key("C2H6O", "b")
    assert cache.key("C2H6O", "a") != cache.key("C3H8O", "a")


def test_two_processes_solving_at_once_share_the_cache(demo, tmp_path):
    cache = tmp_path / "c.sqlite"
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    argv = [sys.executable, "-m", "elucidate", "solve", str(demo), "--json", "--no-record", "--cache", str(cache)]
    procs = [subprocess.Popen(argv, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env) for _ in "ab"]
    outs = [p.communicate(timeout=600) for p in procs]
    assert [p.returncode for p in procs] == [0, 0], [e for _, e in outs]
    assert outs[0][0] == outs[1][0]
    assert not any("warning" in e for _, e in outs)
    with sqlite3.connect(cache) as db:
        assert db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        keys = db.execute("SELECT COUNT(*), COUNT(DISTINCT key) FROM sets").fetchone()
    assert keys[0] == keys[1] > 0
    third = subprocess.run(argv, capture_output=True, text=True, env=env, timeout=600)
    assert third.returncode == 0 and third.stdout == outs[0][0]
