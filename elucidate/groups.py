"""The functional-group vocabulary (``constraints/groups.yaml``): names, SMARTS, definitions."""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from .errors import ElucidateError
from .patterns import compiled_smarts
from .tables import table_path
from .yamlnodes import as_str, mapping, read_yaml_file

__all__ = ["Group", "GroupTable", "load_groups", "default_groups"]

_NAME = re.compile(r"^[a-z][a-z0-9_]*$")


@dataclass(frozen=True)
class Group:
    name: str
    smarts: str
    definition: str
    source: str
    skeleton: str | None = None  # necessary condition on the labelled skeleton (see groups.yaml)

    @property
    def pattern(self) -> Any:
        """The compiled RDKit query (cached per group)."""
        return compiled_smarts(self.smarts)

    @property
    def skeleton_pattern(self) -> Any | None:
        return compiled_smarts(self.skeleton) if self.skeleton is not None else None


@dataclass(frozen=True, eq=False)
class GroupTable:
    groups: Mapping[str, Group]
    source: str = ""

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
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.skeleton") from exc


def load_groups(path: str | Path | None = None) -> GroupTable:
    file = Path(path) if path is not None else table_path("groups.yaml")
    root = mapping(read_yaml_file(file), ["source", "groups"], required=["groups"])
    body = root["groups"]
    if not isinstance(body.value, dict) or not body.value:
        raise body.error("expected a mapping of group names")
    groups = {}
    for name, loc in body.value.items():
        entry = mapping(loc, ["smarts", "definition", "source", "skeleton"], required=["smarts", "definition", "source"])
        groups[str(name)] = Group(
            name=str(name),
            smarts=as_str(entry["smarts"], what="a SMARTS pattern"),
            definition=as_str(entry["definition"], what="a one-line definition"),
            source=as_str(entry["source"], what="a source"),
            skeleton=as_str(entry["skeleton"], what="a SMARTS pattern") if "skeleton" in entry else None,
        )
    table = GroupTable(groups, as_str(root["source"]) if "source" in root else "")
    try:
        table.validate()
    except ElucidateError as exc:
        line = body.value[exc.key.split(".")[1]].line if exc.key else None
        raise exc.in_file(str(file), line) from exc
    return table


@lru_cache(maxsize=1)
def default_groups() -> GroupTable:
    return load_groups()
