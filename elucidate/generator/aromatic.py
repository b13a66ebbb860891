"""Which structures RDKit's aromaticity model may call aromatic: the ones whose SMILES the
generator leaves to RDKit (Kekulé forms of an aromatic compound are merged there).

The test may say yes where RDKit says no (RDKit then decides), never the reverse. It rests on
the model as The RDKit Book states it ("The RDKit Aromaticity Model": a ring, or fused ring
system, is aromatic when it obeys the 4N+2 rule, the electrons counted by atom type and
environment) and on RDKit's own verdicts on small molecules (named below); tests/test_aromatic.py
and tests/test_writer.py check it against RDKit on every structure of several formulas and pin
those verdicts.

1. An aromatic ring's atoms are all candidates: not a saturated carbon, and not a carbon with
   two double bonds (RDKit calls none of C1=C=COC=C1, C1=C=CC=CC=1 and C1=C=CC=C1 aromatic,
   though such a carbon giving 0, 1 or 2 electrons would make the first, second or third so). A
   carbon with a triple bond is one (benzyne is aromatic in RDKit).
2. An aromatic ring's bonds lie on cycles. So every ring RDKit can call aromatic, and every fused
   system of them, lies in one component of the 2-core of the candidates' cycle edges.
3. A component that is one simple cycle is the only ring (and fused system) there can be, and
   it is aromatic only with 4N+2 pi electrons: where every atom's share is certain
   (:func:`share`), the sum decides. Any other component (fused or bridged rings, an uncertain
   share) may be aromatic. (Fused systems are left to RDKit on purpose: there RDKit counts some
   atoms by the ring system, e.g. the cyclopropene ring of 2-methyl-1-azatricyclo-octatriene
   systems, so no share is certain.)

The compiled core (:mod:`._compiled`) does the same in machine code.
"""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["ring_may_be_aromatic", "share"]


def share(
    v: int,
    edges: Sequence[tuple[int, int]],
    on_cycle: Sequence[bool],
    alive: Sequence[bool],
    orders: Sequence[int],
    elements: Sequence[str],
) -> int | None:
    """The pi electrons atom ``v`` gives the one ring whose edges are ``alive``, in RDKit's
    model, where that is certain, else None. The RDKit Book's table: c(a)a 1, n(a)a 1, An(a)a 2,
    o(a)a 2, O=c(a)a and N=c(a)a 0. So a carbon gives 1 for a double bond in the ring and 0 for
    one out of every ring to O or N; a nitrogen with single bonds only gives 2, one with a
    double bond and two neighbours 1; an oxygen with two single bonds 2. Read off RDKit's
    verdicts: a carbon with a double bond out of every ring to carbon gives 1 (methylene-
    cyclopropene, fulvene and heptafulvene are not aromatic, 3,4-dimethylenefuran is), and one
    with a triple bond in the ring 1 (benzyne is aromatic, cyclooctatrienyne is not). A double
    bond into another ring is not certain."""
    symbol = elements[v]
    incident = [e for e, (a, b) in enumerate(edges) if v in (a, b)]
    multiple = [e for e in incident if orders[e] > 1]
    if symbol == "C":
        if len(multiple) != 1:
            return None
        (e,) = multiple
        if orders[e] == 3 or alive[e]:
            return 1 if alive[e] else None
        if on_cycle[e]:
            return None
        a, b = edges[e]
        return {"N": 0, "O": 0, "C": 1}.get(elements[b if a == v else a])
    if symbol == "N":
        if not multiple:
            return 2
        return 1 if len(incident) == 2 and len(multiple) == 1 and orders[multiple[0]] == 2 else None
    if symbol == "O":
        return 2 if not multiple and len(incident) == 2 else None
    return None


def ring_may_be_aromatic(
    n: int, edges: Sequence[tuple[int, int]], on_cycle: Sequence[bool], orders: Sequence[int], elements: Sequence[str]
) -> bool:
    """Whether RDKit's aromaticity model may call some ring of this structure (a multigraph in
    Kekulé form: ``orders`` per edge, ``on_cycle`` whether each edge lies on a cycle) aromatic;
    False only where it certainly does not (see the module's text)."""
    multiple = [0] * n
    triple = [False] * n
    for (a, b), o in zip(edges, orders, strict=True):
        if o > 1:
            multiple[a] += 1
            multiple[b] += 1
        if o == 3:
            triple[a] = triple[b] = True
    candidate = [elements[v] != "C" or multiple[v] == 1 or triple[v] for v in range(n)]
    alive = [on_cycle[e] and candidate[a] and candidate[b] for e, (a, b) in enumerate(edges)]
    core_degree = [0] * n
    for e, (a, b) in enumerate(edges):
        if alive[e]:
            core_degree[a] += 1
            core_degree[b] += 1
    changed = True
    while changed:  # strip to the 2-core
        changed = False
        for e, (a, b) in enumerate(edges):
            if alive[e] and (core_degree[a] == 1 or core_degree[b] == 1):
                alive[e] = False
                core_degree[a] -= 1
                core_degree[b] -= 1
                changed = True
    done = [False] * n
    for s in range(n):
        if core_degree[s] == 0 or done[s]:
            continue
        done[s] = True
        queue, total = [s], 0
        for v in queue:
            if core_degree[v] != 2:
                return True  # fused or bridged rings: RDKit decides
            x = share(v, edges, on_cycle, alive, orders, elements)
            if x is None:
                return True
            total += x
            for e, (a, b) in enumerate(edges):
                if alive[e] and v in (a, b):
                    u = b if a == v else a
                    if not done[u]:
                        done[u] = True
                        queue.append(u)
        if total % 4 == 2:
            return True
    return False
