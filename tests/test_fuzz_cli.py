"""Hostile and careless input through the command line: structure-aware mutations of the demo
cases (delete a key, duplicate a key, change a type, make a number extreme, nest deeper, damage
the text) and random arguments. The only outcomes allowed are an exit code with at most one-line
errors — never an exception — each run under a wall-clock cap, the process's peak memory under
a bound. 10,000 case files under CI=true (``thorough``), fewer locally (``quick``)."""

from __future__ import annotations

import copy
import io
import math
import os
import re
import resource
import signal
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from elucidate.cli import main

CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.yaml"))
DEMOS = [(p.name, p.read_text(encoding="utf-8")) for p in CASES]
THOROUGH = os.environ.get("CI", "").lower() in ("1", "true", "yes")
#: examples per fuzz test (the issue asks for at least 10,000 under CI=true)
CASE_EXAMPLES = 10_000 if THOROUGH else 300
ARGV_EXAMPLES = 2_000 if THOROUGH else 150
#: a run that takes longer is a runaway (generous: the machines are shared); not a speed target
WALL_CAP_S = 60
#: how far the process's peak resident memory may rise over a fuzz test
RSS_BOUND_MB = 1_000
#: what the command line may answer with: done, bad input, usage, nothing survives, too large
EXIT_CODES = {0, 1, 2, 3, 4}
_ERROR_LINE = re.compile(r"^(error|warning): .+|^\d+ of \d+ case file\(s\) (invalid|refused as too large)$|^usage: .*")


class RunawayError(Exception):
    """A run went past WALL_CAP_S."""


@contextmanager
def _cap(seconds: float) -> Iterator[None]:
    """Interrupt the run when it passes ``seconds`` (SIGALRM; the test then fails, naming it)."""

    def stop(signum: int, frame: Any) -> None:
        raise RunawayError(f"run longer than {seconds} s")

    old = signal.signal(signal.SIGALRM, stop)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def _peak_mb() -> float:
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak / (1024 * 1024) if sys.platform == "darwin" else peak / 1024


def _run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with _cap(WALL_CAP_S):
        code = main(argv, stdout=out, stderr=err)
    return code, out.getvalue(), err.getvalue()


def _assert_clean(argv: list[str], code: int, err: str) -> None:
    assert code in EXIT_CODES, (argv, code, err)
    assert "Traceback" not in err, (argv, err)
    if code in (1, 4):
        assert err.strip(), (argv, "an error exit with no message")
    # a refusal is whole one-line messages (usage errors print argparse's usage block, and a
    # success may report counts on stderr)
    if code in (1, 4):
        for line in err.splitlines():
            assert _ERROR_LINE.match(line), (argv, line)


# ------------------------------------------------------------------ structure-aware mutations

#: text a careless edit or a hostile file inserts: tab, NUL, BOM, anchors, aliases, tags, brackets
_JUNK = ["\t", "\x00", "\ufeff", "&a ", "*a", "!!python/object ", "{", "]", ": ", "'", "%"]
_EXTREME = [0, -1, 1, 2**31, 2**63, 10**20, 10**400, 1e308, -1e308, math.inf, -math.inf, math.nan, 5000, 5001, 0.5]
_OTHER_TYPES = [None, True, "text", "", "0–20", "C8H8O", [], {}, [1, 2], {"a": 1}, 3.5, "12", "1e400", "-"]


def _paths(data: Any, prefix: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    """Every path into the data (dict keys and list indices)."""
    out = [prefix]
    if isinstance(data, dict):
        for k, v in data.items():
            out += _paths(v, (*prefix, k))
    elif isinstance(data, list):
        for i, v in enumerate(data):
            out += _paths(v, (*prefix, i))
    return out


def _get(data: Any, path: tuple[Any, ...]) -> Any:
    for step in path:
        data = data[step]
    return data


def _set(data: Any, path: tuple[Any, ...], value: Any) -> Any:
    if not path:
        return value
    _get(data, path[:-1])[path[-1]] = value
    return data


def _numbers_in(data: Any) -> list[tuple[Any, ...]]:
    return [p for p in _paths(data) if isinstance(_get(data, p), (int, float)) and not isinstance(_get(data, p), bool)]


@st.composite
def mutated_case(draw: st.DrawFn) -> str:
    _, text = draw(st.sampled_from(DEMOS))
    data = yaml.safe_load(text)
    for _ in range(draw(st.integers(1, 3))):
        op = draw(st.sampled_from(["delete", "type", "extreme", "nest", "key", "none"]))
        paths = _paths(data)
        path = draw(st.sampled_from(paths))
        if op == "delete" and path:
            parent = _get(data, path[:-1])
            del parent[path[-1]]
        elif op == "type":
            data = _set(data, path, copy.deepcopy(draw(st.sampled_from(_OTHER_TYPES))))
        elif op == "extreme":
            numbers = _numbers_in(data)
            if numbers:
                data = _set(data, draw(st.sampled_from(numbers)), draw(st.sampled_from(_EXTREME)))
        elif op == "nest":
            value = _get(data, path)
            for _ in range(draw(st.sampled_from([1, 2, 5, 70]))):
                value = [value] if draw(st.booleans()) else {"x": value}
            data = _set(data, path, value)
        elif op == "key" and isinstance(_get(data, path), dict):
            # a misspelt, foreign or numeric key beside the real ones
            key = draw(st.sampled_from(["titel", "peak", "elements", "C", "Xx", 120, 1.5, "require", "schema"]))
            _get(data, path)[key] = copy.deepcopy(draw(st.sampled_from(_OTHER_TYPES + _EXTREME)))
    try:
        dumped = yaml.safe_dump(data, default_flow_style=None, allow_unicode=True, sort_keys=False)
    except (ValueError, OverflowError):
        dumped = text
    lines = dumped.splitlines()
    damage = draw(st.sampled_from(["none", "duplicate", "truncate", "insert", "dash"]))
    if damage == "duplicate" and lines:
        # a key written twice (the text level: YAML loaders keep the last silently)
        i = draw(st.integers(0, len(lines) - 1))
        lines.insert(i, lines[i])
    elif damage == "truncate" and lines:
        cut = draw(st.integers(0, len(dumped)))
        return dumped[:cut]
    elif damage == "insert" and lines:
        i = draw(st.integers(0, len(lines) - 1))
        j = draw(st.integers(0, len(lines[i])))
        junk = draw(st.sampled_from(_JUNK))
        lines[i] = lines[i][:j] + junk + lines[i][j:]
    elif damage == "dash":
        return dumped.replace("-", draw(st.sampled_from(["\u2013", "\u2212", "\u2010"])), 1)
    return "\n".join(lines) + "\n"


@settings(
    max_examples=CASE_EXAMPLES,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture, HealthCheck.data_too_large],
)
@given(text=mutated_case(), formulas=st.integers(0, 19))
def test_mutated_demo_cases_get_an_answer_or_a_one_line_error(tmp_path_factory, text, formulas):
    start = _peak_mb()
    path = tmp_path_factory.mktemp("fuzz") / "case.yaml"
    path.write_text(text, encoding="utf-8")
    code, _, err = _run(["check", str(path)])
    _assert_clean(["check"], code, err)
    if formulas == 0 and code == 0:
        # one case in twenty also through the formula stage (it enumerates; check does not)
        code, _, err = _run(["formulas", str(path), "--top", "3"])
        _assert_clean(["formulas"], code, err)
    assert path.read_text(encoding="utf-8") == text  # the case file is never modified
    assert _peak_mb() - start < RSS_BOUND_MB


# ------------------------------------------------------------------ arguments

_NUMBERS = st.sampled_from(["0", "-1", "1", "134", "5000", "5001", "1e400", "nan", "inf", "9" * 30, "1.5", "", "x"])
_LIMITS = st.sampled_from(
    ["C:0-20,H:0-40", "C:0-99999999999999999999,H:0-30", "Xx:0-1", "C:5-1", "C0-20", "C:0–20", "", ",,,", "C:-1-3",
     "C:0-120,H:0-250,N:0-40,O:0-40,S:0-10,Cl:0-6", "N:0-499,O:0-499,S:0-99"]
)  # fmt: skip
_PEAKS = st.sampled_from(["134:100 135:10", "134:100,136:33", "1:100", "99999999999999999999:100", "134:", "a:b", ""])
_FORMULAS = st.sampled_from(
    ["C4H10", "C3H6O", "C2H5", "CH5N", "C", "H2", "Xx3", "C4H10+", "", "c6h6", "C99H200", "C2H6O"]
)


@st.composite
def argv(draw: st.DrawFn) -> list[str]:
    command = draw(st.sampled_from(["formulas", "isomers", "check", "history", "bogus", "--version", "formulas"]))
    if command == "formulas":
        args = [draw(_NUMBERS)]
        for opt, values in (
            ("--elements", _LIMITS),
            ("--peaks", _PEAKS),
            ("--dbe", st.sampled_from(["0-20", "5", "20-0", "-1", "a"])),
            ("--top", _NUMBERS),
            ("--exact-mass", _NUMBERS),
            ("--ppm", _NUMBERS),
            ("--element-ratios", st.sampled_from(["common", "extended", "off", "some"])),
        ):
            if draw(st.booleans()):
                args += [opt, draw(values)]
        return [command, *args]
    if command == "isomers":
        args = [draw(_FORMULAS), "--count"]
        for opt, values in (
            ("--limit", st.sampled_from(["0", "-5", "100", "5000", "x"])),
            ("--max-rings", st.sampled_from(["0", "-1", "2", "99"])),
            ("--require", st.sampled_from(["ketone", "ketoen", "alcohol", ""])),
            ("--forbid-smarts", st.sampled_from(["C=O", "[", "[#6]=O", "*"])),
        ):
            if draw(st.booleans()):
                args += [opt, draw(values)]
        return [command, *args]
    if command in ("check", "history"):
        return [command, draw(st.sampled_from(["/nonexistent/case.yaml", "", "/", "-"]))]
    return [command]


@settings(max_examples=ARGV_EXAMPLES, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(args=argv())
def test_random_arguments_get_an_answer_or_a_one_line_error(args):
    start = _peak_mb()
    code, _, err = _run(args)
    _assert_clean(args, code, err)
    assert _peak_mb() - start < RSS_BOUND_MB


@pytest.mark.parametrize("nesting", [70, 500])
def test_a_deeply_nested_mutation_is_one_line(tmp_path, nesting):
    # the mutation the fuzz draws at its deepest, written out: no RecursionError, one line
    path = tmp_path / "deep.yaml"
    path.write_text(DEMOS[0][1] + "notes: " + "[" * nesting + "1" + "]" * nesting + "\n")
    code, _, err = _run(["check", str(path)])
    assert code == 1 and len(err.splitlines()) == 2 and "nested" in err
