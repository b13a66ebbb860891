"""Plausibility rules read off a structure's element labels and bond orders, without RDKit.

On a structure that cannot be aromatic (no ring :meth:`~.writer.Template.may_be_aromatic`),
every atom is aliphatic, every bond is single, double or triple as written, and each atom's
hydrogens follow from its valence and its bond orders (this reading is used only where every
label is an element in its usual valence state). A rule's SMARTS then matches exactly when
some *clause* holds: a set of records ``0 v z`` (vertex v is element z) and ``1 e o`` (edge e
has order o), found once per skeleton from its graph and its rings. X and H in a pattern
become records too: a carbon with X3 and a double bond, for example, carries no other multiple
bond, so each of its other edges is single.

Ring facts (``r``, ``R``, ``@`` and the smallest set of rings Bredt's test reads) are RDKit's,
taken from RDKit's reading of the skeleton written by its template with every atom ``*``: the
same string, atom for atom and bond for bond, as the structure's own SMILES, so RDKit finds the
same rings as on the structure (its ring perception reads the graph alone: the string is read
unsanitized and its symmetrized smallest set of rings taken, the set sanitization keeps). A
skeleton with one cycle needs no reading: that cycle is its only ring.

A rule is read only when :data:`READERS` holds a reader for its exact SMARTS (or named test):
an edited rule falls back to RDKit's test until a reader is written for it. Each reader is
checked against RDKit's match on every structure of a corpus (tests/test_readings.py).

The generator tests the read rules first, before RDKit reads the string (the compiled core
drops such a structure without writing it), and leaves them out of the tests run on the
finished molecule; a structure that breaks several constraints is counted under the first
read rule it breaks.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from functools import cached_property, lru_cache
from typing import TypeAlias

from .plausibility import Rule, _short_bridgeheads
from .skeletons import adjacency_lists, in_two_core

__all__ = ["READERS", "Clause", "Readings", "SkeletonView", "clause_holds"]

#: a flat run of records: ``0 v z`` (vertex v is element z), ``1 e o`` (edge e has order o)
Clause: TypeAlias = "tuple[int, ...]"

#: smallest and largest ring size the "small ring" rules name (r3 .. r7)
_SMALL = (3, 7)


class SkeletonView:
    """What the readers need of one skeleton: neighbours with their edges, degrees, and RDKit's
    ring facts (read on first use, from the skeleton's 2-core: :func:`core_rings`). ``cycle``:
    the edges on a cycle (as :attr:`.writer.Template.cycle_edge_indices`)."""

    def __init__(self, n: int, edges: Sequence[tuple[int, int]], cycle: Sequence[int]) -> None:
        self.n = n
        self.edges = tuple(edges)
        self.cycle = tuple(cycle)  # the edges on a cycle (the template's)
        around: list[list[tuple[int, int]]] = [[] for _ in range(n)]
        for e, (a, b) in enumerate(self.edges):
            around[a].append((b, e))
            around[b].append((a, e))
        self.around = [tuple(row) for row in around]
        self.edge_of = {(min(a, b), max(a, b)): e for e, (a, b) in enumerate(self.edges)}
        #: atomic number -> its valence, and the atoms of it the formula holds (set by
        #: :meth:`Readings.clauses`)
        self.valence: Mapping[int, int] = {}
        self.atoms_of: Mapping[int, int] = {}
        self.widest = 0  # the largest of those valences

    def can(self, v: int, z: int) -> bool:
        """Whether element ``z`` may label ``v``: the formula holds it, and ``v`` has no more
        edges than its valence."""
        valence = self.valence.get(z)
        return valence is not None and len(self.around[v]) <= valence

    def takes(self, v: int, z: int, order: int) -> bool:
        """Whether ``v`` labelled ``z`` may hold a bond of ``order``: the formula holds ``z``
        and its valence has room for that bond beside ``v``'s other edges. A clause asking for
        a bond no labelling can give never holds, and is left out (the same outcome, fewer
        clauses for the compiled core to test)."""
        valence = self.valence.get(z)
        return valence is not None and len(self.around[v]) + order - 1 <= valence

    def takes_any(self, v: int, order: int) -> bool:
        """Whether some element of the formula labelling ``v`` may hold a bond of ``order``."""
        return len(self.around[v]) + order - 1 <= self.widest

    @property
    def cyclic(self) -> bool:
        return len(self.edges) >= self.n

    def edge(self, a: int, b: int) -> int:
        return self.edge_of[(min(a, b), max(a, b))]

    def single(self, v: int, *kept: int) -> list[int]:
        """Records that every edge of ``v`` but ``kept`` is single."""
        return [x for _, e in self.around[v] if e not in kept for x in (1, e, 1)]

    @cached_property
    def _rings(self) -> tuple[list[int], list[int], tuple[tuple[int, ...], ...]]:
        """Each vertex's smallest ring size and ring count, and the rings (as vertices)."""
        rings = self._one_ring() if len(self.edges) == self.n else core_rings(_two_core(self.n, self.edges))
        smallest = [0] * self.n
        count = [0] * self.n
        for ring in rings:
            size = len(ring)
            for v in ring:
                count[v] += 1
                least = smallest[v]
                if not least or size < least:
                    smallest[v] = size
        return smallest, count, rings

    @cached_property
    def hydroxyl_sites(self) -> list[tuple[list[int], list[int]]]:
        """Each hydroxyl O (one edge) on a carbon c1 bonded to a carbon c2, as the records of a
        clause before and after the order of the c1-c2 edge: ``0 o 8 0 c1 6 0 c2 6 1 e1 1 1
        e2`` and every other edge of c1 and c2 single (read once for the enol and ynol rules,
        after :meth:`Readings.clauses` set the valences)."""
        out = []
        for o in range(self.n):
            if len(self.around[o]) != 1 or not self.can(o, 8):
                continue
            ((c1, e1),) = self.around[o]
            if not self.can(c1, 6):
                continue
            for c2, e2 in self.around[c1]:
                if c2 == o or not self.can(c2, 6):
                    continue
                out.append(
                    ([0, o, 8, 0, c1, 6, 0, c2, 6, 1, e1, 1, 1, e2], [*self.single(c1, e1, e2), *self.single(c2, e2)])
                )
        return out

    def _one_ring(self) -> tuple[tuple[int, ...]]:
        """The rings of a connected skeleton with one cycle, without RDKit: its only ring is
        that cycle (the template's cycle edges), so every ring set holds it alone."""
        return (tuple(sorted({v for e in self.cycle for v in self.edges[e]})),)

    def smallest_ring(self, v: int) -> int:
        """RDKit's smallest ring size at ``v`` (``r``), 0 when not in a ring."""
        return self._rings[0][v] if self.cyclic else 0

    def ring_count(self, v: int) -> int:
        """How many of RDKit's smallest set of rings hold ``v`` (``R``)."""
        return self._rings[1][v] if self.cyclic else 0

    def in_ring(self, e: int) -> bool:
        """Whether edge ``e`` is a ring bond (``@``): an edge on a cycle (the template's), which
        is an edge of a ring of any set of rings spanning the cycles, RDKit's among them."""
        return e in self._on_cycle

    @cached_property
    def _on_cycle(self) -> frozenset[int]:
        return frozenset(self.cycle)

    @property
    def rings(self) -> tuple[tuple[int, ...], ...]:
        """RDKit's smallest set of rings, as vertices."""
        return self._rings[2] if self.cyclic else ()


def _two_core(n: int, edges: Sequence[tuple[int, int]]) -> tuple[tuple[int, int], ...]:
    """The edges of the 2-core: every cycle lies in it."""
    alive = in_two_core(adjacency_lists(n, edges))
    return tuple(e for e in edges if alive[e[0]] and alive[e[1]])


@lru_cache(maxsize=4096)
def core_rings(core: tuple[tuple[int, int], ...]) -> tuple[tuple[int, ...], ...]:
    """RDKit's symmetrized smallest set of rings of a ring system given as its labelled edges
    (a 2-core), as those labels: the rings of every skeleton with that 2-core (leaves close no
    ring). Many skeletons share one (a generation subtree keeps its parent's labels and adds
    leaves): the 15,023 skeletons of two rings or more the demo case cr-0702-k's C10H12O reads
    have 547 2-cores between them."""
    from .._rdkit import Chem

    labels = sorted({v for edge in core for v in edge})
    index = {v: i for i, v in enumerate(labels)}
    mol = Chem.RWMol()
    for _ in labels:
        mol.AddAtom(Chem.Atom(0))
    for a, b in core:
        mol.AddBond(index[a], index[b], Chem.BondType.SINGLE)
    Chem.GetSymmSSSR(mol)  # the symmetrized set, kept in the molecule's ring information
    return tuple(tuple(labels[i] for i in ring) for ring in mol.GetRingInfo().AtomRings())


def _small(size: int) -> bool:
    return _SMALL[0] <= size <= _SMALL[1]


#: a reader: the clauses of one rule on one skeleton (each a flat list of ``0 v z`` and ``1 e o``
#: records); it leaves out those with a vertex its element cannot label (:meth:`SkeletonView.can`)
#: or with more atoms of an element than the formula holds
Reader = Callable[[SkeletonView], list[list[int]]]


def _hydroxyl_on_multiple(view: SkeletonView, order: int) -> list[list[int]]:
    """A hydroxyl O (one single edge: X2, H1) on a carbon bonded with ``order`` to a carbon,
    each carbon with no other multiple bond (X3 with a double bond, X2 with a triple)."""
    room = view.valence.get(6, 0) - order + 1  # the edges a carbon with that bond may have
    around = view.around
    return [
        [*head, order, *tail]
        for head, tail in view.hydroxyl_sites
        if len(around[head[4]]) <= room and len(around[head[7]]) <= room
    ]


def _enol(view: SkeletonView) -> list[list[int]]:
    """``[OX2H1][CX3]=[CX3]``: a hydroxyl on a C=C carbon."""
    return _hydroxyl_on_multiple(view, 2)


def _ynol(view: SkeletonView) -> list[list[int]]:
    """``[OX2H1][CX2]#[CX2]``: a hydroxyl on a C#C carbon."""
    return _hydroxyl_on_multiple(view, 3)


def _gem_diol(view: SkeletonView) -> list[list[int]]:
    """``[OX2H1][CX4][OX2H1]``: a saturated carbon (X4: every edge single) holding two hydroxyl
    O (each with one edge)."""
    out: list[list[int]] = []
    if view.atoms_of.get(8, 0) < 2:
        return out
    for c in range(view.n):
        if not view.can(c, 6):
            continue
        ends = [o for o, _ in view.around[c] if len(view.around[o]) == 1 and view.can(o, 8)]
        for i, o1 in enumerate(ends):
            for o2 in ends[i + 1 :]:
                out.append([0, c, 6, 0, o1, 8, 0, o2, 8, *view.single(c)])
    return out


def _peroxide(view: SkeletonView) -> list[list[int]]:
    """``[OX2][OX2]``: two bonded O, every edge of each single (X2 for oxygen: no multiple
    bond; the bond between them single)."""
    if view.atoms_of.get(8, 0) < 2:
        return []
    return [
        [0, a, 8, 0, b, 8, *view.single(a), *view.single(b, e)]
        for e, (a, b) in enumerate(view.edges)
        if view.can(a, 8) and view.can(b, 8)
    ]


def _triple_in_small_ring(view: SkeletonView) -> list[list[int]]:
    """``[r3,r4,r5,r6,r7]#;@[r3,r4,r5,r6,r7]``: a triple ring bond between atoms whose smallest
    ring has 3 to 7 atoms."""
    return [
        [1, e, 3]
        for e, (a, b) in enumerate(view.edges)
        if view.takes_any(a, 3)
        and view.takes_any(b, 3)
        and view.in_ring(e)
        and _small(view.smallest_ring(a))
        and _small(view.smallest_ring(b))
    ]


def _allene_in_small_ring(view: SkeletonView) -> list[list[int]]:
    """``[CX2;r3,r4,r5,r6,r7](=*)=*``: a carbon of two edges, both double, whose smallest ring
    has 3 to 7 atoms (two double bonds fill a carbon: X2 means two edges)."""
    out = []
    for v in range(view.n):
        if len(view.around[v]) == 2 and view.can(v, 6):
            (w1, e1), (w2, e2) = view.around[v]
            if view.takes_any(w1, 2) and view.takes_any(w2, 2) and _small(view.smallest_ring(v)):
                out.append([0, v, 6, 1, e1, 2, 1, e2, 2])
    return out


def _bredt(view: SkeletonView) -> list[list[int]]:
    """Bredt's test (:func:`.plausibility.bridgehead_double_bond`) with no aromatic bond: a
    double bond from a bridgehead of a short bridged ring pair to its neighbour in the pair."""
    if len(view.edges) - view.n < 1:
        return []  # fewer than two rings
    return [
        [1, view.edge(a, b), 2]
        for a, partners in _short_bridgeheads(view.rings)
        if view.takes_any(a, 2)
        for b in partners
        if view.takes_any(b, 2)
    ]


def _fused_three_ring_alkene(view: SkeletonView) -> list[list[int]]:
    """``[CX3;R2;r3]=[#6,#7,#8]``: a carbon in two of the smallest set of rings, the smallest of
    three atoms, with a double bond to C, N or O and no other multiple bond (X3)."""
    out: list[list[int]] = []
    if all(len(ring) != 3 for ring in view.rings):
        return out  # no atom's smallest ring has three atoms
    for v in range(view.n):
        if not view.takes(v, 6, 2) or view.ring_count(v) != 2 or view.smallest_ring(v) != 3:
            continue
        for w, e in view.around[v]:
            for z in (6, 7, 8):
                if view.takes(w, z, 2):
                    out.append([0, v, 6, 1, e, 2, 0, w, z, *view.single(v, e)])
    return out


#: the hetero atom of an antiaromatic three-ring and the X it must show: every edge single for
#: each (N with X3, O and S with X2, in their usual valences)
_ANTIAROMATIC_HETERO = (7, 8, 16)


def _antiaromatic_three_ring(view: SkeletonView) -> list[list[int]]:
    """``[#7X3,#8X2,#16X2]1[#6]=[#6]1``: a three-ring of N, O or S (every edge of it single:
    X3 for N, X2 for O and S) and two carbons joined by a double bond."""
    if not view.cyclic:
        return []
    out = []
    for a in range(view.n):
        for b, _ in view.around[a]:
            if b <= a:
                continue
            for c, _ in view.around[b]:
                if c <= b or (min(a, c), max(a, c)) not in view.edge_of:
                    continue
                triangle = (a, b, c)
                for x in triangle:
                    c1, c2 = (y for y in triangle if y != x)
                    if not (view.takes(c1, 6, 2) and view.takes(c2, 6, 2)):
                        continue
                    for z in _ANTIAROMATIC_HETERO:
                        if view.can(x, z):
                            out.append([0, x, z, 0, c1, 6, 0, c2, 6, 1, view.edge(c1, c2), 2, *view.single(x)])
    return out


def _monosubstituted_diazene(view: SkeletonView) -> list[list[int]]:
    """``[NX2H1]=[NX2]``: an N of one edge (H1 with a double bond) doubly bonded to an N with
    no other multiple bond (X2)."""
    out: list[list[int]] = []
    if view.atoms_of.get(7, 0) < 2:
        return out
    for e, (a, b) in enumerate(view.edges):
        for n1, n2 in ((a, b), (b, a)):
            if len(view.around[n1]) == 1 and view.can(n1, 7) and view.takes(n2, 7, 2):
                out.append([0, n1, 7, 0, n2, 7, 1, e, 2, *view.single(n2, e)])
    return out


def _never(view: SkeletonView) -> list[list[int]]:
    """A rule that needs an aromatic atom: never on a structure that cannot be aromatic."""
    return []


#: readers by the rule's exact SMARTS, or by its named test (constraints/plausibility.yaml), each
#: with the bond orders above single its clauses need at least (a skeleton whose structures have
#: fewer, its rings having taken the formula's unsaturation, gets none of its clauses)
READERS: Mapping[str, tuple[Reader, int]] = {
    "[OX2H1][CX3]=[CX3]": (_enol, 1),
    "[OX2H1][CX2]#[CX2]": (_ynol, 2),
    "[OX2H1][CX4][OX2H1]": (_gem_diol, 0),
    "[OX2][OX2]": (_peroxide, 0),
    "[r3,r4,r5,r6,r7]#;@[r3,r4,r5,r6,r7]": (_triple_in_small_ring, 2),
    "[CX2;r3,r4,r5,r6,r7](=*)=*": (_allene_in_small_ring, 2),
    "bridgehead_double_bond": (_bredt, 1),
    "[CX3;R2;r3]=[#6,#7,#8]": (_fused_three_ring_alkene, 1),
    "[#7X3,#8X2,#16X2]1[#6]=[#6]1": (_antiaromatic_three_ring, 1),
    "[NX2H1]=[NX2]": (_monosubstituted_diazene, 1),
    "[a;r3]@[O,N,S,o,n,s;r3]": (_never, 0),
    "aromatic_atom_only_in_small_rings": (_never, 0),
}


def _reader(rule: Rule) -> tuple[Reader, int] | None:
    key = rule.smarts if rule.smarts is not None else rule.test
    return READERS.get(key) if key is not None else None


@dataclass(frozen=True)
class Readings:
    """The rules of a plausibility profile that are read off the bond orders (in the profile's
    order), with the atoms of each element a plan holds and each element's valence."""

    labels: tuple[str, ...]  # the read rules' constraint labels ("implausible <name>")
    readers: tuple[tuple[Reader, int], ...]  # each with the orders above single it needs
    atoms: Mapping[int, int]  # atomic number -> atoms of it in the formula
    valence: Mapping[int, int]  # atomic number -> its valence in the plan

    @classmethod
    def of(cls, rules: Sequence[Rule], atoms: Mapping[int, int], valence: Mapping[int, int]) -> Readings | None:
        """The read rules among ``rules`` (None when there is none)."""
        read = [(f"implausible {r.name}", reader) for r in rules if (reader := _reader(r)) is not None]
        if not read:
            return None
        return cls(tuple(label for label, _ in read), tuple(reader for _, reader in read), dict(atoms), dict(valence))

    def clauses(self, view: SkeletonView, *, extra: int) -> tuple[tuple[int, Clause], ...]:
        """Each read rule's clauses on the skeleton, as (rule index, records), rules in order; a
        structure breaks the first rule one of whose clauses holds. ``extra``: the bond orders
        above single of every structure on the skeleton (a rule needing more is left out)."""
        view.valence = self.valence
        view.atoms_of = self.atoms
        view.widest = max(self.valence.values(), default=0)
        out: list[tuple[int, Clause]] = []
        for k, (reader, least) in enumerate(self.readers):
            if least <= extra:
                out += [(k, clause) for clause in dict.fromkeys(map(tuple, reader(view)))]
        return tuple(out)


def clause_holds(clause: Clause, numbers: Sequence[int], orders: Sequence[int]) -> bool:
    """Whether every record of ``clause`` holds for these atomic numbers (per vertex) and bond
    orders (per edge)."""
    for k in range(0, len(clause), 3):
        kind, i, x = clause[k], clause[k + 1], clause[k + 2]
        if (numbers[i] if kind == 0 else orders[i]) != x:
            return False
    return True


def broken(clauses: Sequence[tuple[int, Clause]], numbers: Sequence[int], orders: Sequence[int]) -> int:
    """The index of the first read rule a structure breaks, or -1."""
    for k, clause in clauses:
        if clause_holds(clause, numbers, orders):
            return k
    return -1


def view_of(n: int, edges: Sequence[tuple[int, int]], cycle: Sequence[int]) -> SkeletonView:
    """The :class:`SkeletonView` of a skeleton with these cycle edges (as
    :attr:`.writer.Template.cycle_edge_indices`)."""
    return SkeletonView(n, edges, cycle)
