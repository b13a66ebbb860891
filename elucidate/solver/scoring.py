"""The scoring table (``constraints/scoring.yaml``): how the techniques' components combine.

Each technique's assessment has two parts, ``against`` and ``unexplained`` (nats of likelihood
lost). The candidate's log-likelihood is the weighted sum of both parts, each capped per
technique, so no single technique can veto a candidate. The component names are the techniques'
own weight keys (:data:`~elucidate.evidence.TECHNIQUES`), so the table must give exactly those.
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

__all__ = [
    "Combined",
    "Component",
    "ScoringTable",
    "TechniqueWeight",
    "combine",
    "component_keys",
    "default_scoring",
    "load_scoring",
]


def component_keys() -> tuple[str, ...]:
    """The weight keys of every technique, in report order."""
    return tuple(t.weight_key for t in TECHNIQUES)


@dataclass(frozen=True)
class TechniqueWeight:
    weight: float
    against_cap: float  # nats
    unexplained_cap: float  # nats

    @property
    def bound(self) -> float:
        """The most this technique can lower a candidate's log-likelihood."""
        return self.weight * (self.against_cap + self.unexplained_cap)


@dataclass(frozen=True, eq=False)
class ScoringTable:
    techniques: Mapping[str, TechniqueWeight]  # technique weight key -> weight and caps
    formula_cut: float  # formulas fitting worse than best / formula_cut are not enumerated
    #: formulas fitting worse than this factor below one skipped for size are not enumerated
    worse_than_skipped: float = 4.0
    source: str = ""

    def validate(self) -> None:
        keys = component_keys()
        if set(self.techniques) != set(keys):
            raise ElucidateError(f"techniques must name exactly: {', '.join(keys)}", key="techniques")
        if not any(t.weight for t in self.techniques.values()):
            raise ElucidateError("the weights must not all be 0", key="techniques")


_FIELDS = ("weight", "against_cap", "unexplained_cap")


def load_scoring(path: str | Path | None = None) -> ScoringTable:
    file = Path(path) if path is not None else table_path("scoring.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(
        document,
        ["source", "techniques", "formula_cut", "worse_than_skipped"],
        required=["techniques", "formula_cut", "worse_than_skipped"],
    )
    keys = component_keys()
    section = mapping(root["techniques"], list(keys), required=list(keys))
    techniques = {}
    for key in keys:
        entry = mapping(section[key], list(_FIELDS), required=list(_FIELDS))
        techniques[key] = TechniqueWeight(
            *(float(as_number(entry[f], minimum=0, what="a number of 0 or more")) for f in _FIELDS)
        )
    table = ScoringTable(
        techniques=techniques,
        formula_cut=as_number(root["formula_cut"], minimum=1, what="a factor of 1 or more"),
        worse_than_skipped=as_number(root["worse_than_skipped"], minimum=1, what="a factor of 1 or more"),
        source=as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_scoring() -> ScoringTable:
    return load_scoring()


@dataclass(frozen=True)
class Component:
    """One technique's part of a candidate's log-likelihood, after the caps."""

    against: float  # nats, capped
    unexplained: float  # nats, capped
    weight: float

    @property
    def score(self) -> float:
        """exp(-(against + unexplained)) after the caps: 1 fits, towards 0 contradicts."""
        return math.exp(-(self.against + self.unexplained))

    @property
    def log_likelihood(self) -> float:
        return -self.weight * (self.against + self.unexplained)


@dataclass(frozen=True)
class Combined:
    log_likelihood: float  # Σ of the components' weighted log-likelihoods, ≤ 0
    score: float  # exp(log_likelihood / Σ weight): a weighted geometric mean in 0..1
    components: Mapping[str, Component]  # technique name -> its part


def combine(assessments: Sequence[Assessment], weight_keys: Mapping[str, str], scoring: ScoringTable) -> Combined:
    """The candidate's log-likelihood from its assessments. ``weight_keys``: technique name ->
    weight key in the scoring table."""
    components = {}
    for a in assessments:
        w = scoring.techniques[weight_keys[a.technique]]
        components[a.technique] = Component(
            min(a.against, w.against_cap), min(a.unexplained, w.unexplained_cap), w.weight
        )
    total_w = sum(c.weight for c in components.values())
    log = sum(c.log_likelihood for c in components.values())
    return Combined(log, math.exp(log / total_w) if total_w else 1.0, components)
