"""Molecular-ion hypotheses: the declared M, or, when M+ is not seen, the highest peak plus the
usual first losses, ranked by how well each explains the upper part of the spectrum."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace

from ..case import Case
from ..errors import ElucidateError
from ..evidence.fragments import NeutralLossTable, default_neutral_losses

__all__ = [
    "KEEP_WITHIN",
    "MAX_HYPOTHESES",
    "UPPER_WINDOW",
    "Hypothesis",
    "considered_hypotheses",
    "first_losses",
    "losses_for_m",
    "molecular_ion_hypotheses",
    "rank_hypotheses",
]

#: the upper part of the spectrum a hypothesis must explain: peaks within this many u of the
#: highest one (at least 1 % of base); common practice reads the first losses there
UPPER_WINDOW = 45
#: hypotheses solved at most (project choice: each one is a full formula and structure search)
MAX_HYPOTHESES = 4
#: hypotheses whose cost is more than this many nats above the best are not solved
KEEP_WITHIN = 1.0
#: nats per share of the upper intensity: at an implausible loss (3-14, 21-25 u), and at a
#: loss the table does not list (project choices: implausible losses argue against M strongly)
IMPLAUSIBLE_COST = 3.0
UNLISTED_COST = 1.0


def first_losses(table: NeutralLossTable | None = None) -> dict[int, str]:
    """The usual first losses of a molecular ion that is not seen (``first`` in
    ``constraints/neutral_losses.yaml``): nominal mass -> the neutral lost."""
    t = table or default_neutral_losses()
    return {item.loss: item.neutral for item in t.losses if item.first}


def losses_for_m(table: NeutralLossTable | None = None) -> tuple[int, ...]:
    """What is added to the highest peak to make the hypotheses: 0 and the first losses."""
    return (0, *first_losses(table))


@dataclass(frozen=True)
class Hypothesis:
    """One molecular ion tried when M+ is not seen, and how well it explains the upper spectrum."""

    m: int
    highest: int  # the highest peak it was built from
    loss: int  # m - highest
    neutral: str  # what that loss is ("" for 0)
    cost: float  # nats: implausible and unlisted losses to the upper peaks, intensity-weighted
    explained: float  # share of the upper intensity at M or at a listed loss from M
    implausible: tuple[int, ...]  # upper peaks at an implausible loss from M
    kept: bool = True
    why: str | None = None  # why it was not solved

    def describe(self) -> str:
        base = f"M {self.m}" + (f" (highest peak {self.highest} + {self.loss}, {self.neutral})" if self.loss else "")
        text = f"{base}: {100 * self.explained:.0f} % of the upper spectrum at usual losses"
        if self.implausible:
            text += "; implausible loss to " + ", ".join(f"{p} ({self.m - p} u)" for p in self.implausible)
        return text

    def as_dict(self) -> dict[str, object]:
        return {
            "m": self.m,
            "highest_peak": self.highest,
            "loss": self.loss,
            "neutral": self.neutral,
            "cost": round(self.cost, 6),
            "explained": round(self.explained, 6),
            "implausible_losses_to": list(self.implausible),
            "kept": self.kept,
            "why": self.why,
        }


def _highest(peaks: Mapping[int, float]) -> int:
    """The highest peak at least 1 % of base, stepped down to its light partner when it reads as
    an isotope partner (common practice): 2 u below, a peak at least 0.9 times as strong (the
    37Cl or 81Br partner: 35Cl/37Cl about 3:1, 79Br/81Br about 1:1); 1 u below, a peak at least
    4 times as strong (a 13C partner, about 1.1 % per carbon)."""
    highest = max(mz for mz, v in peaks.items() if v >= 1.0)
    if peaks.get(highest - 2, 0.0) >= 0.9 * peaks[highest]:
        return highest - 2
    if peaks.get(highest - 1, 0.0) >= 4 * peaks[highest]:
        return highest - 1
    return highest


def rank_hypotheses(peaks: Mapping[int, float], table: NeutralLossTable | None = None) -> tuple[Hypothesis, ...]:
    """Every hypothesis (highest peak + 0 or a first loss), best first, with the ones not to be
    solved marked: a hypothesis explains the upper part of the spectrum (peaks within
    :data:`UPPER_WINDOW` u of the highest, at least 1 % of base) when each peak is M itself or
    lies a listed loss below it; a peak at an implausible loss (3-14, 21-25 u) costs
    :data:`IMPLAUSIBLE_COST` nats per share of the upper intensity, an unlisted loss
    :data:`UNLISTED_COST`. Equal costs go to the smaller loss. The best
    :data:`MAX_HYPOTHESES` within :data:`KEEP_WITHIN` nats of the best are kept."""
    t = table or default_neutral_losses()
    listed = t.by_mass()
    highest = _highest(peaks)
    top = max(mz for mz, v in peaks.items() if v >= 1.0)
    upper = {mz: v for mz, v in peaks.items() if v >= 1.0 and top - UPPER_WINDOW <= mz <= highest}
    total = sum(upper.values())
    found: list[Hypothesis] = []
    for loss in losses_for_m(t):
        m = highest + loss
        explained = bad = unlisted = 0.0
        implausible: list[int] = []
        for mz, v in sorted(upper.items(), reverse=True):
            d = m - mz
            if d == 0 or d in listed:
                explained += v
            elif t.is_implausible(d):
                bad += v
                implausible.append(mz)
            else:
                unlisted += v
        cost = (IMPLAUSIBLE_COST * bad + UNLISTED_COST * unlisted) / total
        neutral = listed[loss].neutral if loss in listed else ""
        found.append(Hypothesis(m, highest, loss, neutral, cost, explained / total, tuple(implausible)))
    found.sort(key=lambda h: (round(h.cost, 9), h.loss))
    best = found[0].cost
    out = []
    for i, h in enumerate(found):
        if h.cost > best + KEEP_WITHIN:
            why = f"explains the upper spectrum {h.cost - best:.2f} nats worse than M {found[0].m}"
            h = replace(h, kept=False, why=why)
        elif i >= MAX_HYPOTHESES:
            h = replace(h, kept=False, why=f"beyond the {MAX_HYPOTHESES} best hypotheses")
        out.append(h)
    return tuple(out)


def considered_hypotheses(case: Case) -> tuple[Hypothesis, ...]:
    """Every hypothesis :func:`rank_hypotheses` weighs for the case, best first; empty when the
    case declares its molecular ion or a known formula."""
    ms = case.mass_spec
    if (ms is not None and ms.molecular_ion is not None) or case.formula.known is not None:
        return ()
    if ms is None or not ms.peaks:
        raise ElucidateError(
            "no molecular ion and no peaks: give mass_spec.molecular_ion, mass_spec.peaks or formula.known",
            file=case.path,
            key="mass_spec",
        )
    return rank_hypotheses(ms.peaks)


def molecular_ion_hypotheses(case: Case, considered: tuple[Hypothesis, ...] | None = None) -> tuple[int, ...]:
    """The molecular ions to try: the declared one (or the known formula's mass); when the
    molecular ion is unknown, the kept hypotheses of :func:`rank_hypotheses`, best first, since
    alcohols and branched compounds often show no M+. ``considered``: the case's
    :func:`considered_hypotheses` when the caller has them already."""
    ms = case.mass_spec
    if ms is not None and ms.molecular_ion is not None:
        return (ms.molecular_ion,)
    if case.formula.known is not None:
        return (case.formula.known.nominal_mass(),)
    ranked = considered_hypotheses(case) if considered is None else considered
    return tuple(h.m for h in ranked if h.kept)
