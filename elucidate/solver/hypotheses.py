"""Molecular-ion hypotheses: the declared M, or, when M+ is not seen, the highest peak plus the
usual first losses."""

from __future__ import annotations

from ..case import Case
from ..errors import ElucidateError

__all__ = ["FIRST_LOSSES", "LOSSES_FOR_M", "molecular_ion_hypotheses"]

#: the usual first losses of a molecular ion that is not seen: nominal mass -> neutral lost
#: (common practice)
FIRST_LOSSES = {15: "CH3", 17: "OH", 18: "H2O"}
#: what is added to the highest peak to make the hypotheses
LOSSES_FOR_M = (0, *FIRST_LOSSES)


def molecular_ion_hypotheses(case: Case) -> tuple[int, ...]:
    """The molecular ions to try: the declared one (or the known formula's mass); when the
    molecular ion is unknown, the highest peak (at least 1 % of base) and that peak plus the
    usual first losses (CH3 15, OH 17, H2O 18), since alcohols and branched compounds often show
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
    return tuple(highest + loss for loss in LOSSES_FOR_M)
