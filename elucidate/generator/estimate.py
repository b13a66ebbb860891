"""Knuth's tree-size estimate of a generation space, before anything is enumerated."""

from __future__ import annotations

import random
from collections.abc import Iterable, Iterator

from ..formula import Formula
from .options import GeneratorOptions
from .plans import Plan
from .selection import SkeletonPatterns
from .skeletons import PartialGraph, children, root_graph
from .tasks import GenerationTask, selection_plans, task_structures

__all__ = ["balanced_tasks", "estimate_structures", "estimate_task"]

#: Knuth probes per task when balancing the partition
BALANCE_PROBES = 8
#: partitions per worker the balancing aims at (so no worker idles at the end)
PARTS_PER_WORKER = 4


def estimate_structures(
    formula: Formula, options: GeneratorOptions | None = None, *, probes: int = 32, seed: int = 0
) -> float:
    """Estimated number of multigraph structures, by Knuth's tree-size estimator.

    D. E. Knuth, "Estimating the efficiency of backtrack programs", Math. Comp. 29, 121-136
    (1975): walk from the root of the generation tree to a leaf choosing a child uniformly at
    random; the product of the branching factors met on the way, times the number of structures
    on the skeleton reached, is an unbiased estimate. The mean over ``probes`` walks (a fixed
    seed, so the same formula always gets the same estimate) is returned. With a selection in
    ``options``, the space estimated is the one generation will walk (the ring bound and the
    skeleton and Kekulé conditions of its required groups), before the finished structures are
    tested.
    """
    plans, prefilter = selection_plans(formula, options or GeneratorOptions())
    rng = random.Random(seed)
    return sum(estimate_task(GenerationTask(plan, root_graph()), prefilter, probes=probes, rng=rng) for plan in plans)


def estimate_task(task: GenerationTask, prefilter: SkeletonPatterns, *, probes: int, rng: random.Random) -> float:
    """Knuth's estimate of the structures below one task (its subtree of the generation tree)."""
    plan = task.plan
    if plan.n == 1:
        return float(sum(1 for _ in task_structures(task, prefilter)))
    estimate = 0.0
    for _ in range(probes):
        weight = 1.0
        part = task.part
        while part.size < plan.n:
            below = list(_children_of(part, plan))
            if not below:
                weight = 0.0
                break
            weight *= len(below)
            part = below[rng.randrange(len(below))]
        if weight:
            estimate += weight * sum(1 for _ in task_structures(GenerationTask(plan, part), prefilter))
    return estimate / probes


def balanced_tasks(
    tasks: Iterable[GenerationTask], prefilter: SkeletonPatterns, *, workers: int, seed: int = 0
) -> list[GenerationTask]:
    """The tasks with the large ones split into their subtrees, in tree order, so that each
    holds at most about 1/(PARTS_PER_WORKER x workers) of the estimated total and no worker is
    left with one long partition at the end. Splitting a task into its children in order keeps
    the concatenated output, and its order, exactly the same. The estimates use a fixed seed,
    so the partition is the same on every run."""
    rng = random.Random(seed)
    sized = [(task, estimate_task(task, prefilter, probes=BALANCE_PROBES, rng=rng)) for task in tasks]
    total = sum(size for _, size in sized)
    budget = total / (PARTS_PER_WORKER * workers) if total else 0.0
    out: list[GenerationTask] = []
    stack = list(reversed(sized))
    while stack:
        task, size = stack.pop()
        if budget and size > budget and task.part.size < task.plan.n - 1:
            below = [GenerationTask(task.plan, child) for child in _children_of(task.part, task.plan)]
            sizes = [estimate_task(child, prefilter, probes=BALANCE_PROBES, rng=rng) for child in below]
            stack.extend(reversed(list(zip(below, sizes, strict=True))))
            continue
        out.append(task)
    return out


def _children_of(part: PartialGraph, plan: Plan) -> Iterator[PartialGraph]:
    return children(part, sorted(plan.bounds, reverse=True), plan.rings_max, cycles=plan.cycles)
