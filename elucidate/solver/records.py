"""What the solver finds and returns: typed records, JSON-ready through ``as_dict``."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

from ..case import Case
from ..evidence import Assessment, Reading
from ..evidence.base import Perception
from ..formula import Formula
from .hypotheses import Hypothesis
from .scoring import Component

__all__ = [
    "FoundCandidate",
    "KeptFormula",
    "PassCount",
    "Ranked",
    "Solution",
    "SuspectResult",
    "UntriedFormula",
    "components_json",
]


@dataclass(frozen=True)
class FoundCandidate:
    """A generated structure that passed the hard constraints, before it is scored."""

    smiles: str
    formula: Formula
    molecular_ion: int
    isotope_score: float | None  # its formula's isotope-cluster fit; None without a cluster
    formula_demotion: float = 0.0  # nats: its formula breaks the element-ratio heuristic
    demoted_by: str | None = None
    seen: Perception | None = None  # what generation found on its molecule (None: not known)


@dataclass(frozen=True)
class KeptFormula:
    formula: Formula
    molecular_ion: int
    isotope_score: float | None  # exp(-chi2/2) of the isotope-cluster fit; None without a cluster
    structures: int = 0  # candidates that passed the hard constraints
    skipped: str | None = None  # why it was not enumerated (space above the limit)
    demoted_by: str | None = None  # the element-ratio rule it breaks (ranked down, kept)
    demotion: float = 0.0  # nats

    def as_dict(self) -> dict[str, Any]:
        return {
            "formula": str(self.formula),
            "molecular_ion": self.molecular_ion,
            "isotope_score": None if self.isotope_score is None else round(self.isotope_score, 6),
            "structures": self.structures,
            "skipped": self.skipped,
            "demoted_by": self.demoted_by,
        }


def components_json(components: Mapping[str, Component]) -> dict[str, dict[str, float]]:
    """Each technique's part, both halves kept apart: capped nats against and unexplained, and
    the component score exp(-(against + unexplained))."""
    return {
        name: {
            "score": round(c.score, 6),
            "against": round(c.against, 6),
            "unexplained": round(c.unexplained, 6),
            "weight": c.weight,
        }
        for name, c in components.items()
    }


@dataclass(frozen=True)
class Ranked:
    rank: int  # competition ranking: equal log-likelihoods share the rank (1, 2, 2, 4)
    smiles: str
    formula: str
    molecular_ion: int | None
    score: float  # exp(log_likelihood / Σ weight), 0..1
    log_likelihood: float
    components: Mapping[str, Component]
    reasons: tuple[str, ...]
    assessments: tuple[Assessment, ...] = ()
    tied: bool = False  # shares its rank with another candidate

    @property
    def rank_label(self) -> str:
        """The rank as printed: "2=" when shared."""
        return f"{self.rank}=" if self.tied else str(self.rank)

    @property
    def inchikey(self) -> str:
        """Standard InChIKey (RDKit), computed when first asked for."""
        return _inchikey(self.smiles)

    def as_dict(self) -> dict[str, Any]:
        return {
            "rank": self.rank,
            "rank_label": self.rank_label,
            "smiles": self.smiles,
            "inchikey": self.inchikey,
            "formula": self.formula,
            "molecular_ion": self.molecular_ion,
            "score": round(self.score, 6),
            "log_likelihood": round(self.log_likelihood, 6),
            "components": components_json(self.components),
            "reasons": list(self.reasons),
            **self._assignment(),
        }

    def _assignment(self) -> dict[str, Any]:
        """The NMR assignment tables (observed, predicted, class, deviation), when scored."""
        for a in self.assessments:
            if a.technique == "nmr":
                return {"nmr_assignment": {k: list(v) for k, v in a.detail.items()}}
        return {}


@dataclass(frozen=True)
class SuspectResult:
    given: str
    smiles: str | None  # canonical
    formula: str | None
    rank: int | None
    eliminated_by: str | None
    why: str | None
    score: float | None
    components: Mapping[str, Component] = field(default_factory=dict)

    def as_dict(self) -> dict[str, Any]:
        return {
            "given": self.given,
            "smiles": self.smiles,
            "formula": self.formula,
            "rank": self.rank,
            "eliminated_by": self.eliminated_by,
            "why": self.why,
            "score": None if self.score is None else round(self.score, 6),
            "components": components_json(self.components),
        }


@dataclass(frozen=True)
class PassCount:
    """One scoring pass: its techniques, how many candidates it ran on, how many it settled
    (scoring stopped there: their bound fell below the shortlist in it, or, in the last pass,
    they were scored in full), and of those, how many were scored in full (the last pass only)."""

    techniques: tuple[str, ...]
    scored: int
    settled: int
    complete: int = 0

    def as_dict(self) -> dict[str, object]:
        return {
            "techniques": list(self.techniques),
            "scored": self.scored,
            "settled": self.settled,
            "scored_in_full": self.complete,
        }


@dataclass(frozen=True)
class Solution:
    case: Case
    hypotheses: tuple[int, ...]
    formulas: tuple[KeptFormula, ...]
    generated: int
    eliminated: Mapping[str, int]
    candidates: tuple[Ranked, ...]
    suspects: tuple[SuspectResult, ...]
    readings: Mapping[str, Reading | None]  # technique reading key -> its reading of the case
    techniques: tuple[str, ...]  # the structure-evidence techniques that applied
    profile: str
    empty_reason: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    #: when M+ is not seen: every hypothesis considered, best first, with why a dropped one was
    considered: tuple[Hypothesis, ...] = ()
    #: formulas not tried, per molecular ion, and why (parsimony order without isotope data)
    untried: tuple[UntriedFormula, ...] = ()
    #: every candidate that passed the hard constraints; ``candidates`` holds the ranked ones
    candidate_count: int = 0
    #: the scoring passes: techniques, candidates run, candidates settled (:mod:`.passes`)
    scoring_passes: tuple[PassCount, ...] = ()
    #: each SMILES of ``solve(watch=...)``: its rank, or the constraint that eliminates it
    followed: tuple[SuspectResult, ...] = ()
    #: candidates settled before any scoring pass, on their formula and what generation
    #: perceived (:mod:`.passes`)
    settled_before_passes: int = 0


@dataclass(frozen=True)
class UntriedFormula:
    """A formula that passed the formula stage but was not enumerated, and why."""

    formula: Formula
    molecular_ion: int
    why: str

    def as_dict(self) -> dict[str, Any]:
        return {"formula": str(self.formula), "molecular_ion": self.molecular_ion, "why": self.why}


@lru_cache(maxsize=4096)
def _inchikey(smiles: str) -> str:
    from .._rdkit import Chem, quiet_rdkit

    with quiet_rdkit():
        key: str = Chem.MolToInchiKey(Chem.MolFromSmiles(smiles)) or ""
    return key
