"""Scale: scoring in passes against full scoring, and a Dask LocalCluster against local worker
processes. Prints figures side by side in one run; asserts nothing.

    python3 bench/bench_scale.py [CASE] [--workers N] [--limit N]

1. Solver: the case (default: the demo case cr-0702-k, about 10^5 candidates of C10H12O with a
   ketone and an alkene, IR, UV, MS and a 13C line count, with --limit 400000) solved with the
   shortlist of 10 (scoring in passes, branch and bound) and with every candidate scored in
   full, on N local workers: seconds (generation and scoring apart), candidates settled per
   second, what each pass settled, and whether the shortlists are identical; then the same
   case solved again from the candidate cache (the chemist's rerun).
2. Dask: the same case on a 2-worker LocalCluster of processes against ``--workers 2``: the
   same output or not, the per-partition (generation task) timings with the fixed cut and with
   the partition balanced for 64 workers, and from them the generation time on 64 workers
   (at least the longest partition and the total over 64; at most their sum, the
   list-scheduling bound).
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from elucidate import load_case
from elucidate.cache import CandidateCache
from elucidate.evidence import TECHNIQUES
from elucidate.formula import parse_formula
from elucidate.generator import GeneratorOptions
from elucidate.generator.tasks import WorkerJob, balanced_tasks, generation_tasks, run_job, selection_plans
from elucidate.solver import hard_selection, solve

ROOT = Path(__file__).resolve().parent.parent


def solver_figures(case_path: Path, workers: int, limit: int) -> None:
    case = load_case(case_path)
    rows = []
    results = {}
    for label, shortlist in (("passes, shortlist 10", 10), ("full scoring", 0)):
        marks: dict[str, float] = {}

        def progress(stage: str, done: int, total: int | None, marks: dict[str, float] = marks) -> None:
            marks.setdefault(stage, time.perf_counter())
            marks[stage + " end"] = time.perf_counter()

        t0 = time.perf_counter()
        solution = solve(case, workers=workers, shortlist=shortlist, limit=limit, progress=progress)
        seconds = time.perf_counter() - t0
        scoring = seconds - (marks.get("generation end", t0) - t0)
        results[label] = solution
        rows.append((label, seconds, scoring, solution))
    print(f"solver on {case_path.name}, {workers} worker(s), limit {limit:,}:")
    for label, seconds, scoring, solution in rows:
        n = solution.candidate_count
        passes = "; ".join(
            [f"before the passes: settled {solution.settled_before_passes}"] * bool(solution.settled_before_passes)
            + [f"{'+'.join(p.techniques)}: ran {p.scored}, settled {p.settled}" for p in solution.scoring_passes]
        )
        print(
            f"  {label:22s} {n:,} candidates, {seconds:7.1f} s ({seconds - scoring:.1f} s to the end of generation, "
            f"{scoring:.1f} s scoring)  {n / seconds:8.0f} candidates settled/s  [{passes}]"
        )
    quick, full = results["passes, shortlist 10"], results["full scoring"]
    same = [c.as_dict() for c in quick.candidates[:10]] == [c.as_dict() for c in full.candidates[:10]]
    print(f"  shortlists identical: {same}; speed-up {rows[1][1] / rows[0][1]:.2f}x")
    print(f"  10^5 candidates at the passes' rate: {1e5 * rows[0][1] / max(quick.candidate_count, 1):.1f} s")
    # the chemist's rerun: the structures (and what generation perceived) read from the cache
    with tempfile.TemporaryDirectory() as folder, CandidateCache(Path(folder) / "c.sqlite") as cache:
        solve(case, workers=workers, limit=limit, cache=cache)
        t0 = time.perf_counter()
        again = solve(case, workers=workers, limit=limit, cache=cache)
        rerun = time.perf_counter() - t0
    same = [c.as_dict() for c in again.candidates] == [c.as_dict() for c in quick.candidates]
    print(f"  rerun from the candidate cache: {rerun:.1f} s (the same shortlist: {same})")


def dask_figures(case_path: Path, limit: int) -> None:
    try:
        import distributed
    except ImportError:
        print("dask: not installed (pip install 'elucidate[cluster]')")
        return
    from elucidate.cluster import DaskRunner

    case = load_case(case_path)
    lc = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    with lc, distributed.Client(lc) as client:
        client.run(lambda: __import__("elucidate.solver"))  # warm the workers' imports
        t0 = time.perf_counter()
        with DaskRunner(client=client) as runner:
            on_dask = solve(case, runner=runner, limit=limit)
        dask_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    local = solve(case, workers=2, limit=limit)
    local_s = time.perf_counter() - t0
    same = [c.as_dict() for c in on_dask.candidates] == [c.as_dict() for c in local.candidates]
    print(f"dask LocalCluster (2 processes) {dask_s:.1f} s against --workers 2 {local_s:.1f} s; same output: {same}")
    # per-partition timings of generation, measured one by one in this process: the fixed cut
    # at TASK_DEPTH, and the partition balanced for 64 workers
    selection = hard_selection(case, [cls() for cls in TECHNIQUES])
    for label, workers in (("fixed cut", None), ("balanced for 64", 64)):
        times = []
        for kept in on_dask.formulas:
            if kept.skipped:
                continue
            options = GeneratorOptions(selection=selection)
            plans, _ = selection_plans(parse_formula(str(kept.formula)), options)
            tasks = list(generation_tasks(plans))
            if workers is not None:
                tasks = balanced_tasks(tasks, workers=workers)
            for task in tasks:
                t0 = time.perf_counter()
                run_job(WorkerJob(task, False, selection))
                times.append(time.perf_counter() - t0)
        if not times:
            return
        total = sum(times)
        times.sort(reverse=True)
        print(
            f"generation partitions ({label}): {len(times)}, total {total:.2f} s, longest {times[0]:.3f} s, "
            f"median {times[len(times) // 2] * 1e3:.1f} ms; on 64 workers between "
            f"{max(times[0], total / 64):.2f} s and {total / 64 + times[0]:.2f} s (list scheduling bound)"
        )


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("case", nargs="?", default=str(ROOT / "cases" / "cr-0702-k.yaml"))
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--limit", type=int, default=400_000)
    args = parser.parse_args()
    solver_figures(Path(args.case), args.workers, args.limit)
    dask_figures(Path(args.case), args.limit)


if __name__ == "__main__":
    main()
