"""SMILES written from the skeleton itself, without building an RDKit molecule.

Every structure the generator yields is the one representative of its molecule: its skeleton
is the one member of its isomorphism class that canonical augmentation produces, numbered as
the generation tree numbers it (the path to a skeleton is its sequence of canonical deletions,
which depends on the skeleton alone, not on the formula's other atoms or the declared bounds),
and its labels and bond orders are the lexicographically smallest under the skeleton's
automorphisms. A SMILES string written from that numbering by a fixed rule is therefore a
canonical name of the molecule: the same molecule is written the same way in every run, on any
number of workers (tests/test_writer.py checks this across plans and partitions and against
RDKit's reading of every string).

The rule: a depth-first walk from the lowest-numbered vertex of smallest degree, neighbours in
increasing number; a back edge is a ring closure whose bond symbol is written where it opens;
at each atom the branches are written smallest subtree first, each in parentheses, and the
largest continues the chain. One template per skeleton (:class:`Template`) holds the walk; a structure fills in
its atom and bond tokens.

Aromatic compounds are left to RDKit: the default counting merges Kekulé forms, which needs
aromaticity perception. A structure can have an aromatic atom in RDKit's model only if some
ring of its skeleton consists of atoms that each carry a multiple bond or are not carbon (a
saturated carbon breaks every ring through it), and only if such a ring, or a fused system of
them, can hold 4N+2 pi electrons (:mod:`.aromatic`); :meth:`Template.may_be_aromatic` tests
both.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from functools import cache, cached_property

import numpy as np

from .aromatic import ring_may_be_aromatic

__all__ = ["Template", "atom_token"]

#: the SMILES organic subset and its default valences (OpenSMILES specification, 3.1.5)
_ORGANIC = {
    "B": (3,),
    "C": (4,),
    "N": (3, 5),
    "O": (2,),
    "P": (3, 5),
    "S": (2, 4, 6),
    "F": (1,),
    "Cl": (1,),
    "Br": (1,),
    "I": (1,),
}
_BOND = ("", "", "=", "#")


@cache
def atom_token(symbol: str, hydrogens: int, bond_sum: int) -> str:
    """The atom as SMILES writes it: the bare symbol when the organic subset's implicit
    hydrogens (the lowest default valence at or above the bond sum, less the bond sum) are its
    hydrogens, else in brackets with an explicit H count."""
    defaults = _ORGANIC.get(symbol)
    if defaults is not None:
        implicit = next((v - bond_sum for v in defaults if v >= bond_sum), 0)
        if implicit == hydrogens:
            return symbol
    h = "" if hydrogens == 0 else "H" if hydrogens == 1 else f"H{hydrogens}"
    return f"[{symbol}{h}]"


def _field(k: int) -> str:
    """The format field of token ``k``."""
    return "{" + str(k) + "}"


def _ring_label(number: int) -> str:
    return str(number) if number < 10 else f"%{number}"


class Template:
    """The walk over one skeleton, as a format string with one field per atom (0..n-1) and one
    per edge (n..n+m-1)."""

    def __init__(self, n: int, edges: Sequence[tuple[int, int]]) -> None:
        self.n = n
        self.edges = tuple(edges)
        adj: list[list[tuple[int, int]]] = [[] for _ in range(n)]
        for j, (a, b) in enumerate(self.edges):
            adj[a].append((b, j))
            adj[b].append((a, j))
        for row in adj:
            row.sort()
        # first pass: tree edges and ring closures of the depth-first walk from the lowest-numbered
        # vertex of smallest degree (a chain end where there is one, as chemists write)
        seen = [False] * n
        tree: list[list[tuple[int, int]]] = [[] for _ in range(n)]  # children with their edge
        closures: list[list[int]] = [[] for _ in range(n)]  # ring-closure edges at each atom
        used = [False] * len(self.edges)
        # the edges on a cycle (not bridges): every ring closure, and each tree edge below which
        # some ring closure reaches its upper end or higher (lowest discovery number reached)
        found = [0] * n
        cyclic: list[int] = []

        def visit(v: int, number: int) -> tuple[int, int]:
            seen[v] = True
            found[v] = low = number
            number += 1
            for w, j in adj[v]:
                if used[j]:
                    continue
                used[j] = True
                if seen[w]:
                    closures[v].append(j)
                    closures[w].append(j)
                    cyclic.append(j)
                    low = min(low, found[w])
                else:
                    tree[v].append((w, j))
                    below, number = visit(w, number)
                    if below <= found[v]:
                        cyclic.append(j)
                    low = min(low, below)
            return low, number

        root = min(range(n), key=lambda v: (len(adj[v]), v))
        visit(root, 0)
        # branches: smaller subtrees first, in parentheses; the largest continues the main chain
        size = [1] * n

        def weigh(v: int) -> int:
            for w, _ in tree[v]:
                size[v] += weigh(w)
            return size[v]

        weigh(root)
        for v in range(n):
            tree[v].sort(key=lambda item: (size[item[0]], item[0]))
        order: list[int] = []

        def walk(v: int) -> None:
            order.append(v)
            for w, _ in tree[v]:
                walk(w)

        walk(root)
        # a ring closure joins an atom to one of its ancestors in the walk, so it opens at the
        # atom written first and closes at the later one
        position = {v: i for i, v in enumerate(order)}
        for v in range(n):
            closures[v].sort(key=lambda j: position[self._other(j, v)])
        digits: dict[int, int] = {}
        free: list[int] = []
        top = 0

        # the walk as a sequence: a field number (an atom 0..n-1, an edge n..n+m-1) or a literal
        steps: list[int | str] = []

        def write(v: int) -> None:
            nonlocal top
            steps.append(v)
            closed: list[int] = []  # digits freed here are reused only after this atom
            for j in closures[v]:
                if j in digits:  # closing
                    d = digits.pop(j)
                    steps.append(_ring_label(d))
                    closed.append(d)
                else:
                    if free:
                        d = free.pop(0)
                    else:
                        top += 1
                        d = top
                    digits[j] = d
                    steps.extend((n + j, _ring_label(d)))
            free.extend(closed)
            free.sort()
            for k, (w, j) in enumerate(tree[v]):
                last = k == len(tree[v]) - 1
                steps.extend((n + j,) if last else ("(", n + j))
                write(w)
                if not last:
                    steps.append(")")

        write(root)
        self._steps = steps
        #: the edges on a cycle, by index, in increasing order
        self.cycle_edge_indices = tuple(sorted(cyclic))
        self._cycle_edges = tuple(self.edges[j] for j in self.cycle_edge_indices)
        self._on_cycle = [False] * len(self.edges)
        for j in self.cycle_edge_indices:
            self._on_cycle[j] = True
        self._degree = [len(row) for row in adj]

    @cached_property
    def format(self) -> Callable[..., str]:
        """The walk as a format string's ``format``: atom tokens, then bond tokens."""
        return "".join(_field(x) if isinstance(x, int) else x for x in self._steps).format

    @cached_property
    def program(self) -> np.ndarray:
        """The walk in the compiled core's form (:func:`.kernel.template_program` builds it
        there; this is the reference its tests compare with): a field number (atom 0..n-1, edge
        n..n+m-1) or a literal character as minus its code."""
        codes: list[int] = []
        for x in self._steps:
            if isinstance(x, int):
                codes.append(x)
            else:
                codes += [-ord(ch) for ch in x]
        return np.array(codes, dtype=np.int64)

    def _other(self, j: int, v: int) -> int:
        a, b = self.edges[j]
        return b if a == v else a

    def may_be_aromatic(
        self,
        elements: Sequence[str],
        bonds: Sequence[tuple[int, int, int]],
        hydrogens: Sequence[int],
        valences: Sequence[int],
    ) -> bool:
        """Whether RDKit's aromaticity model may call this structure (its bonds in the
        template's edge order) aromatic: first whether some cycle consists of atoms that each
        carry a multiple bond or are not carbon, then :func:`.aromatic.ring_may_be_aromatic`."""
        if not self._cycle_edges:
            return False
        degree = self._degree
        # an atom that could be aromatic: not carbon, or carrying a multiple bond
        able = [e != "C" or v - h > d for e, h, v, d in zip(elements, hydrogens, valences, degree, strict=True)]
        parent = list(range(self.n))

        def root(v: int) -> int:
            while parent[v] != v:
                parent[v] = parent[parent[v]]
                v = parent[v]
            return v

        for a, b in self._cycle_edges:
            if not (able[a] and able[b]):
                continue
            ra, rb = root(a), root(b)
            if ra == rb:
                return ring_may_be_aromatic(self.n, self.edges, self._on_cycle, [o for _, _, o in bonds], elements)
            parent[ra] = rb
        return False

    def write(self, elements: Sequence[str], bonds: Sequence[tuple[int, int, int]], hydrogens: Sequence[int]) -> str:
        """The SMILES of one structure on this skeleton (its bonds in the template's edge
        order)."""
        bond_sum = [0] * self.n
        for a, b, o in bonds:
            bond_sum[a] += o
            bond_sum[b] += o
        tokens = [atom_token(s, h, t) for s, h, t in zip(elements, hydrogens, bond_sum, strict=True)]
        tokens += [_BOND[o] for _, _, o in bonds]
        text: str = self.format(*tokens)
        return text
