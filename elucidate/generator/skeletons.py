"""Connected simple graphs ("skeletons") by canonical augmentation (McKay, J. Algorithms 26, 1998).

Every skeleton with ``n`` vertices, cyclomatic number at most ``max_rings`` and sorted degree
sequence dominated by a given sorted bound sequence (the atoms' valences, largest first) is
produced exactly once, up to isomorphism.

Method. A graph H is grown from its parent G = H - v by adding the vertex v joined to a set S.
The canonical parent of H is H - m(H), where m(H) is the non-cut vertex of H of smallest degree,
ties broken first by the largest neighbourhood-degree invariant and then by the largest position
in nauty's canonical labelling (an isomorphism invariant choice, up to automorphism). A child is
accepted only if the added vertex lies in the same automorphism orbit of H as m(H); accepted
children of the same parent that are isomorphic (their sets S lie in one orbit of Aut(G)) are
merged when Aut(G) is not trivial: a one-vertex set is tried for the first vertex of its orbit
only (the test gives one answer on an orbit), larger sets by their nauty certificate after it.
McKay's theorem gives exactly one acceptance per isomorphism class. The constraints are
hereditary (deleting a vertex never raises a degree, never raises the cyclomatic number, keeps a
dominated degree sequence dominated, and a non-cut vertex keeps the parent
connected), so pruning children that break them loses nothing.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Sequence
from functools import lru_cache
from itertools import combinations
from typing import NamedTuple

import pynauty

__all__ = [
    "PartialGraph",
    "Skeleton",
    "adjacency_lists",
    "automorphism_generators",
    "automorphisms",
    "children",
    "frontier",
    "grow",
    "has_cycles",
    "in_two_core",
    "nauty_graph",
    "root_graph",
    "skeletons",
]


class Skeleton(NamedTuple):
    """A finished skeleton: its vertex count and sorted edge list."""

    size: int
    edges: tuple[tuple[int, int], ...]


class PartialGraph(NamedTuple):
    """A node of the generation tree: the vertices so far, their adjacency, the ring count."""

    size: int
    adjacency: tuple[tuple[int, ...], ...]
    rings: int


def root_graph() -> PartialGraph:
    """The root of the generation tree: one vertex."""
    return PartialGraph(1, ((),), 0)


def adjacency_lists(n: int, edges: Sequence[tuple[int, int]]) -> list[list[int]]:
    adj: list[list[int]] = [[] for _ in range(n)]
    for a, b in edges:
        adj[a].append(b)
        adj[b].append(a)
    return adj


def nauty_graph(n: int, adj: list[list[int]]) -> pynauty.Graph:
    """The graph for nauty, built without pynauty's per-vertex checks (the hot path of skeleton
    growth): ``adj`` is a simple graph on 0..n-1 already, with no repeated neighbour. nauty reads
    the adjacency as bit sets, so the result equals ``pynauty.Graph(n, adjacency_dict=...)``
    (tests/test_generate.py checks certificates both ways)."""
    graph: pynauty.Graph = pynauty.Graph.__new__(pynauty.Graph)
    graph.number_of_vertices = n
    graph.directed = False
    graph._adjacency_dict = dict(enumerate(adj))  # an empty list (a lone vertex) sets no bit
    graph._vertex_coloring = []
    return graph


def _checked(n: int, bounds: Sequence[int]) -> list[int]:
    bounds = sorted(bounds, reverse=True)
    if len(bounds) != n:
        raise ValueError("need one degree bound per vertex")
    return bounds


def skeletons(n: int, bounds: Sequence[int], max_rings: int, *, cycles: Sequence[int] = ()) -> Iterator[Skeleton]:
    """Yield every connected simple graph on ``n`` vertices once.

    ``bounds``: the largest allowed degrees (one per vertex, any order). ``max_rings``: the
    largest cyclomatic number (edges - vertices + 1). ``cycles``: lengths of simple cycles the
    caller wants (a required ring), a pruning aid: a partial graph whose ring budget is spent has
    all its cycles, so one lacking a wanted cycle is pruned with its subtree; a skeleton with
    fewer rings than the budget may still lack them, so the caller tests finished skeletons.
    """
    for part in frontier(n, bounds, max_rings, depth=n, cycles=cycles):
        yield from grow(part, n, bounds, max_rings, cycles=cycles)


def frontier(
    n: int, bounds: Sequence[int], max_rings: int, *, depth: int, cycles: Sequence[int] = ()
) -> Iterator[PartialGraph]:
    """The partial graphs with ``min(depth, n)`` vertices on the generation tree, in the order
    the tree visits them. Growing each with :func:`grow` and chaining the results in this order
    gives exactly :func:`skeletons` — this is how work is split across processes."""
    bounds = _checked(n, bounds)
    if n == 0:
        return
    if n > 1 and bounds[1] < 1:
        return
    if cycles and (max_rings == 0 or max(cycles) > n):
        return  # a wanted cycle needs a ring, and room for it
    yield from _descend(root_graph(), n, bounds, max_rings, min(depth, n), tuple(cycles))


def _descend(
    part: PartialGraph, n: int, bounds: Sequence[int], max_rings: int, depth: int, cycles: tuple[int, ...]
) -> Iterator[PartialGraph]:
    if part[0] == depth:
        yield part
        return
    for child in children(part, bounds, max_rings, cycles=cycles):
        yield from _descend(child, n, bounds, max_rings, depth, cycles)


def grow(
    part: PartialGraph,
    n: int,
    bounds: Sequence[int],
    max_rings: int,
    *,
    cycles: Sequence[int] = (),
    visit: Callable[[], None] | None = None,
) -> Iterator[Skeleton]:
    """Every finished n-vertex skeleton below the partial graph ``part``; ``visit`` is called
    once per node of the tree grown (a work budget may raise from it)."""
    yield from _grow(part, n, _checked(n, bounds), max_rings, tuple(cycles), visit)


def _grow(
    part: PartialGraph,
    n: int,
    bounds: list[int],
    max_rings: int,
    cycles: tuple[int, ...],
    visit: Callable[[], None] | None,
) -> Iterator[Skeleton]:
    if visit is not None:
        visit()
    k, adj, _ = part
    if k == n:
        yield Skeleton(n, tuple(sorted((a, b) for a in range(n) for b in adj[a] if a < b)))
        return
    for child in children(part, bounds, max_rings, cycles=cycles):
        yield from _grow(child, n, bounds, max_rings, cycles, visit)


def children(
    part: PartialGraph, bounds: Sequence[int], max_rings: int, *, cycles: Sequence[int] = ()
) -> Iterator[PartialGraph]:
    """The accepted children of a partial graph, one per isomorphism class; a child that spends
    the last of the ring budget without every wanted cycle (``cycles``) is not one: every vertex
    added below it is a leaf, which closes no cycle."""
    k, adj_t, rings = part
    adj = [list(nb) for nb in adj_t]
    top = bounds[0]
    degrees = [len(nb) for nb in adj]
    open_vertices = [u for u in range(k) if degrees[u] < top]
    max_size = min(top, len(open_vertices), max_rings - rings + 1)
    leaves = degrees.count(1)
    # a child with a leaf besides the new vertex has a deletion candidate of smaller degree than
    # a new vertex of degree 2 or more: only sets holding every leaf of the parent can be taken
    if max_size > 1 and leaves > max_size:
        max_size = 1
    # degree-sequence domination depends only on the degrees of the chosen vertices: decided
    # once per multiset (counting form: for every t, at most as many degrees >= t as bounds >= t)
    room = _at_least(tuple(bounds), top)
    at_least = _at_least(tuple(degrees), top)
    dominated: dict[tuple[int, ...], bool] = {}
    # isomorphic accepted children come only from sets in one orbit of Aut(parent), and the
    # acceptance test gives one answer on a whole orbit: with a trivial group there are none;
    # a single vertex's set is tested for the first vertex of its orbit only; larger sets are
    # merged by certificate
    symmetric = False
    orbits: list[int] = []
    if k > 1:
        generators, _, _, orbits, _ = pynauty.autgrp(nauty_graph(k, adj))
        symmetric = bool(generators)
    tried: set[int] = set()  # the orbits whose first vertex was tried (symmetric parents)
    seen: set[bytes] = set()
    splits: dict[int, tuple[list[int], int]] | None = None  # the parent's cut vertices, found once
    sums: list[int] | None = None  # the parent's neighbour-degree sums, found once
    leaf_list: list[int] = []
    for size in range(1, max_size + 1):
        for subset in combinations(open_vertices, size):
            if size == 1:
                if symmetric:
                    orbit = orbits[subset[0]]
                    if orbit in tried:
                        continue
                    tried.add(orbit)
            elif leaves and sum(1 for u in subset if degrees[u] == 1) < leaves:
                continue  # a leaf (never a cut vertex) has a smaller degree than the new vertex
            key = tuple(sorted(degrees[u] for u in subset))
            ok = dominated.get(key)
            if ok is None:
                ok = dominated[key] = _dominated_after(key, at_least, room, top)
            if not ok:
                continue
            if size == 1:
                if sums is None:
                    sums = [sum(degrees[x] for x in nb) for nb in adj]
                    leaf_list = [w for w in range(k) if degrees[w] == 1]
                tied = _leaf_ties(adj, degrees, subset[0], sums, leaf_list)
                if tied is None:
                    continue
            child = [nb[:] for nb in adj]
            for u in subset:
                child[u].append(k)
            child.append(list(subset))
            if cycles and size > 1 and rings + size - 1 == max_rings and not has_cycles(child, cycles):
                continue
            if size == 1:
                if tied and not _first_in_orbit(child, k, tied):
                    continue
            elif any(len(child[u]) <= size for u in range(k)):
                # (otherwise every other vertex has a larger degree, and the new vertex is never
                # a cut vertex, the parent being connected: it is the one deletion candidate)
                if splits is None:
                    splits = cut_splits(adj)
                cut = child_cut_vertices(splits, subset)
                if not _accept(child, k, cut):
                    continue
                if not _canonical_deletion_ok(child, k, cut):
                    continue
            if symmetric and size > 1:
                cert = pynauty.certificate(nauty_graph(k + 1, child))
                if cert in seen:
                    continue
                seen.add(cert)
            yield PartialGraph(k + 1, tuple(tuple(nb) for nb in child), rings + size - 1)


@lru_cache(maxsize=4096)
def _at_least(values: tuple[int, ...], top: int) -> tuple[int, ...]:
    """For t = 0..top+1, how many of ``values`` are at least t."""
    return tuple(sum(1 for x in values if x >= t) for t in range(top + 2))


@lru_cache(maxsize=65536)
def _dominated_after(degrees: tuple[int, ...], at_least: tuple[int, ...], room: tuple[int, ...], top: int) -> bool:
    """Whether the parent's degree sequence, with the vertices of these degrees raised by one
    and a new vertex of degree ``len(degrees)``, stays dominated by the bounds: for every t, no
    more degrees >= t than bounds >= t (``at_least`` and ``room``, indexed by t)."""
    size = len(degrees)
    if size > top:
        return False
    for t in range(1, top + 1):
        count = at_least[t] + (1 if t <= size else 0) + sum(1 for d in degrees if d == t - 1)
        if count > room[t]:
            return False
    return sum(1 for d in degrees if d == top) == 0


def in_two_core(adj: Sequence[Sequence[int]]) -> list[bool]:
    """Per vertex, whether it lies in the graph's 2-core (leaves stripped until none is left),
    where every cycle lies."""
    n = len(adj)
    degree = [len(nb) for nb in adj]
    alive = [True] * n
    leaves = [v for v in range(n) if degree[v] <= 1]
    while leaves:
        v = leaves.pop()
        if not alive[v]:
            continue
        alive[v] = False
        for w in adj[v]:
            if alive[w]:
                degree[w] -= 1
                if degree[w] == 1:
                    leaves.append(w)
    return alive


def has_cycles(adj: list[list[int]], lengths: Sequence[int]) -> bool:
    """Whether the graph contains a simple cycle of each length in ``lengths``."""
    alive = in_two_core(adj)
    core = [v for v in range(len(adj)) if alive[v]]
    return all(_has_cycle(adj, core, alive, length) for length in set(lengths))


def _has_cycle(adj: list[list[int]], core: list[int], alive: list[bool], length: int) -> bool:
    """A simple cycle of ``length`` vertices through core vertices, found from its lowest vertex."""
    if length < 3 or len(core) < length:
        return False
    on_path = [False] * len(adj)

    def extend(start: int, v: int, steps: int) -> bool:
        for w in adj[v]:
            if not alive[w] or w < start:
                continue
            if w == start:
                if steps == length:
                    return True
                continue
            if on_path[w] or steps == length:
                continue
            on_path[w] = True
            found = extend(start, w, steps + 1)
            on_path[w] = False
            if found:
                return True
        return False

    for start in core:
        on_path[start] = True
        found = extend(start, start, 1)
        on_path[start] = False
        if found:
            return True
    return False


def _cut_vertices(adj: list[list[int]]) -> set[int]:
    """Articulation points of a connected graph (Hopcroft-Tarjan, one depth-first search)."""
    n = len(adj)
    order = [-1] * n
    low = [0] * n
    cut: set[int] = set()
    counter = 0
    stack = [(0, -1, iter(adj[0]))]
    order[0] = low[0] = 0
    root_children = 0
    while stack:
        u, parent, neighbours = stack[-1]
        advanced = False
        for w in neighbours:
            if order[w] < 0:
                counter += 1
                order[w] = low[w] = counter
                stack.append((w, u, iter(adj[w])))
                advanced = True
                break
            if w != parent:
                low[u] = min(low[u], order[w])
        if advanced:
            continue
        stack.pop()
        if parent >= 0:
            low[parent] = min(low[parent], low[u])
            if parent == 0:
                root_children += 1
            elif low[u] >= order[parent]:
                cut.add(parent)
    if root_children > 1:
        cut.add(0)
    return cut


def cut_splits(adj: list[list[int]]) -> dict[int, tuple[list[int], int]]:
    """Each cut vertex of a connected graph with the component of every other vertex once it is
    removed (the cut vertex itself -1), and how many components there are."""
    n = len(adj)
    splits: dict[int, tuple[list[int], int]] = {}
    for c in sorted(_cut_vertices(adj)) if n > 2 else ():
        comp = [-1] * n
        count = 0
        for start in range(n):
            if start == c or comp[start] >= 0:
                continue
            comp[start] = count
            stack = [start]
            while stack:
                u = stack.pop()
                for w in adj[u]:
                    if w != c and comp[w] < 0:
                        comp[w] = count
                        stack.append(w)
            count += 1
        splits[c] = (comp, count)
    return splits


def child_cut_vertices(splits: dict[int, tuple[list[int], int]], subset: Sequence[int]) -> set[int]:
    """The cut vertices of the child that joins a new vertex to ``subset`` (two or more vertices)
    of a connected parent whose cut vertices are ``splits`` (:func:`cut_splits`). Joined to two
    vertices or more, the new vertex is no cut vertex and makes none (removing any one vertex
    leaves it a neighbour to hold on to); a cut vertex of the parent stays one unless the new
    vertex touches every component its removal leaves."""
    cut = set()
    for c, (comp, count) in splits.items():
        if len({comp[u] for u in subset if u != c}) < count:
            cut.add(c)
    return cut


def _accept(adj: list[list[int]], v: int, cut: set[int]) -> bool:
    """Cheap necessary test: v is not a cut vertex and no non-cut vertex has a smaller degree."""
    dv = len(adj[v])
    if dv == 1:
        return True
    return v not in cut and all(len(nb) >= dv or u in cut for u, nb in enumerate(adj) if u != v)


def _canonical_deletion_ok(adj: list[list[int]], v: int, cut: set[int]) -> bool:
    """Whether the new vertex ``v`` lies in the orbit of m(H): among the non-cut vertices of
    smallest degree, those with the largest neighbourhood invariant (:func:`_invariant`), and of
    those the one with the largest position in nauty's canonical labelling. Every step is an
    isomorphism invariant, so m(H) is defined up to automorphism, as McKay's method needs; the
    invariant decides most cases without calling nauty."""
    candidates = [u for u in range(len(adj)) if u not in cut]
    low = min(len(adj[u]) for u in candidates)
    candidates = [u for u in candidates if len(adj[u]) == low]
    if len(adj[v]) != low or v not in candidates:
        return False
    if len(candidates) == 1:
        return True
    score = {u: _invariant(adj, u) for u in candidates}
    best = max(score.values())
    if score[v] != best:
        return False
    tied = [u for u in candidates if score[u] == best and u != v]
    return not tied or _first_in_orbit(adj, v, tied)


def _leaf_ties(
    adj: list[list[int]],
    degrees: list[int],
    u: int,
    sums: Sequence[int] | None = None,
    leaves: Sequence[int] | None = None,
) -> list[int] | None:
    """For the child that adds a leaf v at ``u``: None when another leaf has a larger invariant
    (v is not m(H)), else the other leaves whose invariant equals v's (empty: v is m(H)). The
    same test as :func:`_canonical_deletion_ok`, on the parent's adjacency, without building
    the child. ``sums`` (the parent's neighbour-degree sums) and ``leaves`` (its leaves), when
    given, are read instead of computed."""
    if sums is None:
        sums = [sum(degrees[x] for x in nb) for nb in adj]
    if leaves is None:
        leaves = [w for w in range(len(adj)) if degrees[w] == 1]
    # the invariant of a leaf hanging on p in the child: p's degree, and the degrees around p
    # (u's is one more, and u gains the new leaf, of degree 1)
    near_u = adj[u]
    mine = (degrees[u] + 1, sums[u] + 1)
    tied = []
    for w in leaves:
        if w == u:
            continue
        p = adj[w][0]
        if p == u:
            theirs = mine
        else:
            theirs = (degrees[p], sums[p] + (1 if p in near_u else 0))
        if theirs > mine:
            return None
        if theirs == mine:
            tied.append(w)
    return tied


def _first_in_orbit(adj: list[list[int]], v: int, tied: list[int]) -> bool:
    """Whether ``v`` is in the orbit of the vertex of ``tied + [v]`` with the largest position in
    nauty's canonical labelling."""
    candidates = [*tied, v]
    graph = nauty_graph(len(adj), adj)
    _, _, _, orbits, _ = pynauty.autgrp(graph)
    if len({orbits[u] for u in candidates}) == 1:
        return True
    labels = pynauty.canon_label(graph)  # labels[i] = vertex at canonical position i
    position = {u: i for i, u in enumerate(labels)}
    chosen = max(candidates, key=lambda u: position[u])
    return orbits[chosen] == orbits[v]


def _invariant(adj: list[list[int]], u: int) -> tuple[int, int]:
    """The degrees around ``u``: the sum of its neighbours' degrees, and the sum of theirs."""
    first = 0
    second = 0
    for w in adj[u]:
        first += len(adj[w])
        for x in adj[w]:
            second += len(adj[x])
    return first, second


def automorphism_generators(n: int, edges: Sequence[tuple[int, int]]) -> tuple[list[tuple[int, ...]], float]:
    """Generators of the skeleton's automorphism group (nauty's) and the group's order."""
    if not edges:
        return [], float(_factorial(n))
    generators, order, _, _, _ = pynauty.autgrp(nauty_graph(n, adjacency_lists(n, edges)))
    return [tuple(g) for g in generators], order


def automorphisms(n: int, edges: Sequence[tuple[int, int]], *, limit: int = 5000) -> list[tuple[int, ...]] | None:
    """All automorphisms of the skeleton as vertex permutations, or None if there are more than
    ``limit`` (callers then fall back to canonical certificates)."""
    adj = adjacency_lists(n, edges)
    generators, order, _, _, _ = pynauty.autgrp(nauty_graph(n, adj)) if edges else ([], float(_factorial(n)), 0, [], 0)
    if order > limit:
        return None
    identity = tuple(range(n))
    group = {identity}
    frontier = [identity]
    gens = [tuple(g) for g in generators]
    while frontier:
        nxt = []
        for p in frontier:
            for g in gens:
                q = tuple(g[p[i]] for i in range(n))
                if q not in group:
                    group.add(q)
                    nxt.append(q)
        frontier = nxt
    return sorted(group)


def _factorial(n: int) -> int:
    out = 1
    for i in range(2, n + 1):
        out *= i
    return out
