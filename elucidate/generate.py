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

Valences: the lowest valence of each element (C, Si 4; N, P 3; O, S 2; H and halogens 1).
Constitution only: no stereochemistry.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass

from .elements import ElementTable, default_elements
from .errors import ElucidateError
from .formula import Formula
from .skeletons import automorphisms, skeletons

__all__ = ["Structure", "structures", "isomer_smiles", "count_isomers"]


@dataclass(frozen=True)
class Structure:
    """A molecule as a heavy-atom multigraph with implicit hydrogens."""

    elements: tuple[str, ...]
    bonds: tuple[tuple[int, int, int], ...]  # (atom, atom, order)
    hydrogens: tuple[int, ...]


def _heavy_atoms(formula: Formula, table: ElementTable) -> tuple[list[tuple[str, int]], int]:
    heavy = []
    for sym, n in formula.counts:
        if sym == "H":
            continue
        heavy.extend([(sym, table[sym].valence)] * n)
    # higher valence first: a stable element order for labels
    heavy.sort(key=lambda a: (-a[1], a[0]))
    return heavy, formula.get("H")


def structures(
    formula: Formula,
    *,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
) -> Iterator[Structure]:
    """Every constitutional isomer of ``formula`` once, as a multigraph (Kekulé forms apart).

    ``max_rings`` bounds the ring count (cyclomatic number; 0 = acyclic); ``max_bond_order``
    1 gives saturated skeletons only, 2 excludes triple bonds.
    """
    if max_bond_order not in (1, 2, 3):
        raise ElucidateError(f"max_bond_order must be 1, 2 or 3, got {max_bond_order}")
    t = table or default_elements()
    heavy, hydrogens = _heavy_atoms(formula, t)
    n = len(heavy)
    if n == 0:
        return
    total_valence = sum(v for _, v in heavy)
    if (total_valence - hydrogens) % 2:
        return
    bond_sum = (total_valence - hydrogens) // 2
    rings_max = bond_sum - (n - 1)
    if rings_max < 0:
        return
    if max_rings is not None:
        rings_max = min(rings_max, max_rings)
    if n == 1:
        if hydrogens == heavy[0][1]:
            yield Structure((heavy[0][0],), (), (hydrogens,))
        return
    labels = sorted({sym for sym, _ in heavy}, key=lambda s: (-t[s].valence, s))
    label_index = {s: i for i, s in enumerate(labels)}
    valence = [t[s].valence for s in labels]
    counts = [0] * len(labels)
    for sym, _ in heavy:
        counts[label_index[sym]] += 1
    bounds = [v for _, v in heavy]
    for size, edges in skeletons(n, bounds, rings_max):
        yield from _on_skeleton(size, edges, labels, valence, counts, bond_sum, max_bond_order - 1)


def _on_skeleton(
    n: int,
    edges: tuple[tuple[int, int], ...],
    labels: list[str],
    valence: list[int],
    counts: list[int],
    bond_sum: int,
    max_extra: int,
) -> Iterator[Structure]:
    m = len(edges)
    extra_total = bond_sum - m
    if extra_total < 0 or extra_total > max_extra * m:
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
        for orders in _multiplicities(edges, capacity, extra_total, max_extra):
            if stabilizer and any(tuple(orders[e] for e in einv) < orders for einv in stabilizer):
                continue
            if seen is not None:
                key = _certificate(n, edges, colouring, orders)
                if key in seen:
                    continue
                seen.add(key)
            used = [0] * n
            for (a, b), o in zip(edges, orders):
                used[a] += o
                used[b] += o
            yield Structure(
                tuple(labels[c] for c in colouring),
                tuple((a, b, o) for (a, b), o in zip(edges, orders)),
                tuple(valence[colouring[i]] - used[i] for i in range(n)),
            )


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
    from ._rdkit import Chem

    mol = Chem.RWMol()
    for sym, h in zip(structure.elements, structure.hydrogens):
        atom = Chem.Atom(sym)
        atom.SetNoImplicit(True)
        atom.SetNumExplicitHs(h)
        mol.AddAtom(atom)
    bond_types = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    for a, b, o in structure.bonds:
        mol.AddBond(a, b, bond_types[o])
    return mol


def to_smiles(structure: Structure, *, kekule: bool = False) -> str:
    """Canonical SMILES (RDKit): aromatic by default, Kekulé form with ``kekule=True``."""
    from ._rdkit import Chem, quiet_rdkit

    mol = _to_mol(structure)
    with quiet_rdkit():
        if kekule:
            Chem.SanitizeMol(
                mol,
                Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY,
            )
            return Chem.MolToSmiles(mol, kekuleSmiles=True)
        Chem.SanitizeMol(mol)
        return Chem.MolToSmiles(mol)


def isomer_smiles(
    formula: Formula,
    *,
    kekule: bool = False,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
) -> Iterator[str]:
    """Canonical SMILES of every constitutional isomer of ``formula``, each once."""
    if not formula.counts:
        raise ElucidateError("empty formula")
    stream = structures(formula, table=table, max_rings=max_rings, max_bond_order=max_bond_order)
    if kekule:
        for s in stream:
            yield to_smiles(s, kekule=True)
        return
    current: tuple[tuple[int, int, int], ...] | None = None
    seen: set[str] = set()
    for s in stream:
        skeleton = tuple((a, b, 0) for a, b, _ in s.bonds)
        if skeleton != current:
            current, seen = skeleton, set()
        smiles = to_smiles(s)
        if smiles in seen:
            continue
        seen.add(smiles)
        yield smiles


def count_isomers(
    formula: Formula,
    *,
    kekule: bool = False,
    table: ElementTable | None = None,
    max_rings: int | None = None,
    max_bond_order: int = 3,
) -> int:
    """How many isomers :func:`isomer_smiles` yields (graph counting needs no SMILES)."""
    if kekule:
        return sum(1 for _ in structures(formula, table=table, max_rings=max_rings, max_bond_order=max_bond_order))
    return sum(1 for _ in isomer_smiles(formula, table=table, max_rings=max_rings, max_bond_order=max_bond_order))
