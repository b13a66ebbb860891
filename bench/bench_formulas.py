"""Formula-engine benchmark: prints figures, asserts nothing (machines are shared and noisy).

    python3 bench/bench_formulas.py [--quick]

1. enumeration alone, direct (numpy) vs python-constraint, side by side at the same masses;
2. the whole `formulas` computation (enumerate, filter, score, rank) with the default element
   limits and an isotope cluster, for M up to 500 (target: under 1 s each);
3. the command line as a new process (`python -m elucidate formulas M --json`), start-up included;
4. peak memory (RSS) of the largest composition space the documented maximum allows
   (MAX_COMPOSITIONS), each in a fresh process beside the same process importing only, and the
   time to refuse a space just above it.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import time

from elucidate import FormulaQuery, ObservedCluster, default_rules, derive_formulas
from elucidate.formula_search.search import composition_array


def best_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--quick", action="store_true", help="fewer masses, no constraint run at 500")
    args = parser.parse_args()
    limits = dict(default_rules().default_elements)

    print("1. enumeration only (integer arrays), default element limits (best of runs, seconds)")
    print(f"{'M':>5} {'compositions':>13} {'direct':>9} {'constraint':>11} {'ratio':>7}")
    for mass in (120, 300) if args.quick else (120, 300, 500):
        n = composition_array(mass, limits)[1].shape[0]
        direct = best_of(lambda mass=mass: composition_array(mass, limits, method="direct"), 3)
        solved = best_of(lambda mass=mass: composition_array(mass, limits, method="constraint"), 1)
        print(f"{mass:>5} {n:>13} {direct:>9.3f} {solved:>11.3f} {solved / direct:>6.0f}x")

    print("\n2. whole computation with an isotope cluster (best of 3, seconds)")
    print(f"{'M':>5} {'kept':>7} {'seconds':>9}")
    worst = 0.0
    masses = (100, 300, 500) if args.quick else (100, 200, 300, 400, 450, 500)
    for mass in masses:
        cluster = ObservedCluster.from_peaks(mass, {mass: 40, mass + 1: 5.0, mass + 2: 1.2, 57: 100})
        q = FormulaQuery(mass, limits, default_rules().default_dbe, cluster=cluster)
        kept = derive_formulas(q, top=20).kept_count
        sec = best_of(lambda q=q: derive_formulas(q, top=20), 3)
        worst = max(worst, sec)
        print(f"{mass:>5} {kept:>7} {sec:>9.3f}")
    print(f"slowest: {worst:.3f} s (target < 1 s)")

    print("\n3. command line in a new process, M = 500 (median of 3, seconds, start-up included)")
    runs = []
    for _ in range(3):
        t0 = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "elucidate", "formulas", "500", "--json", "--top", "20"],
            check=True,
            capture_output=True,
        )
        runs.append(time.perf_counter() - t0)
    print(f"  {statistics.median(runs):.3f}")
    largest_space()


#: wide element limits a careless case could declare (every range above a typical unknown's)
WIDE = {"C": (0, 120), "H": (0, 250), "N": (0, 40), "O": (0, 40), "S": (0, 10), "Cl": (0, 6)}

_CHILD = """
import resource, sys, time
from elucidate import FormulaQuery, derive_formulas
from elucidate.errors import TooLarge
mass, work = int(sys.argv[1]), sys.argv[2]
limits = {limits!r}
t0 = time.perf_counter()
kept = total = -1
if work == "derive":
    r = derive_formulas(FormulaQuery(mass, limits, (0, 20)), top=20)
    kept, total = r.kept_count, r.total
elif work == "explain":
    r = derive_formulas(FormulaQuery(mass, limits, (0, 20)), top=20, keep_rejected=True)
    kept, total = r.kept_count, r.total
elif work == "refuse":
    try:
        derive_formulas(FormulaQuery(mass, limits, (0, 20)))
    except TooLarge:
        pass
print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, time.perf_counter() - t0, kept, total)
"""


def largest_space() -> None:
    from elucidate.formula_search.search import MAX_COMPOSITIONS, composition_count

    counts = {m: composition_count(m, WIDE) for m in range(1000, 1600)}
    allowed = max((n, m) for m, n in counts.items() if n <= MAX_COMPOSITIONS)[1]
    above = min(m for m, n in counts.items() if n > MAX_COMPOSITIONS)
    print(
        f"\n4. largest allowed composition space: M {allowed}, {counts[allowed]:,} compositions "
        f"(maximum {MAX_COMPOSITIONS:,}); limits {WIDE}"
    )
    print(f"{'work':>22} {'peak RSS MB':>12} {'seconds':>9} {'kept':>8}")
    code = _CHILD.format(limits=WIDE)
    for label, mass, work in (
        ("import only", allowed, "none"),
        ("derive formulas", allowed, "derive"),
        ("derive + explain", allowed, "explain"),
        (f"refuse M {above}", above, "refuse"),
    ):
        done = subprocess.run([sys.executable, "-c", code, str(mass), work], check=True, capture_output=True, text=True)
        rss_kb, sec, kept, _ = done.stdout.split()
        shown = kept if int(kept) >= 0 else "-"
        print(f"{label:>22} {int(rss_kb) / 1024:>12.0f} {float(sec):>9.2f} {shown:>8}")


if __name__ == "__main__":
    main()
