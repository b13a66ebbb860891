"""What each evidence technique costs per candidate: prints figures, asserts nothing.

    python3 bench/bench_scoring_cost.py [CASE.yaml ...]

For each case (default: three NMR reference cases), the first 400 structures of its formula with
the case's hard constraints are scored by every technique that applies, each timed alone on the
same subjects (the subject's shared perception, made once, is timed as its own line). The mean
microseconds per candidate say what each scoring pass costs (docs/solver.md): the figures to
weigh when the passes are ordered.
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


def main(args: list[str]) -> None:
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
