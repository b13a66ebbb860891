"""The functional-group vocabulary (``constraints/groups.yaml``): names, SMARTS, definitions."""

from __future__ import annotations

import difflib
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from .errors import ElucidateError
from .patterns import compiled_smarts
from .tables import table_path
from .yamlnodes import as_bool, as_choice, as_int, as_list, as_number, as_str, mapping, read_yaml_file

__all__ = ["Band", "Region", "Group", "GroupTable", "load_groups", "default_groups", "min_pi_bonds", "PI_CLASSES"]

_NAME = re.compile(r"^[a-z][a-z0-9_]*$")
_ELEMENT = re.compile(r"#\d+")

#: classes of π bonds (see groups.yaml and :func:`min_pi_bonds`)
PI_CLASSES = ("aromatic", "aliphatic", "carbon", "hetero")


STRENGTHS = ("strong", "medium", "weak")


@dataclass(frozen=True)
class Band:
    """A characteristic IR band of a group (groups.yaml ``ir``)."""

    low: float  # cm-1
    high: float
    strength: str
    key: bool  # practically always seen: its absence argues against the group
    mode: str
    when: str | None = None  # SMARTS: the band applies only to molecules that match
    unless: str | None = None  # SMARTS: ... that do not match
    shape: str | None = None  # usual shape: broad or sharp

    def applies(self, mol: Any) -> bool:
        if self.when is not None and not mol.HasSubstructMatch(compiled_smarts(self.when)):
            return False
        return self.unless is None or not mol.HasSubstructMatch(compiled_smarts(self.unless))


@dataclass(frozen=True)
class Region:
    """An IR region where a strong or medium band needs an explanation (groups.yaml ``ir_regions``)."""

    low: float
    high: float
    what: str


@dataclass(frozen=True)
class Group:
    name: str
    smarts: str
    definition: str
    source: str
    skeleton: str | None = None  # necessary condition on the labelled skeleton (see groups.yaml)
    pi_bonds: tuple[int, str] | None = None  # (at least, class): π bonds every match implies
    kekule: str | None = None  # necessary condition on the labelled multigraph (see groups.yaml)
    ir: tuple[Band, ...] = ()


    @property
    def pattern(self) -> Any:
        """The compiled RDKit query (cached per group)."""
        return compiled_smarts(self.smarts)

    @property
    def skeleton_pattern(self) -> Any | None:
        return compiled_smarts(self.skeleton) if self.skeleton is not None else None

    @property
    def elements(self) -> dict[int, int]:
        """Atomic number -> how many atoms of it any molecule with the group has at least: the
        bracket atoms of the skeleton condition that name exactly one element (``[#8;D1]``)."""
        if self.skeleton is None:
            return {}
        need: dict[int, int] = {}
        for atom in re.findall(r"\[([^\]]*)\]", self.skeleton):
            numbers = _ELEMENT.findall(atom)
            if len(numbers) == 1 and "," not in atom.split(";")[0]:
                z = int(numbers[0][1:])
                need[z] = need.get(z, 0) + 1
        return need

    @property
    def kekule_pattern(self) -> Any | None:
        return compiled_smarts(self.kekule) if self.kekule is not None else None

    @property
    def shape(self) -> str | None:
        """The skeleton condition with its element primitives (``#n``) dropped: a weaker condition
        on the bare graph, tested once per skeleton before any element labels are placed."""
        return _ELEMENT.sub("*", self.skeleton) if self.skeleton is not None else None

    @property
    def shape_pattern(self) -> Any | None:
        return compiled_smarts(self.shape) if self.shape is not None else None


@dataclass(frozen=True, eq=False)
class GroupTable:
    groups: Mapping[str, Group]
    source: str = ""
    ir_source: str = ""
    ir_regions: tuple[Region, ...] = ()

    def __getitem__(self, name: str) -> Group:
        try:
            return self.groups[name]
        except KeyError as exc:
            close = difflib.get_close_matches(name, list(self.names), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise ElucidateError(f"unknown group {name!r}{hint}; known groups: {', '.join(self.names)}") from exc

    def __contains__(self, name: object) -> bool:
        return name in self.groups

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(self.groups)

    def validate(self) -> None:
        for name, group in self.groups.items():
            if not _NAME.match(name) or group.name != name:
                raise ElucidateError(f"bad group name {name!r}", key=f"groups.{name}")
            try:
                group.pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.smarts") from exc
            try:
                group.skeleton_pattern
                group.shape_pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.skeleton") from exc
            try:
                group.kekule_pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.kekule") from exc
            for i, band in enumerate(group.ir):
                if not 400 <= band.low < band.high <= 4000 or band.strength not in STRENGTHS:
                    raise ElucidateError("a band needs 400 <= from < to <= 4000 and a strength", key=f"groups.{name}.ir.{i}")
                for text in (band.when, band.unless):
                    if text is not None:
                        try:
                            compiled_smarts(text)
                        except ElucidateError as exc:
                            raise ElucidateError(exc.message, key=f"groups.{name}.ir.{i}") from exc
            if group.kekule is not None and group.skeleton is None:
                raise ElucidateError("a kekule condition needs a skeleton condition too", key=f"groups.{name}.kekule")
            if group.shape is not None and re.search(r"[A-CE-Za-z]", group.shape):
                raise ElucidateError(
                    f"skeleton condition {group.skeleton!r}: use only #n element primitives, D degrees "
                    "and ~ bonds, so that dropping the elements gives a condition on the bare graph",
                    key=f"groups.{name}.skeleton",
                )


def load_groups(path: str | Path | None = None) -> GroupTable:
    file = Path(path) if path is not None else table_path("groups.yaml")
    root = mapping(read_yaml_file(file), ["source", "ir_source", "ir_regions", "groups"], required=["groups"])
    body = root["groups"]
    if not isinstance(body.value, dict) or not body.value:
        raise body.error("expected a mapping of group names")
    groups = {}
    for name, loc in body.value.items():
        entry = mapping(
            loc, ["smarts", "definition", "source", "skeleton", "kekule", "pi_bonds", "ir"], required=["smarts", "definition", "source"]
        )
        groups[str(name)] = Group(
            name=str(name),
            smarts=as_str(entry["smarts"], what="a SMARTS pattern"),
            definition=as_str(entry["definition"], what="a one-line definition"),
            source=as_str(entry["source"], what="a source"),
            skeleton=as_str(entry["skeleton"], what="a SMARTS pattern") if "skeleton" in entry else None,
            pi_bonds=_pi_bonds(entry["pi_bonds"]) if "pi_bonds" in entry else None,
            kekule=as_str(entry["kekule"], what="a SMARTS pattern") if "kekule" in entry else None,
            ir=tuple(_band(b) for b in as_list(entry["ir"], what="a list of bands")) if "ir" in entry else (),
        )
    regions = []
    for item in as_list(root["ir_regions"], what="a list of regions") if "ir_regions" in root else []:
        r = mapping(item, ["from", "to", "what"], required=["from", "to", "what"])
        low = as_number(r["from"], minimum=400, maximum=4000, what="a wavenumber 400-4000")
        high = as_number(r["to"], minimum=low, maximum=4000, what=f"a wavenumber {low:g}-4000")
        regions.append(Region(low, high, as_str(r["what"])))
    table = GroupTable(
        groups,
        as_str(root["source"]) if "source" in root else "",
        as_str(root["ir_source"]) if "ir_source" in root else "",
        tuple(regions),
    )
    try:
        table.validate()
    except ElucidateError as exc:
        line = body.value[exc.key.split(".")[1]].line if exc.key else None
        raise exc.in_file(str(file), line) from exc
    return table


def _band(loc: Any) -> Band:
    b = mapping(
        loc, ["from", "to", "strength", "key", "mode", "when", "unless", "shape"], required=["from", "to", "strength", "mode"]
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
        as_str(b["when"], what="a SMARTS pattern") if "when" in b else None,
        as_str(b["unless"], what="a SMARTS pattern") if "unless" in b else None,
        as_choice(b["shape"], ("broad", "sharp"), what="one of") if "shape" in b else None,
    )


def _pi_bonds(loc: Any) -> tuple[int, str]:
    entry = mapping(loc, ["at_least", "among"], required=["at_least", "among"])
    count = as_int(entry["at_least"], what="a whole number of π bonds", minimum=1)
    kind = as_choice(entry["among"], PI_CLASSES, what="a class of π bonds:")
    return count, kind


def min_pi_bonds(required: Iterable[str], groups: GroupTable, *, oxo: int = 0) -> int:
    """A lower bound on the π bonds (bond order − 1 summed over all bonds, in the generator's
    Kekulé multigraph) of any molecule that has every group in ``required`` and ``oxo``
    higher-valence atoms (each needs its own double bond to a terminal O or S).

    Classes: ``aromatic`` (a bond with an aromatic carbon end) and ``aliphatic`` (a bond with a
    carbon end, both ends non-aromatic) are disjoint and make up ``carbon`` (a bond with a carbon
    end); ``hetero`` (no carbon end, as every oxo bond) is disjoint from all three. So the bound
    is max(aromatic + aliphatic, carbon) + max(hetero, oxo)."""
    best = dict.fromkeys(PI_CLASSES, 0)
    for name in required:
        bound = groups[name].pi_bonds
        if bound is not None:
            best[bound[1]] = max(best[bound[1]], bound[0])
    return max(best["aromatic"] + best["aliphatic"], best["carbon"]) + max(best["hetero"], oxo)


@lru_cache(maxsize=1)
def default_groups() -> GroupTable:
    return load_groups()
