"""Formula rules: nitrogen rule, Senior's rules, Kind & Fiehn heuristics, rule of 13."""

from __future__ import annotations

from fractions import Fraction

import pytest

from elucidate import ElucidateError, default_rules, kind_fiehn, nitrogen_rule, parse_formula, rule_of_13, senior_rules
from elucidate.formula_search import enumerate_compositions
from elucidate.formula_search.rules import load_formula_rules, rule_of_13_formulas

RULES = default_rules()


def test_shipped_rules_validate():
    RULES.validate()


@pytest.mark.parametrize(
    "formula,passes",
    # nitrogen rule (common practice): odd nominal mass <=> odd number of N
    [
        ("C5H5N", True),
        ("C3H7NO", True),
        ("C4H8N2", True),
        ("C6H6", True),
        ("C5H4N", False),
        ("C2H4N2", True),
        ("C6H7N", True),
        ("C6H6N", False),
    ],
)
def test_nitrogen_rule(formula, passes):
    assert (nitrogen_rule(parse_formula(formula)) is None) == passes


@pytest.mark.parametrize(
    "formula,rule",
    # Senior (1951) via Kind & Fiehn (2007) rule 2
    [("CH4", None), ("C", "rule 2"), ("CH3", "rule 1"), ("C2H8", "rule 3"), ("HCl", None), ("H2", None)],
)
def test_senior_rules(formula, rule):
    result = senior_rules(parse_formula(formula))
    if rule is None:
        assert result is None
    else:
        assert result is not None and rule in result


@pytest.mark.parametrize(
    "formula,level,passes",
    # Kind & Fiehn (2007) table 2 ratio ranges
    [
        ("C8H8O", "common", True),
        ("CH2Cl2", "common", False),
        ("CH2Cl2", "extended", True),
        ("CHCl3", "extended", False),
        ("CHCl3", "off", True),
        ("C2H8N2", "common", False),
        ("C2H8N2", "extended", True),
        ("CH6N2", "common", False),
        ("CH6N2", "extended", True),
        ("H2O", "common", False),
        ("C2F6", "common", False),
        ("C6H6", "common", True),
        ("C20H2", "common", False),
    ],
)
def test_kind_fiehn_ratios(formula, level, passes):
    assert (kind_fiehn(parse_formula(formula), RULES, level) is None) == passes


def test_kind_fiehn_rule_6_combined_counts():
    # N, O, P, S all > 1 requires S < 3 (Kind & Fiehn 2007 rule 6)
    assert kind_fiehn(parse_formula("C30H40N2O4P2S3"), RULES, "extended") is not None
    assert kind_fiehn(parse_formula("C30H40N2O4P2S2"), RULES, "extended") is None


@pytest.mark.parametrize(
    "mass,n,r,base,u",
    # Bright & Chen, J. Chem. Educ. 60, 557 (1983): M = 78 -> C6H6, U = 4 (the paper's example);
    # M = 121 -> C9H13 (U = 7/2; adding N gives an integer U)
    [(78, 6, 0, "C6H6", 4), (121, 9, 4, "C9H13", Fraction(7, 2)), (94, 7, 3, "C7H10", 3), (120, 9, 3, "C9H12", 4)],
)
def test_rule_of_13_base(mass, n, r, base, u):
    rule = rule_of_13(mass)
    assert (rule.n, rule.r, str(rule.base), rule.u) == (n, r, base, u)
    assert rule.u == rule.base.dbe()


def test_rule_of_13_worked_substitution():
    # M = 121: C9H13 + N - CH2 = C8H11N; + O - CH4 = C7H7NO, benzamide, U = 5 (Bright & Chen method)
    found = rule_of_13_formulas(121, {"C": (0, 20), "H": (0, 40), "N": (0, 1), "O": (0, 1)}, RULES)
    assert parse_formula("C8H11N") in found and parse_formula("C7H7NO") in found
    assert parse_formula("C7H7NO").dbe() == 5


@pytest.mark.parametrize("mass", [44, 78, 112, 120, 121, 156, 200])
def test_rule_of_13_route_equals_engine(mass):
    # the rule-of-13 substitution route and the engine's enumeration must reach the same set
    limits = {
        "C": (0, 20),
        "H": (0, 40),
        "N": (0, 3),
        "O": (0, 4),
        "S": (0, 1),
        "Cl": (0, 2),
        "Br": (0, 1),
        "F": (0, 2),
    }
    assert rule_of_13_formulas(mass, limits, RULES) == set(enumerate_compositions(mass, limits))


def test_broken_rule13_table_is_rejected(tmp_path):
    text = (RULES_PATH := _rules_path()).read_text().replace("O:  {remove: {C: 1, H: 4}}", "O:  {remove: {C: 1, H: 3}}")
    bad = tmp_path / "formula_rules.yaml"
    bad.write_text(text)
    with pytest.raises(ElucidateError, match="does not balance") as info:
        load_formula_rules(bad)
    assert info.value.file == str(bad)
    assert RULES_PATH.exists()


def _rules_path():
    from elucidate.tables import table_path

    return table_path("formula_rules.yaml")
