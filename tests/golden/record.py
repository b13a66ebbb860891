"""Golden outputs that a behaviour-preserving change must keep byte-identical.

``python3 tests/golden/record.py`` (run from a checkout with the package installed) records
``outputs.json``, the commands ``tests/test_golden.py`` reruns in every test run, and
``outputs-full.json``, the demo cases solved with default options (about four minutes, so it
is compared on demand: ``python3 tests/golden/record.py --check-full``). Before a change that
must keep behaviour, the recorded files are the reference; a change that means to alter output
records them again and says so in its commit.
"""

from __future__ import annotations

import argparse
import io
import json
import os
from pathlib import Path

from elucidate.cli import main

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]

FORMULAS = [
    "C7H8O",
    "C6H6",
    "C8H10",
    "C5H10O",
    "C4H11N",
    "C6H5Cl",
    "C3H6O2",
    "C6H12",
    "C2H4Br2",
    "C4H9NO2",
    "C5H5N",
    "C3H7NO2",
    "C4H4S",
    "CH3NO2",
]
#: demo cases whose default solve takes minutes: the suite solves them under a lower --limit
HEAVY = {"cases/cr-0502-h.yaml": "15000", "cases/cr-0421-f.yaml": "1000"}


def _cases() -> list[str]:
    return sorted(p.relative_to(ROOT).as_posix() for p in (ROOT / "cases").glob("*.yaml"))


def suite_commands() -> list[list[str]]:
    out: list[list[str]] = [["formulas", case, "--json"] for case in _cases()]
    out += [["formulas", mass, "--json", "--top", "15"] for mass in ("94", "120", "156")]
    out += [["isomers", formula, "--count"] for formula in FORMULAS]
    out.append(
        ["isomers", "C8H8O", "--require", "aromatic_ring", "--require", "carbonyl", "--profile", "stable", "--json"]
    )
    for case in _cases():
        out.append(["solve", case, "--json"] + (["--limit", HEAVY[case]] if case in HEAVY else []))
    return out


def full_commands() -> list[list[str]]:
    return [["solve", case, "--json"] for case in HEAVY]


def run(argv: list[str]) -> dict[str, object]:
    out, err = io.StringIO(), io.StringIO()
    # outputs only: no run record, no cache (test_golden.py adds the same options)
    extra = ["--no-record", "--no-cache"] if argv[0] == "solve" else []
    code = main(argv + extra, stdout=out, stderr=err)
    return {"argv": argv, "code": code, "stdout": out.getvalue(), "stderr": err.getvalue()}


def _write(name: str, argvs: list[list[str]]) -> None:
    records = [run(argv) for argv in argvs]
    (HERE / name).write_text(json.dumps(records, indent=1) + "\n", encoding="utf-8")
    print(f"{name}: recorded {len(records)} commands")


def _check(name: str) -> int:
    bad = 0
    for record in json.loads((HERE / name).read_text(encoding="utf-8")):
        now = run(record["argv"])
        same = now == record
        bad += not same
        print(("same     " if same else "DIFFERENT"), " ".join(record["argv"]))
    return 1 if bad else 0


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--check-full", action="store_true", help="compare outputs-full.json instead of recording")
    args = parser.parse_args()
    os.chdir(ROOT)
    if args.check_full:
        raise SystemExit(_check("outputs-full.json"))
    _write("outputs.json", suite_commands())
    _write("outputs-full.json", full_commands())
