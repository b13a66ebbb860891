"""What each evidence technique costs per candidate: prints figures, asserts nothing.

    python3 bench/bench_scoring_cost.py [CASE.yaml ...]
    python3 bench/bench_scoring_cost.py --orders [NAME ...]

For each case (default: three NMR reference cases), the first 400 structures of its formula with
the case's hard constraints are scored by every technique that applies, each timed alone on the
same subjects (the subject's shared perception, made once, is timed as its own line). The mean
microseconds per candidate are the ``cost`` each technique declares, by which the solver
orders its scoring passes (docs/solver.md).

``--orders``: each reference case solved on one worker with the passes in their first order
and in the order the solver chooses, alternating twice, side by side, with whether the
shortlists agree.
"""

from __future__ import annotations

import sys
import time
from itertools import islice
from pathlib import Path

from rdkit import Chem, rdBase

from elucidate import load_case, parse_formula
from elucidate.evidence import TECHNIQUES, make_subject
from elucidate.generator import GeneratorOptions, default_groups, isomer_smiles
from elucidate.solver import hard_selection

ROOT = Path(__file__).resolve().parent.parent
DEFAULT = ["carvone", "camphor", "linalool"]
TRUTH_FORMULA = {"carvone": "C10H14O", "camphor": "C10H16O", "linalool": "C10H18O", "cr-0509-i": "C9H10O"}
SAMPLE = 400


def orders(names: list[str]) -> None:
    import elucidate.solver.passes as passes
    from elucidate.solver import solve

    chosen = passes.pass_order

    def first(parts: object, threshold: float, costs: list[float]) -> tuple[int, ...]:
        return tuple(range(len(costs)))

    print(f"{'case':10s} {'first order s':>14s} {'chosen s':>9s}  passes chosen; shortlists agree")
    for name in names or ["carvone", "camphor", "linalool"]:
        case = load_case(ROOT / "tests" / "reference_cases" / f"{name}.yaml")
        times: dict[str, list[float]] = {"first": [], "chosen": []}
        shortlists = []
        used = ()
        for label in ("first", "chosen", "first", "chosen"):
            passes.pass_order = chosen if label == "chosen" else first  # type: ignore[assignment]
            t0 = time.perf_counter()
            solution = solve(case, workers=1)
            times[label].append(time.perf_counter() - t0)
            shortlists.append([c.as_dict() for c in solution.candidates])
            if label == "chosen":
                used = tuple(p.techniques for p in solution.scoring_passes)
        passes.pass_order = chosen
        same = all(s == shortlists[0] for s in shortlists)
        a = "/".join(f"{t:.1f}" for t in times["first"])
        b = "/".join(f"{t:.1f}" for t in times["chosen"])
        print(f"{name:10s} {a:>14s} {b:>9s}  {' > '.join(','.join(g) for g in used)}; {same}")


def main(args: list[str]) -> None:
    if args[:1] == ["--orders"]:
        orders(args[1:])
        return
    rdBase.DisableLog("rdApp.*")
    groups = default_groups()
    paths = [Path(a) for a in args] or [ROOT / "tests" / "reference_cases" / f"{n}.yaml" for n in DEFAULT]
    for path in paths:
        case = load_case(path)
        formula = parse_formula(TRUTH_FORMULA.get(path.stem) or str(case.formula.known))
        every = [cls() for cls in TECHNIQUES]
        applied = [t for t in every if t.applies(case)]
        selection = hard_selection(case, every)
        options = GeneratorOptions(selection=selection, rdkit_smiles=True)
        smiles = list(islice(isomer_smiles(formula, options), SAMPLE))
        mols = [Chem.MolFromSmiles(s) for s in smiles]
        m = case.mass_spec.molecular_ion if case.mass_spec else None
        t0 = time.perf_counter()
        subjects = [make_subject(s, mol, formula, groups, m, 1.0) for s, mol in zip(smiles, mols, strict=True)]
        for subject in subjects:  # the cached perception every technique shares
            _ = subject.symmetry_ranks
        made = (time.perf_counter() - t0) / len(subjects) * 1e6
        print(f"{path.stem}: {formula}, {len(subjects)} structures; mean microseconds per candidate")
        print(f"  {'subject (shared)':18s} {made:8.0f}")
        for technique in applied:
            t0 = time.perf_counter()
            for subject in subjects:
                technique.assess(subject, case)
            each = (time.perf_counter() - t0) / len(subjects) * 1e6
            print(f"  {technique.name:18s} {each:8.0f}   (pass {technique.scoring_pass})")


if __name__ == "__main__":
    main(sys.argv[1:])
