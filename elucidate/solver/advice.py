"""Advice for a formula whose structure space is too large to enumerate: which single declared
group would bring it under the limit, from Knuth estimates of the space with that group."""

from __future__ import annotations

from dataclasses import replace

from ..formula import Formula
from ..generator.groups import GroupTable, could_hold
from ..generator.options import GeneratorOptions

__all__ = [
    "ADVICE_BATCHES",
    "ADVICE_PROBES",
    "ADVISED_FORMULAS",
    "could_hold",
    "group_estimates",
    "size_advice",
]

#: Knuth walks per batch and batches at most per group estimate: a quick look (at most 64
#: walks), not the estimate the limit is checked with; a group whose walks all dead-end reads 0
#: and is not named (aromatic rings in highly unsaturated formulas, often)
ADVICE_PROBES = 16
ADVICE_BATCHES = 4
#: skipped formulas that get per-group advice (the best-fitting ones; each costs about a second)
ADVISED_FORMULAS = 2
#: groups named in the advice at most
ADVICE_SHOWN = 4


def group_estimates(formula: Formula, options: GeneratorOptions, groups: GroupTable) -> list[tuple[str, float]]:
    """The estimated structure space of ``formula`` with each group of the vocabulary that is not
    yet required or forbidden added to the required ones, smallest first (groups the formula
    cannot hold, estimated 0, are left out)."""
    from ..generator import estimate_structures
    from ..generator.estimate import Listed
    from ..generator.selection import Selection

    sel = options.selection or Selection()
    taken = set(sel.require) | set(sel.forbid)
    out = []
    listed: Listed = {}  # the groups' trees share shapes: each node's children listed once
    for name in groups.names:
        if name in taken or not could_hold(groups[name].smarts, formula):
            continue
        trial = replace(options, selection=replace(sel, require=(*sel.require, name)))
        size = estimate_structures(formula, trial, probes=ADVICE_PROBES, batches=ADVICE_BATCHES, listed=listed)
        if size > 0:
            out.append((name, size))
    out.sort(key=lambda item: (item[1], item[0]))
    return out


def size_advice(formula: Formula, options: GeneratorOptions, groups: GroupTable, limit: int) -> str:
    """One sentence: the groups whose declaration (``infrared.require``) would bring the space
    under ``limit``, or the smallest spaces one group leaves when none does."""
    sizes = group_estimates(formula, options, groups)
    under = [(n, s) for n, s in sizes if s <= limit]
    if under:
        shown = ", ".join(f"{n} (about {s:,.0f})" for n, s in under[:ADVICE_SHOWN])
        return f"requiring one of these groups would bring it under the limit: {shown}"
    if sizes:
        shown = ", ".join(f"{n} (about {s:,.0f})" for n, s in sizes[:ADVICE_SHOWN])
        return f"no single group brings it under the limit; the smallest spaces: {shown}: declare two or more groups"
    return "declare groups (infrared.require / forbid) or raise --limit"
