"""Knuth's tree-size estimate of a generation space, before anything is enumerated."""

from __future__ import annotations

import math
import random

from ..formula import Formula
from .options import GeneratorOptions
from .selection import SkeletonPatterns
from .skeletons import PartialGraph, root_graph
from .tasks import GenerationTask, plan_children, selection_plans, task_structures

__all__ = ["estimate_structures", "estimate_task"]

#: batches of walks the estimate may take at most (the first batch always)
MAX_BATCHES = 16
#: further batches are walked while the estimate's standard error is above this share of it
MAX_RELATIVE_ERROR = 0.33


def estimate_structures(
    formula: Formula,
    options: GeneratorOptions | None = None,
    *,
    probes: int = 32,
    seed: int = 0,
    batches: int = MAX_BATCHES,
) -> float:
    """Estimated number of multigraph structures, by Knuth's tree-size estimator.

    D. E. Knuth, "Estimating the efficiency of backtrack programs", Math. Comp. 29, 121-136
    (1975): walk from the root of the generation tree to a leaf choosing a child uniformly at
    random; the product of the branching factors met on the way, times the number of structures
    on the skeleton reached, is an unbiased estimate. The mean over ``probes`` walks, or more
    while it is uncertain (:func:`estimate_task`; a fixed seed, so the same formula always gets
    the same estimate) is returned. With a selection in
    ``options``, the space estimated is the one generation will walk (the ring bound and the
    skeleton and Kekulé conditions of its required groups), before the finished structures are
    tested.
    """
    plans, prefilter = selection_plans(formula, options or GeneratorOptions())
    rng = random.Random(seed)
    return sum(
        estimate_task(GenerationTask(plan, root_graph()), prefilter, probes=probes, rng=rng, batches=batches)
        for plan in plans
    )


def estimate_task(
    task: GenerationTask, prefilter: SkeletonPatterns, *, probes: int, rng: random.Random, batches: int = MAX_BATCHES
) -> float:
    """Knuth's estimate of the structures below one task (its subtree of the generation tree):
    the mean of ``probes`` walks, and of further batches of ``probes`` walks (up to
    ``batches`` in all, MAX_BATCHES by default) while every walk so far has dead-ended or the mean's standard error is
    above MAX_RELATIVE_ERROR of it. The
    walks' values are heavy-tailed where most walks dead-end (highly unsaturated formulas,
    pushed constraints): a fixed 32 walks put C9H2N2O at about 4,500 structures where 256 put
    it near 2.7 million, and the size limit then let it through."""
    plan = task.plan
    if plan.n == 1:
        return float(sum(1 for _ in task_structures(task, prefilter)))
    values: list[float] = []
    # the walks share their first steps: each node's children are listed once
    below: dict[PartialGraph, list[PartialGraph]] = {}
    for _ in range(batches):
        for _ in range(probes):
            values.append(_walk(task, prefilter, rng, below))
        mean = sum(values) / len(values)
        if mean == 0:
            continue  # every walk dead-ended so far: the heaviest tail of all
        variance = sum((v - mean) ** 2 for v in values) / (len(values) - 1) if len(values) > 1 else 0.0
        if math.sqrt(variance / len(values)) <= MAX_RELATIVE_ERROR * mean:
            break
    return sum(values) / len(values)


def _walk(
    task: GenerationTask, prefilter: SkeletonPatterns, rng: random.Random, below: dict[PartialGraph, list[PartialGraph]]
) -> float:
    """One random root-to-leaf walk below the task: the product of the branching factors times
    the structures on the skeleton reached (0 at a dead end). ``below``: children already
    listed, by node."""
    plan = task.plan
    weight = 1.0
    part = task.part
    while part.size < plan.n:
        options = below.get(part)
        if options is None:
            options = below[part] = list(plan_children(part, plan))
        if not options:
            return 0.0
        weight *= len(options)
        part = options[rng.randrange(len(options))]
    return weight * sum(1 for _ in task_structures(GenerationTask(plan, part), prefilter))
