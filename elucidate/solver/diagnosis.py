"""Why nothing survived: which constraint removed the last candidates, which declared constraints
alone leave nothing, and which pairs contradict each other."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from ..generator.selection import Selection
from .records import KeptFormula

__all__ = ["DIAGNOSIS_BUDGET", "why_empty"]

#: structures built at most per formula for one test of a constraint or pair (the test stops at
#: the first survivor; one that would need more is named as not decided)
DIAGNOSIS_BUDGET = 5_000


def why_empty(
    kept: Sequence[KeptFormula],
    removed: Mapping[str, int],
    selection: Selection,
    generated: int,
    hypotheses: Sequence[int],
    limit: int,
) -> tuple[str, ...]:
    """Lines explaining an empty shortlist. Each test of a constraint alone or of a pair stops at
    the first structure that survives it, and is left undecided past :data:`DIAGNOSIS_BUDGET`
    (or ``limit``, when lower) structures per formula."""
    from ..generator import GeneratorOptions, isomer_smiles
    from ..generator.tasks import TooManyStructures

    if not kept:
        return (
            "no formula survived the formula stage for molecular ion(s) "
            + ", ".join(map(str, hypotheses))
            + " (see `elucidate formulas` with --explain)",
        )
    if all(k.skipped for k in kept):
        return (
            (
                "no formula was enumerated: each is above the size limit or fits worse than one that is; "
                "declare the groups the advice above names, or raise --limit"
            ),
        )
    lines = [f"{k.formula} was not enumerated: {k.skipped}" for k in kept if k.skipped]
    last = [label for label, n in removed.items() if n]
    if last:
        lines.append("removed by: " + ", ".join(f"{label} ({removed[label]})" for label in last))
    declared = [("require", n) for n in selection.require] + [("forbid", n) for n in selection.forbid]
    declared += [("require_smarts", s) for s in selection.require_smarts]
    declared += [("forbid_smarts", s) for s in selection.forbid_smarts]
    if selection.count_test is not None:
        declared.append(("declared NMR counts", selection.count_test.label))
    formulas = [k.formula for k in kept if not k.skipped]
    bare = Selection(profile=selection.profile)
    budget = min(limit, DIAGNOSIS_BUDGET)
    undecided: list[str] = []

    def survivors(parts: Sequence[tuple[str, str]]) -> bool | None:
        """Whether any structure survives ``parts`` (None: not known within the limit)."""
        spec: dict[str, tuple[str, ...]] = {"require": (), "forbid": (), "require_smarts": (), "forbid_smarts": ()}
        for key, value in parts:
            if key in spec:
                spec[key] = spec[key] + (value,)
        sel = replace(
            bare,
            require=spec["require"],
            forbid=spec["forbid"],
            require_smarts=spec["require_smarts"],
            forbid_smarts=spec["forbid_smarts"],
            counts=selection.counts if any(key == "declared NMR counts" for key, _ in parts) else None,
        )
        try:
            return any(
                next(iter(isomer_smiles(f, GeneratorOptions(selection=sel), budget=budget)), None) for f in formulas
            )
        except TooManyStructures:
            return None

    alone = {d: survivors([d]) for d in declared}
    for d, n in alone.items():
        if n is False:
            lines.append(f"{d[0]} {d[1]} alone leaves no structure of {', '.join(map(str, formulas))}")
        elif n is None:
            undecided.append(f"{d[0]} {d[1]}")
    for i, a in enumerate(declared):
        for b in declared[i + 1 :]:
            if not (alone[a] and alone[b]):
                continue
            both = survivors([a, b])
            if both is False:
                lines.append(
                    f"{a[0]} {a[1]} and {b[0]} {b[1]} contradict each other for {', '.join(map(str, formulas))}"
                )
            elif both is None:
                undecided.append(f"{a[0]} {a[1]} with {b[0]} {b[1]}")
    if undecided:
        lines.append(
            f"not decided within {budget:,} structures per formula whether any structure passes: "
            + "; ".join(undecided)
        )
    if not lines:
        lines.append(
            f"all {generated} generated structures were removed by the plausibility profile {selection.profile!r}"
        )
    return tuple(lines)
