"""The formula stage: candidate molecular formulas for a nominal molecular ion.

:mod:`.query` states the question (from a case or the command line), :mod:`.rules` holds the
formula rules and heuristics, :mod:`.isotopes` simulates and compares isotope clusters, and
:mod:`.search` enumerates, filters, scores and ranks the compositions.
"""

from __future__ import annotations

from .isotopes import (
    ClusterFit,
    ClusterReading,
    IsotopeTolerance,
    ObservedCluster,
    fit_cluster,
    isotope_pattern,
    read_cluster,
)
from .query import FormulaQuery, case_query, formula_query, limits_for
from .rules import FormulaRules, default_rules, kind_fiehn, load_formula_rules, nitrogen_rule, rule_of_13, senior_rules
from .search import RULES, Candidate, FormulaResult, check_formula, derive_formulas, enumerate_compositions

__all__ = [
    "RULES",
    "Candidate",
    "ClusterFit",
    "ClusterReading",
    "FormulaQuery",
    "FormulaResult",
    "FormulaRules",
    "IsotopeTolerance",
    "ObservedCluster",
    "case_query",
    "check_formula",
    "default_rules",
    "derive_formulas",
    "enumerate_compositions",
    "fit_cluster",
    "formula_query",
    "isotope_pattern",
    "kind_fiehn",
    "limits_for",
    "load_formula_rules",
    "nitrogen_rule",
    "read_cluster",
    "rule_of_13",
    "senior_rules",
]
