"""elucidate: candidate structures for an unknown compound from routine spectroscopic evidence.

Pipeline: case -> formulas -> structures -> evidence -> ranking -> report: case files
(:mod:`elucidate.case`), the formula stage (:mod:`elucidate.formula_search`), the structure
generator (:mod:`elucidate.generator`), evidence techniques (:mod:`elucidate.evidence`), the
solver (:mod:`elucidate.solver`) and reports (:mod:`elucidate.reports`). Results are hypotheses
to confirm against a reference standard.
"""

from __future__ import annotations

__version__ = "0.1.0"

from .case import Case, load_case, parse_case
from .elements import Element, ElementTable, Isotope, default_elements, load_elements
from .errors import ElucidateError
from .formula import Formula, parse_formula
from .formula_search import (
    Candidate,
    FormulaQuery,
    FormulaResult,
    FormulaRules,
    IsotopeTolerance,
    ObservedCluster,
    check_formula,
    default_rules,
    derive_formulas,
    enumerate_compositions,
    fit_cluster,
    isotope_pattern,
    kind_fiehn,
    load_formula_rules,
    nitrogen_rule,
    read_cluster,
    rule_of_13,
    senior_rules,
)
from .solver import Solution, solve

__all__ = [
    "Candidate",
    "Case",
    "Element",
    "ElementTable",
    "ElucidateError",
    "Formula",
    "FormulaQuery",
    "FormulaResult",
    "FormulaRules",
    "Isotope",
    "IsotopeTolerance",
    "ObservedCluster",
    "Solution",
    "__version__",
    "check_formula",
    "default_elements",
    "default_rules",
    "derive_formulas",
    "enumerate_compositions",
    "fit_cluster",
    "isotope_pattern",
    "kind_fiehn",
    "load_case",
    "load_elements",
    "load_formula_rules",
    "nitrogen_rule",
    "parse_case",
    "parse_formula",
    "read_cluster",
    "rule_of_13",
    "senior_rules",
    "solve",
]
