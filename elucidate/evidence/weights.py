"""The scoring table (``constraints/scoring.yaml``): component weights and penalties."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..errors import ElucidateError
from ..tables import table_path
from ..yamlnodes import as_number, as_str, mapping, read_yaml_file

__all__ = ["ScoringTable", "load_scoring", "default_scoring", "COMPONENTS"]

#: the components the solver combines, in report order
COMPONENTS = ("formula", "infrared", "uv_vis", "fragments", "c13")
_C13 = ("missing_signal", "extra_signal", "missing_multiplicity", "extra_multiplicity")


@dataclass(frozen=True, eq=False)
class ScoringTable:
    weights: Mapping[str, float]
    floor: float
    carbon13: Mapping[str, float]
    source: str = ""

    def validate(self) -> None:
        if set(self.weights) != set(COMPONENTS):
            raise ElucidateError(f"weights must name exactly: {', '.join(COMPONENTS)}", key="weights")
        if any(w < 0 for w in self.weights.values()) or not any(self.weights.values()):
            raise ElucidateError("weights must be 0 or more, and not all 0", key="weights")
        if not 0 < self.floor < 1:
            raise ElucidateError("floor must lie between 0 and 1", key="floor")


def load_scoring(path: str | Path | None = None) -> ScoringTable:
    file = Path(path) if path is not None else table_path("scoring.yaml")
    root = mapping(read_yaml_file(file), ["source", "weights", "floor", "carbon13"], required=["weights", "floor", "carbon13"])
    weights = mapping(root["weights"], list(COMPONENTS), required=list(COMPONENTS))
    c13 = mapping(root["carbon13"], list(_C13), required=list(_C13))
    table = ScoringTable(
        weights={k: as_number(weights[k], minimum=0, what="a weight of 0 or more") for k in COMPONENTS},
        floor=as_number(root["floor"], minimum=0, exclusive_minimum=True, maximum=0.5, what="a floor between 0 and 0.5"),
        carbon13={k: as_number(c13[k], minimum=0, what="a penalty of 0 or more") for k in _C13},
        source=as_str(root["source"]) if "source" in root else "",
    )
    try:
        table.validate()
    except ElucidateError as exc:
        raise exc.in_file(str(file), None) from exc
    return table


@lru_cache(maxsize=1)
def default_scoring() -> ScoringTable:
    return load_scoring()
