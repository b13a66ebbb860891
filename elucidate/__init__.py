"""elucidate: candidate structures for an unknown compound from routine spectroscopic evidence.

Pipeline: case -> formulas -> generate -> evidence -> rank -> report: case files
(:mod:`elucidate.case`), the formula stage (:mod:`elucidate.formulas`), the isomer generator
(:mod:`elucidate.generate`), evidence techniques (:mod:`elucidate.evidence`) and the solver
(:mod:`elucidate.solve`). Results are hypotheses to confirm against a reference standard.
"""

from __future__ import annotations

__version__ = "0.1.0"

from .case import Case, load_case, parse_case
from .elements import Element, ElementTable, Isotope, default_elements, load_elements
from .errors import ElucidateError
from .formula import Formula, parse_formula
from .formulas import Candidate, FormulaQuery, FormulaResult, check_formula, derive_formulas, enumerate_compositions
from .isotopes import IsotopeTolerance, ObservedCluster, fit_cluster, isotope_pattern, read_cluster
from .solve import Solution, solve
from .rules import FormulaRules, default_rules, kind_fiehn, load_formula_rules, nitrogen_rule, rule_of_13, senior_rules

__all__ = [
    "__version__",
    "Case",
    "load_case",
    "parse_case",
    "Element",
    "ElementTable",
    "Isotope",
    "default_elements",
    "load_elements",
    "ElucidateError",
    "Formula",
    "parse_formula",
    "Candidate",
    "FormulaQuery",
    "FormulaResult",
    "check_formula",
    "derive_formulas",
    "enumerate_compositions",
    "IsotopeTolerance",
    "ObservedCluster",
    "fit_cluster",
    "isotope_pattern",
    "read_cluster",
    "FormulaRules",
    "default_rules",
    "kind_fiehn",
    "load_formula_rules",
    "nitrogen_rule",
    "rule_of_13",
    "senior_rules",
    "Solution",
    "solve",
]
