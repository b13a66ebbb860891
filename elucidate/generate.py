"""Exhaustive constitutional-isomer generation for a molecular formula.

Route (from the graph-enumeration literature): connected simple skeletons with degree bounds
first (:mod:`elucidate.skeletons`, canonical augmentation), then element labels on the
skeleton's vertices, then edge multiplicities (bond orders 1-3), with hydrogens implied by each
atom's free valence. Two molecules built on non-isomorphic skeletons are different; two built on
one skeleton are the same molecule exactly when an automorphism of the skeleton maps one
labelling onto the other. So for each skeleton the generator keeps only the lexicographically
smallest labelling in its orbit under the automorphism group (element labels first; bond orders
under the stabilizer of the labels) — every constitutional isomer exactly once, as a multigraph.

Counting conventions:
* ``kekule=True``: every multigraph once (as the enumeration literature counts; the Kekulé
  forms of o-xylene are two graphs). SMILES are written in Kekulé form.
* default: Kekulé forms of one aromatic compound are merged (what a chemist calls one compound):
  after RDKit aromaticity perception, duplicates within a skeleton are dropped — Kekulé forms
  differ only in bond orders, never in the skeleton.

Valence states (``constraints/elements.yaml``): C, Si 4; N 3, or 5 for the charge-separated groups
(nitro, N-oxides: written [N+]-[O-]); P 3 or 5 (P=O, P=S); O 2; S 2, 4 (sulfoxides, sulfinic
groups) or 6 (sulfones, sulfonic groups), written hypervalent, with no H on S; H and halogens 1.
A higher state always carries a double bond to a terminal O (or S for P). ``lowest_valence=True`` keeps only the lowest state of each
element (plain graph counting, as the enumeration literature does). Constitution only: no
stereochemistry.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from typing import Any

from .elements import ElementTable, default_elements
from .errors import ElucidateError
from .formula import Formula
from .groups import default_groups, min_pi_bonds
from .selection import CompiledSelection, Selection
from .skeletons import Partial, automorphisms, children, frontier, grow

__all__ = ["Structure", "structures", "isomer_smiles", "count_isomers", "estimate_structures"]


@dataclass(frozen=True)
class Structure:
    """A molecule as a heavy-atom multigraph with implicit hydrogens."""

    elements: tuple[str, ...]
    bonds: tuple[tuple[int, int, int], ...]  # (atom, atom, order)
    hydrogens: tuple[int, ...]
    valences: tuple[int, ...]  # valence state of each atom (bond orders + hydrogens)


def _valence_splits(formula: Formula, table: ElementTable, lowest_valence: bool) -> Iterator[list[tuple[str, int]]]:
    """Each way of giving the formula's heavy atoms valence states (lowest first)."""
    per_element: list[list[list[tuple[str, int]]]] = []
    for sym, n in formula.counts:
        if sym == "H":
            continue
        states = table[sym].valences[:1] if lowest_valence else table[sym].valences
        options = []
        for split in _compositions(n, len(states)):
            atoms: list[tuple[str, int]] = []
            for v, k in zip(states, split):
                atoms.extend([(sym, v)] * k)
            options.append(atoms)
        per_element.append(options)
    for choice in itertools.product(*per_element):
        yield [atom for part in choice for atom in part]


def _compositions(n: int, parts: int) -> Iterator[tuple[int, ...]]:
    """Ways to write n as an ordered sum of ``parts`` non-negative counts, lowest states first."""
    if parts == 1:
        yield (n,)
        return
    for first in range(n, -1, -1):
        for rest in _compositions(n - first, parts - 1):
            yield (first, *rest)


@dataclass(frozen=True)
class _Plan:
    """One valence-state split of the formula's heavy atoms, ready to generate."""

    n: int
    labels: tuple[tuple[str, int], ...]
    counts: tuple[int, ...]
    bounds: tuple[int, ...]
    bond_sum: int
    rings_max: int
    max_extra: int
    hydrogens: int


#: partial-graph size at which the generation tree is cut into independent tasks
TASK_DEPTH = 6


def _plans(
    formula: Formula,
    table: ElementTable,
    *,
    max_rings: int | None,
    max_bond_order: int,
    lowest_valence: bool,
    required: tuple[str, ...] = (),
) -> list[_Plan]:
    """One plan per valence split. Each plan's ring bound is lowered by the π bonds (bond order
    − 1 summed) every wanted molecule must have — one oxo bond per higher-valence atom, and
    those the ``required`` groups imply (:func:`min_pi_bonds`): rings = bond sum − (n − 1) −
    π bonds, and a ring bound is hereditary, so skeleton generation prunes on it exactly."""
    if max_bond_order not in (1, 2, 3):
        raise ElucidateError(f"max_bond_order must be 1, 2 or 3, got {max_bond_order}")
    hydrogens = formula.get("H")
    plans: list[_Plan] = []
    if not _has_elements(formula, required):
        return plans  # a required group needs an element (or more atoms of it) the formula lacks
    for heavy in _valence_splits(formula, table, lowest_valence):
        n = len(heavy)
        total_valence = sum(v for _, v in heavy)
        if n == 0 or (total_valence - hydrogens) % 2:
            continue
        bond_sum = (total_valence - hydrogens) // 2
        oxo = sum(1 for atom in heavy if atom in OXO_STATES)
        rings_max = bond_sum - (n - 1) - min_pi_bonds(required, default_groups(), oxo=oxo)
        if rings_max < 0:
            continue
        if max_rings is not None:
            rings_max = min(rings_max, max_rings)
        labels = sorted(set(heavy), key=lambda a: (-a[1], a[0]))
        counts = [sum(1 for atom in heavy if atom == label) for label in labels]
        plans.append(
            _Plan(n, tuple(labels), tuple(counts), tuple(v for _, v in heavy), bond_sum, rings_max, max_bond_order - 1, hydrogens)
        )
    return plans


def _selection_plans(
    formula: Formula,
    table: ElementTable | None,
    selection: Selection | None,
    *,
    max_rings: int | None,
    max_bond_order: int,
    lowest_valence: bool,
) -> tuple[list[_Plan], tuple[Any, ...]]:
    """The plans for ``formula`` with the required groups' bounds, and the groups' skeleton
    patterns: what :func:`isomer_smiles` walks and :func:`estimate_structures` estimates."""
    required = selection.require if selection is not None else ()
    plans = _plans(
        formula,
        table or default_elements(),
        max_rings=max_rings,
        max_bond_order=max_bond_order,
        lowest_valence=lowest_valence,
        required=required,
    )
    return plans, (selection.skeleton_patterns() if selection is not None else ())


def _has_elements(formula: Formula, required: Sequence[str]) -> bool:
    from ._rdkit import Chem

    if not required:
        return True
    table = Chem.GetPeriodicTable()
    groups = default_groups()
    for name in required:
        for z, n in groups[name].elements.items():
            if formula.get(table.GetElementSymbol(z)) < n:
                return False
    return True


def _tasks(plans: list[_Plan]) -> Iterator[tuple[int, Partial]]:
    """(plan index, partial graph) pairs: the generation tree cut at TASK_DEPTH, in tree order."""
    for i, plan in enumerate(plans):
        for part in frontier(plan.n, plan.bounds, plan.rings_max, depth=TASK_DEPTH):
            yield i, part


def _task_structures(plan: _Plan, part: Partial, prefilter: tuple[Any, ...] = ()) -> Iterator[Structure]:
    if plan.n == 1:
        (sym, v), = plan.labels
        if plan.hydrogens == v and _allowed_alone(sym, v):
            yield Structure((sym,), (), (plan.hydrogens,), (v,))
        return
    labels, counts = list(plan.labels), list(plan.counts)
    test = _SkeletonTest(prefilter, labels) if prefilter else None  # once per task, reused per skeleton
    for size, edges in grow(part, plan.n, plan.bounds, plan.rings_max):
        yield from _on_skeleton(size, edges, labels, counts, plan.bond_sum, plan.max_extra, test)


def structures(
    formula: Formula,
    *,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
    lowest_valence: bool = False,
) -> Iterator[Structure]:
    """Every constitutional isomer of ``formula`` once, as a multigraph (Kekulé forms apart).

    Valence states are those of the element table (N 3 or 5, P 3 or 5, S 2, 4 or 6);
    ``lowest_valence`` keeps only the first (lowest) of each. A higher state stands for the
    usual oxo groups and needs a double bond to a terminal O (see :data:`OXO_STATES`).
    ``max_rings`` bounds the ring count (cyclomatic number; 0 = acyclic); ``max_bond_order``
    1 gives saturated skeletons only, 2 excludes triple bonds.
    """
    t = table or default_elements()
    plans = _plans(formula, t, max_rings=max_rings, max_bond_order=max_bond_order, lowest_valence=lowest_valence)
    for i, part in _tasks(plans):
        yield from _task_structures(plans[i], part)


def _allowed_alone(symbol: str, valence: int) -> bool:
    return (symbol, valence) not in OXO_STATES


def _on_skeleton(
    n: int,
    edges: tuple[tuple[int, int], ...],
    labels: list[tuple[str, int]],
    counts: list[int],
    bond_sum: int,
    max_extra: int,
    test: "_SkeletonTest | None" = None,
) -> Iterator[Structure]:
    """Structures on one skeleton. ``test``: the necessary conditions of required groups that
    the bare skeleton, the labelled skeleton and the labelled multigraph must meet (groups.yaml
    ``skeleton`` and ``kekule``)."""
    valence = [v for _, v in labels]
    special = [label in OXO_STATES for label in labels]
    m = len(edges)
    extra_total = bond_sum - m
    if extra_total < 0 or extra_total > max_extra * m:
        return
    if test is not None and not test.bare_ok(n, edges):
        return
    degree = [0] * n
    for a, b in edges:
        degree[a] += 1
        degree[b] += 1
    group = automorphisms(n, edges)
    edge_index = {e: i for i, e in enumerate(edges)}
    perms: list[tuple[tuple[int, ...], tuple[int, ...]]] = []  # (vertex inverse, edge inverse)
    if group is not None:
        for p in group:
            if p == tuple(range(n)):
                continue
            inv = [0] * n
            for i, j in enumerate(p):
                inv[j] = i
            einv = [0] * m
            for i, (a, b) in enumerate(edges):
                j = edge_index[(min(p[a], p[b]), max(p[a], p[b]))]
                einv[j] = i
            perms.append((tuple(inv), tuple(einv)))
    seen: set[tuple[tuple[int, ...], tuple[int, ...]]] | None = set() if group is None else None
    for colouring in _colourings(n, degree, valence, counts):
        capacity = [valence[colouring[i]] - degree[i] for i in range(n)]
        if sum(capacity) < 2 * extra_total:
            continue
        stabilizer = []
        if perms:
            canonical = True
            for inv, einv in perms:
                image = tuple(colouring[inv[j]] for j in range(n))
                if image < colouring:
                    canonical = False
                    break
                if image == colouring:
                    stabilizer.append(einv)
            if not canonical:
                continue
        if test is not None and not test.labelled_ok(colouring):
            continue
        for orders in _multiplicities(edges, capacity, extra_total, max_extra):
            if stabilizer and any(tuple(orders[e] for e in einv) < orders for einv in stabilizer):
                continue
            used = [0] * n
            for (a, b), o in zip(edges, orders):
                used[a] += o
                used[b] += o
            if any(special[c] for c in colouring) and not _oxo_ok(n, edges, orders, colouring, labels, degree, used):
                continue
            if test is not None and test.kekule and not test.kekule_ok(orders):
                continue
            if seen is not None:
                key = _certificate(n, edges, colouring, orders)
                if key in seen:
                    continue
                seen.add(key)
            yield Structure(
                tuple(labels[c][0] for c in colouring),
                tuple((a, b, o) for (a, b), o in zip(edges, orders)),
                tuple(valence[colouring[i]] - used[i] for i in range(n)),
                tuple(valence[c] for c in colouring),
            )


#: higher valence states and what they stand for: (symbol, valence) -> (terminal atoms one of
#: which must be double bonded to it, whether it may carry hydrogen). N(V): nitro, N-oxides,
#: nitrones (written N+ - O-); S(IV)/S(VI): sulfoxides, sulfinic and sulfonic groups, sulfones;
#: P(V): phosphine oxides and sulfides, phosphonates, phosphates (common practice).
OXO_STATES: dict[tuple[str, int], tuple[frozenset[str], bool]] = {
    ("N", 5): (frozenset({"O"}), True),
    ("S", 4): (frozenset({"O"}), False),
    ("S", 6): (frozenset({"O"}), False),
    ("P", 5): (frozenset({"O", "S"}), True),
}


def _oxo_ok(n, edges, orders, colouring, labels, degree, used) -> bool:  # type: ignore[no-untyped-def]
    """Each higher-valence atom carries a double bond to a terminal O (or S for P), see OXO_STATES."""
    for i in range(n):
        rule = OXO_STATES.get(labels[colouring[i]])
        if rule is None:
            continue
        partners, may_have_h = rule
        if not may_have_h and labels[colouring[i]][1] - used[i] > 0:
            return False
        if not any(
            o == 2 and i in (a, b) and degree[b if a == i else a] == 1 and labels[colouring[b if a == i else a]][0] in partners
            for (a, b), o in zip(edges, orders)
        ):
            return False
    return True


_BOND_TYPES: dict[int, Any] = {}


class _SkeletonTest:
    """Necessary conditions of required groups on a skeleton (``skeleton`` in groups.yaml): the
    bare-graph form once per skeleton, the labelled form once per element labelling, on one
    RDKit molecule per skeleton whose atomic numbers are rewritten."""

    def __init__(self, patterns: Sequence[tuple[Any, Any, Any]], labels: Sequence[tuple[str, int]]) -> None:
        from ._rdkit import Chem

        self.patterns = patterns
        self.kekule = any(kekule is not None for _, _, kekule in patterns)
        if self.kekule and not _BOND_TYPES:
            _BOND_TYPES.update({1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE})
        table = Chem.GetPeriodicTable()
        self.numbers = [table.GetAtomicNumber(sym) for sym, _ in labels]
        self.mol: Any = None

    def bare_ok(self, n: int, edges: Sequence[tuple[int, int]]) -> bool:
        from ._rdkit import Chem

        mol = Chem.RWMol()
        for _ in range(n):
            atom = Chem.Atom(6)
            atom.SetNoImplicit(True)
            mol.AddAtom(atom)
        for a, b in edges:
            mol.AddBond(a, b, Chem.BondType.SINGLE)
        mol.UpdatePropertyCache(strict=False)
        self.mol = mol
        return all(mol.HasSubstructMatch(shape) for shape, _, _ in self.patterns)

    def labelled_ok(self, colouring: Sequence[int]) -> bool:
        mol = self.mol
        for i, c in enumerate(colouring):
            mol.GetAtomWithIdx(i).SetAtomicNum(self.numbers[c])
        return all(mol.HasSubstructMatch(labelled) for _, labelled, _ in self.patterns)

    def kekule_ok(self, orders: Sequence[int]) -> bool:
        """The labelled skeleton with these bond orders (Kekulé form, before aromaticity) matches
        every ``kekule`` condition; call after :meth:`labelled_ok` for the same labelling."""
        mol = self.mol
        for i, o in enumerate(orders):
            mol.GetBondWithIdx(i).SetBondType(_BOND_TYPES[o])
        return all(mol.HasSubstructMatch(kekule) for _, _, kekule in self.patterns if kekule is not None)


def _colourings(n: int, degree: list[int], valence: list[int], counts: list[int]) -> Iterator[tuple[int, ...]]:
    current = [0] * n
    remaining = counts[:]

    def place(i: int) -> Iterator[tuple[int, ...]]:
        if i == n:
            yield tuple(current)
            return
        for c, left in enumerate(remaining):
            if left and valence[c] >= degree[i]:
                remaining[c] -= 1
                current[i] = c
                yield from place(i + 1)
                remaining[c] += 1

    yield from place(0)


def _multiplicities(
    edges: Sequence[tuple[int, int]], capacity: list[int], extra: int, max_extra: int
) -> Iterator[tuple[int, ...]]:
    """Bond orders (1 to 1 + max_extra) per edge using exactly ``extra`` orders above single."""
    m = len(edges)
    free = capacity[:]
    orders = [1] * m
    def place(i: int, left: int) -> Iterator[tuple[int, ...]]:
        if left == 0:
            yield tuple(orders)
            return
        if i == m:
            return
        if max_extra * (m - i) < left:
            return
        a, b = edges[i]
        top = min(max_extra, free[a], free[b], left)
        for x in range(top, -1, -1):
            if x:
                free[a] -= x
                free[b] -= x
                orders[i] = 1 + x
            yield from place(i + 1, left - x)
            if x:
                free[a] += x
                free[b] += x
                orders[i] = 1
    yield from place(0, extra)


def _certificate(n: int, edges, colouring, orders) -> tuple[tuple[int, ...], tuple[int, ...]]:
    """Canonical form of a labelled multigraph (fallback for skeletons with huge groups)."""
    import pynauty

    # layered encoding: bond order o in {1,2,3} as bits over two layers; colours by (label, layer)
    adjacency: dict[int, list[int]] = {i: [] for i in range(2 * n)}
    for i in range(n):
        adjacency[i].append(n + i)
    for (a, b), o in zip(edges, orders):
        if o & 1:
            adjacency[a].append(b)
        if o & 2:
            adjacency[n + a].append(n + b)
    classes: dict[tuple[int, int], set[int]] = {}
    for i in range(n):
        classes.setdefault((0, colouring[i]), set()).add(i)
        classes.setdefault((1, colouring[i]), set()).add(n + i)
    graph = pynauty.Graph(2 * n, directed=False, adjacency_dict=adjacency,
                          vertex_coloring=[classes[k] for k in sorted(classes)])
    cert = pynauty.certificate(graph)
    return (tuple(sorted(colouring)), tuple(cert))


# ------------------------------------------------------------------ SMILES


def _to_mol(structure: Structure):  # type: ignore[no-untyped-def]
    """An RDKit Mol; N(V) is written charge-separated: one N=O (terminal O) becomes N+-O-."""
    from ._rdkit import Chem

    mol = Chem.RWMol()
    for sym, h in zip(structure.elements, structure.hydrogens):
        atom = Chem.Atom(sym)
        atom.SetNoImplicit(True)
        atom.SetNumExplicitHs(h)
        mol.AddAtom(atom)
    bond_types = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    orders = {(a, b): o for a, b, o in structure.bonds}
    degree = [0] * len(structure.elements)
    for a, b, _ in structure.bonds:
        degree[a] += 1
        degree[b] += 1
    for i, (sym, v) in enumerate(zip(structure.elements, structure.valences)):
        if sym == "N" and v == 5:
            for (a, b), o in sorted(orders.items()):
                other = b if a == i else a if b == i else None
                if other is not None and o == 2 and structure.elements[other] == "O" and degree[other] == 1:
                    orders[(a, b)] = 1
                    mol.GetAtomWithIdx(i).SetFormalCharge(1)
                    mol.GetAtomWithIdx(other).SetFormalCharge(-1)
                    break
    for (a, b), o in orders.items():
        mol.AddBond(a, b, bond_types[o])
    return mol


def _sanitized(structure: Structure, kekule: bool):  # type: ignore[no-untyped-def]
    from ._rdkit import Chem

    mol = _to_mol(structure)
    if kekule:
        Chem.SanitizeMol(mol, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY)
    else:
        Chem.SanitizeMol(mol)
    return mol


def to_smiles(structure: Structure, *, kekule: bool = False) -> str:
    """Canonical SMILES (RDKit): aromatic by default, Kekulé form with ``kekule=True``."""
    from ._rdkit import Chem, quiet_rdkit

    with quiet_rdkit():
        return Chem.MolToSmiles(_sanitized(structure, kekule), kekuleSmiles=kekule)


def _task_smiles(
    plan: _Plan,
    part: Partial,
    kekule: bool,
    compiled: CompiledSelection | None,
    removed: dict[str, int],
    prefilter: tuple[Any, ...] = (),
) -> Iterator[str]:
    """SMILES of one task (a subtree of the generation tree), merged and filtered."""
    from ._rdkit import Chem, quiet_rdkit

    current: tuple[tuple[int, int], ...] | None = None
    seen: set[str] = set()
    with quiet_rdkit():
        for s in _task_structures(plan, part, prefilter):
            mol = _sanitized(s, kekule)
            smiles = Chem.MolToSmiles(mol, kekuleSmiles=kekule)
            if not kekule:
                # Kekulé forms of one compound share the skeleton: merge them within it
                skeleton = tuple((a, b) for a, b, _ in s.bonds)
                if skeleton != current:
                    current, seen = skeleton, set()
                if smiles in seen:
                    continue
                seen.add(smiles)
            if compiled is not None:
                probe = mol
                if kekule:
                    probe = Chem.Mol(mol)
                    Chem.SetAromaticity(probe)
                failed = compiled.first_failure(probe)
                if failed is not None:
                    removed[failed] = removed.get(failed, 0) + 1
                    continue
            yield smiles


def _worker(job: tuple[_Plan, Partial, bool, Selection | None]) -> tuple[list[str], dict[str, int]]:
    plan, part, kekule, selection = job
    compiled = _compiled_selection(selection)
    removed: dict[str, int] = {}
    prefilter = selection.skeleton_patterns() if selection is not None else ()
    return list(_task_smiles(plan, part, kekule, compiled, removed, prefilter)), removed


def _compiled_selection(selection: Selection | None) -> CompiledSelection | None:
    if selection is None or selection.empty:
        return None
    return selection.compile()


def isomer_smiles(
    formula: Formula,
    *,
    kekule: bool = False,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
    lowest_valence: bool = False,
    selection: Selection | None = None,
    removed: dict[str, int] | None = None,
    workers: int = 1,
) -> Iterator[str]:
    """Canonical SMILES of every constitutional isomer of ``formula`` that passes ``selection``,
    each once. ``removed``, when given, is filled with how many generated structures each
    constraint removed (the first constraint a structure breaks is the one counted). Required
    groups with a skeleton condition (:meth:`Selection.pushed`) also prune labelled skeletons
    during generation; what they prune is not generated and so not counted.

    With ``workers`` > 1 the generation tree is cut into subtrees (:data:`TASK_DEPTH`) that
    worker processes grow independently; results are returned in task order, so the output,
    and its order, is the same for any number of workers.
    """
    if not formula.counts:
        raise ElucidateError("empty formula")
    if workers < 1:
        raise ElucidateError(f"workers must be 1 or more, got {workers}")
    plans, prefilter = _selection_plans(
        formula, table, selection, max_rings=max_rings, max_bond_order=max_bond_order, lowest_valence=lowest_valence
    )
    compiled = _compiled_selection(selection)
    counts: dict[str, int] = removed if removed is not None else {}
    if compiled is not None:
        for label in compiled.labels:
            counts.setdefault(label, 0)
    if workers == 1:
        for i, part in _tasks(plans):
            yield from _task_smiles(plans[i], part, kekule, compiled, counts, prefilter)
        return
    import multiprocessing

    jobs = ((plans[i], part, kekule, selection) for i, part in _tasks(plans))
    with multiprocessing.Pool(workers) as pool:
        for smiles, rem in pool.imap(_worker, jobs, chunksize=1):
            for label, n in rem.items():
                counts[label] = counts.get(label, 0) + n
            yield from smiles


def estimate_structures(
    formula: Formula,
    *,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
    lowest_valence: bool = False,
    selection: Selection | None = None,
    probes: int = 32,
    seed: int = 0,
) -> float:
    """Estimated number of multigraph structures, by Knuth's tree-size estimator.

    D. E. Knuth, "Estimating the efficiency of backtrack programs", Math. Comp. 29, 121-136
    (1975): walk from the root of the generation tree to a leaf choosing a child uniformly at
    random; the product of the branching factors met on the way, times the number of structures
    on the skeleton reached, is an unbiased estimate. The mean over ``probes`` walks (a fixed
    seed, so the same formula always gets the same estimate) is returned. With ``selection``,
    the space estimated is the one generation will walk (the ring bound and the skeleton and
    Kekulé conditions of its required groups), before the finished structures are tested.
    """
    import random

    plans, prefilter = _selection_plans(
        formula, table, selection, max_rings=max_rings, max_bond_order=max_bond_order, lowest_valence=lowest_valence
    )
    rng = random.Random(seed)
    total = 0.0
    for plan in plans:
        if plan.n == 1:
            total += sum(1 for _ in _task_structures(plan, (1, ((),), 0), prefilter))
            continue
        estimate = 0.0
        for _ in range(probes):
            weight = 1.0
            part: Partial = (1, ((),), 0)
            while part[0] < plan.n:
                children = list(_children_of(part, plan))
                if not children:
                    weight = 0.0
                    break
                weight *= len(children)
                part = children[rng.randrange(len(children))]
            if weight:
                estimate += weight * sum(1 for _ in _task_structures(plan, part, prefilter))
        total += estimate / probes
    return total


def _children_of(part: Partial, plan: _Plan) -> Iterator[Partial]:
    return children(part, sorted(plan.bounds, reverse=True), plan.rings_max)


def count_isomers(
    formula: Formula,
    *,
    kekule: bool = False,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
    lowest_valence: bool = False,
    selection: Selection | None = None,
) -> int:
    """How many isomers :func:`isomer_smiles` yields (graph counting needs no SMILES)."""
    options = dict(table=table, max_rings=max_rings, max_bond_order=max_bond_order, lowest_valence=lowest_valence)
    if kekule and (selection is None or selection.empty):
        return sum(1 for _ in structures(formula, **options))  # type: ignore[arg-type]
    return sum(1 for _ in isomer_smiles(formula, kekule=kekule, selection=selection, **options))  # type: ignore[arg-type]
