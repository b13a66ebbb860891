"""Molecular-ion hypotheses: the declared M, or, when M+ is not seen, the highest peak plus the
usual first losses."""

from __future__ import annotations

from ..case import Case
from ..errors import ElucidateError
from ..evidence.fragments import NeutralLossTable, default_neutral_losses

__all__ = ["first_losses", "losses_for_m", "molecular_ion_hypotheses"]


def first_losses(table: NeutralLossTable | None = None) -> dict[int, str]:
    """The usual first losses of a molecular ion that is not seen (``first`` in
    ``constraints/neutral_losses.yaml``): nominal mass -> the neutral lost."""
    t = table or default_neutral_losses()
    return {item.loss: item.neutral for item in t.losses if item.first}


def losses_for_m(table: NeutralLossTable | None = None) -> tuple[int, ...]:
    """What is added to the highest peak to make the hypotheses: 0 and the first losses."""
    return (0, *first_losses(table))


def molecular_ion_hypotheses(case: Case) -> tuple[int, ...]:
    """The molecular ions to try: the declared one (or the known formula's mass); when the
    molecular ion is unknown, the highest peak (at least 1 % of base) and that peak plus the
    usual first losses (:func:`first_losses`), since alcohols and branched compounds often show
    no M+."""
    ms = case.mass_spec
    if ms is not None and ms.molecular_ion is not None:
        return (ms.molecular_ion,)
    if case.formula.known is not None:
        return (case.formula.known.nominal_mass(),)
    if ms is None or not ms.peaks:
        raise ElucidateError(
            "no molecular ion and no peaks: give mass_spec.molecular_ion, mass_spec.peaks or formula.known",
            file=case.path,
            key="mass_spec",
        )
    highest = max(mz for mz, v in ms.peaks.items() if v >= 1.0)
    return tuple(highest + loss for loss in losses_for_m())
