"""Why nothing survived: which constraint removed the last candidates, which declared constraints
alone leave nothing, and which pairs contradict each other."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from ..generator.selection import Selection
from .records import KeptFormula

__all__ = ["why_empty"]


def why_empty(
    kept: Sequence[KeptFormula],
    removed: Mapping[str, int],
    selection: Selection,
    generated: int,
    hypotheses: Sequence[int],
) -> tuple[str, ...]:
    """Lines explaining an empty shortlist."""
    from ..generator import GeneratorOptions, count_isomers

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

    def survivors(parts: Sequence[tuple[str, str]]) -> int:
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
        return sum(count_isomers(f, GeneratorOptions(selection=sel)) for f in formulas)

    alone = {d: survivors([d]) for d in declared}
    for d, n in alone.items():
        if n == 0:
            lines.append(f"{d[0]} {d[1]} alone leaves no structure of {', '.join(map(str, formulas))}")
    for i, a in enumerate(declared):
        for b in declared[i + 1 :]:
            if alone[a] and alone[b] and survivors([a, b]) == 0:
                lines.append(
                    f"{a[0]} {a[1]} and {b[0]} {b[1]} contradict each other for {', '.join(map(str, formulas))}"
                )
    if not lines:
        lines.append(
            f"all {generated} generated structures were removed by the plausibility profile {selection.profile!r}"
        )
    return tuple(lines)
