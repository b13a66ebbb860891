"""Knuth's tree-size estimate of a generation space, before anything is enumerated."""

from __future__ import annotations

import math
import random
from dataclasses import dataclass

from ..formula import Formula
from .options import GeneratorOptions
from .selection import SkeletonPatterns
from .skeletons import PartialGraph, root_graph
from .tasks import NODES_PER_STRUCTURE, GenerationTask, plan_children, selection_plans, task_structures

__all__ = ["NODES_PER_STRUCTURE", "SpaceEstimate", "estimate_space", "estimate_structures", "estimate_task"]

#: batches of walks the estimate may take at most (the first batch always)
MAX_BATCHES = 16
#: further batches are walked while the estimate's standard error is above this share of it
MAX_RELATIVE_ERROR = 0.33


@dataclass(frozen=True)
class SpaceEstimate:
    """Knuth's estimates of one space: the structures (multigraphs built, before the
    constraints are tested) and the nodes of the generation tree (partial skeletons grown)."""

    structures: float
    nodes: float

    def over(self, limit: float) -> bool:
        """Whether the space is above ``limit`` structures, or above NODES_PER_STRUCTURE times
        as many partial skeletons."""
        return self.structures > limit or self.nodes > NODES_PER_STRUCTURE * limit


#: children already listed, per tree shape (a plan's atoms, degree bounds, ring bound and
#: required cycles, which alone decide a node's children) and node: estimates of one formula under
#: several selections share it (:func:`estimate_space`'s ``listed``)
Listed = dict[tuple[int, tuple[int, ...], int, tuple[int, ...]], dict[PartialGraph, list[PartialGraph]]]


def estimate_structures(
    formula: Formula,
    options: GeneratorOptions | None = None,
    *,
    probes: int = 32,
    seed: int = 0,
    batches: int = MAX_BATCHES,
    listed: Listed | None = None,
) -> float:
    """Estimated number of multigraph structures (:func:`estimate_space`'s structures)."""
    return estimate_space(formula, options, probes=probes, seed=seed, batches=batches, listed=listed).structures


def estimate_space(
    formula: Formula,
    options: GeneratorOptions | None = None,
    *,
    probes: int = 32,
    seed: int = 0,
    batches: int = MAX_BATCHES,
    listed: Listed | None = None,
) -> SpaceEstimate:
    """Estimated number of multigraph structures and of generation-tree nodes, by Knuth's
    tree-size estimator.

    D. E. Knuth, "Estimating the efficiency of backtrack programs", Math. Comp. 29, 121-136
    (1975): walk from the root of the generation tree to a leaf choosing a child uniformly at
    random; the product of the branching factors met on the way, times the number of structures
    on the skeleton reached, is an unbiased estimate. The mean over ``probes`` walks, or more
    while it is uncertain (:func:`estimate_task`; a fixed seed, so the same formula always gets
    the same estimate) is returned. With a selection in
    ``options``, the space estimated is the one generation will walk (the ring bound and the
    skeleton and Kekulé conditions of its required groups), before the finished structures are
    tested.

    ``listed``: the children already listed per tree shape, kept by the caller across estimates
    of one formula under several selections (many share a shape: the same seed then walks the
    same paths, and only the structures at the leaves differ). It saves work and never changes
    an estimate.
    """
    plans, prefilter = selection_plans(formula, options or GeneratorOptions())
    rng = random.Random(seed)
    structures = nodes = 0.0
    for plan in plans:
        shape = (plan.n, tuple(sorted(plan.bounds, reverse=True)), plan.rings_max, tuple(plan.cycles))
        below = listed.setdefault(shape, {}) if listed is not None else {}
        s, n = _estimate(
            GenerationTask(plan, root_graph()), prefilter, probes=probes, rng=rng, batches=batches, below=below
        )
        structures += s
        nodes += n
    return SpaceEstimate(structures, nodes)


def estimate_task(
    task: GenerationTask, prefilter: SkeletonPatterns, *, probes: int, rng: random.Random, batches: int = MAX_BATCHES
) -> float:
    """Knuth's estimate of the structures below one task (its subtree of the generation tree):
    the mean of ``probes`` walks, and of further batches of ``probes`` walks (up to
    ``batches`` in all, MAX_BATCHES by default) while every walk so far has dead-ended or the
    mean's standard error is above MAX_RELATIVE_ERROR of it. The walks' values are heavy-tailed
    where most walks dead-end (highly unsaturated formulas, pushed constraints): a fixed 32
    walks put C9H2N2O at about 4,500 structures where 256 put it near 2.7 million, and the size
    limit then let it through."""
    return _estimate(task, prefilter, probes=probes, rng=rng, batches=batches, below={})[0]


def _estimate(
    task: GenerationTask,
    prefilter: SkeletonPatterns,
    *,
    probes: int,
    rng: random.Random,
    batches: int,
    below: dict[PartialGraph, list[PartialGraph]],
) -> tuple[float, float]:
    """(structures, nodes) below one task, as :func:`estimate_task` walks. ``below``: the
    children already listed, by node, of the task's tree shape (the walks share their first
    steps: each node's children are listed once)."""
    plan = task.plan
    if plan.n == 1:
        return float(sum(1 for _ in task_structures(task, prefilter))), 1.0
    values: list[float] = []
    nodes: list[float] = []
    for _ in range(batches):
        for _ in range(probes):
            value, count = _walk(task, prefilter, rng, below)
            values.append(value)
            nodes.append(count)
        mean = sum(values) / len(values)
        if mean == 0:
            continue  # every walk dead-ended so far: the heaviest tail of all
        variance = sum((v - mean) ** 2 for v in values) / (len(values) - 1) if len(values) > 1 else 0.0
        if math.sqrt(variance / len(values)) <= MAX_RELATIVE_ERROR * mean:
            break
    return sum(values) / len(values), sum(nodes) / len(nodes)


def _walk(
    task: GenerationTask, prefilter: SkeletonPatterns, rng: random.Random, below: dict[PartialGraph, list[PartialGraph]]
) -> tuple[float, float]:
    """One random root-to-leaf walk below the task: the product of the branching factors times
    the structures on the skeleton reached (0 at a dead end), and the sum of the partial
    products (the nodes). ``below``: children already listed, by node."""
    plan = task.plan
    weight = 1.0
    nodes = 1.0
    part = task.part
    while part.size < plan.n:
        options = below.get(part)
        if options is None:
            options = below[part] = list(plan_children(part, plan))
        if not options:
            return 0.0, nodes
        weight *= len(options)
        nodes += weight
        part = options[rng.randrange(len(options))]
    return weight * sum(1 for _ in task_structures(GenerationTask(plan, part), prefilter)), nodes
