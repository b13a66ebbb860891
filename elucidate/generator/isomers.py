"""Exhaustive constitutional-isomer generation for a molecular formula: the entry points.

Route (from the graph-enumeration literature): connected simple skeletons with degree bounds
first (:mod:`.skeletons`, canonical augmentation), then element labels on the skeleton's
vertices, then edge multiplicities (bond orders 1-3), with hydrogens implied by each atom's free
valence (:mod:`.labelling`). Two molecules built on non-isomorphic skeletons are different; two
built on one skeleton are the same molecule exactly when an automorphism of the skeleton maps
one labelling onto the other, so each constitutional isomer comes out exactly once, as a
multigraph.

Counting conventions:
* ``kekule=True``: every multigraph once (as the enumeration literature counts; the Kekulé
  forms of o-xylene are two graphs). SMILES are written in Kekulé form.
* default: Kekulé forms of one aromatic compound are merged (what a chemist calls one compound):
  after RDKit aromaticity perception, duplicates within a skeleton are dropped — Kekulé forms
  differ only in bond orders, never in the skeleton.

Valence states (``constraints/elements.yaml``, ``constraints/valence_states.yaml``): C, Si 4;
N 3, or 5 for the charge-separated groups (nitro, N-oxides: written [N+]-[O-]); P 3 or 5 (P=O,
P=S); O 2; S 2, 4 (sulfoxides, sulfinic groups) or 6 (sulfones, sulfonic groups), written
hypervalent, with no H on S; H and halogens 1. ``lowest_valence`` keeps only the lowest state of
each element (plain graph counting). Constitution only: no stereochemistry.
"""

from __future__ import annotations

from collections.abc import Callable, Generator, Iterator
from contextlib import nullcontext

from ..errors import ElucidateError
from ..formula import Formula
from ..parallel import Runner, local_runner
from .labelling import Structure
from .options import GeneratorOptions
from .plans import Plan
from .tasks import (
    JobResult,
    Perceive,
    StructureBudget,
    TooManyStructures,
    WorkerJob,
    balanced_tasks,
    compiled_selection,
    count_job,
    generation_tasks,
    run_job,
    selection_plans,
    task_count,
    task_smiles,
    task_structures,
    whole_tasks,
)

__all__ = ["count_isomers", "isomer_smiles", "structures", "within_budget"]

_DEFAULT = GeneratorOptions()


def structures(formula: Formula, options: GeneratorOptions = _DEFAULT) -> Iterator[Structure]:
    """Every constitutional isomer of ``formula`` once, as a multigraph (Kekulé forms apart).

    Reads the valence, ring and bond-order options; the selection, ``kekule`` and ``workers``
    apply to :func:`isomer_smiles`. A higher state stands for the usual oxo groups and needs a
    double bond to a terminal O (see ``constraints/valence_states.yaml``).
    """
    plans, _ = selection_plans(
        formula,
        GeneratorOptions(
            max_rings=options.max_rings,
            max_bond_order=options.max_bond_order,
            lowest_valence=options.lowest_valence,
            table=options.table,
        ),
    )
    for task in whole_tasks(plans):
        yield from task_structures(task)


def isomer_smiles(
    formula: Formula,
    options: GeneratorOptions = _DEFAULT,
    *,
    removed: dict[str, int] | None = None,
    runner: Runner | None = None,
    budget: int | None = None,
    on_taken: Callable[[int], None] | None = None,
    perceive: Perceive | None = None,
    perceived: list[object] | None = None,
) -> Generator[str, None, None]:
    """Canonical SMILES of every constitutional isomer of ``formula`` that passes the options'
    selection, each once. ``removed``, when given, is filled with how many generated structures
    each constraint removed (the first constraint a structure breaks is the one counted).
    Required groups with a skeleton condition (:meth:`~.selection.Selection.pushed`) also prune
    labelled skeletons during generation; what they prune is not generated and so not counted.

    With ``options.workers`` > 1, or a ``runner`` (:mod:`elucidate.parallel`, a Dask cluster:
    :mod:`elucidate.cluster`), the generation tree is cut into subtrees (:mod:`.tasks`) that
    workers grow independently; results are read in task order, so the output, and its order,
    is the same for any number of workers and wherever they run. For many workers the tree is
    cut deeper (:func:`~.tasks.balanced_tasks`) so that no worker is left with one long
    partition at the end.

    ``budget``: at most this many structures (multigraphs built, before the constraints are
    tested) may be taken; past it :class:`~.tasks.TooManyStructures` is raised, at a point that
    depends on the partition (only the exception is certain, not the SMILES before it). Each
    worker's job stops on its own past the budget, so no partition runs away.

    ``on_taken``: with a ``budget``, called with the structures taken so far after each task's
    SMILES (in task order); it may raise to stop the work (the solver checks its size estimate
    this way).

    ``perceive`` (not with ``options.kekule``): run on the RDKit molecule of each structure
    kept, where generation holds it (in the worker processes); its result is appended to
    ``perceived`` before the SMILES is yielded, so ``perceived[k]`` belongs to the k-th SMILES.
    """
    if not formula.counts:
        raise ElucidateError("empty formula")
    plans, prefilter = selection_plans(formula, options)
    compiled = compiled_selection(options.selection)
    counts: dict[str, int] = removed if removed is not None else {}
    if compiled is not None:
        for label in compiled.labels:
            counts.setdefault(label, 0)
    if runner is None and options.workers == 1:
        left = StructureBudget(budget) if budget is not None else None
        # the budget counts the partial skeletons each task grows, and on_taken is called per
        # task: both keep the cut; with neither, the tree is grown uncut (the same output)
        cut = left is not None or on_taken is not None
        for task in generation_tasks(plans) if cut else whole_tasks(plans):
            yield from task_smiles(
                task,
                options.kekule,
                compiled,
                counts,
                prefilter,
                rdkit_smiles=options.rdkit_smiles,
                budget=left,
                engine=options.engine,
                perceive=perceive,
                perceived=perceived,
            )
            if on_taken is not None and left is not None:
                on_taken(left.taken)
        return
    taken = 0
    for result in _job_results(run_job, plans, options, budget=budget, runner=runner, perceive=perceive):
        for label, n in result.removed.items():
            counts[label] = counts.get(label, 0) + n
        if perceived is not None and result.perceived is not None:
            distinct, indices = result.perceived
            perceived.extend(distinct[i] for i in indices)
        yield from result.smiles
        taken += result.taken
        if on_taken is not None and budget is not None:
            on_taken(taken)


def _job_results(
    job: Callable[[WorkerJob], JobResult],
    plans: list[Plan],
    options: GeneratorOptions,
    *,
    budget: int | None,
    runner: Runner | None,
    perceive: Perceive | None = None,
) -> Iterator[JobResult]:
    """``job`` run on every task of the plans by worker processes (or ``runner``), the tree cut
    for their number, each with the whole ``budget``; the results in task order.
    :class:`~.tasks.TooManyStructures` once a job runs out or the structures taken add up past
    the budget."""
    with nullcontext(runner) if runner is not None else local_runner(options.workers) as work:
        tasks = balanced_tasks(generation_tasks(plans), workers=work.workers)
        jobs = (
            WorkerJob(task, options.kekule, options.selection, options.rdkit_smiles, budget, options.engine, perceive)
            for task in tasks
        )
        taken = 0
        for result in work.map(job, jobs):
            taken += result.taken
            if budget is not None and (result.over or taken > budget):
                raise TooManyStructures(budget)
            yield result


def within_budget(
    formula: Formula, options: GeneratorOptions = _DEFAULT, *, budget: int, runner: Runner | None = None
) -> bool:
    """Whether :func:`isomer_smiles` with this ``budget`` runs to the end rather than raising
    :class:`~.tasks.TooManyStructures`, found by taking the same structures and partial
    skeletons (the same tasks, the same budget per job) without writing any SMILES or testing
    any finished molecule: a count that costs a small part of generating them."""
    if not formula.counts:
        raise ElucidateError("empty formula")
    plans, prefilter = selection_plans(formula, options)
    if runner is None and options.workers == 1:
        left = StructureBudget(budget)
        try:
            for task in generation_tasks(plans):
                for _ in task_count(task, prefilter, left, engine=options.engine):
                    pass
        except TooManyStructures:
            return False
        return True
    try:
        for _ in _job_results(count_job, plans, options, budget=budget, runner=runner):
            pass
    except TooManyStructures:
        return False
    return True


def count_isomers(formula: Formula, options: GeneratorOptions = _DEFAULT) -> int:
    """How many isomers :func:`isomer_smiles` yields (graph counting needs no SMILES)."""
    selection = options.selection
    if options.kekule and (selection is None or selection.empty):
        return sum(1 for _ in structures(formula, options))
    return sum(1 for _ in isomer_smiles(formula, options))
