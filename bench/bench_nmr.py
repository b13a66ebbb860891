"""The NMR part of the reference cases on one worker: prints figures, asserts nothing.

    python3 bench/bench_nmr.py [NAME ...]

For each C9-C13 reference case with declared carbon types (tests/reference_cases, the NMR part
of tests/test_reference_cases.py) it prints, side by side: the structure space of the case's
formula with the declared hard constraints without the carbon types and with them (Knuth
estimates, the same 32 probes each), the structures actually generated with them, the solve time
on one worker (generation and scoring) and the rank of the true structure. Goal: each case in
under 10 s on one worker.
"""

from __future__ import annotations

import importlib.util
import sys
import time
from dataclasses import replace
from pathlib import Path

from rdkit import Chem

from elucidate import load_case, parse_formula
from elucidate.evidence import TECHNIQUES
from elucidate.generator import GeneratorOptions, estimate_structures
from elucidate.solver import hard_selection, solve

ROOT = Path(__file__).resolve().parent.parent


def nmr_part() -> list[tuple[str, str]]:
    """The NMR part's (case, true SMILES) list, read from the test module that owns it."""
    spec = importlib.util.spec_from_file_location("reference_cases", ROOT / "tests" / "test_reference_cases.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return list(module.NMR_PART)


def main(names: list[str]) -> None:
    chosen = [(n, s) for n, s in nmr_part() if not names or n in names]
    head = ("case", "formula", "est. without", "est. with", "generated", "time s")
    print(f"{head[0]:22s} {head[1]:10s} {head[2]:>13s} {head[3]:>10s} {head[4]:>10s} {head[5]:>7s}  rank")
    total = 0.0
    for name, truth in chosen:
        case = load_case(ROOT / "tests" / "reference_cases" / f"{name}.yaml")
        mol = Chem.MolFromSmiles(truth)
        formula = parse_formula(Chem.rdMolDescriptors.CalcMolFormula(mol))
        selection = hard_selection(case, [cls() for cls in TECHNIQUES])
        with_types = estimate_structures(formula, GeneratorOptions(selection=selection))
        without = estimate_structures(formula, GeneratorOptions(selection=replace(selection, counts=None)))
        t0 = time.perf_counter()
        solution = solve(case, workers=1, watch=(truth,))
        seconds = time.perf_counter() - t0
        total += seconds
        canonical = Chem.MolToSmiles(mol)
        rank = next((c.rank for c in solution.candidates if c.smiles == canonical), None)
        print(
            f"{name:22s} {formula!s:10s} {without:13,.0f} {with_types:10,.0f} {solution.generated:10,d} "
            f"{seconds:7.1f}  {rank}"
        )
    print(f"total {total:.1f} s for {len(chosen)} cases; over 10 s: see the lines above")


if __name__ == "__main__":
    main(sys.argv[1:])
