"""IR: the candidate's groups against the observed band list (``constraints/infrared.yaml``).

Score. Every band of every group the candidate has (that applies to it, see ``when``/``unless``)
is looked for in the band list within the table's tolerance; a missing band costs its strength's
weight, less when it is not a key band. Bands in the fingerprint region are only looked for
when the list reports that region at all. Every strong or medium observed band inside a
diagnostic region (``regions``: O-H/N-H, triple bonds, C=O) that no band of the candidate's
groups explains costs its weight too. Score = exp(-scale · cost).

The reading (:func:`read_bands`) is the tool's own view of the band list alone: groups whose key
bands are all present are indicated; groups with a strong key band inside a diagnostic region
but no observed band there are argued against (no band 1630-1870: no carbonyl), for the chemist
to copy into ``infrared.require`` / ``forbid`` after judging it.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Any, Literal

from ..case import Case, IRBand
from ..errors import ElucidateError
from ..formula_search.query import limits_for
from ..generator.counts import carbon_profile
from ..generator.groups import GroupTable, SearchSteps, default_groups, found_by
from ..generator.implication import Features
from ..generator.shape import RingShape
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import Located, as_bool, as_choice, as_list, as_number, as_str, mapping, read_yaml_file
from .base import Assessment, Perception, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Mol
    from ..formula import Formula

__all__ = [
    "Band",
    "IRReading",
    "IRTable",
    "Infrared",
    "Perceiver",
    "Region",
    "default_infrared",
    "load_infrared",
    "read_bands",
]

STRENGTHS = ("strong", "medium", "weak")


@dataclass(frozen=True)
class Band:
    """A characteristic IR band of a group."""

    low: float  # cm-1
    high: float
    strength: str
    key: bool  # practically always seen: its absence argues against the group
    mode: str
    when: tuple[str, ...] = ()  # SMARTS: the band applies only to molecules that match one
    unless: tuple[str, ...] = ()  # SMARTS: ... that match none
    shape: str | None = None  # usual shape: broad or sharp
    source: str = ""  # provenance for reviewers ("from memory"); never printed to users

    @property
    def conditional(self) -> bool:
        """Whether the band applies only to some molecules (``when`` or ``unless``)."""
        return bool(self.when or self.unless)

    def applies(self, mol: Mol, *, found: dict[str, bool] | None = None) -> bool:
        """Whether the band applies to ``mol``: it matches one pattern of ``when`` (when there
        are any) and none of ``unless``. ``found``: what earlier searches on the same molecule
        found, by SMARTS (bands of one group share patterns), filled in as patterns are
        searched; each pattern is searched at most once with it."""
        if self.when and not _matches_one(mol, self.when, found):
            return False
        return not (self.unless and _matches_one(mol, self.unless, found))


def _matches_one(mol: Mol, patterns: tuple[str, ...], found: dict[str, bool] | None) -> bool:
    """Whether ``mol`` matches one of the SMARTS ``patterns`` (in order, stopping at the first
    match), with ``found`` as in :meth:`Band.applies`."""
    for smarts in patterns:
        hit = found.get(smarts) if found is not None else None
        if hit is None:
            hit = bool(mol.HasSubstructMatch(compiled_smarts(smarts)))
            if found is not None:
                found[smarts] = hit
        if hit:
            return True
    return False


@dataclass(frozen=True)
class Region:
    """An IR region where a strong or medium band needs an explanation."""

    low: float
    high: float
    what: str


@dataclass(frozen=True, eq=False)
class IRTable:
    """The contents of ``infrared.yaml``: bands by group name, regions, scoring constants."""

    bands: Mapping[str, tuple[Band, ...]]
    regions: tuple[Region, ...]
    tolerance: float  # cm-1 outside a tabulated range that still counts as the band
    weights: Mapping[str, float]  # strength -> cost of a missing or unexplained band
    non_key_divisor: float
    scale: float
    fingerprint_below: float
    source: str = ""
    groups: GroupTable | None = None
    #: groups the reading indicates from a combination of bands (all present)
    patterns: Mapping[str, tuple[Band, ...]] = field(default_factory=dict)

    def of(self, group: str) -> tuple[Band, ...]:
        return self.bands.get(group, ())

    def validate(self) -> None:
        vocabulary = self.groups or default_groups()
        for name in self.patterns:
            if name not in vocabulary:
                raise ElucidateError(f"{name!r} is not a group of groups.yaml", key=f"reading_patterns.{name}")
        for name, bands in self.bands.items():
            if name not in vocabulary:
                raise ElucidateError(f"{name!r} is not a group of groups.yaml", key=f"bands.{name}")
            for i, band in enumerate(bands):
                if not 400 <= band.low < band.high <= 4000:
                    raise ElucidateError("a band needs 400 <= from < to <= 4000", key=f"bands.{name}[{i}]")
                for text in (*band.when, *band.unless):
                    try:
                        compiled_smarts(text)
                    except ElucidateError as exc:
                        raise ElucidateError(exc.message, key=f"bands.{name}[{i}]") from exc
        if set(self.weights) != set(STRENGTHS):
            raise ElucidateError(f"weights must name exactly: {', '.join(STRENGTHS)}", key="scoring.weights")


def _patterns(loc: Located) -> tuple[str, ...]:
    """A band condition: one SMARTS, or a list of them (any one matching)."""
    what = "a SMARTS pattern or a list of them"
    if isinstance(loc.value, list):
        patterns = tuple(as_str(item, what="a SMARTS pattern") for item in as_list(loc, what=what))
        if not patterns:
            raise loc.error(f"expected {what}; got an empty list")
        return patterns
    return (as_str(loc, what=what),)


def _band(loc: Located) -> Band:
    b = mapping(
        loc,
        ["from", "to", "strength", "key", "mode", "when", "unless", "shape", "source"],
        required=["from", "to", "strength", "mode"],
    )
    low = as_number(b["from"], minimum=400, maximum=4000, what="a wavenumber 400-4000")
    high = as_number(b["to"], minimum=400, maximum=4000, what="a wavenumber 400-4000")
    if high <= low:
        raise b["to"].error(f"expected a wavenumber above from ({low:g})")
    return Band(
        low,
        high,
        as_choice(b["strength"], STRENGTHS, what="one of"),
        as_bool(b["key"]) if "key" in b else False,
        as_str(b["mode"]),
        _patterns(b["when"]) if "when" in b else (),
        _patterns(b["unless"]) if "unless" in b else (),
        as_choice(b["shape"], ("broad", "sharp"), what="one of") if "shape" in b else None,
        as_str(b["source"]) if "source" in b else "",
    )


def load_infrared(path: str | Path | None = None, *, groups: GroupTable | None = None) -> IRTable:
    file = Path(path) if path is not None else table_path("infrared.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(
        document,
        ["source", "regions", "reading_patterns", "scoring", "bands"],
        required=["regions", "scoring", "bands"],
    )
    regions = []
    for item in as_list(root["regions"], what="a list of regions"):
        r = mapping(item, ["from", "to", "what"], required=["from", "to", "what"])
        low = as_number(r["from"], minimum=400, maximum=4000, what="a wavenumber 400-4000")
        high = as_number(r["to"], minimum=low, maximum=4000, what=f"a wavenumber {low:g}-4000")
        regions.append(Region(low, high, as_str(r["what"])))
    keys = ["source", "tolerance", "weights", "non_key_divisor", "scale", "fingerprint_below"]
    sc = mapping(root["scoring"], keys, required=keys[1:])
    weights = mapping(sc["weights"], list(STRENGTHS), required=list(STRENGTHS))
    body = root["bands"]
    if not isinstance(body.value, dict):
        raise body.error("expected a mapping of group names to band lists")
    bands = {
        str(name): tuple(_band(b) for b in as_list(loc, what="a list of bands")) for name, loc in body.value.items()
    }
    patterns: dict[str, tuple[Band, ...]] = {}
    if "reading_patterns" in root:
        ploc = root["reading_patterns"]
        if not isinstance(ploc.value, dict):
            raise ploc.error("expected a mapping of group names to band lists")
        patterns = {
            str(name): tuple(_band(b) for b in as_list(loc, what="a list of bands")) for name, loc in ploc.value.items()
        }
    table = IRTable(
        bands=bands,
        regions=tuple(regions),
        tolerance=as_number(sc["tolerance"], minimum=0, what="a tolerance in cm-1"),
        weights={k: as_number(weights[k], minimum=0, what="a cost of 0 or more") for k in STRENGTHS},
        non_key_divisor=as_number(sc["non_key_divisor"], minimum=1, what="a divisor of 1 or more"),
        scale=as_number(sc["scale"], minimum=0, exclusive_minimum=True, what="a positive scale"),
        fingerprint_below=as_number(sc["fingerprint_below"], minimum=400, maximum=4000, what="a wavenumber"),
        source=as_str(root["source"]) if "source" in root else "",
        groups=groups,
        patterns=patterns,
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_infrared() -> IRTable:
    return load_infrared()


def _found(band: Band, observed: Sequence[IRBand], table: IRTable, *, strict_shape: bool = False) -> IRBand | None:
    """The strongest observed band within the band's range (and not of the other shape; with
    ``strict_shape``, of the same shape when the table gives one, and inside the range itself:
    the reading does not stretch a range by the scoring tolerance, so C-H bends at 1465 / 1375
    are not read as a nitro group)."""
    tol = 0.0 if strict_shape else table.tolerance
    hits = [
        b
        for b in observed
        if band.low - tol <= b.at <= band.high + tol
        and (band.shape is None or b.shape == band.shape or (b.shape is None and not strict_shape))
    ]
    if not hits:
        return None
    medium = table.weights["medium"]
    return max(hits, key=lambda b: (table.weights.get(b.strength or "medium", medium), -b.at))


@dataclass(frozen=True)
class IRReading:
    indicated: tuple[tuple[str, str], ...]  # (group, evidence)
    against: tuple[tuple[str, str], ...]


def read_bands(
    observed: Sequence[IRBand],
    table: IRTable | None = None,
    *,
    groups: GroupTable | None = None,
    allowed: Mapping[str, tuple[int, int]] | None = None,
) -> IRReading:
    """The groups the band list alone indicates or argues against, in vocabulary order.
    ``allowed``: the case's element limits; a group needing an element (or more atoms of it)
    than they allow is never indicated."""
    t = table or default_infrared()
    vocabulary = groups or t.groups or default_groups()
    indicated, against = [], []
    for name in vocabulary.names:
        if allowed is not None and not _possible(vocabulary[name].elements, allowed):
            continue
        pattern = t.patterns.get(name, ())
        seen = [(b, _found(b, observed, t, strict_shape=True)) for b in pattern]
        if pattern and all(hit is not None for _, hit in seen):
            indicated.append((name, ", ".join(f"{hit.at:g} ({b.mode})" for b, hit in seen if hit is not None)))
        keys = _reading_bands(t.of(name))
        if not keys:
            continue
        hits = [(b, _found(b, observed, t, strict_shape=True)) for b in keys]
        if all(hit is not None for _, hit in hits) and name not in dict(indicated):
            where = ", ".join(f"{hit.at:g} ({b.mode})" for b, hit in hits if hit is not None)
            indicated.append((name, where))
        missing = [
            b
            for b in keys
            if b.strength == "strong"
            and _found(b, observed, t) is None
            and any(r.low <= b.low and b.high <= r.high for r in t.regions)
        ]
        if missing:
            b = missing[0]
            against.append((name, f"no band {b.low:g}-{b.high:g} ({b.mode})"))
    return IRReading(tuple(indicated), tuple(against))


def _possible(need: Mapping[int, int], allowed: Mapping[str, tuple[int, int]]) -> bool:
    from .._rdkit import Chem

    table = Chem.GetPeriodicTable()
    return all(allowed.get(table.GetElementSymbol(z), (0, 0))[1] >= n for z, n in need.items())


def _reading_bands(bands: Sequence[Band]) -> list[Band]:
    """The key bands a group shows whatever its context: the unconditional ones, and the
    conditional variants (saturated / conjugated / ring C=O ...) merged into one envelope."""
    plain = [b for b in bands if b.key and not b.conditional]
    variants = [b for b in bands if b.key and b.conditional]
    if variants:
        low, high = min(b.low for b in variants), max(b.high for b in variants)
        strength = "strong" if all(b.strength == "strong" for b in variants) else "medium"
        plain.append(Band(low, high, strength, True, variants[0].mode.split(",")[0]))
    return plain


class Infrared:
    """IR bands of the candidate's groups against the band list; declares the case's required
    and forbidden groups as hard constraints."""

    name = "infrared"
    weight_key = "infrared"
    label = "IR"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = "ir_reading"
    scoring_pass: int = 1
    cost: float = 60  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(self, table: IRTable | None = None) -> None:
        self.table = table or default_infrared()
        # the assessment depends only on the case and the bands that apply, which many
        # candidates share: kept per case, by the bands (positions in the table)
        self._case: Case | None = None
        self._known: dict[tuple[tuple[str, int], ...], Assessment] = {}
        # per set of groups: their bands as (group, position, band, whether it is conditional)
        self._listed: dict[tuple[str, ...], tuple[tuple[str, int, Band, bool], ...]] = {}

    def applies(self, case: Case) -> bool:
        return case.infrared is not None and bool(case.infrared.bands)

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        if case.infrared is None:
            return {}
        return {"require": case.infrared.require, "forbid": case.infrared.forbid}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        assert case.infrared is not None
        t = self.table
        if case is not self._case:
            self._case, self._known = case, {}
        groups = tuple(sorted(subject.groups))
        # the bands of these groups (found once per set of groups), each with whether it applies
        # only to some molecules: only those are tested on the molecule
        every = self._listed.get(groups)
        if every is None:
            every = self._listed[groups] = tuple(
                (name, k, band, band.conditional) for name in groups for k, band in enumerate(t.of(name))
            )
        seen = subject.seen
        if seen is not None:  # generation already found which conditional bands apply
            key = tuple((name, k) for name, k, _, conditional in every if not conditional or (name, k) in seen.bands)
        else:
            mol = subject.mol
            searched: dict[str, bool] = {}  # each band pattern searched once
            key = tuple(
                (name, k)
                for name, k, band, conditional in every
                if not conditional or band.applies(mol, found=searched)
            )
        known = self._known.get(key)
        if known is None:
            chosen = set(key)
            bands = [(name, band) for name, k, band, _ in every if (name, k) in chosen]
            known = self._known[key] = self._assess_bands(bands, case)
        return known

    def foresee(self, subject: Subject, case: Case) -> Assessment | None:
        """The assessment when generation perceived the groups and bands (``subject.seen``)."""
        return self.assess(subject, case) if subject.seen is not None else None

    def _assess_bands(self, bands: Sequence[tuple[str, Band]], case: Case) -> Assessment:
        """The assessment of a candidate whose groups give these ``bands``."""
        assert case.infrared is not None
        t = self.table
        observed = case.infrared.bands
        against = unexplained = 0.0  # costs before the table's scale
        matched: list[dict[str, object]] = []
        missing: list[str] = []
        fingerprint = any(b.at < t.fingerprint_below for b in observed)  # is that region reported at all?
        for name, band in bands:
            hit = _found(band, observed, t)
            if hit is None and band.high < t.fingerprint_below and not fingerprint:
                continue
            if hit is None and band.key:  # a key band of a group the candidate has: against
                against += t.weights[band.strength]
                missing.append(f"{name} {band.low:g}-{band.high:g}")
            elif hit is None:  # a non-key band: often weak, overlapped or not listed
                unexplained += t.weights[band.strength] / t.non_key_divisor
            else:
                matched.append({"group": name, "band": hit.at, "range": [band.low, band.high], "mode": band.mode})
        unexplained_bands: list[float] = []
        for ob in observed:
            strength = ob.strength or "medium"
            if strength == "weak":
                continue
            if not any(r.low <= ob.at <= r.high for r in t.regions):
                continue
            if any(b.low - t.tolerance <= ob.at <= b.high + t.tolerance for _, b in bands):
                continue
            # a strong band in a diagnostic region the candidate cannot give is against it; a
            # medium one may be an impurity, water or an overtone
            if strength == "strong":
                against += t.weights[strength]
            else:
                unexplained += t.weights[strength]
            unexplained_bands.append(ob.at)
        reasons = []
        if matched:
            names = sorted({str(m["group"]) for m in matched})
            reasons.append("IR bands fit " + ", ".join(names))
        if missing:
            reasons.append("IR: expected band missing: " + "; ".join(missing))
        if unexplained_bands:
            reasons.append("IR: unexplained band(s) at " + ", ".join(f"{x:g}" for x in unexplained_bands))
        detail = {"matched": matched, "missing": missing, "unexplained": unexplained_bands}
        return Assessment(self.name, t.scale * against, t.scale * unexplained, tuple(reasons), detail)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        lines = []
        for m in d["matched"]:
            lines.append(f"    IR  {m['band']:g} cm-1: {m['group']} ({m['mode']}, {m['range'][0]:g}-{m['range'][1]:g})")
        for text in d["missing"]:
            lines.append(f"    IR  missing: {text}")
        for x in d["unexplained"]:
            lines.append(f"    IR  {x:g} cm-1 not explained by this structure's groups")
        return lines

    def read(self, case: Case) -> Reading | None:
        if case.infrared is None or not case.infrared.bands:
            return None
        if case.formula.known is not None:
            allowed = {s: (n, n) for s, n in case.formula.known.counts}
        else:
            allowed = limits_for(case.formula.elements)
        r = read_bands(case.infrared.bands, self.table, allowed=allowed)
        lines = (
            "IR reading (the tool's, from the band list alone; judge before copying into require/forbid)",
            "  indicated: " + (", ".join(f"{g} [{w}]" for g, w in r.indicated) or "none"),
            "  argued against: " + (", ".join(f"{g} [{w}]" for g, w in r.against) or "none"),
        )
        data: dict[str, Any] = {"indicated": [g for g, _ in r.indicated], "argued_against": [g for g, _ in r.against]}
        return Reading("IR reading", lines, data)


@dataclass(frozen=True, eq=False)
class Perceiver:
    """What the IR technique reads off a candidate's molecule, found by generation while it
    holds the molecule (:class:`~elucidate.evidence.base.Perception`): the groups of ``groups``
    it has (``formula``: the candidates') and the conditional bands of ``table`` that apply;
    with the shape of its rings that generation read off the bond orders, for the strain
    technique. ``having`` and ``lacking``: groups every structure generated has and lacks (the
    case's required and forbidden groups), found without a search
    (:meth:`~elucidate.generator.groups.GroupTable.present`). ``carbons``: the carbons by kind
    and DEPT type are read too, for the NMR technique's estimate. Picklable, for generation's
    worker processes."""

    formula: Formula
    groups: GroupTable
    table: IRTable
    having: frozenset[str] = frozenset()
    lacking: frozenset[str] = frozenset()
    carbons: bool = False
    #: how the groups are searched, per kind of structure (features), found on first need
    _steps: dict[tuple[bool, bool, int, bool] | None, SearchSteps] = field(default_factory=dict, init=False, repr=False)

    @property
    def fingerprint(self) -> str:
        """SHA-256 of what decides a perception: the groups' SMARTS and, per group, the position
        and conditions of each conditional band (the candidate cache keeps perceptions by it)."""
        import hashlib
        import json

        bands = {
            name: [
                [k, list(band.when), list(band.unless)]
                for k, band in enumerate(self.table.of(name))
                if band.conditional
            ]
            for name in self.groups.names
        }
        decides: list[object] = [self.groups._smarts_by_name, bands]
        if self.carbons:  # a perceiver that reads no carbons keeps the fingerprint it had
            decides.append("carbons by kind and DEPT type")
        document = json.dumps(decides, sort_keys=True)
        return hashlib.sha256(document.encode("utf-8")).hexdigest()

    def __getstate__(self) -> dict[str, object]:
        return {k: v for k, v in self.__dict__.items() if k != "_steps"}  # patterns stay home

    def __setstate__(self, state: dict[str, object]) -> None:
        self.__dict__.update(state, _steps={})

    def __call__(self, mol: Mol, shape: RingShape | None = None, features: Features | None = None) -> Perception:
        """What ``mol`` shows, with ``shape`` (generation's reading of its rings, when made);
        ``features``: what the structure has, when known (groups it rules out are not
        searched: :meth:`~elucidate.generator.groups.GroupTable.search_steps`)."""
        key = None if features is None else features.kind
        steps = self._steps.get(key)
        if steps is None:
            steps = self._steps[key] = self.groups.search_steps(
                self.formula, having=self.having, lacking=self.lacking, features=features
            )
        found = found_by(mol, steps)
        searched: dict[str, bool] = {}  # each band pattern searched once
        bands = frozenset(
            (name, k)
            for name in found
            for k, band in enumerate(self.table.of(name))
            if band.conditional and band.applies(mol, found=searched)
        )
        return Perception(found, bands, shape, carbon_profile(mol) if self.carbons else None)
