"""The NMR knowledge tables: ``constraints/nmr13c.yaml`` and ``constraints/nmr1h.yaml``.

Both are additivity schemes: a base value for an environment plus one increment per
substituent and position. Substituents are named once, in the 13C table's ``substituents``
vocabulary (a SMARTS whose atom 0 is the substituent's first atom); every increment table keys
on those names, and :meth:`NmrTables.validate` checks that it does.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..case import CARBON_KINDS
from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import Located, as_bool, as_choice, as_list, as_number, as_str, mapping, read_yaml_file

__all__ = [
    "AlkeneScheme",
    "AssignmentCosts",
    "BaseValue",
    "Carbon13Tables",
    "GrantPaul",
    "Increments",
    "LindemanAdams",
    "NmrTables",
    "Proton1Tables",
    "default_nmr_tables",
    "load_nmr_tables",
]

ALKANE_SCHEMES = ("lindeman_adams", "grant_paul")
#: what a ring member other than an sp3 carbon can be (nmr13c.yaml alkane.ring_groups)
RING_CATEGORIES = ("carbonyl", "alkene", "arene", "oxygen", "nitrogen", "other")


@dataclass(frozen=True)
class BaseValue:
    """A shift for an environment matched by SMARTS (atom 0 the observed atom)."""

    name: str
    smarts: str
    shift: float
    uncertainty: float


@dataclass(frozen=True)
class Increments:
    """Increments per substituent name, one value per position, and what an unknown one gets."""

    groups: Mapping[str, tuple[float, ...]]
    unknown: tuple[float, ...]
    unknown_uncertainty: float

    def get(self, name: str) -> tuple[tuple[float, ...], bool]:
        """(increments, known) for a substituent name."""
        if name in self.groups:
            return self.groups[name], True
        return self.unknown, False


@dataclass(frozen=True)
class GrantPaul:
    base: float
    carbons: tuple[float, ...]  # per sp3 carbon 1..5 bonds out
    steric: tuple[tuple[float, ...], ...]  # [observed class][attached class], classes 1..4
    rings: Mapping[int, float]


@dataclass(frozen=True)
class LindemanAdams:
    base: tuple[float, ...]  # by the observed carbon's carbon neighbours 0..4
    attached: tuple[tuple[float, ...], ...]  # [s - 1][attached carbon's carbon neighbours - 2]
    gamma: tuple[float, ...]  # by s - 1
    delta: tuple[float, ...]
    rings: Mapping[int, float]


@dataclass(frozen=True)
class AlkeneScheme:
    base: float
    same_side: tuple[float, ...]
    other_side: tuple[float, ...]
    geminal_same: float
    geminal_other: float
    uncertainty: float
    ring_uncertainty: float
    enone_beta_alkyl: float  # the one cross term: an alkyl-bearing beta carbon of an enone


@dataclass(frozen=True)
class AssignmentCosts:
    """How an observed list is scored against predicted classes (nats)."""

    deviation_cap: float
    overlap: float
    extra_signal: float
    type_mismatch: float = 0.0
    integral_per_h: float = 0.0
    multiplicity_per_h: float = 0.0
    multiplicity_cap: float = 0.0


@dataclass(frozen=True)
class Carbon13Tables:
    regions: Mapping[str, tuple[float, float]]
    substituents: tuple[tuple[str, str], ...]  # (name, SMARTS), first match wins
    scheme: str
    grant_paul: GrantPaul
    lindeman_adams: LindemanAdams
    alkane_uncertainty: Mapping[str, float]
    alkane_ring_uncertainty: float
    alkane_bridged_uncertainty: float
    alkane_gamma_uncertainty: float
    alkane_group_uncertainty: float
    alkane_groups: Increments
    alkane_ring_groups: Increments  # by ring-member category, relative to the cycloalkane CH2
    alkane_beyond: Mapping[str, float]  # per sp3 carbon on an alpha group's first atom
    alkene: AlkeneScheme
    alkene_groups: Increments
    alkene_conjugating: frozenset[str]  # substituents that conjugate with the C=C
    alkene_conjugated_uncertainty: float
    benzene_base: float
    benzene_uncertainty: Mapping[str, float]
    benzene_substituent_uncertainty: float
    benzene_groups: Increments
    carbonyl: tuple[BaseValue, ...]
    special: tuple[BaseValue, ...]
    fallback: Mapping[str, tuple[float, float]]
    costs: AssignmentCosts


@dataclass(frozen=True)
class Proton1Tables:
    alkyl_base: Mapping[str, float]
    alkyl_ring: float
    alkyl_uncertainty: float
    alkyl_group_uncertainty: float
    alkyl_groups: Increments
    alkene_base: float
    alkene_uncertainty: float
    alkene_geometry_uncertainty: float
    alkene_groups: Increments
    benzene_base: float
    benzene_uncertainty: float
    benzene_substituent_uncertainty: float
    benzene_groups: Increments
    special: tuple[BaseValue, ...]
    fallback: Mapping[str, tuple[float, float]]
    exchangeable_couple: bool
    costs: AssignmentCosts


@dataclass(frozen=True, eq=False)
class NmrTables:
    c13: Carbon13Tables
    h1: Proton1Tables
    source: str = ""

    def validate(self) -> None:
        names = {name for name, _ in self.c13.substituents}
        extra = {"fused", "alkyl", "ring_alkyl"}
        for category in self.c13.alkane_ring_groups.groups:
            if category not in RING_CATEGORIES:
                raise ElucidateError(
                    f"{category!r} is not a ring-member category ({', '.join(RING_CATEGORIES)})",
                    key=f"alkane.ring_groups.groups.{category}",
                )
        for where, inc in (
            ("alkane.groups", self.c13.alkane_groups),
            ("alkene.groups", self.c13.alkene_groups),
            ("benzene.groups", self.c13.benzene_groups),
            ("alkyl.groups", self.h1.alkyl_groups),
            ("alkene.groups", self.h1.alkene_groups),
            ("benzene.groups", self.h1.benzene_groups),
        ):
            for name in inc.groups:
                if name not in names | extra:
                    raise ElucidateError(f"{name!r} is not a substituent of nmr13c.yaml", key=f"{where}.{name}")
        for name in self.c13.alkene_conjugating:
            if name not in names:
                raise ElucidateError(f"{name!r} is not a substituent of nmr13c.yaml", key="alkene.conjugating")
        for name in self.c13.alkane_beyond:
            if name not in names:
                raise ElucidateError(f"{name!r} is not a substituent of nmr13c.yaml", key=f"alkane.beyond.{name}")
        for kind in CARBON_KINDS:
            if kind not in self.c13.regions:
                raise ElucidateError(f"no shift window for the carbon kind {kind!r}", key="regions")
        for _, smarts in self.c13.substituents:
            compiled_smarts(smarts)
        for entry in (*self.c13.carbonyl, *self.c13.special, *self.h1.special):
            compiled_smarts(entry.smarts)
            if entry.uncertainty <= 0:
                raise ElucidateError(f"{entry.name}: an uncertainty must be above 0")


def _every(loc: Located, keys: Sequence[str]) -> dict[str, Located]:
    """A mapping that must hold every one of ``keys`` and nothing else."""
    return mapping(loc, keys, required=keys)


def _numbers(loc: Located, length: int | None = None, what: str = "a list of numbers") -> tuple[float, ...]:
    values = tuple(as_number(v, what="a number") for v in as_list(loc, what=what))
    if length is not None and len(values) != length:
        raise loc.error(f"expected {length} numbers, got {len(values)}")
    return values


def _increments(body: Mapping[str, Located], length: int, *, unknown_key: str = "unknown_group") -> Increments:
    groups_loc = body["groups"]
    groups = {
        str(k): _numbers(v, length)
        for k, v in mapping(groups_loc, list(groups_loc.value), what="increments by substituent").items()
    }
    unknown = _numbers(body[unknown_key], length)
    unc = (
        as_number(body["unknown_uncertainty"], minimum=0, what="an uncertainty")
        if "unknown_uncertainty" in body
        else 0.0
    )
    return Increments(groups, unknown, unc)


def _base_values(loc: Located) -> tuple[BaseValue, ...]:
    out = []
    for item in as_list(loc, what="a list of {name, smarts, shift, uncertainty}"):
        e = _every(item, ["name", "smarts", "shift", "uncertainty"])
        out.append(
            BaseValue(
                as_str(e["name"]),
                as_str(e["smarts"], what="a SMARTS pattern"),
                as_number(e["shift"], what="a shift in ppm"),
                as_number(e["uncertainty"], minimum=0, exclusive_minimum=True, what="an uncertainty above 0"),
            )
        )
    return tuple(out)


def _fallback(loc: Located, keys: list[str]) -> dict[str, tuple[float, float]]:
    body = _every(loc, keys)
    out = {}
    for k in keys:
        e = _every(body[k], ["shift", "uncertainty"])
        out[k] = (as_number(e["shift"]), as_number(e["uncertainty"], minimum=0, exclusive_minimum=True))
    return out


def _kinds(loc: Located, keys: list[str]) -> dict[str, float]:
    body = _every(loc, keys)
    return {k: as_number(body[k], minimum=0, what="an uncertainty of 0 or more") for k in keys}


def _carbon13(root: Located) -> tuple[Carbon13Tables, str]:
    top = [
        "source",
        "regions",
        "substituents",
        "alkane",
        "alkene",
        "benzene",
        "carbonyl",
        "special",
        "fallback",
        "scoring",
    ]
    body = mapping(root, top, required=top[1:])
    regions = {}
    for k, v in _every(body["regions"], list(CARBON_KINDS)).items():
        low, high = _numbers(v, 2)
        if low >= high:
            raise v.error(f"window {low}-{high}: the low end must be below the high end")
        regions[k] = (low, high)
    subs = []
    for item in as_list(body["substituents"]):
        e = _every(item, ["name", "smarts"])
        subs.append((as_str(e["name"]), as_str(e["smarts"], what="a SMARTS pattern")))
    akeys = [
        "scheme",
        "grant_paul",
        "lindeman_adams",
        "uncertainty",
        "ring_uncertainty",
        "bridged_uncertainty",
        "gamma_uncertainty",
        "group_uncertainty",
        "groups",
        "unknown_group",
        "unknown_uncertainty",
        "ring_groups",
        "beyond",
    ]
    alk = _every(body["alkane"], akeys)
    rg = mapping(
        alk["ring_groups"], ["groups", "unknown_group", "unknown_uncertainty"], required=["groups", "unknown_group"]
    )
    gp = _every(alk["grant_paul"], ["base", "carbons", "steric", "rings"])
    grant_paul = GrantPaul(
        as_number(gp["base"]),
        _numbers(gp["carbons"], 5),
        tuple(_numbers(row, 4) for row in as_list(gp["steric"])),
        _rings(gp["rings"]),
    )
    la = _every(alk["lindeman_adams"], ["base", "attached", "gamma", "delta", "rings"])
    lindeman_adams = LindemanAdams(
        _numbers(la["base"], 5),
        tuple(_numbers(row, 3) for row in as_list(la["attached"])),
        _numbers(la["gamma"], 4),
        _numbers(la["delta"], 4),
        _rings(la["rings"]),
    )
    if len(grant_paul.steric) != 4 or len(lindeman_adams.attached) != 4:
        raise alk["grant_paul"].error("the steric and attached tables need 4 rows each")
    ek = [
        "base",
        "same_side",
        "other_side",
        "geminal_same",
        "geminal_other",
        "uncertainty",
        "ring_uncertainty",
        "groups",
        "unknown_group",
        "conjugating",
        "conjugated_uncertainty",
        "enone_beta_alkyl",
    ]
    ene = _every(body["alkene"], ek)
    alkene = AlkeneScheme(
        as_number(ene["base"]),
        _numbers(ene["same_side"], 3),
        _numbers(ene["other_side"], 3),
        as_number(ene["geminal_same"]),
        as_number(ene["geminal_other"]),
        as_number(ene["uncertainty"], minimum=0, exclusive_minimum=True),
        as_number(ene["ring_uncertainty"], minimum=0),
        as_number(ene["enone_beta_alkyl"]),
    )
    bk = ["base", "uncertainty", "substituent_uncertainty", "groups", "unknown_group", "unknown_uncertainty"]
    ben = _every(body["benzene"], bk)
    table = Carbon13Tables(
        regions=regions,
        substituents=tuple(subs),
        scheme=as_choice(alk["scheme"], ALKANE_SCHEMES),
        grant_paul=grant_paul,
        lindeman_adams=lindeman_adams,
        alkane_uncertainty=_kinds(alk["uncertainty"], ["CH3", "CH2", "CH", "C"]),
        alkane_ring_uncertainty=as_number(alk["ring_uncertainty"], minimum=0),
        alkane_bridged_uncertainty=as_number(alk["bridged_uncertainty"], minimum=0),
        alkane_gamma_uncertainty=as_number(alk["gamma_uncertainty"], minimum=0),
        alkane_group_uncertainty=as_number(alk["group_uncertainty"], minimum=0),
        alkane_groups=_increments(alk, 4),
        alkane_ring_groups=_increments(rg, 3),
        alkane_beyond={
            str(k): as_number(v)
            for k, v in mapping(alk["beyond"], list(alk["beyond"].value), what="shifts by substituent").items()
        },
        alkene=alkene,
        alkene_groups=_increments(ene, 2),
        alkene_conjugating=frozenset(as_str(x) for x in as_list(ene["conjugating"])),
        alkene_conjugated_uncertainty=as_number(ene["conjugated_uncertainty"], minimum=0),
        benzene_base=as_number(ben["base"]),
        benzene_uncertainty=_kinds(ben["uncertainty"], ["CH", "C"]),
        benzene_substituent_uncertainty=as_number(ben["substituent_uncertainty"], minimum=0),
        benzene_groups=_increments(ben, 4),
        carbonyl=_base_values(body["carbonyl"]),
        special=_base_values(body["special"]),
        fallback=_fallback(body["fallback"], ["sp2", "sp", "sp3"]),
        costs=_costs(body["scoring"], ["deviation_cap", "type_mismatch", "overlap", "extra_signal"]),
    )
    return table, as_str(body["source"]) if "source" in body else ""


def _costs(loc: Located, keys: list[str]) -> AssignmentCosts:
    body = _every(loc, keys)
    return AssignmentCosts(**{k: as_number(body[k], minimum=0, what="a cost of 0 or more") for k in keys})


def _rings(loc: Located) -> dict[int, float]:
    if not isinstance(loc.value, dict):
        raise loc.error("expected a mapping of ring size to correction")
    out = {}
    for k, v in loc.value.items():
        if not isinstance(k, int) or not 3 <= k <= 12:
            raise v.error(f"expected a ring size 3-12 as the key, got {k!r}")
        out[k] = as_number(v, what="a correction in ppm")
    return out


def _proton1(root: Located) -> tuple[Proton1Tables, str]:
    top = ["source", "alkyl", "alkene", "benzene", "special", "fallback", "multiplicity", "scoring"]
    body = mapping(root, top, required=top[1:])
    ak = ["base", "ring", "uncertainty", "group_uncertainty", "groups", "unknown_group", "unknown_uncertainty"]
    alk = _every(body["alkyl"], ak)
    base_keys = ["CH3", "CH2", "CH"]
    base_body = _every(alk["base"], base_keys)
    ek = ["base", "uncertainty", "unknown_geometry_uncertainty", "groups", "unknown_group", "unknown_uncertainty"]
    ene = _every(body["alkene"], ek)
    bk = ["base", "uncertainty", "substituent_uncertainty", "groups", "unknown_group", "unknown_uncertainty"]
    ben = _every(body["benzene"], bk)
    mult = _every(body["multiplicity"], ["exchangeable_couple"])
    table = Proton1Tables(
        alkyl_base={k: as_number(base_body[k]) for k in base_keys},
        alkyl_ring=as_number(alk["ring"]),
        alkyl_uncertainty=as_number(alk["uncertainty"], minimum=0, exclusive_minimum=True),
        alkyl_group_uncertainty=as_number(alk["group_uncertainty"], minimum=0),
        alkyl_groups=_increments(alk, 2),
        alkene_base=as_number(ene["base"]),
        alkene_uncertainty=as_number(ene["uncertainty"], minimum=0, exclusive_minimum=True),
        alkene_geometry_uncertainty=as_number(ene["unknown_geometry_uncertainty"], minimum=0),
        alkene_groups=_increments(ene, 3),
        benzene_base=as_number(ben["base"]),
        benzene_uncertainty=as_number(ben["uncertainty"], minimum=0, exclusive_minimum=True),
        benzene_substituent_uncertainty=as_number(ben["substituent_uncertainty"], minimum=0),
        benzene_groups=_increments(ben, 3),
        special=_base_values(body["special"]),
        fallback=_fallback(body["fallback"], ["aromatic", "sp2", "sp3", "other"]),
        exchangeable_couple=as_bool(mult["exchangeable_couple"]),
        costs=_costs(
            body["scoring"],
            [
                "deviation_cap",
                "overlap",
                "extra_signal",
                "integral_per_h",
                "multiplicity_per_h",
                "multiplicity_cap",
            ],
        ),
    )
    return table, as_str(body["source"]) if "source" in body else ""


def load_nmr_tables(c13_path: str | Path | None = None, h1_path: str | Path | None = None) -> NmrTables:
    c13_root = read_yaml_file(Path(c13_path) if c13_path is not None else table_path("nmr13c.yaml"), table=True)
    h1_root = read_yaml_file(Path(h1_path) if h1_path is not None else table_path("nmr1h.yaml"), table=True)
    c13, c13_source = _carbon13(c13_root)
    h1, h1_source = _proton1(h1_root)
    tables = NmrTables(c13, h1, "; ".join(s for s in (c13_source, h1_source) if s))
    validated(tables, h1_root)  # the increment tables are checked against the 13C vocabulary
    return tables


@lru_cache(maxsize=1)
def default_nmr_tables() -> NmrTables:
    return load_nmr_tables()
