"""The scoring table (``constraints/scoring.yaml``): how the techniques' components combine.

The component names are the techniques' own weight keys (:data:`~elucidate.evidence.TECHNIQUES`),
so the table must give a weight for exactly those.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..errors import ElucidateError
from ..evidence import TECHNIQUES, Assessment
from ..tables import table_path, validated
from ..yamlnodes import as_number, as_str, mapping, read_yaml_file

__all__ = ["ScoringTable", "combine", "component_keys", "default_scoring", "load_scoring"]


def component_keys() -> tuple[str, ...]:
    """The weight keys of every technique, in report order."""
    return tuple(t.weight_key for t in TECHNIQUES)


@dataclass(frozen=True, eq=False)
class ScoringTable:
    weights: Mapping[str, float]  # technique weight key -> weight
    floor: float
    formula_cut: float  # formulas fitting worse than best / formula_cut are not enumerated
    source: str = ""

    def validate(self) -> None:
        keys = component_keys()
        if set(self.weights) != set(keys):
            raise ElucidateError(f"weights must name exactly: {', '.join(keys)}", key="weights")
        if any(w < 0 for w in self.weights.values()) or not any(self.weights.values()):
            raise ElucidateError("weights must be 0 or more, and not all 0", key="weights")
        if not 0 < self.floor < 1:
            raise ElucidateError("floor must lie between 0 and 1", key="floor")


def load_scoring(path: str | Path | None = None) -> ScoringTable:
    file = Path(path) if path is not None else table_path("scoring.yaml")
    document = read_yaml_file(file)
    root = mapping(
        document, ["source", "weights", "floor", "formula_cut"], required=["weights", "floor", "formula_cut"]
    )
    keys = component_keys()
    weights = mapping(root["weights"], list(keys), required=list(keys))
    table = ScoringTable(
        weights={k: as_number(weights[k], minimum=0, what="a weight of 0 or more") for k in keys},
        floor=as_number(
            root["floor"], minimum=0, exclusive_minimum=True, maximum=0.5, what="a floor between 0 and 0.5"
        ),
        formula_cut=as_number(root["formula_cut"], minimum=1, what="a factor of 1 or more"),
        source=as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_scoring() -> ScoringTable:
    return load_scoring()


def combine(
    assessments: Sequence[Assessment], weight_keys: Mapping[str, str], scoring: ScoringTable
) -> tuple[float, dict[str, float]]:
    """The weighted geometric mean of the components, exp(Σ w·ln(max(s, floor)) / Σ w), and the
    components by technique name. ``weight_keys``: technique name -> weight key."""
    components = {a.technique: a.score for a in assessments}
    weights = {name: scoring.weights[weight_keys[name]] for name in components}
    total_w = sum(weights.values())
    if not total_w:
        return 1.0, components
    log = sum(weights[k] * math.log(max(v, scoring.floor)) for k, v in components.items())
    return math.exp(log / total_w), components
