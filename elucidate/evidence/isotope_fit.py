"""The isotope-cluster fit of a candidate's formula, from the formula stage, as a component."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Literal

from ..case import Case
from .base import Assessment, Reading, Subject

__all__ = ["IsotopeFit"]


class IsotopeFit:
    """exp(-chi2/2) of the formula's simulated isotope cluster against the observed one
    (:mod:`elucidate.formula_search.isotopes`); no component for a molecular-ion hypothesis
    without an observed cluster."""

    name = "formula"
    weight_key = "formula"
    label = "iso"
    stage: Literal["formula", "structure"] = "formula"
    reading_key: str | None = None
    scoring_pass: int = 0
    cost: float = 5  # µs per candidate, bench/bench_scoring_cost.py

    def applies(self, case: Case) -> bool:
        return case.mass_spec is not None and bool(case.mass_spec.peaks)

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment | None:
        score = subject.isotope_score
        if score is None and not subject.formula_demotion:
            return None
        # the fit is exp(-chi2/2): its evidence against is chi2/2 nats (the table caps it); a
        # formula that breaks the element-ratio heuristic adds its demotion
        against = 0.0 if score is None else (-math.log(score) if score > 0 else math.inf)
        reasons = (f"formula demoted: {subject.demoted_by}",) if subject.demoted_by else ()
        return Assessment(self.name, against=against + subject.formula_demotion, reasons=reasons)

    def foresee(self, subject: Subject, case: Case) -> Assessment | None:
        """The assessment itself: it reads only the formula stage's figures."""
        return self.assess(subject, case)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        return []

    def read(self, case: Case) -> Reading | None:
        return None
