"""The solver: formulas -> generated structures -> evidence -> one ranked shortlist.

:mod:`.hypotheses` chooses the molecular ions to try, :mod:`.ranking` runs the pipeline and
ranks, :mod:`.scoring` combines the techniques' components, :mod:`.suspects` places the
chemist's named suspects, :mod:`.diagnosis` explains an empty result, :mod:`.records` holds
what is returned.
"""

from __future__ import annotations

from .hypotheses import (
    Hypothesis,
    considered_hypotheses,
    first_losses,
    losses_for_m,
    molecular_ion_hypotheses,
    rank_hypotheses,
)
from .ranking import PROFILE, hard_selection, preflight, solve
from .records import FoundCandidate, KeptFormula, Ranked, Solution, SuspectResult, UntriedFormula
from .scoring import ScoringTable, default_scoring, load_scoring

__all__ = [
    "PROFILE",
    "FoundCandidate",
    "Hypothesis",
    "KeptFormula",
    "Ranked",
    "ScoringTable",
    "Solution",
    "SuspectResult",
    "UntriedFormula",
    "considered_hypotheses",
    "default_scoring",
    "first_losses",
    "hard_selection",
    "load_scoring",
    "losses_for_m",
    "molecular_ion_hypotheses",
    "preflight",
    "rank_hypotheses",
    "solve",
]
