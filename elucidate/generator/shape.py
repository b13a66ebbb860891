"""What a structure's rings and multiple bonds are (:class:`RingShape`), read off an RDKit
molecule or, during generation, off a skeleton's rings and a structure's bond orders.

The shape holds only what does not depend on which smallest set of rings RDKit picks, where
several would do: the ring sizes of a minimum cycle basis (every minimum basis has the same
sizes, the cycle space being a matroid), the smallest ring through each bond and each atom (in
any minimum basis, the length of the shortest cycle through it: that cycle is a sum of basis
cycles no longer than itself, and one of them must pass through the bond or atom), and whether
a bond is in a ring (a bond on a cycle is on a basis cycle, the basis spanning every cycle). The
one fact that does depend on the pick, how many pairs of rings of at most four atoms share two
atoms, is read off the skeleton only when it has fewer than two such rings (then it is 0 for any
pick). A skeleton with two or more gets a *partial* shape (:attr:`RingShape.partial`): the ring
sizes of a minimum cycle basis (RDKit's set may hold more rings of those sizes), no fused pair
counted, and the multiple bonds as they are. Every term of the strain is 0 or more, so the
strain of the partial shape is at most the structure's: the solver bounds by it, and reads the
whole shape off the molecule when it needs it.

Generation reads the shape of a structure that cannot be aromatic (no aromatic ring to leave
out) and whose labels are elements in their usual valence, where only carbon can carry two
double bonds. ``tests/test_shape.py`` checks it against :func:`shape_of` on RDKit's reading of
the canonical SMILES of every structure of a corpus.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from .._mol import bonds_of

if TYPE_CHECKING:
    from .._rdkit import Mol
    from .readings import SkeletonView

__all__ = ["RingShape", "ShapePlan", "shape_of", "shape_plan"]

#: rings of at most this many atoms count as small for the fused-ring fact
SMALL_RING = 4

#: one double or triple bond: its order, the size of the smallest ring through it (0: not a ring
#: bond) and, for a bond in no ring, the smallest ring size at each end in a ring (ascending)
BondShape = tuple[int, int, tuple[int, ...]]


@dataclass(frozen=True)
class RingShape:
    """A structure's rings (those not wholly aromatic) and multiple bonds, in a canonical order."""

    rings: tuple[int, ...]  # the ring sizes of the smallest set of rings, ascending
    fused_small: int  # pairs of those rings of at most four atoms sharing two atoms or more
    bonds: tuple[BondShape, ...]  # each double or triple bond, sorted
    cumulated: int  # carbons with two double bonds or more
    #: only what every smallest set of rings RDKit may pick gives: ``rings`` those of a minimum
    #: cycle basis, ``fused_small`` 0 (generation, two small rings or more); the strain of a
    #: partial shape is at most the structure's
    partial: bool = False


def shape_of(mol: Mol) -> RingShape:
    """The shape RDKit's reading of ``mol`` gives (its smallest set of rings; a ring whose atoms
    are all aromatic is left out of ``rings`` and ``fused_small``; a bond's smallest ring may be
    aromatic)."""
    info = mol.GetRingInfo()
    rings = [ring for ring in info.AtomRings() if not all(mol.GetAtomWithIdx(i).GetIsAromatic() for i in ring)]
    small = [set(r) for r in rings if len(r) <= SMALL_RING]
    fused = sum(1 for i, first in enumerate(small) for second in small[i + 1 :] if len(first & second) >= 2)
    doubles: dict[int, int] = {}
    bonds: list[BondShape] = []
    for bond in bonds_of(mol):
        order = bond.GetBondTypeAsDouble()
        if order not in (2.0, 3.0):
            continue
        a, b = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if order == 2.0:
            doubles[a] = doubles.get(a, 0) + 1
            doubles[b] = doubles.get(b, 0) + 1
        if bond.IsInRing():
            size = min(len(r) for r in info.BondRings() if bond.GetIdx() in r)
            bonds.append((int(order), size, ()))
        else:
            ends = sorted(info.MinAtomRingSize(end) for end in (a, b) if info.NumAtomRings(end))
            bonds.append((int(order), 0, tuple(ends)))
    cumulated = sum(1 for i, k in doubles.items() if k >= 2 and mol.GetAtomWithIdx(i).GetAtomicNum() == 6)
    return RingShape(tuple(sorted(len(r) for r in rings)), fused, tuple(sorted(bonds)), cumulated)


@dataclass(frozen=True)
class ShapePlan:
    """One skeleton's ring facts, from which each structure's :class:`RingShape` follows from its
    bond orders alone."""

    rings: tuple[int, ...]  # ring sizes, ascending
    ends: tuple[tuple[int, int], ...]  # per edge: its two vertices
    ring_size: tuple[int, ...]  # per edge: the smallest ring through it (0: none)
    exo: tuple[tuple[int, ...], ...]  # per edge in no ring: the smallest ring size at each ring end
    partial: bool = False  # the shapes are partial (:attr:`RingShape.partial`)

    def shape(self, orders: Sequence[int]) -> RingShape:
        """The shape of the structure with these bond orders (one per edge). Only carbon can
        carry two double bonds here (every label in its usual valence)."""
        bonds: list[BondShape] = []
        doubles: dict[int, int] = {}
        for e, order in enumerate(orders):
            if order == 1:
                continue
            if order == 2:
                a, b = self.ends[e]
                doubles[a] = doubles.get(a, 0) + 1
                doubles[b] = doubles.get(b, 0) + 1
            size = self.ring_size[e]
            bonds.append((order, size, () if size else self.exo[e]))
        cumulated = sum(1 for k in doubles.values() if k >= 2)
        return RingShape(self.rings, 0, tuple(sorted(bonds)), cumulated, self.partial)


def shape_plan(view: SkeletonView) -> ShapePlan:
    """The :class:`ShapePlan` of a skeleton (RDKit's smallest set of rings, as the readings
    read it); partial when it has two rings of at most four atoms or more (which pairs of them
    RDKit's set holds may depend on the atom order)."""
    rings = view.rings
    partial = sum(1 for r in rings if len(r) <= SMALL_RING) >= 2
    ring_size = [0] * len(view.edges)
    if len(rings) == 1 and len(view.edges) == view.n:  # one cycle: every cycle edge is on it
        for e in view.cycle:
            ring_size[e] = len(rings[0])
    else:
        for ring in rings:
            for k, v in enumerate(ring):
                e = view.edge(v, ring[k - 1])  # atoms next to each other in a ring are bonded
                if not ring_size[e] or len(ring) < ring_size[e]:
                    ring_size[e] = len(ring)
    smallest = [view.smallest_ring(v) for v in range(view.n)]
    exo = tuple(
        tuple(sorted(smallest[v] for v in (a, b) if smallest[v])) if not ring_size[e] else ()
        for e, (a, b) in enumerate(view.edges)
    )
    sizes = _basis_sizes(view) if partial else tuple(sorted(len(r) for r in rings))
    return ShapePlan(sizes, view.edges, tuple(ring_size), exo, partial)


def _basis_sizes(view: SkeletonView) -> tuple[int, ...]:
    """The ring sizes of a minimum cycle basis, ascending: the rings of the skeleton's set taken
    shortest first while independent (each as the set of its edges, over GF(2)). The set holds a
    minimum basis (the smallest set of rings, with rings of equal size added), and the greedy
    choice on a matroid gives a basis of least weight, whose sizes every minimum basis shares."""
    rows: dict[int, int] = {}  # reduced edge sets by their highest edge
    sizes: list[int] = []
    for ring in sorted(view.rings, key=len):
        bits = 0
        for k, v in enumerate(ring):
            bits |= 1 << view.edge(v, ring[k - 1])
        while bits:
            top = bits.bit_length() - 1
            if top not in rows:
                rows[top] = bits
                sizes.append(len(ring))
                break
            bits ^= rows[top]
    return tuple(sizes)
