"""Isomer-generator throughput: prints figures, asserts nothing.

    python3 bench/bench_isomers.py [--constrained] [--verify]

For each formula, in one run on one core: the rate of the exhaustive generator (structures per
second) in graph counting (multigraphs only, no SMILES), with SMILES output (the default,
Kekulé forms merged: SMILES written from the skeleton, RDKit's for what may be aromatic) by the
Python labelling and by the compiled core (its start-up subtracted: loaded before timing), with
every SMILES written by RDKit (``rdkit_smiles``), and the rate at which RDKit merely writes
canonical SMILES for the same molecules from prebuilt Mol objects. The goal is generation with
SMILES at least as fast as RDKit's canonical SMILES alone (ratio >= 1.0).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from typing import TypeVar

from elucidate import parse_formula
from elucidate._rdkit import Chem
from elucidate.formula import Formula
from elucidate.generator import GeneratorOptions, isomer_smiles, structures
from elucidate.generator.smiles import to_mol

T = TypeVar("T")

CONSTRAINED = [
    ("C10H12O", ("aromatic_ring", "ketone")),
    ("C9H10O2", ("aromatic_ring", "ester")),
    ("C8H9NO", ("aromatic_ring", "amide")),
]


def constrained(verify: bool) -> None:
    """The constrained targets (goal < 2 s each with one worker). With ``verify``, also filter
    the exhaustive set (millions of structures, two workers, many minutes) with the groups'
    SMARTS applied afresh by RDKit and say whether the results are equal."""
    from elucidate.generator.groups import default_groups
    from elucidate.generator.selection import Selection

    print(
        f"{'formula':>8} {'required':>24} {'isomers':>8} {'seconds':>8}"
        + ("  exhaustive  filtered  equal" if verify else "")
    )
    for text, required in CONSTRAINED:
        t0 = time.perf_counter()
        found = list(isomer_smiles(parse_formula(text), GeneratorOptions(selection=Selection(require=required))))
        line = f"{text:>8} {' + '.join(required):>24} {len(found):>8} {time.perf_counter() - t0:>8.1f}"
        if verify:
            patterns = [Chem.MolFromSmarts(default_groups()[name].smarts) for name in required]
            total, kept = 0, []
            for smiles in isomer_smiles(parse_formula(text), GeneratorOptions(workers=2)):
                total += 1
                mol = Chem.MolFromSmiles(smiles)
                if all(mol.HasSubstructMatch(p) for p in patterns):
                    kept.append(smiles)
            line += f"  {total:>10} {len(kept):>9}  {sorted(kept) == sorted(found)}"
        print(line, flush=True)


def _best(repeats: int, run: Callable[[], T]) -> tuple[float, T]:
    """The shortest of ``repeats`` runs, in seconds, and the result."""
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = run()
        best = min(best, time.perf_counter() - t0)
    return best, out


def _count(formula: Formula, options: GeneratorOptions) -> int:
    return sum(1 for _ in isomer_smiles(formula, options))


def main() -> None:
    import sys

    if "--constrained" in sys.argv or "--verify" in sys.argv:
        constrained(verify="--verify" in sys.argv)
        return
    print(
        f"{'formula':>8} {'isomers':>8} {'graphs/s':>10} {'python/s':>10} {'compiled/s':>10}"
        f" {'all-rdkit/s':>12} {'rdkit/s':>10} {'python':>7} {'compiled':>8} {'all-rdkit':>9}"
    )
    # start-up subtracted: the compiled core is loaded (numba import, its cache read) before timing
    sum(1 for _ in isomer_smiles(parse_formula("C4H6O"), GeneratorOptions(engine="compiled")))
    for text in ("C7H8O", "C7H14O", "C8H8O"):
        formula = parse_formula(text)
        # small spaces take milliseconds: each figure is the best of three runs there
        repeats = 3 if text != "C8H8O" else 1
        t_graph, graphs = _best(repeats, lambda f=formula: list(structures(f)))
        t_python, count = _best(repeats, lambda f=formula: _count(f, GeneratorOptions(engine="python")))
        t_compiled, count_compiled = _best(repeats, lambda f=formula: _count(f, GeneratorOptions(engine="compiled")))
        t_all_rdkit, count_rdkit = _best(repeats, lambda f=formula: _count(f, GeneratorOptions(rdkit_smiles=True)))
        assert count_rdkit == count == count_compiled
        mols = []
        for s in graphs:
            mol = to_mol(s)
            Chem.SanitizeMol(mol)
            mols.append(mol)
        t_rdkit, _ = _best(repeats, lambda ms=mols: [Chem.MolToSmiles(m) for m in ms])
        rate_g, rate_p, rate_c = len(graphs) / t_graph, count / t_python, count / t_compiled
        rate_a, rate_r = count / t_all_rdkit, len(mols) / t_rdkit
        print(
            f"{text:>8} {count:>8} {rate_g:>10.0f} {rate_p:>10.0f} {rate_c:>10.0f} {rate_a:>12.0f} {rate_r:>10.0f}"
            f" {rate_p / rate_r:>7.2f} {rate_c / rate_r:>8.2f} {rate_a / rate_r:>9.2f}"
        )
    print("python, compiled = the SMILES-writing generator's rate (engine python / compiled) over RDKit's")
    print("canonical-SMILES rate on the same molecules (goal >= 1.0); all-rdkit = the same with every")
    print("SMILES written by RDKit (--rdkit-smiles)")


if __name__ == "__main__":
    main()
