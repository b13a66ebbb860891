"""Knuth's tree-size estimate of a generation space, before anything is enumerated."""

from __future__ import annotations

import random
from collections.abc import Iterator

from ..formula import Formula
from .options import GeneratorOptions
from .plans import Plan
from .skeletons import PartialGraph, children, root_graph
from .tasks import GenerationTask, selection_plans, task_structures

__all__ = ["estimate_structures"]


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
    total = 0.0
    for plan in plans:
        if plan.n == 1:
            total += sum(1 for _ in task_structures(GenerationTask(plan, root_graph()), prefilter))
            continue
        estimate = 0.0
        for _ in range(probes):
            weight = 1.0
            part = root_graph()
            while part.size < plan.n:
                below = list(_children_of(part, plan))
                if not below:
                    weight = 0.0
                    break
                weight *= len(below)
                part = below[rng.randrange(len(below))]
            if weight:
                estimate += weight * sum(1 for _ in task_structures(GenerationTask(plan, part), prefilter))
        total += estimate / probes
    return total


def _children_of(part: PartialGraph, plan: Plan) -> Iterator[PartialGraph]:
    return children(part, sorted(plan.bounds, reverse=True), plan.rings_max, cycles=plan.cycles)
