"""13C and 1H shift prediction by published additivity schemes (``constraints/nmr13c.yaml``,
``constraints/nmr1h.yaml``), one prediction per symmetry class.

13C, per carbon, the first scheme that covers it:

* a carbonyl carbon: a base value per carbonyl kind;
* nitrile, alkyne, allene and heteroaromatic carbons: a base value per environment;
* a benzene carbon: 128.5 + the ipso/ortho/meta/para increments of every substituent on its
  ring (a fused aromatic ring counts as a substituent);
* an alkene carbon: 123.3 + increments for the sp3 carbons 1-3 bonds out on either side, the
  geminal corrections, and the increments of other substituents on either carbon;
* an sp3 carbon: the parent hydrocarbon (every functional group replaced by H) by Lindeman-
  Adams or Grant-Paul, a ring correction, then the alpha..delta increments of each functional
  group met walking out along sp3 carbons;
* otherwise a base value per hybridisation with a wide uncertainty.

1H, per H-bearing atom: aldehyde, exchangeable, alkyne and heteroaromatic H by base value;
H on sp3 carbon by base value per CH3/CH2/CH plus alpha and beta increments (Shoolery-type);
vinyl H by Pascual-Meier-Simon (gem, cis, trans; when the geometry is not fixed by the
constitution, the cis and trans terms are averaged and the uncertainty widened); aryl H by
7.27 + ortho/meta/para increments. Multiplicity: first order, the H on adjacent atoms (n + 1
lines). Constitution only: the two H of a CH2 beside a stereocentre are taken as equivalent,
and the two H of a terminal =CH2 are told apart only by their cis/trans relation.

Every prediction carries an uncertainty from the table that grows with what the scheme does not
cover (rings, crowded carbons, unknown substituents), so a poorly covered environment counts
less when scored.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache, cached_property, lru_cache
from typing import TYPE_CHECKING

from .._mol import atoms_of, bonds_of
from ..generator.implication import pattern_needs
from ..smarts import compiled_smarts
from .carbon13 import symmetry_ranks
from .nmr_tables import BaseValue, Increments, NmrTables, default_nmr_tables

if TYPE_CHECKING:
    from .._rdkit import Atom, Mol

__all__ = ["CarbonShift", "NmrPrediction", "ProtonShift", "predict_c13", "predict_h1", "predict_nmr"]

_TYPES = {3: "CH3", 2: "CH2", 1: "CH", 0: "C"}
_ALKYL_NAMES = ("methyl", "ch2", "ch", "cq", "ch2n")


@dataclass(frozen=True)
class CarbonShift:
    """The predicted 13C signal of one symmetry class."""

    atoms: tuple[int, ...]
    ppm: float
    uncertainty: float
    type: str  # CH3, CH2, CH, C
    environment: str

    @property
    def count(self) -> int:
        return len(self.atoms)


@dataclass(frozen=True)
class ProtonShift:
    """The predicted 1H signal of one class of equivalent hydrogens."""

    atoms: tuple[int, ...]  # the heavy atoms the H sit on
    hydrogens: int  # H in the class
    ppm: float
    uncertainty: float
    neighbours: int  # H on adjacent atoms that split it (first order)
    exchangeable: bool  # on O or N
    environment: str


class _Context:
    """One molecule's substituent classification, cached."""

    def __init__(self, mol: Mol, tables: NmrTables) -> None:
        self.mol = mol
        self.tables = tables
        self._names: dict[tuple[int, int], str] = {}
        self._starts: dict[str, frozenset[int]] = {}
        # substituent pattern -> its matches by first atom (searched on first need)
        self._by_first: dict[int, dict[int, list[tuple[int, ...]]]] = {}
        # RDKit's rings: each atom's smallest (0: none) and the ring bonds, atoms next to each
        # other in a ring being bonded by a bond of that ring (as MinAtomRingSize and IsInRing
        # read the same set)
        rings = mol.GetRingInfo().AtomRings()
        self.atom_rings = [set(r) for r in rings]
        self.ring_size = [0] * mol.GetNumAtoms()
        self.ring_bonds: set[tuple[int, int]] = set()
        for ring in rings:
            for k, a in enumerate(ring):
                if not self.ring_size[a] or len(ring) < self.ring_size[a]:
                    self.ring_size[a] = len(ring)
                b = ring[k - 1]
                self.ring_bonds.add((a, b) if a < b else (b, a))
        self._rings = rings
        atoms = self.atoms = atoms_of(mol)
        z = self.z = [a.GetAtomicNum() for a in atoms]
        hs = self.hs = [a.GetTotalNumHs() for a in atoms]
        self.arom = [a.GetIsAromatic() for a in atoms]
        self.element_count = Counter(z)
        #: (atomic number, atoms) pairs, sorted: what decides which patterns can match
        self.elements = tuple(sorted(self.element_count.items()))
        # the substituent patterns that can match here (none needs more atoms of an element than
        # the molecule has), each with its first query atom and whether it is that atom alone
        self._patterns = _applicable_patterns(tables, self.elements)
        # neighbours in bond order (the order GetNeighbors gives), from one pass over the bonds
        adj: list[list[int]] = [[] for _ in atoms]
        self.adj = adj
        self.double: set[tuple[int, int]] = set()
        for b in bonds_of(mol):
            i, j = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
            if z[j] != 1:
                adj[i].append(j)
            if z[i] != 1:
                adj[j].append(i)
            if b.GetBondTypeAsDouble() == 2:
                self.double.add((i, j) if i < j else (j, i))
        n = len(atoms)
        self.unsat = [4 - len(adj[i]) - hs[i] if z[i] == 6 else 0 for i in range(n)]
        self.sp3c = [z[i] == 6 and not self.arom[i] and self.unsat[i] == 0 for i in range(n)]
        # carbons bearing a terminal O (one neighbour, no H, no charge: a C=O)
        self.carbonyl_c = [False] * n
        for i in range(n):
            if z[i] == 8 and len(adj[i]) == 1 and hs[i] == 0 and not atoms[i].GetFormalCharge():
                c = adj[i][0]
                self.carbonyl_c[c] = z[c] == 6

    @cached_property
    def bridged(self) -> set[int]:
        """The atoms of bridged ring systems (two rings sharing three atoms or more)."""
        bridged: set[int] = set()
        for x, first in enumerate(self.atom_rings):
            for second in self.atom_rings[x + 1 :]:
                if len(first & second) >= 3:
                    bridged |= first | second
        return bridged

    @cached_property
    def benzene_rings(self) -> list[tuple[int, ...]]:
        """The six-membered rings of aromatic carbons."""
        return [r for r in self._rings if len(r) == 6 and all(self.arom[a] and self.z[a] == 6 for a in r)]

    def is_double(self, a: int, b: int) -> bool:
        return (min(a, b), max(a, b)) in self.double

    def in_ring(self, a: int, b: int) -> bool:
        return (min(a, b), max(a, b)) in self.ring_bonds

    def name(self, atom: int, seen_from: int) -> str:
        """The substituent kind starting at ``atom``, hanging on ``seen_from``: the first in table
        order with a match from ``atom`` that does not run through ``seen_from``. A pattern whose
        first query atom does not match ``atom`` is passed over without a search; a one-atom
        pattern whose atom matches is a match."""
        key = (atom, seen_from)
        found = self._names.get(key)
        if found is None:
            found = "other"
            here = self.atoms[atom]
            for k, (name, pattern, first, single) in enumerate(self._patterns):
                if first is not None:
                    if not first.Match(here):
                        continue
                    if single:
                        found = name
                        break
                if any(seen_from not in m[1:] for m in self._matches(k, pattern).get(atom, ())):
                    found = name
                    break
            self._names[key] = found
        return found

    def _matches(self, k: int, pattern: Mol) -> dict[int, list[tuple[int, ...]]]:
        """The matches of substituent pattern ``k`` by their first atom (searched once)."""
        found = self._by_first.get(k)
        if found is None:
            found = self._by_first[k] = {}
            for match in self.mol.GetSubstructMatches(pattern, uniquify=False):
                found.setdefault(match[0], []).append(match)
        return found

    def starts(self, smarts: str) -> frozenset[int]:
        """The atoms a SMARTS matches with its atom 0 (cached per molecule)."""
        found = self._starts.get(smarts)
        if found is None:
            matches = self.mol.GetSubstructMatches(compiled_smarts(smarts), uniquify=False)
            found = self._starts[smarts] = frozenset(m[0] for m in matches)
        return found

    def same_ring(self, a: int, b: int, c: int | None = None) -> bool:
        return any(a in r and b in r and (c is None or c in r) for r in self.atom_rings)


def _first_atom_query(pattern: Mol) -> Atom | None:
    """The pattern's atom 0 as a query an atom can be tested against alone; None when it holds
    a recursive SMARTS (which needs a search of the whole molecule)."""
    first = pattern.GetAtomWithIdx(0)
    return None if "$(" in first.GetSmarts() else first


@cache
def _query_summary(smarts: str) -> tuple[Atom | None, bool, tuple[tuple[int, int], ...]]:
    """A SMARTS's :func:`_first_atom_query`, whether the pattern is that one atom, and how many
    atoms of each element a match needs at least (:func:`~elucidate.generator.implication.pattern_needs`,
    as the generator's finished-molecule tests read it)."""
    pattern = compiled_smarts(smarts)
    return _first_atom_query(pattern), pattern.GetNumAtoms() == 1, pattern_needs(pattern).elements


@lru_cache(maxsize=8)
def _substituent_patterns(tables: NmrTables) -> tuple[tuple[str, str, Mol], ...]:
    """The substituent patterns in table order: name, SMARTS and the compiled pattern (the rest
    of what a test needs is :func:`_query_summary` of the SMARTS)."""
    return tuple((name, smarts, compiled_smarts(smarts)) for name, smarts in tables.c13.substituents)


@lru_cache(maxsize=64)
def _applicable_patterns(
    tables: NmrTables, elements: tuple[tuple[int, int], ...]
) -> list[tuple[str, Mol, Atom | None, bool]]:
    """The substituent patterns (name, pattern, first query atom, whether it is that atom
    alone) that a molecule with these (atomic number, atoms) counts can match: none needs more
    atoms of an element than it has. The same for every candidate of one formula."""
    have = dict(elements)
    return [
        (name, pattern, first, single)
        for name, smarts, pattern in _substituent_patterns(tables)
        for first, single, needs in (_query_summary(smarts),)
        if all(have.get(z, 0) >= k for z, k in needs)
    ]


@lru_cache(maxsize=256)
def _applicable_entries(
    entries: tuple[BaseValue, ...], elements: tuple[tuple[int, int], ...]
) -> list[tuple[BaseValue, Atom | None, bool]]:
    """The base-value entries (in table order) that a molecule with these (atomic number, atoms)
    counts can match, each with its SMARTS's first query atom and whether it is that atom alone
    (:func:`_query_summary`): the same for every candidate of one formula."""
    have = dict(elements)
    return [
        (entry, first, single)
        for entry in entries
        for first, single, needs in (_query_summary(entry.smarts),)
        if all(have.get(z, 0) >= k for z, k in needs)
    ]


def _first_match(ctx: _Context, atom: int, entries: tuple[BaseValue, ...]) -> BaseValue | None:
    """The first entry whose SMARTS matches with its atom 0 on ``atom``: searched (:meth:`_Context.starts`)
    only when the first query atom matches ``atom``; the entries whose SMARTS needs more atoms of
    an element than the molecule has are passed over, found once per formula."""
    here = ctx.atoms[atom]
    for entry, first, single in _applicable_entries(entries, ctx.elements):
        if first is not None:
            if not first.Match(here):
                continue
            if single:
                return entry
        if atom in ctx.starts(entry.smarts):
            return entry
    return None


# ------------------------------------------------------------------ 13C


def _ring_category(ctx: _Context, i: int) -> str:
    """What a non-sp3-carbon ring member is, for the in-ring increments."""
    z = ctx.z[i]
    if z == 8:
        return "oxygen"
    if z == 7:
        return "nitrogen"
    if z == 6 and ctx.carbonyl_c[i]:
        return "carbonyl"
    if z == 6 and ctx.arom[i]:
        return "arene"
    if z == 6:
        return "alkene"
    return "other"


def _alkyl_walk(
    ctx: _Context, start: int, blocked: set[int], depth: int, ring: frozenset[int] = frozenset()
) -> tuple[list[int], list[tuple[str, int]], list[tuple[str, int]]]:
    """From ``start`` outwards along sp3 carbons: sp3 carbons per distance 1..depth, the
    functional groups met (name, distance), and the members of ``ring`` (the rings of the
    observed carbon) that are not sp3 carbons, walked through as ring members of the parent
    cycloalkane (category, distance)."""
    sp3c, adj = ctx.sp3c, ctx.adj
    carbons = [0] * (depth + 1)
    groups: list[tuple[str, int]] = []
    in_ring: list[tuple[str, int]] = []
    dist = {start: 0, **dict.fromkeys(blocked, -1)}
    frontier = [start]
    while frontier:
        nxt = []
        for u in frontier:
            du = dist[u]
            if du >= depth:
                continue
            for v in adj[u]:
                if v in dist:
                    continue
                dist[v] = du + 1
                if sp3c[v]:
                    carbons[du + 1] += 1
                    nxt.append(v)
                elif v in ring and u in ring:
                    carbons[du + 1] += 1
                    in_ring.append((_ring_category(ctx, v), du + 1))
                    nxt.append(v)
                elif u != start and u in ring and not sp3c[u] and ctx.is_double(u, v):
                    continue  # the =O of a ring carbonyl, the =CH2 of a ring alkene: in its ring increments
                else:
                    groups.append((ctx.name(v, u), du + 1))
        frontier = nxt
    return carbons, groups, in_ring


def _sp3_shells(ctx: _Context, start: int, i: int, k: int) -> tuple[int, int]:
    """The sp3 carbons one and two bonds out from the sp3 carbon ``start`` on the C=C ``i``, ``k``,
    walking along sp3 carbons and not through ``i`` or ``k``: what :func:`_alkyl_walk` counts at
    distances 1 and 2, without naming the groups it meets."""
    sp3c, adj = ctx.sp3c, ctx.adj
    near = [v for v in adj[start] if sp3c[v] and v != i and v != k]
    seen = {start, i, k, *near}
    far = 0
    for u in near:
        for v in adj[u]:
            if v not in seen:
                seen.add(v)
                far += sp3c[v]
    return len(near), far


def _skeleton_neighbours(ctx: _Context, i: int, ring: frozenset[int]) -> int:
    """Carbon neighbours in the parent hydrocarbon: sp3 carbons and members of the observed
    carbon's rings."""
    inside = i in ring
    return sum(1 for n in ctx.adj[i] if ctx.sp3c[n] or (inside and n in ring))


def _beyond(ctx: _Context, i: int, name: str) -> int:
    """sp3 carbons on the first atom of each ``name`` group bonded to ``i`` (other than ``i``)."""
    count = 0
    for nb in ctx.adj[i]:
        if not ctx.sp3c[nb] and ctx.name(nb, i) == name:
            count += sum(1 for far in ctx.adj[nb] if far != i and ctx.sp3c[far])
    return count


def _sp3_carbon(ctx: _Context, i: int) -> tuple[float, float, str]:
    t = ctx.tables.c13
    ring = frozenset(a for r in ctx.atom_rings if i in r for a in r)
    carbons, groups, in_ring = _alkyl_walk(ctx, i, set(), 5, ring)
    attached = [n for n in ctx.adj[i] if ctx.sp3c[n] or n in ring]
    s = len(attached)
    if t.scheme == "lindeman_adams":
        la = t.lindeman_adams
        ppm = la.base[min(s, 4)]
        if s:
            for nb in attached:
                m = _skeleton_neighbours(ctx, nb, ring)
                if m >= 2:
                    ppm += la.attached[min(s, 4) - 1][min(m, 4) - 2]
            ppm += la.gamma[min(s, 4) - 1] * carbons[3] + la.delta[min(s, 4) - 1] * carbons[4]
        rings = la.rings
        scheme = "Lindeman-Adams"
    else:
        gp = t.grant_paul
        ppm = gp.base + sum(w * n for w, n in zip(gp.carbons, carbons[1:], strict=True))
        for nb in attached:
            m = _skeleton_neighbours(ctx, nb, ring)
            ppm += gp.steric[min(max(s, 1), 4) - 1][min(max(m, 1), 4) - 1]
        rings = gp.rings
        scheme = "Grant-Paul"
    unc = t.alkane_uncertainty[_TYPES.get(ctx.hs[i], "CH3")]
    size = ctx.ring_size[i]
    if size:
        ppm += rings.get(size, 0.0)
        unc += t.alkane_ring_uncertainty
    if i in ctx.bridged:
        unc += t.alkane_bridged_uncertainty
    unc += t.alkane_gamma_uncertainty * (carbons[3] + sum(1 for _, d in groups if d == 3))
    named = []
    for category, d in in_ring:
        if d > 3:
            continue
        inc, known = t.alkane_ring_groups.get(category)
        ppm += inc[d - 1]
        unc += t.alkane_group_uncertainty if known else t.alkane_ring_groups.unknown_uncertainty
        named.append(f"ring {category}")
    for name, d in groups:
        if d > 4:
            continue
        inc, known = t.alkane_groups.get(name)
        ppm += inc[d - 1]
        if d == 1 and name in t.alkane_beyond:
            ppm += t.alkane_beyond[name] * _beyond(ctx, i, name)
        if not known:
            unc += t.alkane_groups.unknown_uncertainty
        if d <= 2:
            unc += t.alkane_group_uncertainty
        named.append(name)
    env = f"sp3 ({scheme}" + (f"; {', '.join(sorted(set(named)))}" if named else "") + ")"
    return ppm, unc, env


def _benzene_carbon(
    ctx: _Context, i: int, ring: Sequence[int], increments: Increments, slot: int
) -> tuple[float, int, int]:
    """The summed increments of every substituent on ``ring`` for the ring atom ``i``
    (positions ipso..para from ``slot``: 0 for 13C, -1 for 1H which has no ipso), the count of
    substituents and of unknown ones."""
    p = ring.index(i)
    total, n, unknown = 0.0, 0, 0
    ring_set = set(ring)
    for k, j in enumerate(ring):
        offset = abs(k - p)
        position = min(offset, 6 - offset)
        for a in ctx.adj[j]:
            if a in ring_set:
                continue
            fused = ctx.in_ring(j, a) and ctx.arom[a] and ctx.same_ring(j, a)
            name = "fused" if fused else ctx.name(a, j)
            inc, known = increments.get(name)
            index = position + slot
            if index < 0:
                continue  # an H never sits ipso to a substituent
            total += inc[index]
            n += 1
            unknown += not known
    return total, n, unknown


def _alkene_carbon(ctx: _Context, i: int, k: int) -> tuple[float, float, str]:
    t = ctx.tables.c13
    a = t.alkene
    ppm = a.base
    unc = a.uncertainty
    conjugated = False
    own_alkyl = 0
    partner_carbonyl = False
    for side, (centre, partner) in enumerate(((i, k), (k, i))):
        weights = a.same_side if side == 0 else a.other_side
        alkyl = 0
        for j in ctx.adj[centre]:
            if j == partner:
                continue
            if ctx.sp3c[j]:
                alkyl += 1
                own_alkyl += side == 0
                near, far = _sp3_shells(ctx, j, i, k)
                ppm += weights[0] + weights[1] * near + weights[2] * far
            else:
                name = ctx.name(j, centre)
                inc, known = t.alkene_groups.get(name)
                ppm += inc[side]
                if not known:
                    unc += t.alkene_groups.unknown_uncertainty or 5.0
                elif name in t.alkene_conjugating:
                    conjugated = True
                if side == 1 and ctx.carbonyl_c[j]:
                    partner_carbonyl = True
        if alkyl >= 2:
            ppm += a.geminal_same if side == 0 else a.geminal_other
    if ctx.in_ring(i, k):
        unc += a.ring_uncertainty
    if conjugated:
        unc += t.alkene_conjugated_uncertainty
    if partner_carbonyl and own_alkyl:
        ppm += a.enone_beta_alkyl  # the beta carbon of an enone with an alkyl group on it
    return ppm, unc, "alkene C"


def _carbon(ctx: _Context, i: int) -> tuple[float, float, str]:
    t = ctx.tables.c13
    if ctx.carbonyl_c[i]:
        entry = _first_match(ctx, i, t.carbonyl)
        if entry is not None:
            return entry.shift, entry.uncertainty, f"carbonyl: {entry.name}"
    unsaturation = ctx.unsat[i]
    aromatic = ctx.arom[i]
    # the special base values cover aromatic and sp carbons only (nmr13c.yaml special)
    entry = _first_match(ctx, i, t.special) if aromatic or unsaturation >= 2 else None
    if entry is not None:
        return entry.shift, entry.uncertainty, entry.name
    if aromatic:
        for ring in ctx.benzene_rings:
            if i in ring:
                total, n, unknown = _benzene_carbon(ctx, i, ring, t.benzene_groups, 0)
                kind = "CH" if ctx.hs[i] else "C"
                unc = t.benzene_uncertainty[kind] + t.benzene_substituent_uncertainty * n
                unc += t.benzene_groups.unknown_uncertainty * unknown
                return t.benzene_base + total, unc, "benzene C"
        shift, unc = t.fallback["sp2"]
        return shift, unc, "aromatic C (no scheme)"
    if unsaturation == 0:
        return _sp3_carbon(ctx, i)
    if unsaturation == 1:
        for other in ctx.adj[i]:
            if ctx.z[other] == 6 and not ctx.arom[other] and ctx.is_double(i, other):
                return _alkene_carbon(ctx, i, other)
        shift, unc = t.fallback["sp2"]
        return shift, unc, "sp2 C (no scheme)"
    shift, unc = t.fallback["sp"]
    return shift, unc, "sp C (no scheme)"


class NmrPrediction:
    """One molecule's predicted 13C and 1H signals, each computed on first use; both share one
    pass over the molecule's substituents and its symmetry ranks (:func:`symmetry_ranks`, when
    known)."""

    def __init__(self, mol: Mol, tables: NmrTables | None = None, *, ranks: Sequence[int] | None = None) -> None:
        self._ctx = _Context(mol, tables or default_nmr_tables())
        self._ranks = symmetry_ranks(mol) if ranks is None else ranks
        self._c13: dict[int, CarbonShift] = {}

    @cached_property
    def c13_classes(self) -> list[tuple[tuple[int, ...], str]]:
        """The carbon symmetry classes in order of first atom, each with its DEPT type (known
        before any shift is predicted)."""
        return _c13_classes(self._ctx, self._ranks)

    def c13_class(self, k: int) -> CarbonShift:
        """The predicted 13C signal of class ``k`` of :attr:`c13_classes` (computed once)."""
        shift = self._c13.get(k)
        if shift is None:
            atoms, kind = self.c13_classes[k]
            shift = self._c13[k] = _c13_shift(self._ctx, atoms, kind)
        return shift

    @cached_property
    def c13(self) -> list[CarbonShift]:
        """One predicted 13C signal per carbon symmetry class, in order of first atom."""
        return [self.c13_class(k) for k in range(len(self.c13_classes))]

    @cached_property
    def h1(self) -> list[ProtonShift]:
        """One predicted 1H signal per class of equivalent hydrogens, in order of first atom."""
        return _predict_h1(self._ctx, self._ranks)


def predict_nmr(
    mol: Mol,
    tables: NmrTables | None = None,
    *,
    c13: bool = True,
    h1: bool = True,
    ranks: Sequence[int] | None = None,
) -> tuple[list[CarbonShift], list[ProtonShift]]:
    """The 13C and 1H predictions asked for (an empty list for the other), sharing one pass over
    the molecule's substituents and symmetry; ``ranks``: its :func:`symmetry_ranks`, when known."""
    prediction = NmrPrediction(mol, tables, ranks=ranks)
    return (prediction.c13 if c13 else []), (prediction.h1 if h1 else [])


def predict_c13(mol: Mol, tables: NmrTables | None = None) -> list[CarbonShift]:
    """One predicted 13C signal per carbon symmetry class, in order of first atom."""
    return _predict_c13(_Context(mol, tables or default_nmr_tables()), symmetry_ranks(mol))


def _predict_c13(ctx: _Context, ranks: Sequence[int]) -> list[CarbonShift]:
    return [_c13_shift(ctx, atoms, kind) for atoms, kind in _c13_classes(ctx, ranks)]


def _c13_classes(ctx: _Context, ranks: Sequence[int]) -> list[tuple[tuple[int, ...], str]]:
    """The carbon symmetry classes (atoms, DEPT type) in order of first atom."""
    members: dict[int, list[int]] = {}
    for atom in ctx.atoms:
        if atom.GetAtomicNum() == 6:
            members.setdefault(ranks[atom.GetIdx()], []).append(atom.GetIdx())
    return [(tuple(atoms), _TYPES.get(ctx.hs[atoms[0]], "CH3")) for atoms in sorted(members.values())]


def _c13_shift(ctx: _Context, atoms: tuple[int, ...], kind: str) -> CarbonShift:
    """The predicted signal of one class, from its first atom."""
    ppm, unc, env = _carbon(ctx, atoms[0])
    return CarbonShift(atoms, round(ppm, 2), round(unc, 2), kind, env)


# ------------------------------------------------------------------ 1H


def _alkene_h_name(ctx: _Context, j: int, centre: int, partner: int) -> str:
    name = ctx.name(j, centre)
    if name in _ALKYL_NAMES:
        return "ring_alkyl" if ctx.same_ring(j, centre, partner) else "alkyl"
    return name


def _proton_shifts(ctx: _Context, i: int, ranks: Sequence[int]) -> list[tuple[float, float, str, int | None]]:
    """Predictions for the H on atom ``i``: one entry, or for a =CH2 whose partner carries two
    different groups, two entries (shift, uncertainty, environment, which H: the index of the
    partner substituent it is cis to, or None)."""
    t = ctx.tables.h1
    z, unsaturation = ctx.z[i], ctx.unsat[i]
    # the special base values cover H on heteroatoms, aromatic atoms, carbonyl and sp carbons
    plain = z == 6 and not ctx.arom[i] and unsaturation <= 1 and not ctx.carbonyl_c[i]
    entry = None if plain else _first_match(ctx, i, t.special)
    if entry is not None:
        return [(entry.shift, entry.uncertainty, entry.name, None)]
    if z != 6:
        shift, unc = t.fallback["other"]
        return [(shift, unc, "H on heteroatom (no scheme)", None)]
    if ctx.arom[i]:
        for ring in ctx.benzene_rings:
            if i in ring:
                total, n, unknown = _benzene_carbon(ctx, i, ring, t.benzene_groups, -1)
                unc = t.benzene_uncertainty + t.benzene_substituent_uncertainty * n
                unc += t.benzene_groups.unknown_uncertainty * unknown
                return [(t.benzene_base + total, unc, "aryl H", None)]
        shift, unc = t.fallback["aromatic"]
        return [(shift, unc, "aromatic H (no scheme)", None)]
    if unsaturation == 0:
        h = ctx.hs[i]
        ppm = t.alkyl_base.get(_TYPES.get(h, "CH3"), t.alkyl_base["CH3"])
        unc = t.alkyl_uncertainty
        if ctx.ring_size[i] and h < 3:
            ppm += t.alkyl_ring
        for j in ctx.adj[i]:
            if ctx.sp3c[j]:
                for far in ctx.adj[j]:
                    if far == i or ctx.sp3c[far]:
                        continue
                    inc, known = t.alkyl_groups.get(ctx.name(far, j))
                    ppm += inc[1]
                    unc += 0.0 if known else t.alkyl_groups.unknown_uncertainty / 2
                continue
            inc, known = t.alkyl_groups.get(ctx.name(j, i))
            ppm += inc[0]
            unc += t.alkyl_group_uncertainty + (0.0 if known else t.alkyl_groups.unknown_uncertainty)
        return [(ppm, unc, "alkyl H", None)]
    if unsaturation == 1:
        k = next((j for j in ctx.adj[i] if ctx.z[j] == 6 and ctx.is_double(i, j)), None)
        if k is not None:
            base = t.alkene_base
            unc = t.alkene_uncertainty
            for j in ctx.adj[i]:
                if j != k:
                    inc, known = t.alkene_groups.get(_alkene_h_name(ctx, j, i, k))
                    base += inc[0]
                    unc += 0.0 if known else t.alkene_groups.unknown_uncertainty
            across = [j for j in ctx.adj[k] if j != i]
            terms = []
            for j in across:
                inc, known = t.alkene_groups.get(_alkene_h_name(ctx, j, k, i))
                unc += 0.0 if known else t.alkene_groups.unknown_uncertainty
                terms.append((inc[1], inc[2]))  # (cis, trans)
            symmetric = len(across) == 2 and ranks[across[0]] == ranks[across[1]]
            if ctx.hs[i] == 2 and across and not symmetric:
                # =CH2: one H cis to each partner substituent (the other H, or the second group)
                outs: list[tuple[float, float, str, int | None]] = []
                for slot in range(len(across) if len(across) == 2 else 2):
                    shift = base
                    for m, (cis, trans) in enumerate(terms):
                        shift += cis if m == slot else trans
                    outs.append((shift, unc, "vinyl H", slot))
                return outs
            shift = base + sum((cis + trans) / 2 for cis, trans in terms)
            if terms:
                unc += t.alkene_geometry_uncertainty
            return [(shift, unc, "vinyl H", None)]
    shift, unc = t.fallback["sp2"]
    return [(shift, unc, "H (no scheme)", None)]


def predict_h1(mol: Mol, tables: NmrTables | None = None) -> list[ProtonShift]:
    """One predicted 1H signal per class of equivalent hydrogens, in order of first atom."""
    return _predict_h1(_Context(mol, tables or default_nmr_tables()), symmetry_ranks(mol))


def _predict_h1(ctx: _Context, ranks: Sequence[int]) -> list[ProtonShift]:
    tab = ctx.tables
    members: dict[int, list[int]] = {}
    for i, z in enumerate(ctx.z):
        if z != 1 and ctx.hs[i]:
            members.setdefault(ranks[i], []).append(i)
    out = []
    for atoms in sorted(members.values()):
        first = atoms[0]
        exchangeable = ctx.z[first] in (7, 8)
        same = set(atoms)
        neighbours = 0
        if not exchangeable:
            for nb in ctx.adj[first]:
                if nb in same:
                    continue  # equivalent H do not split each other
                if ctx.z[nb] in (7, 8) and not tab.h1.exchangeable_couple:
                    continue
                neighbours += ctx.hs[nb]
        h = ctx.hs[first]
        shifts = _proton_shifts(ctx, atoms[0], ranks)
        if len(shifts) == 2:  # the two H of a =CH2 whose partner carries two different groups
            for ppm, unc, env, _ in shifts:
                out.append(ProtonShift(tuple(atoms), len(atoms), round(ppm, 2), round(unc, 2), neighbours, False, env))
            continue
        ppm, unc, env, _ = shifts[0]
        out.append(
            ProtonShift(tuple(atoms), h * len(atoms), round(ppm, 2), round(unc, 2), neighbours, exchangeable, env)
        )
    return out
