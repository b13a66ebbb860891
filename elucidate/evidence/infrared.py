"""IR: the candidate's groups against the observed band list (bands from ``constraints/groups.yaml``).

Score. Every band of every group the candidate has (that applies to it, see ``when``/``unless``)
is looked for in the band list within ``TOLERANCE`` cm-1; a missing band costs its weight
(strong 1, medium 0.6, weak 0.3), three times less when it is not a key band. Bands below 1500 cm-1
are only looked for when the list reports that region at all. Every strong or
medium observed band inside a diagnostic region (``ir_regions``: O-H/N-H, triple bonds, C=O)
that no band of the candidate's groups explains costs its weight too. Score = exp(-0.7 · cost).

The reading (:func:`read_bands`) is the tool's own view of the band list alone: groups whose key
bands are all present are indicated; groups with a strong key band inside a diagnostic region
but no observed band there are argued against (no band 1630-1870: no carbonyl), for the chemist to copy into
``infrared.require`` / ``forbid`` after judging it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from ..case import Case, IRBand
from ..groups import Band, GroupTable, default_groups
from .base import Assessment, Subject

__all__ = ["Infrared", "IRReading", "read_bands", "TOLERANCE"]

#: how far outside a tabulated range an observed band still counts as that band (cm-1)
TOLERANCE = 10.0
_WEIGHT = {"strong": 1.0, "medium": 0.6, "weak": 0.3}
_SCALE = 0.7


def _found(band: Band, observed: Sequence[IRBand], *, strict_shape: bool = False) -> IRBand | None:
    """The strongest observed band within the band's range (and not of the other shape; with
    ``strict_shape``, of the same shape when the table gives one)."""
    hits = [
        b
        for b in observed
        if band.low - TOLERANCE <= b.at <= band.high + TOLERANCE
        and (band.shape is None or b.shape == band.shape or (b.shape is None and not strict_shape))
    ]
    if not hits:
        return None
    return max(hits, key=lambda b: (_WEIGHT.get(b.strength or "medium", 0.6), -b.at))


@dataclass(frozen=True)
class IRReading:
    indicated: tuple[tuple[str, str], ...]  # (group, evidence)
    against: tuple[tuple[str, str], ...]


def read_bands(observed: Sequence[IRBand], groups: GroupTable | None = None) -> IRReading:
    g = groups or default_groups()
    indicated, against = [], []
    for name in g.names:
        keys = _reading_bands(g[name].ir)
        if not keys:
            continue
        hits = [(b, _found(b, observed, strict_shape=True)) for b in keys]
        if all(hit is not None for _, hit in hits):
            where = ", ".join(f"{hit.at:g} ({b.mode})" for b, hit in hits if hit is not None)
            indicated.append((name, where))
        missing = [
            b
            for b in keys
            if b.strength == "strong"
            and _found(b, observed) is None
            and any(r.low <= b.low and b.high <= r.high for r in g.ir_regions)
        ]
        if missing:
            b = missing[0]
            against.append((name, f"no band {b.low:g}-{b.high:g} ({b.mode})"))
    return IRReading(tuple(indicated), tuple(against))


def _reading_bands(bands: Sequence[Band]) -> list[Band]:
    """The key bands a group shows whatever its context: the unconditional ones, and the
    conditional variants (saturated / conjugated / ring C=O ...) merged into one envelope."""
    plain = [b for b in bands if b.key and b.when is None and b.unless is None]
    variants = [b for b in bands if b.key and (b.when is not None or b.unless is not None)]
    if variants:
        low, high = min(b.low for b in variants), max(b.high for b in variants)
        strength = "strong" if all(b.strength == "strong" for b in variants) else "medium"
        plain.append(Band(low, high, strength, True, variants[0].mode.split(",")[0]))
    return plain


class Infrared:
    name = "infrared"

    def __init__(self, groups: GroupTable | None = None) -> None:
        self.groups = groups or default_groups()

    def applies(self, case: Case) -> bool:
        return case.infrared is not None and bool(case.infrared.bands)

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        if case.infrared is None:
            return {}
        return {"require": case.infrared.require, "forbid": case.infrared.forbid}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        assert case.infrared is not None
        observed = case.infrared.bands
        cost = 0.0
        matched: list[dict[str, object]] = []
        missing: list[str] = []
        bands: list[tuple[str, Band]] = []
        for name in sorted(subject.groups):
            for band in self.groups[name].ir:
                if band.applies(subject.mol):
                    bands.append((name, band))
        fingerprint = any(b.at < 1500 for b in observed)  # is the region below 1500 reported at all?
        for name, band in bands:
            hit = _found(band, observed)
            if hit is None and band.high < 1500 and not fingerprint:
                continue
            if hit is None:
                cost += _WEIGHT[band.strength] * (1.0 if band.key else 1 / 3)
                if band.key:
                    missing.append(f"{name} {band.low:g}-{band.high:g}")
            else:
                matched.append({"group": name, "band": hit.at, "range": [band.low, band.high], "mode": band.mode})
        unexplained = []
        for ob in observed:
            strength = ob.strength or "medium"
            if strength == "weak":
                continue
            if not any(r.low <= ob.at <= r.high for r in self.groups.ir_regions):
                continue
            if any(b.low - TOLERANCE <= ob.at <= b.high + TOLERANCE for _, b in bands):
                continue
            cost += _WEIGHT[strength]
            unexplained.append(ob.at)
        reasons = []
        if matched:
            names = sorted({str(m["group"]) for m in matched})
            reasons.append("IR bands fit " + ", ".join(names))
        if missing:
            reasons.append("IR: expected band missing: " + "; ".join(missing))
        if unexplained:
            reasons.append("IR: unexplained band(s) at " + ", ".join(f"{x:g}" for x in unexplained))
        detail = {"matched": matched, "missing": missing, "unexplained": unexplained}
        return Assessment(self.name, math.exp(-_SCALE * cost), tuple(reasons), detail)
