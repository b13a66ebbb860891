"""The generation tree cut into ordered tasks, and the work of one task.

A task is one partial skeleton at :data:`TASK_DEPTH` vertices of one valence plan; growing the
tasks in order and chaining their results gives exactly the serial enumeration, so worker
processes can grow them independently and the output (and its order) does not depend on how
many there are.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, TypeAlias

from ..elements import default_elements
from ..errors import ElucidateError
from ..formula import Formula
from . import kernel
from .implication import Features
from .kernel import Engine
from .labelling import (
    SkeletonPatterns,
    SkeletonTest,
    Structure,
    allowed_alone,
    structures_on_skeleton,
)
from .options import GeneratorOptions
from .plans import Plan, default_valence_states, valence_plans
from .readings import Clause, Readings, SkeletonView, broken, view_of
from .selection import CompiledSelection, Selection
from .shape import RingShape, ShapePlan, shape_plan
from .skeletons import PartialGraph, automorphism_generators, automorphisms, children, frontier, grow
from .smiles import sanitized
from .writer import Template

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = [
    "NODES_PER_STRUCTURE",
    "PARTS_PER_WORKER",
    "TASK_DEPTH",
    "GenerationTask",
    "JobResult",
    "StructureBudget",
    "TooManyStructures",
    "WorkerJob",
    "balanced_tasks",
    "compiled_selection",
    "generation_tasks",
    "plan_children",
    "run_job",
    "selection_plans",
    "task_count",
    "task_smiles",
    "task_structures",
    "whole_tasks",
]

#: partial-graph size at which the generation tree is cut into independent tasks
TASK_DEPTH = 6
#: partitions per worker the generation tree is cut into, at least (so no worker idles at the end)
PARTS_PER_WORKER = 16
#: partial skeletons a limit of one structure allows (growing a node costs about a tenth of
#: building and scoring a structure): a space whose walks mostly dead-end can hold few
#: structures and still take hours to grow
NODES_PER_STRUCTURE = 10
#: skeletons the compiled core labels in one call
SKELETONS_PER_CALL = 64
#: automorphism groups larger than this are not listed: those skeletons use canonical
#: certificates (as :func:`.labelling.structures_on_skeleton` does)
AUTOMORPHISMS_LISTED = 5000
#: heavier formulas are refused before their space is estimated: the estimate's walks alone
#: take seconds per formula there (8.6 s for C30H30N4O4, 38 heavy atoms), and no space of that
#: size fits the structure limits a run can enumerate (docs/generator.md)
MAX_HEAVY_ATOMS = 40


def beyond_generator(formula: Formula) -> str | None:
    """Why the generator will not take ``formula`` at all (too many heavy atoms), or None."""
    heavy = sum(n for s, n in formula.items() if s != "H")
    if heavy > MAX_HEAVY_ATOMS:
        return f"{heavy} heavy atoms, above the {MAX_HEAVY_ATOMS} the structure generator takes"
    return None


@dataclass(frozen=True)
class GenerationTask:
    """One subtree of the generation tree: a partial skeleton of one plan."""

    plan: Plan
    part: PartialGraph


class TooManyStructures(ElucidateError):
    """More structures to test, or partial skeletons to grow, than the budget allows (raised
    while generating)."""

    def __init__(self, limit: int) -> None:
        super().__init__(f"more than {limit:,} structures to test (or {NODES_PER_STRUCTURE} times as many skeletons)")
        self.limit = limit


class StructureBudget:
    """How many structures (each multigraph built, before the constraints are tested: what the
    Knuth estimate estimates) generation may take, and how many partial skeletons it may grow
    (NODES_PER_STRUCTURE per structure of the limit), before it stops."""

    def __init__(self, limit: int) -> None:
        self.limit = limit
        self.taken = 0
        self.grown = 0

    def take(self) -> None:
        """Count one structure; :class:`TooManyStructures` once past the limit."""
        self.taken += 1
        if self.taken > self.limit:
            raise TooManyStructures(self.limit)

    def grow(self) -> None:
        """Count one partial skeleton; :class:`TooManyStructures` once past its limit."""
        self.grown += 1
        if self.grown > NODES_PER_STRUCTURE * self.limit:
            raise TooManyStructures(self.limit)


#: what a caller computes on each kept structure's RDKit molecule while generation holds it
#: (the solver: what its cheap techniques read, :class:`~elucidate.evidence.infrared.Perceiver`),
#: given the structure's :class:`~.shape.RingShape` too where generation read it off the bond
#: orders (else None) and its :class:`~.implication.Features` (what its Kekulé form has);
#: picklable for worker processes, its results hashable
Perceive: TypeAlias = "Callable[[Mol, RingShape | None, Features], object]"


@dataclass(frozen=True)
class WorkerJob:
    """What a worker process needs to run one task; ``budget``: structures it may take;
    ``perceive``: run on each kept structure's molecule (:data:`Perceive`)."""

    task: GenerationTask
    kekule: bool
    selection: Selection | None
    rdkit_smiles: bool = False
    budget: int | None = None
    engine: Engine = "auto"
    perceive: Perceive | None = None


@dataclass(frozen=True)
class JobResult:
    """A task's SMILES, what each constraint removed, the structures taken, and whether the
    job's budget ran out (then the SMILES are not all there); with ``perceive``, what it gave
    on each SMILES' molecule, as the distinct results and an index into them per SMILES (many
    structures share one)."""

    smiles: list[str]
    removed: dict[str, int]
    taken: int
    over: bool
    perceived: tuple[list[object], list[int]] | None = None


def selection_plans(formula: Formula, options: GeneratorOptions) -> tuple[list[Plan], SkeletonPatterns]:
    """The plans for ``formula`` with the required groups' bounds, and the groups' skeleton
    patterns: what generation walks and what the size estimate estimates."""
    selection = options.selection
    plans = valence_plans(
        formula,
        options.table or default_elements(),
        max_rings=options.max_rings,
        max_bond_order=options.max_bond_order,
        lowest_valence=options.lowest_valence,
        required=selection.require if selection is not None else (),
        counts=selection.count_test if selection is not None else None,
    )
    return plans, (selection.skeleton_patterns() if selection is not None else ())


def generation_tasks(plans: list[Plan]) -> Iterator[GenerationTask]:
    """The generation tree cut at TASK_DEPTH, in tree order."""
    for plan in plans:
        for part in frontier(plan.n, plan.bounds, plan.rings_max, depth=TASK_DEPTH, cycles=plan.cycles):
            yield GenerationTask(plan, part)


def whole_tasks(plans: list[Plan]) -> Iterator[GenerationTask]:
    """One task per plan: the whole generation tree, uncut. It grows exactly what the tasks of
    :func:`generation_tasks` grow, in the same order (:func:`.skeletons.frontier`), in fewer
    calls to the compiled core (each task flushes its own batch); for one process when nothing
    reads the task boundaries (no budget, no per-task callback)."""
    for plan in plans:
        for part in frontier(plan.n, plan.bounds, plan.rings_max, depth=1, cycles=plan.cycles):
            yield GenerationTask(plan, part)


def balanced_tasks(tasks: Iterable[GenerationTask], *, workers: int) -> list[GenerationTask]:
    """The tasks cut one tree level deeper, all of them, until there are at least
    PARTS_PER_WORKER per worker (or nothing is left to cut): many small partitions, so no
    worker is left with one long one at the end. Cutting a task into its children in order
    keeps the concatenated output, and its order, exactly the same, and the cut depends only on
    the worker count. (Splitting by Knuth estimates instead cost as much as the generation
    itself and missed the heavy subtrees: docs/solver.md.)"""
    out = list(tasks)
    while len(out) < PARTS_PER_WORKER * workers:
        deeper: list[GenerationTask] = []
        for task in out:
            if task.part.size < task.plan.n - 1:
                deeper += [GenerationTask(task.plan, child) for child in plan_children(task.part, task.plan)]
            else:
                deeper.append(task)
        if len(deeper) == len(out):
            break
        out = deeper
    return out


def plan_children(part: PartialGraph, plan: Plan) -> Iterator[PartialGraph]:
    """The children of a partial graph in the plan's generation tree, in tree order."""
    return children(part, sorted(plan.bounds, reverse=True), plan.rings_max, cycles=plan.cycles)


def task_structures(
    task: GenerationTask, prefilter: SkeletonPatterns = (), *, budget: StructureBudget | None = None
) -> Iterator[Structure]:
    """Every structure below one task (multigraphs, Kekulé forms apart) that meets the plan's
    declared counts; ``budget`` counts the partial skeletons grown."""
    plan = task.plan
    if plan.n == 1:
        ((sym, v),) = plan.labels
        if plan.hydrogens == v and allowed_alone(sym, v):
            alone = Structure((sym,), (), (plan.hydrogens,), (v,))
            if plan.count_test is None or plan.count_test.structure_ok(alone):
                yield alone
        return
    test = SkeletonTest(prefilter, plan.labels) if prefilter else None  # once per task, reused per skeleton
    for size, edges in _skeletons(task, budget):
        yield from structures_on_skeleton(
            size, edges, plan.labels, plan.counts, plan.bond_sum, plan.max_extra, test, counts=plan.count_test
        )


def _skeletons(
    task: GenerationTask, budget: StructureBudget | None
) -> Iterator[tuple[int, tuple[tuple[int, int], ...]]]:
    """The skeletons below one task of more than one atom; ``budget`` counts the partial
    skeletons grown."""
    plan = task.plan
    visit = budget.grow if budget is not None else None
    return grow(task.part, plan.n, plan.bounds, plan.rings_max, cycles=plan.cycles, visit=visit)


def _kernel_fits(task: GenerationTask, test: SkeletonTest | None) -> bool:
    """Whether the compiled core (:mod:`.kernel`) can label this task's skeletons: more than
    one atom, no higher valence state, and required-group conditions (``test``) it can read
    off each skeleton (:meth:`.labelling.SkeletonTest.kernel_conditions`)."""
    plan = task.plan
    states = default_valence_states()
    return plan.n > 1 and not any(label in states for label in plan.labels) and (test is None or test.readable)


#: a structure the compiled core labelled and wrote: its SMILES (Kekulé form, written from the
#: skeleton), whether it may be aromatic, its skeleton's edges, its bond orders (one per edge)
#: and its skeleton's view when the readings made one (a plain tuple: one is made per structure,
#: and a dataclass cost a tenth of the compiled path's time)
_Written: TypeAlias = "tuple[str, bool, tuple[tuple[int, int], ...], list[int], SkeletonView | None]"


def _compiled_structures(
    task: GenerationTask,
    test: SkeletonTest | None,
    budget: StructureBudget | None,
    *,
    check_aromatic: bool,
    readings: Readings | None = None,
) -> Iterator[_Written | Structure | int]:
    """The structures of one task the compiled core can take (:func:`_kernel_fits`), labelled
    and written by it, in the Python path's order; a skeleton whose group is too large to list
    or whose required-group conditions RDKit must test per labelling comes from the Python
    path as a :class:`Structure`. ``test``: the required groups' skeleton conditions;
    ``readings``: plausibility rules read off the bond orders (with ``check_aromatic``): a
    structure that breaks one comes as the rule's index, unwritten. Each structure is taken
    from ``budget``."""
    plan = task.plan
    labels = kernel.kernel_labels(plan.labels)
    batch: list[
        tuple[tuple[tuple[int, int], ...], Sequence[Sequence[int]], bool, kernel.Conditions, kernel.Clauses]
    ] = []
    reading = readings if check_aromatic else None
    views: list[SkeletonView | None] = []  # per skeleton of the batch

    def flush() -> Iterator[_Written | int]:
        found = kernel.label_and_write_many(
            plan.n,
            batch,
            labels,
            plan.counts,
            plan.bond_sum,
            plan.max_extra,
            check_aromatic=check_aromatic,
            counts=plan.count_test,
        )
        for (edges, *_), view, strings, flags, rejected, orders in zip(
            batch, views, found.smiles, found.aromatic, found.rejected, found.orders, strict=True
        ):
            for written, aromatic, rule, bond_orders in zip(strings, flags, rejected, orders, strict=True):
                if budget is not None:
                    budget.take()
                yield (written, aromatic, edges, bond_orders, view) if rule < 0 else rule
        batch.clear()
        views.clear()

    def in_python(size: int, edges: tuple[tuple[int, int], ...]) -> Iterator[Structure]:
        for s in structures_on_skeleton(
            size, edges, plan.labels, plan.counts, plan.bond_sum, plan.max_extra, test, counts=plan.count_test
        ):
            if budget is not None:
                budget.take()
            yield s

    for size, edges in _skeletons(task, budget):
        conditions: kernel.Conditions = ()
        if test is not None:
            if not test.bare_ok(size, edges):
                continue
            read = test.kernel_conditions()
            if read is None:  # a condition RDKit tests per labelling or multigraph
                yield from flush()
                yield from in_python(size, edges)
                continue
            conditions = read
        generators, order = automorphism_generators(size, edges)
        if order > AUTOMORPHISMS_LISTED:  # too many to list: the Python path's certificates
            yield from flush()
            yield from in_python(size, edges)
            continue
        clauses: kernel.Clauses = ()
        view = None
        if reading is not None:
            _, cycle = kernel.template_program(size, edges)
            view = view_of(size, edges, cycle.tolist())
            clauses = reading.clauses(view, extra=plan.bond_sum - len(edges))
        views.append(view)
        if order > kernel.CLOSED_IN_KERNEL:
            group = automorphisms(size, edges, limit=AUTOMORPHISMS_LISTED)
            assert group is not None
            batch.append((edges, group, True, conditions, clauses))
        else:
            batch.append((edges, generators, False, conditions, clauses))
        if len(batch) == SKELETONS_PER_CALL:
            yield from flush()
    yield from flush()


def task_count(
    task: GenerationTask, prefilter: SkeletonPatterns, budget: StructureBudget | None, *, engine: Engine = "auto"
) -> Iterator[None]:
    """One item per structure of the task, each taken from ``budget``: what :func:`task_smiles`
    takes, with no constraint tested on a finished molecule and no SMILES kept (the compiled
    core labels where it can, :func:`_kernel_fits`)."""
    test = SkeletonTest(prefilter, task.plan.labels) if prefilter else None
    if _kernel_fits(task, test) and kernel.wanted(engine):
        for _ in _compiled_structures(task, test, budget, check_aromatic=False):
            yield None
        return
    for _ in task_structures(task, prefilter, budget=budget):
        if budget is not None:
            budget.take()
        kernel.labelled_in_python(1)
        yield None


def task_smiles(
    task: GenerationTask,
    kekule: bool,
    compiled: CompiledSelection | None,
    removed: dict[str, int],
    prefilter: SkeletonPatterns = (),
    *,
    rdkit_smiles: bool = False,
    budget: StructureBudget | None = None,
    engine: Engine = "auto",
    perceive: Perceive | None = None,
    perceived: list[object] | None = None,
) -> Iterator[str]:
    """SMILES of one task, Kekulé forms merged (unless ``kekule``) and filtered by ``compiled``;
    ``removed`` counts what each constraint removed. A structure with no charge-separated atom
    and no possible aromatic ring is written from its skeleton (:mod:`.writer`); that string is
    the output unless ``rdkit_smiles`` or ``compiled`` asks for RDKit, which then reads it (the
    molecule the finished-molecule tests run on) and writes its canonical SMILES. Every other
    structure is built atom by atom as an RDKit molecule (in Kekulé form, when ``kekule`` and
    nothing asks for RDKit, it too is written from its skeleton). ``budget`` counts every
    structure taken and stops the work past its limit. ``engine``: whether the compiled core
    labels and writes what it can (:func:`.kernel.wanted`); the output is the same.
    ``perceive`` (not with ``kekule``): run on the RDKit molecule of each SMILES before it is
    yielded, its result appended to ``perceived``."""
    from .._rdkit import quiet_rdkit

    if perceive is not None and (kekule or perceived is None):
        raise ValueError("perceive needs a perceived list, and aromatic SMILES (not kekule)")
    out = _TaskWriter(task, kekule, compiled, removed, rdkit_smiles=rdkit_smiles or perceive is not None)
    out.perceive, out.perceived = perceive, perceived
    test = SkeletonTest(prefilter, task.plan.labels) if prefilter else None
    with quiet_rdkit():
        if not (_kernel_fits(task, test) and (out.own or not kekule) and kernel.wanted(engine)):
            for s in task_structures(task, prefilter, budget=budget):
                if budget is not None:
                    budget.take()
                kernel.labelled_in_python(1)
                written = out.write(s)
                if written is not None:
                    yield written
            return
        own = out.own
        for item in _compiled_structures(task, test, budget, check_aromatic=not kekule, readings=out.readings):
            if isinstance(item, int):  # breaks the read rule of that index
                out.count(item)
                continue
            if isinstance(item, tuple):
                if own and not item[1]:
                    yield item[0]  # the string written from the skeleton is the output
                    continue
                found = out.from_kernel(item)
            else:
                found = out.write(item)
            if found is not None:
                yield found


class _TaskWriter:
    """The SMILES of a task's structures, one at a time, in the order they come (Kekulé forms
    of one compound merged within their skeleton, unless ``kekule``); see :func:`task_smiles`."""

    def __init__(
        self,
        task: GenerationTask,
        kekule: bool,
        compiled: CompiledSelection | None,
        removed: dict[str, int],
        *,
        rdkit_smiles: bool,
    ) -> None:
        from .._rdkit import Chem

        self.kekule = kekule
        self.compiled = compiled
        self.removed = removed
        #: whether the string written from the skeleton is the output where it can be
        self.own = not rdkit_smiles and compiled is None
        states = default_valence_states()
        self.charged = {
            label for label in task.plan.labels if (st := states.get(label)) is not None and st.charge_separated
        }
        self.atoms = task.plan.n
        self.bond_sum = task.plan.bond_sum
        self.template: Template | None = None
        self.current: tuple[tuple[int, int], ...] | None = None
        self.seen: set[str] = set()
        table = Chem.GetPeriodicTable()
        self.elements: dict[int, int] = {}
        self.number = {symbol: table.GetAtomicNumber(symbol) for symbol, _ in task.plan.labels}
        for (symbol, _), k in zip(task.plan.labels, task.plan.counts, strict=True):
            z = self.number[symbol]
            self.elements[z] = self.elements.get(z, 0) + k
        #: plausibility rules read off the bond orders (:mod:`.readings`), where every label is
        #: an element in its usual valence and structures are checked for aromaticity; the
        #: finished molecule of a structure that cannot be aromatic is tested by ``rest``. Not
        #: with declared NMR counts: they leave a skeleton two or three structures, too few to
        #: repay reading its clauses (carvone's generation, one process: 3.1-3.3 s against
        #: 2.3-2.4 s without them; cr-0702-k, ten per skeleton: 18.9-21.0 s against 21.7 s)
        self.readings: Readings | None = None
        self.rest = compiled
        usual = not any(label in states for label in task.plan.labels)
        if compiled is not None and compiled.rules and not kekule and usual and task.plan.count_test is None:
            valence = {self.number[symbol]: v for symbol, v in task.plan.labels}
            self.readings = Readings.of(compiled.rules, self.elements, valence)
            if self.readings is not None:
                self.rest = compiled.without(frozenset(self.readings.labels))
        self._clauses: tuple[tuple[int, Clause], ...] = ()
        self._read: Template | None = None  # the template whose clauses _clauses holds
        self._read_view: SkeletonView | None = None  # and its view
        #: run on the molecule of each SMILES given out, its result kept in ``perceived``
        self.perceive: Perceive | None = None
        self.perceived: list[object] | None = None
        #: whether shapes can be read off the bond orders: only carbon has a valence of four or
        #: more (:mod:`.shape`), and every label is an element in its usual valence
        self.shapes = usual and all(symbol == "C" for symbol, v in task.plan.labels if v >= 4)
        self._plan: ShapePlan | None = None
        self._viewed: SkeletonView | None = None  # the view whose plan _plan is

    def _given(self, smiles: str, mol: Mol, features: Features, shape: RingShape | None = None) -> str:
        """``smiles``, given out: what ``perceive`` finds on its molecule (with ``shape`` and
        ``features``) is kept first."""
        if self.perceive is not None:
            assert self.perceived is not None
            self.perceived.append(self.perceive(mol, shape, features))
        return smiles

    def _shape(self, orders: list[int], view: SkeletonView | None) -> RingShape | None:
        """The shape of a structure that cannot be aromatic, read off its bond orders and its
        skeleton's rings when something perceives it (partial where the skeleton's rings do not
        settle it, :func:`.shape.shape_plan`); None otherwise."""
        if self.perceive is None or view is None or not self.shapes:
            return None
        if self._plan is None or view is not self._viewed:
            self._plan, self._viewed = shape_plan(view), view
        return self._plan.shape(orders)

    def count(self, rule: int) -> None:
        """Count a structure that breaks the read rule of this index."""
        assert self.readings is not None
        label = self.readings.labels[rule]
        self.removed[label] = self.removed.get(label, 0) + 1

    def _broken(self, template: Template, s: Structure) -> int:
        """The read rule a structure that cannot be aromatic breaks (-1: none), as the compiled
        core finds it."""
        assert self.readings is not None
        if template is not self._read:
            view = view_of(template.n, template.edges, template.cycle_edge_indices)
            self._clauses = self.readings.clauses(view, extra=self.bond_sum - len(template.edges))
            self._read, self._read_view = template, view
        if not self._clauses:
            return -1
        number = self.number
        return broken(self._clauses, [number[e] for e in s.elements], [o for _, _, o in s.bonds])

    def _first(self, smiles: str, skeleton: tuple[tuple[int, int], ...]) -> bool:
        """Whether ``smiles`` is new among this skeleton's: Kekulé forms of one compound share
        the skeleton, so they are merged within it."""
        if skeleton != self.current:
            self.current, self.seen = skeleton, set()
        if smiles in self.seen:
            return False
        self.seen.add(smiles)
        return True

    def merged(self, mol: Mol, skeleton: tuple[tuple[int, int], ...]) -> str | None:
        """RDKit's canonical SMILES of a sanitized molecule of the own writer's plain case (no
        selection, Kekulé forms merged) on ``skeleton``, or None for a Kekulé form already
        written."""
        from .._rdkit import Chem

        smiles: str = Chem.MolToSmiles(mol)
        return smiles if self._first(smiles, skeleton) else None

    def from_kernel(self, item: _Written) -> str | None:
        """What :meth:`write` gives for a structure the compiled core wrote (no charge-separated
        atom there): RDKit reads its Kekulé SMILES (the molecule :meth:`write` builds, atoms in
        another order), the finished-molecule tests run on it, and RDKit writes its canonical
        SMILES; Kekulé forms of one aromatic compound are merged within their skeleton."""
        from .._rdkit import Chem, plain_mol

        written, flagged, skeleton, orders, view = item
        if self.own:
            if not flagged:
                return written
            return self.merged(plain_mol(written), skeleton)
        mol = plain_mol(written)
        aromatic = flagged and _aromatic(mol)
        compiled, removed = self.compiled, self.removed
        # in SMILES '=' and '#' are bond symbols only (no atom token holds them): the Kekulé
        # form's double and triple bonds
        features = Features(self.elements, "=" in written, "#" in written, len(skeleton) - self.atoms + 1, aromatic)
        # the core read the rules off a structure it did not flag
        early = compiled if flagged else self.rest
        if early is not None and not aromatic and _rejected(early, mol, removed, features):
            return None
        smiles: str = Chem.MolToSmiles(mol)
        if aromatic and not self._first(smiles, skeleton):
            return None
        if compiled is not None and aromatic and _rejected(compiled, mol, removed, features):
            return None
        return self._given(smiles, mol, features, None if flagged else self._shape(orders, view))

    def template_for(self, n: int, edges: tuple[tuple[int, int], ...]) -> Template:
        """The template of this skeleton (kept while its structures come)."""
        if self.template is None or self.template.edges != edges:
            self.template = Template(n, edges)
        return self.template

    def write(self, s: Structure) -> str | None:
        """The SMILES of one structure, or None when it is dropped (a Kekulé form already
        written, or a constraint it breaks, counted in ``removed``)."""
        from .._rdkit import Chem, plain_mol

        compiled, removed, kekule, own = self.compiled, self.removed, self.kekule, self.own
        if not (self.charged and any(label in self.charged for label in zip(s.elements, s.valences, strict=True))):
            template = self.template_for(len(s.elements), tuple((a, b) for a, b, _ in s.bonds))
            if own and kekule:
                return template.write(s.elements, s.bonds, s.hydrogens)
            if not template.may_be_aromatic(s.elements, s.bonds, s.hydrogens, s.valences):
                if self.readings is not None:
                    rule = self._broken(template, s)
                    if rule >= 0:
                        self.count(rule)
                        return None
                written = template.write(s.elements, s.bonds, s.hydrogens)
                if own:
                    return written
                # no aromatic atom, so no other Kekulé form: RDKit reads the written string
                # (cheaper than building the molecule atom by atom), the finished-molecule
                # tests run on it (less the rules read off the orders), and RDKit writes its
                # canonical SMILES
                parsed = plain_mol(written)
                plain = _features(s, self.elements, aromatic=False)
                if self.rest is not None and _rejected(self.rest, parsed, removed, plain):
                    return None
                # its shape where the compiled core would read it too (a skeleton read for the
                # rules), so that what is perceived does not depend on who labelled it
                shape = self._shape([o for _, _, o in s.bonds], self._read_view) if self.readings is not None else None
                return self._given(str(Chem.MolToSmiles(parsed)), parsed, plain, shape)
        mol = sanitized(s, kekule=kekule)
        # a molecule with no aromatic atom has no other Kekulé form: its constraints are
        # tested before its SMILES is written, and it needs no merging
        early = compiled is not None and not kekule and not _aromatic(mol)
        features = _features(s, self.elements, aromatic=not early)
        if early and _rejected(compiled, mol, removed, features):
            return None
        smiles: str = Chem.MolToSmiles(mol, kekuleSmiles=kekule)
        if not kekule and not early and not self._first(smiles, tuple((a, b) for a, b, _ in s.bonds)):
            return None
        if compiled is not None and not early:
            probe = mol
            if kekule:
                probe = Chem.Mol(mol)
                Chem.SetAromaticity(probe)
            if _rejected(compiled, probe, removed, features):
                return None
        return self._given(smiles, mol, features)


def _features(s: Structure, elements: dict[int, int], *, aromatic: bool) -> Features:
    """What the structure has, for the finished-molecule tests' shortcuts: the formula's
    elements, its Kekulé bond orders and rings; ``aromatic``: whether it may have an aromatic
    atom."""
    orders = [o for _, _, o in s.bonds]
    return Features(elements, 2 in orders, 3 in orders, len(orders) - len(s.elements) + 1, aromatic)


def _rejected(
    compiled: CompiledSelection | None, mol: Mol, removed: dict[str, int], features: Features | None = None
) -> bool:
    """Whether ``mol`` breaks a constraint; the first one it breaks is counted in ``removed``.
    ``features``: what the structure has (:meth:`CompiledSelection.first_failure`)."""
    failed = compiled.first_failure(mol, features) if compiled is not None else None
    if failed is not None:
        removed[failed] = removed.get(failed, 0) + 1
    return failed is not None


def _aromatic(mol: Mol) -> bool:
    return any(atom.GetIsAromatic() for atom in mol.GetAtoms())


def compiled_selection(selection: Selection | None) -> CompiledSelection | None:
    """The tests generation applies to finished molecules (the declared counts are pushed)."""
    if selection is None or selection.empty:
        return None
    compiled = selection.compile(pushed_counts=True)
    return compiled if compiled.tests else None


def count_job(job: WorkerJob) -> JobResult:
    """A worker process's count of the structures one task takes against the job's budget
    (what :func:`run_job` would take, with no SMILES written and no constraint tested on a
    finished molecule)."""
    prefilter = job.selection.skeleton_patterns() if job.selection is not None else ()
    budget = StructureBudget(job.budget) if job.budget is not None else None
    taken = 0
    try:
        for _ in task_count(job.task, prefilter, budget, engine=job.engine):
            taken += 1
    except TooManyStructures:
        return JobResult([], {}, taken, True)
    return JobResult([], {}, taken, False)


def run_job(job: WorkerJob) -> JobResult:
    """A worker process's work: the SMILES of one task, what each constraint removed, and the
    structures taken against the job's budget."""
    removed: dict[str, int] = {}
    prefilter = job.selection.skeleton_patterns() if job.selection is not None else ()
    budget = StructureBudget(job.budget) if job.budget is not None else None
    compiled = compiled_selection(job.selection)
    perceived: list[object] | None = [] if job.perceive is not None else None
    try:
        smiles = list(
            task_smiles(
                job.task,
                job.kekule,
                compiled,
                removed,
                prefilter,
                rdkit_smiles=job.rdkit_smiles,
                budget=budget,
                engine=job.engine,
                perceive=job.perceive,
                perceived=perceived,
            )
        )
    except TooManyStructures:
        return JobResult([], removed, budget.taken if budget is not None else 0, True)
    found = None
    if perceived is not None:  # sent back once each, with an index per SMILES
        distinct: dict[object, int] = {}
        indices = [distinct.setdefault(p, len(distinct)) for p in perceived]
        found = (list(distinct), indices)
    return JobResult(smiles, removed, budget.taken if budget is not None else 0, False, found)
