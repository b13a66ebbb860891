"""Labelling one skeleton: element labels on its vertices, then bond orders on its edges, each
structure once up to the skeleton's automorphisms.

Two molecules on one skeleton are the same exactly when an automorphism of the skeleton maps
one labelling onto the other, so only the lexicographically smallest labelling of each orbit is
kept (element labels first; bond orders under the stabilizer of the labels). Skeletons with
huge automorphism groups fall back to canonical certificates. Hydrogens fill each atom's free
valence; a higher valence state needs its oxo bond (:class:`~.plans.ValenceStates`).
"""

from __future__ import annotations

import re
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, TypeAlias

from .counts import CountTest
from .plans import ValenceStates, default_valence_states
from .selection import SkeletonPatterns
from .skeletons import automorphisms

if TYPE_CHECKING:
    from .._rdkit import BondType, Mol, RWMol

__all__ = ["SkeletonPatterns", "SkeletonTest", "Structure", "allowed_alone", "structures_on_skeleton"]


@dataclass(frozen=True)
class Structure:
    """A molecule as a heavy-atom multigraph with implicit hydrogens."""

    elements: tuple[str, ...]
    bonds: tuple[tuple[int, int, int], ...]  # (atom, atom, order)
    hydrogens: tuple[int, ...]
    valences: tuple[int, ...]  # valence state of each atom (bond orders + hydrogens)


def allowed_alone(symbol: str, valence: int, states: ValenceStates | None = None) -> bool:
    """Whether a one-atom molecule may have this valence state (a higher state needs its oxo bond)."""
    return (symbol, valence) not in (states or default_valence_states())


def structures_on_skeleton(
    n: int,
    edges: tuple[tuple[int, int], ...],
    labels: Sequence[tuple[str, int]],
    per_label: Sequence[int],
    bond_sum: int,
    max_extra: int,
    test: SkeletonTest | None = None,
    states: ValenceStates | None = None,
    *,
    counts: CountTest | None = None,
) -> Iterator[Structure]:
    """Structures on one skeleton. ``test``: the necessary conditions of required groups that
    the bare skeleton, the labelled skeleton and the labelled multigraph must meet (groups.yaml
    ``skeleton`` and ``kekule``). ``counts``: declared NMR counts, tested on each labelling
    (a necessary condition) and exactly on each multigraph."""
    oxo_states = states or default_valence_states()
    valence = [v for _, v in labels]
    special = [label in oxo_states for label in labels]
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
    perms = inverse_permutations(n, edges, group) if group is not None else []
    seen: set[tuple[tuple[int, ...], tuple[int, ...]]] | None = set() if group is None else None
    is_carbon = [sym == "C" for sym, _ in labels]
    kekule_ok = test.kekule_ok if test is not None and test.kekule else None
    heads = [a for a, _ in edges]
    tails = [b for _, b in edges]
    # labelled conditions read off the labels prune the labelling search (each labelling is
    # still tested in full below)
    label_ways = test.labelling_ways() if test is not None else None
    numbers = test.numbers if test is not None else None
    for colouring in _colourings(n, degree, valence, list(per_label), label_ways, numbers):
        capacity = [valence[colouring[i]] - degree[i] for i in range(n)]
        if sum(capacity) < 2 * extra_total:
            continue
        if counts is not None and not counts.colouring_ok(colouring, degree, is_carbon):
            continue
        stabilizer: list[tuple[int, ...]] = []
        if perms:
            canonical = True
            pick = colouring.__getitem__
            for vertex_inverse, edge_inverse in perms:
                image = tuple(map(pick, vertex_inverse))
                if image < colouring:
                    canonical = False
                    break
                if image == colouring:
                    stabilizer.append(edge_inverse)
            if not canonical:
                continue
        if test is not None and not test.labelled_ok(colouring):
            continue
        need = None
        if counts is not None and counts.types is not None:
            need = ([i for i in range(n) if is_carbon[colouring[i]]], counts.types)
        # per labelling: the elements, valence states and whether an oxo state needs checking
        elements = tuple(labels[c][0] for c in colouring)
        valences = tuple(valence[c] for c in colouring)
        oxo = any(special[c] for c in colouring)
        ways = test.order_ways() if kekule_ok is not None and test is not None else None
        for orders in _multiplicities(edges, capacity, extra_total, max_extra, need, ways):
            if kekule_ok is not None and not kekule_ok(orders):
                continue  # cheapest first: mostly a few lookups (SkeletonTest.kekule_ok)
            if stabilizer and any(tuple(map(orders.__getitem__, einv)) < orders for einv in stabilizer):
                continue
            used = [0] * n
            for (a, b), o in zip(edges, orders, strict=True):
                used[a] += o
                used[b] += o
            if oxo and not _oxo_ok(n, edges, orders, colouring, labels, degree, used, oxo_states):
                continue
            built = Structure(
                elements,
                tuple(zip(heads, tails, orders, strict=True)),
                tuple(v - u for v, u in zip(valences, used, strict=True)),
                valences,
            )
            if counts is not None and not counts.structure_ok(built):
                continue
            if seen is not None:
                key = _certificate(n, edges, colouring, orders)
                if key in seen:
                    continue
                seen.add(key)
            yield built


def inverse_permutations(
    n: int, edges: Sequence[tuple[int, int]], group: Sequence[tuple[int, ...]]
) -> list[tuple[tuple[int, ...], tuple[int, ...]]]:
    """Each automorphism but the identity as (vertex inverse, edge inverse): the image of a
    labelling ``x`` is ``x[inverse[i]]`` at position ``i``."""
    edge_index = {e: i for i, e in enumerate(edges)}
    perms: list[tuple[tuple[int, ...], tuple[int, ...]]] = []
    identity = tuple(range(n))
    for p in group:
        if p == identity:
            continue
        inv = [0] * n
        for i, j in enumerate(p):
            inv[j] = i
        einv = [0] * len(edges)
        for i, (a, b) in enumerate(edges):
            einv[edge_index[(min(p[a], p[b]), max(p[a], p[b]))]] = i
        perms.append((tuple(inv), tuple(einv)))
    return perms


def _oxo_ok(
    n: int,
    edges: Sequence[tuple[int, int]],
    orders: Sequence[int],
    colouring: Sequence[int],
    labels: Sequence[tuple[str, int]],
    degree: Sequence[int],
    used: Sequence[int],
    states: ValenceStates,
) -> bool:
    """Each higher-valence atom carries a double bond to a terminal partner (valence_states.yaml)
    and, where the state allows none, no hydrogen."""
    for i in range(n):
        state = states.get(labels[colouring[i]])
        if state is None:
            continue
        if not state.hydrogen and labels[colouring[i]][1] - used[i] > 0:
            return False
        if not any(
            o == 2
            and i in (a, b)
            and degree[b if a == i else a] == 1
            and labels[colouring[b if a == i else a]][0] in state.partners
            for (a, b), o in zip(edges, orders, strict=True)
        ):
            return False
    return True


_BOND_TYPES: dict[int, BondType] = {}


#: a query atom that depends on neither bond orders nor hydrogens: any atom or one element,
#: optionally with heavy-atom degrees (as RDKit writes it back)
_ORDER_FREE_ATOM = re.compile(r"^(\*|\[(#\d+|\*)([;&]D\d(,D\d)*)?\])$")
#: the one order-dependent atom query read off the orders too: an atom of one element that
#: carries a double or triple bond (the aromatic ring's Kekulé condition)
_MULTIPLE_ATOM = re.compile(r"^\[#(\d+)[;&]\$\(\*=,#\*\)\]$")
#: and its opposite, read off the orders as well: an atom of one element that carries no double
#: and no triple bond (the alcohol's Kekulé condition: a hydroxyl on a saturated carbon)
_SINGLE_ATOM = re.compile(r"^\[#(\d+)[;&]!\$\(\*=\*\)[;&]!\$\(\*#\*\)\]$")
#: a bracket atom of a written SMARTS, or one character
_SMARTS_TOKEN = re.compile(r"\[[^\]]*\]|.")
_BOND_ORDER = {"-": 1, "=": 2, "#": 3, "~": None}
#: matches of a relaxed pattern beyond which the RDKit test is used instead
_MAX_RELAXED_MATCHES = 10_000

#: one way a kekule condition holds on a labelled skeleton: edges with the order each must
#: have (each edge of an atom that must carry no multiple bond among them, with order 1), and
#: for each atom that must carry a multiple bond, its edges
OrderWay: TypeAlias = "tuple[tuple[tuple[int, int], ...], tuple[tuple[int, ...], ...]]"


@dataclass(frozen=True)
class _Split:
    """A pattern split into what a cheaper structure decides and what is read off per case:
    ``pattern`` is matched once, ``wanted`` per pattern atom or bond is checked per case."""

    pattern: Mol
    wanted: tuple[tuple[int, ...], ...]
    multiple: tuple[int, ...] = ()  # pattern atoms that must carry a multiple bond
    single: tuple[int, ...] = ()  # pattern atoms that must carry no multiple bond


def _rewritten(pattern: Mol, atom_token: Callable[[str], str]) -> Mol | None:
    """The pattern written again with each bracket atom through ``atom_token`` and each bond
    written ``~``; None unless RDKit reads it back with the same atoms and bonds."""
    from .._rdkit import Chem

    tokens = _SMARTS_TOKEN.findall(Chem.MolToSmarts(pattern))
    written = "".join("~" if t in _BOND_ORDER else atom_token(t) if t.startswith("[") else t for t in tokens)
    out = Chem.MolFromSmarts(written)
    if out is None or out.GetNumAtoms() != pattern.GetNumAtoms():
        return None
    ends = [(b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in out.GetBonds()]
    return out if ends == [(b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in pattern.GetBonds()] else None


def _relaxed(pattern: Mol) -> _Split | None:
    """A ``kekule`` pattern split into what the labelled skeleton decides and what the bond
    orders decide: the pattern with every bond written ``~`` (any bond) and each atom that must
    carry a multiple bond (or none) written as its element, then (atom, atom, order) for each -,
    = and # bond, the atoms that must carry a multiple bond and those that must carry none. A
    multigraph matches the pattern exactly
    when some match of the relaxed pattern on its labelled skeleton has those orders. None when
    another atom query could depend on the bond orders or hydrogens (anything beyond an element
    and heavy-atom degrees) or a bond is not one of - = # ~: such a pattern is tested by RDKit
    on each multigraph."""
    from .._rdkit import Chem

    multiple = []
    single = []
    for atom in pattern.GetAtoms():
        text = atom.GetSmarts()
        if _MULTIPLE_ATOM.match(text):
            multiple.append(atom.GetIdx())
        elif _SINGLE_ATOM.match(text):
            single.append(atom.GetIdx())
        elif not _ORDER_FREE_ATOM.match(text):
            return None
    wanted = []
    for bond in pattern.GetBonds():
        symbol = Chem.Bond.GetSmarts(bond)
        if symbol not in _BOND_ORDER:
            return None
        order = _BOND_ORDER[symbol]
        if order is not None:
            wanted.append((bond.GetBeginAtomIdx(), bond.GetEndAtomIdx(), order))

    def element_only(token: str) -> str:
        found = _MULTIPLE_ATOM.match(token) or _SINGLE_ATOM.match(token)
        return f"[#{found.group(1)}]" if found else token

    relaxed = _rewritten(pattern, element_only)
    return _Split(relaxed, tuple(wanted), tuple(multiple), tuple(single)) if relaxed is not None else None


def _element_free(pattern: Mol) -> _Split | None:
    """A labelled skeleton condition split into what the bare skeleton decides and what the
    element labels decide: the pattern with its elements written ``*``, and the atomic number
    each pattern atom asks for (0: any). None unless every atom is an element or ``*`` with
    heavy-atom degrees only and every bond is ``~``: RDKit then tests each labelling."""
    from .._rdkit import Chem

    numbers = []
    for atom in pattern.GetAtoms():
        if not _ORDER_FREE_ATOM.match(atom.GetSmarts()):
            return None
        numbers.append(atom.GetAtomicNum())
    if any(Chem.Bond.GetSmarts(bond) != "~" for bond in pattern.GetBonds()):
        return None
    free = _rewritten(pattern, lambda token: re.sub(r"#\d+", "*", token))
    return _Split(free, (tuple(numbers),)) if free is not None else None


class SkeletonTest:
    """Necessary conditions of required groups on a skeleton (``skeleton`` in groups.yaml): the
    bare-graph form once per skeleton, the labelled form once per element labelling, the
    ``kekule`` form once per multigraph. A labelled condition of elements and degrees only
    (:func:`_element_free`) is matched once per skeleton and read off each labelling; a kekule
    condition that only its bond symbols (and atoms that must carry a multiple bond) tie to the
    orders (:func:`_relaxed`) is matched once per labelling and read off each multigraph's
    orders. The rest is matched by RDKit on one molecule per skeleton whose atomic numbers and
    bond types are rewritten."""

    def __init__(self, patterns: SkeletonPatterns, labels: Sequence[tuple[str, int]]) -> None:
        from .._rdkit import Chem

        self.patterns = patterns
        self.kekule = any(kekule is not None for _, _, kekule in patterns)
        if self.kekule and not _BOND_TYPES:
            _BOND_TYPES.update({1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE})
        self.free = [_element_free(labelled) for _, labelled, _ in patterns]
        self.relaxed = [_relaxed(kekule) if kekule is not None else None for _, _, kekule in patterns]
        # the relaxed kekule patterns with their elements written * too, matched once per bare
        # skeleton for the compiled core (kernel_conditions)
        self.relaxed_free = [_element_free(split.pattern) if split is not None else None for split in self.relaxed]
        table = Chem.GetPeriodicTable()
        self.numbers = [table.GetAtomicNumber(sym) for sym, _ in labels]
        self.mol: RWMol | None = None
        self._atoms: dict[int, RWMol] = {}
        self._incident: list[tuple[int, ...]] = []
        # per labelled condition of the current skeleton: the (vertex, atomic number) sets of
        # which one must hold, or None where RDKit tests each labelling
        self._labellings: list[list[tuple[tuple[int, int], ...]] | None] = []
        self._colouring: Sequence[int] = ()
        self._labelled = False  # whether the molecule's atoms carry the current labelling
        # per kekule condition of the current labelling: the ways it can hold, or None where
        # RDKit tests each multigraph (found on first need)
        self._orders: list[list[OrderWay] | None] | None = None

    def bare_ok(self, n: int, edges: Sequence[tuple[int, int]]) -> bool:
        from .._rdkit import Chem

        bare = self._atoms.get(n)
        if bare is None:  # n carbons with no implicit hydrogens, copied for each skeleton
            bare = self._atoms[n] = Chem.RWMol()
            for _ in range(n):
                atom = Chem.Atom(6)
                atom.SetNoImplicit(True)
                bare.AddAtom(atom)
        mol = Chem.RWMol(bare)
        incident: list[list[int]] = [[] for _ in range(n)]
        for j, (a, b) in enumerate(edges):
            mol.AddBond(a, b, Chem.BondType.SINGLE)
            incident[a].append(j)
            incident[b].append(j)
        mol.UpdatePropertyCache(strict=False)
        self.mol = mol
        self._incident = [tuple(row) for row in incident]
        self._orders = None
        self._labelled = False
        if not all(mol.HasSubstructMatch(shape) for shape, _, _ in self.patterns):
            return False
        self._labellings = [self._labelling_sets(split) for split in self.free]
        return True

    def _labelling_sets(self, split: _Split | None) -> list[tuple[tuple[int, int], ...]] | None:
        mol = self.mol
        assert mol is not None
        if split is None:
            return None
        matches = mol.GetSubstructMatches(split.pattern, uniquify=False, maxMatches=_MAX_RELAXED_MATCHES)
        if len(matches) >= _MAX_RELAXED_MATCHES:
            return None
        (numbers,) = split.wanted
        # written in vertex order, so that matches differing only in how they map a symmetric
        # pattern make one set
        return sorted({tuple(sorted((v, z) for v, z in zip(match, numbers, strict=True) if z)) for match in matches})

    def labelled_ok(self, colouring: Sequence[int]) -> bool:
        """The skeleton of the last :meth:`bare_ok` (which must have held) with these element
        labels matches every labelled condition."""
        assert self.mol is not None, "bare_ok first"
        self._colouring = colouring
        self._labelled = False
        self._orders = None
        numbers = self.numbers
        for (_, labelled, _), sets in zip(self.patterns, self._labellings, strict=True):
            if sets is not None:
                if not any(all(numbers[colouring[v]] == z for v, z in way) for way in sets):
                    return False
            elif not self._label().HasSubstructMatch(labelled):
                return False
        return True

    def _label(self) -> RWMol:
        """The molecule with the current labelling's atomic numbers."""
        mol = self.mol
        assert mol is not None
        if not self._labelled:
            for i, c in enumerate(self._colouring):
                mol.GetAtomWithIdx(i).SetAtomicNum(self.numbers[c])
            self._labelled = True
        return mol

    def kekule_ok(self, orders: Sequence[int]) -> bool:
        """The labelled skeleton with these bond orders (Kekulé form, before aromaticity) matches
        every ``kekule`` condition; call after :meth:`labelled_ok` for the same labelling."""
        typed = False
        for (_, _, kekule), ways in zip(self.patterns, self._order_ways(), strict=True):
            if kekule is None:
                continue
            if ways is not None:
                if not any(
                    all(orders[e] == o for e, o in fixed) and all(any(orders[e] > 1 for e in inc) for inc in multiple)
                    for fixed, multiple in ways
                ):
                    return False
                continue
            mol = self._label()
            if not typed:
                for i, o in enumerate(orders):
                    mol.GetBondWithIdx(i).SetBondType(_BOND_TYPES[o])
                typed = True
            if not mol.HasSubstructMatch(kekule):
                return False
        return True

    @property
    def readable(self) -> bool:
        """Whether :meth:`kernel_conditions` can read every condition (else RDKit tests some
        per labelling or per multigraph, on every skeleton)."""
        kekule = [free for (_, _, pattern), free in zip(self.patterns, self.relaxed_free, strict=True) if pattern]
        return all(split is not None for split in self.free) and all(free is not None for free in kekule)

    def kernel_conditions(self) -> tuple[tuple[tuple[int, ...], ...], ...] | None:
        """The conditions of the skeleton of the last :meth:`bare_ok` (which must have held) as
        the compiled core reads them (:data:`.kernel.Conditions`): each labelled condition's
        (vertex, atomic number) sets, and each kekule condition's ways with the elements they
        ask for, all found on the bare skeleton. A match of a relaxed pattern on a labelled
        skeleton is a match of its element-free form on the bare skeleton whose vertices carry
        the elements the pattern names (atoms and degrees are the same, every bond is ``~``),
        so these are the ways :meth:`order_ways` finds, for every labelling at once. None when
        some condition is tested by RDKit per labelling or per multigraph (or has too many
        matches to list): the skeleton is then labelled in Python."""
        mol = self.mol
        assert mol is not None, "bare_ok first"
        conditions: list[tuple[tuple[int, ...], ...]] = []
        for sets in self._labellings:
            if sets is None:
                return None
            conditions.append(tuple(tuple(x for v, z in way for x in (0, v, z)) for way in sets))
        for (_, _, kekule), split, free in zip(self.patterns, self.relaxed, self.relaxed_free, strict=True):
            if kekule is None:
                continue
            if split is None or free is None:
                return None
            matches = mol.GetSubstructMatches(free.pattern, uniquify=False, maxMatches=_MAX_RELAXED_MATCHES)
            if len(matches) >= _MAX_RELAXED_MATCHES:
                return None
            (numbers,) = free.wanted
            ways = set()
            for match in matches:
                records: list[int] = []
                for v, z in sorted({(v, z) for v, z in zip(match, numbers, strict=True) if z}):
                    records += (0, v, z)
                bonds = {(mol.GetBondBetweenAtoms(match[a], match[b]).GetIdx(), o) for a, b, o in split.wanted}
                # an atom that must carry no multiple bond: each of its edges single
                bonds |= {(e, 1) for a in split.single for e in self._incident[match[a]]}
                for e, o in sorted(bonds):
                    records += (1, e, o)
                for incident in sorted(self._incident[match[a]] for a in split.multiple):
                    records += (2, len(incident), *incident)
                ways.add(tuple(records))
            conditions.append(tuple(sorted(ways)))
        return tuple(conditions)

    def labelling_ways(self) -> list[list[tuple[tuple[int, int], ...]]]:
        """The (vertex, atomic number) sets of which one must hold, per labelled condition read
        off the labels, on the skeleton of the last :meth:`bare_ok` (which must have held)."""
        return [sets for sets in self._labellings if sets is not None]

    def order_ways(self) -> list[list[OrderWay]]:
        """The ways each kekule condition read off the orders can hold on the current labelled
        skeleton (conditions RDKit tests are left out); call after :meth:`labelled_ok`."""
        return [ways for ways in self._order_ways() if ways is not None]

    def _order_ways(self) -> list[list[OrderWay] | None]:
        """Per kekule condition of the current labelling, :meth:`_order_sets` (found once)."""
        if self._orders is None:
            self._orders = [self._order_sets(k) for k in range(len(self.patterns))]
        return self._orders

    def _order_sets(self, k: int) -> list[OrderWay] | None:
        """The ways kekule condition ``k`` can hold on the current labelled skeleton, one per
        match of its relaxed pattern (edges are bond indices, in the skeleton's edge order);
        None when RDKit must test each multigraph."""
        split = self.relaxed[k]
        if split is None:
            return None
        mol = self._label()
        matches = mol.GetSubstructMatches(split.pattern, uniquify=False, maxMatches=_MAX_RELAXED_MATCHES)
        if len(matches) >= _MAX_RELAXED_MATCHES:
            return None
        ways = set()
        for match in matches:
            fixed = {(mol.GetBondBetweenAtoms(match[a], match[b]).GetIdx(), o) for a, b, o in split.wanted}
            # an atom that must carry no multiple bond: each of its edges single
            fixed |= {(e, 1) for a in split.single for e in self._incident[match[a]]}
            # written in a fixed order, so that the matches of one ring (or of any symmetric
            # pattern) that differ only in how they map it make one way
            ways.add((tuple(sorted(fixed)), tuple(sorted(self._incident[match[a]] for a in split.multiple))))
        return sorted(ways)


def _colourings(
    n: int,
    degree: list[int],
    valence: list[int],
    counts: list[int],
    ways: Sequence[Sequence[tuple[tuple[int, int], ...]]] | None = None,
    numbers: Sequence[int] | None = None,
) -> list[tuple[int, ...]]:
    """Every assignment of the labels (``counts`` of each) to the vertices that covers each
    vertex's degree, in lexicographic order (collected in a list: a chain of nested generators
    costs more than the list). ``ways``: per labelled condition, the (vertex, atomic number)
    sets of which one must hold (:meth:`SkeletonTest.labelling_ways`), with ``numbers`` the
    labels' atomic numbers; an assignment after which some condition has no set left is cut
    (hereditary: later vertices never change a labelled one)."""
    current = [0] * n
    remaining = counts[:]
    out: list[tuple[int, ...]] = []
    labels = range(len(remaining))
    if ways and not all(ways):
        return []  # a condition with no set at all: no labelling meets it
    watched = [False] * (n + 1)  # the vertices after which a condition is tested
    if ways:
        assert numbers is not None
        for condition in ways:
            for way in condition:
                for v, _ in way:
                    watched[v + 1] = True

    def possible(i: int) -> bool:
        """Whether every condition keeps a set with vertices 0..i-1 labelled."""
        assert ways is not None and numbers is not None
        return all(
            any(all(v >= i or numbers[current[v]] == z for v, z in way) for way in condition) for condition in ways
        )

    def place(i: int) -> None:
        if watched[i] and not possible(i):
            return
        if i == n:
            out.append(tuple(current))
            return
        for c in labels:
            if remaining[c] and valence[c] >= degree[i]:
                remaining[c] -= 1
                current[i] = c
                place(i + 1)
                remaining[c] += 1

    place(0)
    return out


def _multiplicities(
    edges: Sequence[tuple[int, int]],
    capacity: list[int],
    extra: int,
    max_extra: int,
    carbon_types: tuple[list[int], tuple[int, int, int, int]] | None = None,
    ways: Sequence[Sequence[OrderWay]] | None = None,
) -> list[tuple[int, ...]]:
    """Bond orders (1 to 1 + max_extra) per edge using exactly ``extra`` orders above single, in
    the order of the search (collected in a list, cheaper than nested generators).
    ``carbon_types``: (the carbon vertices, carbons wanted with 3, 2, 1, 0 H); once a carbon's
    last edge is placed its H count is final, and a placement that gives more carbons of one H
    count than wanted is cut (hereditary: later edges never change a finished carbon).
    ``ways``: per kekule condition, the ways it can hold (:meth:`SkeletonTest.order_ways`); a
    placement after which some condition has no way left is cut (hereditary too: a way that
    fails on placed edges fails whatever follows). Every multigraph still goes through
    :meth:`SkeletonTest.kekule_ok`: this only saves the search below a cut."""
    m = len(edges)
    if ways and not all(ways):
        return []  # a condition with no way at all: no multigraph of this labelling meets it
    # each way dies at the placement that breaks it (an edge of a wrong order, or the last edge
    # of an atom's edges with none multiple), and a dead way stays dead below: per edge, the
    # tests of the ways its placement can break, and per condition its ways still alive
    tests: list[list[tuple[int, int, int | tuple[int, ...]]]] = [[] for _ in range(m)]
    alive: list[int] = []  # per condition
    way_condition: list[int] = []
    for c, condition in enumerate(ways or ()):
        alive.append(0)
        for fixed, multiple in condition:
            if any(not incident for incident in multiple):
                continue  # an atom with no edge to carry its multiple bond: never holds
            alive[c] += 1
            w = len(way_condition)
            way_condition.append(c)
            for e, o in fixed:
                tests[e].append((w, 0, o))
            for incident in multiple:
                tests[max(incident)].append((w, 1, tuple(incident)))
    dead = [False] * len(way_condition)
    broken = [alive.count(0)]  # conditions with no way alive

    def kill(i: int, killed: list[int]) -> None:
        """Mark the ways the placement of edge ``i`` breaks (recorded in ``killed``)."""
        for w, kind, need in tests[i]:
            if dead[w]:
                continue
            if kind == 0:
                holds = orders[i] == need
            else:
                assert isinstance(need, tuple)
                holds = any(orders[e] > 1 for e in need)
            if not holds:
                dead[w] = True
                killed.append(w)
                c = way_condition[w]
                alive[c] -= 1
                if alive[c] == 0:
                    broken[0] += 1

    def revive(killed: list[int]) -> None:
        for w in killed:
            dead[w] = False
            c = way_condition[w]
            if alive[c] == 0:
                broken[0] -= 1
            alive[c] += 1

    free = capacity[:]
    orders = [1] * m
    closing: list[list[int]] = [[] for _ in range(m)]  # carbons whose last edge is this one
    room = [0, 0, 0, 0]  # carbons still allowed with 3, 2, 1, 0 H
    if carbon_types is not None:
        carbons, types = carbon_types
        last: dict[int, int] = {}
        for i, (a, b) in enumerate(edges):
            last[a] = i
            last[b] = i
        for c in carbons:
            if c in last:
                closing[last[c]].append(c)
        room = list(types)
    track = carbon_types is not None

    def claim(carbons: Sequence[int], taken: list[int]) -> bool:
        """Give each finished carbon its H-count slot (recorded in ``taken`` for undoing);
        False as soon as one has no room left."""
        for c in carbons:
            h = free[c]
            slot = 3 - h if h <= 3 else -1
            if slot < 0 or room[slot] == 0:
                return False
            room[slot] -= 1
            taken.append(slot)
        return True

    def release(taken: list[int]) -> None:
        for slot in taken:
            room[slot] += 1

    out: list[tuple[int, ...]] = []

    def place(i: int, left: int) -> None:
        if left == 0:
            # every edge from i on stays single: the carbons they close are finished now
            taken: list[int] = []
            ok = not track or all(claim(closing[j], taken) for j in range(i, m))
            release(taken)
            if ok:
                out.append(tuple(orders))
            return
        if i == m:
            return
        if max_extra * (m - i) < left:
            return
        if broken[0]:
            return  # some condition has no way left after the last placement
        a, b = edges[i]
        top = min(max_extra, free[a], free[b], left)
        for x in range(top, -1, -1):
            if x:
                free[a] -= x
                free[b] -= x
                orders[i] = 1 + x
            done: list[int] = []
            killed: list[int] = []
            if tests[i]:
                kill(i, killed)
            if not track or claim(closing[i], done):
                place(i + 1, left - x)
            release(done)
            revive(killed)
            if x:
                free[a] += x
                free[b] += x
                orders[i] = 1

    place(0, extra)
    return out


def _certificate(
    n: int, edges: Sequence[tuple[int, int]], colouring: Sequence[int], orders: Sequence[int]
) -> tuple[tuple[int, ...], tuple[int, ...]]:
    """Canonical form of a labelled multigraph (fallback for skeletons with huge groups)."""
    import pynauty

    # layered encoding: bond order o in {1,2,3} as bits over two layers; colours by (label, layer)
    adjacency: dict[int, list[int]] = {i: [] for i in range(2 * n)}
    for i in range(n):
        adjacency[i].append(n + i)
    for (a, b), o in zip(edges, orders, strict=True):
        if o & 1:
            adjacency[a].append(b)
        if o & 2:
            adjacency[n + a].append(n + b)
    classes: dict[tuple[int, int], set[int]] = {}
    for i in range(n):
        classes.setdefault((0, colouring[i]), set()).add(i)
        classes.setdefault((1, colouring[i]), set()).add(n + i)
    graph = pynauty.Graph(
        2 * n, directed=False, adjacency_dict=adjacency, vertex_coloring=[classes[k] for k in sorted(classes)]
    )
    cert = pynauty.certificate(graph)
    return (tuple(sorted(colouring)), tuple(cert))
