"""The formula question: a nominal molecular ion, element limits, DBE range, element-ratio level,
optional exact mass and the observed isotope cluster; built from a case in one place."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace

from ..case import Case, FormulaSpec, MassSpec
from ..defaults import ELEMENT_RATIOS, EXACT_MASS_KINDS, EXACT_MASS_OF, PPM_TOLERANCE, RATIO_LEVELS
from ..errors import ElucidateError
from .isotopes import ObservedCluster
from .rules import FormulaRules, default_rules

__all__ = ["FormulaQuery", "case_query", "formula_query", "limits_for"]


@dataclass(frozen=True)
class FormulaQuery:
    """What the chemist asks: a nominal M, limits, optional exact mass and isotope cluster."""

    nominal_mass: int
    elements: Mapping[str, tuple[int, int]]
    dbe: tuple[int, int]
    element_ratios: str = ELEMENT_RATIOS
    enforce_ratios: bool = False  # True: the element-ratio rules eliminate; False: they demote
    exact_mass: float | None = None
    exact_mass_of: str = EXACT_MASS_OF
    mass_tolerance_ppm: float = PPM_TOLERANCE
    cluster: ObservedCluster | None = None

    def __post_init__(self) -> None:
        if self.nominal_mass < 1:
            raise ElucidateError(f"nominal mass must be a positive whole number, got {self.nominal_mass}")
        if self.element_ratios not in RATIO_LEVELS:
            raise ElucidateError(f"element ratios {self.element_ratios!r}; choose one of {', '.join(RATIO_LEVELS)}")
        if self.exact_mass_of not in EXACT_MASS_KINDS:
            raise ElucidateError(f"exact_mass_of {self.exact_mass_of!r}; choose one of {', '.join(EXACT_MASS_KINDS)}")
        for sym, (low, high) in self.elements.items():
            if low < 0 or low > high:
                raise ElucidateError(f"element range {sym}: {low}-{high} is not a valid range")
        if self.dbe[0] > self.dbe[1]:
            raise ElucidateError(f"DBE range {self.dbe[0]}-{self.dbe[1]}: low end exceeds high end")


def limits_for(
    elements: Mapping[str, tuple[int, int]] | None, rules: FormulaRules | None = None
) -> dict[str, tuple[int, int]]:
    """The element limits to use: the given ones, else the table's defaults."""
    r = rules or default_rules()
    return dict(elements) if elements is not None else dict(r.default_elements)


def formula_query(
    molecular_ion: int,
    *,
    formula: FormulaSpec,
    mass_spec: MassSpec | None,
    rules: FormulaRules | None = None,
) -> FormulaQuery:
    """The formula question for one molecular-ion hypothesis: the element limits (a known formula
    fixes them and switches the element-ratio heuristic off), the DBE range, the exact mass when
    it belongs to this M, and the isotope cluster at M."""
    r = rules or default_rules()
    if formula.known is not None:
        elements = {s: (n, n) for s, n in formula.known.counts}
        ratios = "off"
    else:
        elements = limits_for(formula.elements, r)
        ratios = formula.element_ratios
    enforce = formula.enforce_ratios and formula.known is None
    ms = mass_spec if mass_spec is not None else MassSpec()
    exact = ms.exact_mass if ms.exact_mass is not None and abs(ms.exact_mass - molecular_ion) < 1 else None
    peaks = dict(ms.peaks)
    cluster = (
        ObservedCluster.from_peaks(
            molecular_ion, peaks, max_offset=r.isotope_max_offset, complete_above=ms.complete_above
        )
        if peaks
        else None
    )
    return FormulaQuery(
        nominal_mass=molecular_ion,
        elements=elements,
        dbe=formula.dbe if formula.dbe is not None else r.default_dbe,
        element_ratios=ratios,
        enforce_ratios=enforce,
        exact_mass=exact,
        exact_mass_of=ms.exact_mass_of,
        mass_tolerance_ppm=ms.mass_tolerance_ppm,
        cluster=cluster,
    )


def case_query(case: Case, molecular_ion: int) -> FormulaQuery:
    """The formula question a case asks for one molecular-ion hypothesis. Declared NMR carbon
    types fix the carbon count and set a floor under the hydrogen count (the H on carbon)."""
    query = formula_query(molecular_ion, formula=case.formula, mass_spec=case.mass_spec)
    types = case.nmr.carbon_types if case.nmr is not None else None
    if types is None:
        return query
    elements = dict(query.elements)
    carbons = sum(types)
    on_carbon = 3 * types[0] + 2 * types[1] + types[2]
    low, high = elements.get("C", (0, 0))
    # the case loader has checked the limits allow these counts
    elements["C"] = (max(low, carbons), min(high, carbons)) if low <= carbons <= high else (carbons, carbons)
    h_low, h_high = elements.get("H", (0, 0))
    elements["H"] = (max(h_low, on_carbon), max(h_high, on_carbon))
    return replace(query, elements=elements)
