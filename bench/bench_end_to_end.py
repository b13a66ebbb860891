"""End to end on C9-C13 unknowns with the routine evidence only: prints figures, asserts nothing.

    python3 bench/bench_end_to_end.py [--workers N] [NAME ...]

Twelve compounds of the NMR part of tests/reference_cases (terpenes, aryl ketones and esters, a
lactone, a tertiary amide), each solved from its MS, declared IR groups, UV maximum and the 13C
signal count alone: the 13C and 1H lists and the declared carbon types are taken out, as a
chemist has them before the NMR work. Prints, per case, the candidates, the solve time on N
workers (default 2) and the rank of the true structure. Goal: each under 30 s on 2 workers.
"""

from __future__ import annotations

import argparse
import importlib.util
import time
from dataclasses import replace
from pathlib import Path

from rdkit import Chem

from elucidate import load_case
from elucidate.case import Nmr
from elucidate.solver import solve

ROOT = Path(__file__).resolve().parent.parent
#: the twelve: four terpenoids, four aryl ketones/esters, an aryl ether, an alcohol, a lactone,
#: an amide
CASES = [
    "limonene-nmr",
    "camphor",
    "menthone",
    "carvone",
    "4-methylacetophenone",
    "propiophenone",
    "benzylacetone",
    "methyl-cinnamate",
    "anethole",
    "cinnamyl-alcohol",
    "gamma-nonalactone",
    "deet",
]


def truths() -> dict[str, str]:
    spec = importlib.util.spec_from_file_location("reference_cases", ROOT / "tests" / "test_reference_cases.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return dict(module.NMR_PART)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("names", nargs="*")
    args = parser.parse_args()
    truth = truths()
    head = f"{'case':22s} {'candidates':>10s} {'time s':>7s}  rank"
    print(f"{head}   (MS, IR groups, UV, 13C count; {args.workers} workers)")
    total = 0.0
    for name in args.names or CASES:
        case = load_case(ROOT / "tests" / "reference_cases" / f"{name}.yaml")
        assert case.nmr is not None and case.nmr.c13
        count_only = Nmr(c13_signals=len(case.nmr.c13))
        case = replace(case, nmr=count_only)
        t0 = time.perf_counter()
        solution = solve(case, workers=args.workers, watch=(truth[name],))
        seconds = time.perf_counter() - t0
        total += seconds
        true = Chem.MolToSmiles(Chem.MolFromSmiles(truth[name]))
        rank = next((c.rank for c in solution.candidates if c.smiles == true), None)
        skipped = [str(k.formula) for k in solution.formulas if k.skipped]
        note = f"  (skipped for size: {', '.join(skipped)})" if skipped else ""
        print(f"{name:22s} {solution.candidate_count:10,d} {seconds:7.1f}  {rank}{note}")
    print(f"total {total:.1f} s")


if __name__ == "__main__":
    main()
