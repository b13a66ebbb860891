"""Solver throughput: prints figures, asserts nothing.

    python3 bench/bench_solve.py

1. Scoring rate: candidates scored per second on one core (all four techniques plus the group
   perception), on the isomers of C7H8O (the stable profile applied) against the evidence of
   the demo case cr-0509-i (goal >= 2,000 per second).
2. A case whose hard constraints leave about 10^4 candidates (M 122, C8H10O with a required
   alcohol and IR, UV, EI and 13C evidence), solved end to end with 1 and 2 workers, with the
   generation and scoring time apart (goal < 10 s with 2).
"""

from __future__ import annotations

import time
from pathlib import Path

from elucidate import load_case, parse_case, parse_formula
from elucidate._rdkit import Chem, quiet_rdkit
from elucidate.evidence import TECHNIQUES, make_subject
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.groups import default_groups
from elucidate.generator.selection import Selection
from elucidate.solver import solve

ROOT = Path(__file__).resolve().parent.parent

BIG = """\
schema: 1
id: bench-big
title: benchmark, about 10^4 candidates
mass_spec:
  molecular_ion: 122
  peaks: {122: 20, 123: 1.8, 104: 15, 107: 100, 91: 30, 77: 25, 45: 10}
formula:
  elements: {C: 0-12, H: 0-30, O: 0-1}
infrared:
  bands:
    - {at: 3350, strength: strong, shape: broad}
    - {at: 3030, strength: weak}
    - {at: 2960, strength: strong}
    - {at: 1600, strength: medium}
  require: [alcohol]
uv_vis:
  lambda_max: 262
nmr:
  c13_signals: 7
"""


def scoring_rate() -> None:
    case = load_case(ROOT / "cases" / "cr-0509-i.yaml")
    formula = parse_formula("C7H8O")
    smiles = list(isomer_smiles(formula, GeneratorOptions(selection=Selection(profile="stable"))))
    groups = default_groups()
    techniques = [t() for t in TECHNIQUES]
    techniques = [t for t in techniques if t.applies(case)]
    with quiet_rdkit():
        mols = [Chem.MolFromSmiles(s) for s in smiles]
        t0 = time.perf_counter()
        for s, mol in zip(smiles, mols, strict=True):
            subject = make_subject(s, mol, formula, groups, 108)
            for t in techniques:
                t.assess(subject, case)
        dt = time.perf_counter() - t0
    print(
        f"scoring: {len(smiles)} candidates in {dt:.2f} s = {len(smiles) / dt:,.0f} per second per core (goal >= 2,000)"
    )
    for t in techniques:
        with quiet_rdkit():
            t0 = time.perf_counter()
            for s, mol in zip(smiles, mols, strict=True):
                t.assess(make_subject(s, mol, formula, groups, 108), case)
            dt = time.perf_counter() - t0
        print(f"  {t.name:>10}: {len(smiles) / dt:,.0f} per second (group perception included)")


def big_case() -> None:
    case = parse_case(BIG, file="bench-big")
    for workers in (1, 2):
        t0 = time.perf_counter()
        solution = solve(case, workers=workers)
        dt = time.perf_counter() - t0
        print(
            f"M 122 alcohol case: {solution.generated:,} structures generated, "
            f"{solution.candidate_count:,} candidates, "
            f"{workers} worker(s): {dt:.1f} s (goal < 10 s with 2)"
        )


if __name__ == "__main__":
    scoring_rate()
    big_case()
