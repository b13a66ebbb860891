"""Reports: plain-text and JSON renderings of the formula stage and of a solution."""

from __future__ import annotations

from .formula_report import RULE_LABELS, formulas_json, formulas_text
from .layout import CAUTION, text_table
from .solution_report import solve_json, solve_text

__all__ = ["CAUTION", "RULE_LABELS", "formulas_json", "formulas_text", "solve_json", "solve_text", "text_table"]
