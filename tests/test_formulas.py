"""The formula engine: completeness against brute force, filter agreement, ranking examples."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from elucidate import FormulaQuery, ObservedCluster, check_formula, default_elements, derive_formulas, parse_formula
from elucidate.errors import TooLarge
from elucidate.formula import Formula
from elucidate.formula_search.rules import default_rules
from elucidate.formula_search.search import (
    EXPLAINED_PER_RULE,
    MAX_COMPOSITIONS,
    RULES,
    check_space,
    composition_count,
    enumerate_compositions,
    first_failure_codes,
    search_symbols,
)

TABLE = default_elements()
DEFAULTS = dict(default_rules().default_elements)

# small element limits so a plain nested loop finishes quickly
SMALL = {"C": (0, 12), "H": (0, 30), "N": (0, 3), "O": (0, 4), "S": (0, 1), "Cl": (0, 2), "Br": (0, 1), "F": (0, 2)}
# nominal masses written out here, independently of the element table (common practice)
NOMINAL = {"C": 12, "H": 1, "N": 14, "O": 16, "S": 32, "Cl": 35, "Br": 79, "F": 19}


def brute_force(mass, limits):
    """Every combination of counts within limits, kept if the nominal masses add up."""
    out = set()
    syms = list(limits)
    for combo in itertools.product(*(range(lo, hi + 1) for lo, hi in limits.values())):
        if sum(n * NOMINAL[s] for n, s in zip(combo, syms)) == mass:
            out.add(Formula.of(dict(zip(syms, combo))))
    return out


@pytest.mark.parametrize("mass", [16, 44, 78, 112, 120, 156])
def test_enumeration_equals_brute_force(mass):
    assert set(enumerate_compositions(mass, SMALL)) == brute_force(mass, SMALL)


# limits without C or without H take the other route (the last element solved by division)
ODD_LIMITS = [
    {"N": (0, 9), "O": (0, 9), "S": (0, 3)},
    {"C": (1, 8), "O": (0, 5), "Cl": (0, 3)},
    {"H": (2, 20), "O": (0, 5), "Br": (1, 2)},
    {"C": (2, 3), "H": (5, 6), "O": (1, 1)},
]


@pytest.mark.parametrize("limits", ODD_LIMITS + [SMALL])
@pytest.mark.parametrize("mass", [0, 16, 44, 46, 78, 112, 156])
def test_bounded_enumeration_and_count_equal_brute_force(mass, limits):
    expected = brute_force(mass, limits)
    assert set(enumerate_compositions(mass, limits)) == expected
    assert composition_count(mass, limits) == len(expected)


def test_count_of_hydrocarbon_formulas():
    # 12 C + H = 142 (common practice: nominal masses 12 and 1): with H <= 22 only C10H22 and
    # C11H10; with H unbounded every C from 0 to 11
    assert composition_count(142, {"C": (0, 40), "H": (0, 22)}) == 2
    assert composition_count(142, {"C": (0, 40), "H": (0, 200)}) == 12


def test_space_above_the_maximum_is_refused_before_any_row_is_built():
    wide = {"C": (0, 120), "H": (0, 250), "N": (0, 40), "O": (0, 40), "S": (0, 10), "Cl": (0, 6)}
    n = composition_count(1500, wide)
    assert n > MAX_COMPOSITIONS
    with pytest.raises(TooLarge, match=f"allow {n:,} compositions of nominal mass 1500.*widest: N 0-40, O 0-40"):
        check_space(1500, wide)
    with pytest.raises(TooLarge):
        derive_formulas(FormulaQuery(1500, wide, (0, 20)))
    assert check_space(120, DEFAULTS) == len(enumerate_compositions(120, DEFAULTS))


@pytest.mark.parametrize("mass", [58, 112, 151])
def test_constraint_method_equals_direct(mass):
    direct = enumerate_compositions(mass, DEFAULTS, method="direct")
    solved = enumerate_compositions(mass, DEFAULTS, method="constraint")
    assert direct == solved and len(direct) == len(set(direct))


@pytest.mark.parametrize("level", ["common", "extended", "off"])
@pytest.mark.parametrize("mass", [30, 84, 112, 146, 201])
def test_vectorized_filters_agree_with_reference(mass, level):
    query = FormulaQuery(mass, DEFAULTS, (0, 12), element_ratios=level, exact_mass=mass + 0.02, mass_tolerance_ppm=400)
    formulas = enumerate_compositions(mass, DEFAULTS)
    symbols = search_symbols(DEFAULTS, TABLE)
    arr = np.array([[f.get(s) for s in symbols] for f in formulas])
    codes = first_failure_codes(arr, symbols, query, TABLE, default_rules())
    for f, code in zip(formulas, codes):
        verdict = check_formula(f, query)
        assert (verdict[0] if verdict else None) == (RULES[code] if code >= 0 else None), str(f)


def test_result_accounts_for_every_composition():
    result = derive_formulas(FormulaQuery(120, DEFAULTS, (0, 20)), keep_rejected=True)
    assert result.kept_count + sum(result.rejected_counts.values()) == result.total
    # each rule explains its first EXPLAINED_PER_RULE rejections; the counts cover them all
    for rule, n in result.rejected_counts.items():
        assert sum(c.rejected_by == rule for c in result.rejected) == min(n, EXPLAINED_PER_RULE)
    assert result.rejected_counts["dbe_negative"] > EXPLAINED_PER_RULE  # the cap is exercised here
    assert all(c.reason for c in result.rejected)


@pytest.mark.parametrize(
    "argv,first,lower",
    [
        # Cl1: M+2 about 32 % of M+ (textbook 3:1)
        (["112", "--peaks", "112:100 113:6.6 114:32.4 77:45"], "C6H5Cl", []),
        # Br1: M+2 about 98 % of M+ (1:1)
        (["156", "--peaks", "156:100,157:6.6,158:98,77:40"], "C6H5Br", []),
        # carbon count from M+1: 8.8 % -> C8H8O over C9H12 (9.9 %) and C7H4O2 (7.7 %)
        (["120", "--peaks", "120:100 121:8.8 122:0.5"], "C8H8O", ["C9H12", "C7H4O2"]),
        # S1: M+2 about 4.5 %
        (["84", "--peaks", "84:100 85:5.3 86:4.6"], "C4H4S", []),
    ],
)
def test_ranking_examples(cli, argv, first, lower):
    res = cli("formulas", *argv, "--json")
    assert res.code == 0, res.err
    ranked = [c["formula"] for c in res.json()]
    assert ranked[0] == first
    for f in lower:
        assert ranked.index(f) > 0
    for entry in res.json():
        assert {"formula", "dbe", "monoisotopic_mass", "score"} <= set(entry)


@pytest.mark.parametrize(
    "case,first",
    [
        ("cr-0417-a", "C6H5Cl"),
        ("cr-0417-b", "C6H5Br"),
        ("cr-0417-c", "CH2Cl2"),
        ("cr-0417-d", "C4H4S"),
        ("cr-0421-e", "C3H7NO"),
        ("cr-0502-h", "C8H8O"),
    ],
)
def test_demo_cases_rank_their_compound_first(cli, case, first, cases_dir):
    res = cli("formulas", str(cases_dir / f"{case}.yaml"), "--json")
    assert res.code == 0, res.err
    assert res.json()[0]["formula"] == first


def test_exact_mass_filter_uses_the_ion_mass():
    # DMF C3H7NO: neutral 73.052764, M+. = 73.052215 (one electron, 0.000549 u, removed)
    ion = derive_formulas(FormulaQuery(73, DEFAULTS, (0, 20), exact_mass=73.05222, mass_tolerance_ppm=2))
    assert [str(c.formula) for c in ion.kept] == ["C3H7NO"]
    assert ion.kept[0].ppm_error == pytest.approx(0.07, abs=0.05)
    # the same number read as a neutral mass is 7.5 ppm off
    neutral = derive_formulas(
        FormulaQuery(73, DEFAULTS, (0, 20), exact_mass=73.05222, exact_mass_of="neutral", mass_tolerance_ppm=2)
    )
    assert "C3H7NO" not in [str(c.formula) for c in neutral.kept]


def test_heuristic_warning_when_ratios_hide_the_best_fit():
    cluster = ObservedCluster.from_peaks(84, {84: 62, 85: 0.7, 86: 40, 87: 0.45, 88: 6.3, 49: 100})
    result = derive_formulas(FormulaQuery(84, DEFAULTS, (0, 20), cluster=cluster, enforce_ratios=True))
    assert any("warning: CH2Cl2" in n for n in result.notes)
    relaxed = derive_formulas(FormulaQuery(84, DEFAULTS, (0, 20), element_ratios="off", cluster=cluster))
    assert str(relaxed.kept[0].formula) == "CH2Cl2"
    assert not any("warning" in n for n in relaxed.notes)


def test_deterministic_order():
    q = FormulaQuery(150, DEFAULTS, (0, 20), cluster=ObservedCluster.from_peaks(150, {150: 100, 151: 10, 152: 1}))
    a = [str(c.formula) for c in derive_formulas(q).kept]
    b = [str(c.formula) for c in derive_formulas(q, method="constraint").kept]
    assert a == b and len(a) == len(set(a))


def test_top_limits_returned_candidates_only():
    q = FormulaQuery(200, DEFAULTS, (0, 20))
    full, top = derive_formulas(q), derive_formulas(q, top=5)
    assert [c.formula for c in top.kept] == [c.formula for c in full.kept[:5]]
    assert top.kept_count == full.kept_count


def test_unscored_order_is_parsimony():
    kept = [str(c.formula) for c in derive_formulas(FormulaQuery(78, DEFAULTS, (0, 20))).kept]
    assert kept[0] == "C6H6"


def test_known_formula_and_explain_reasons(cli):
    res = cli("formulas", "112", "--peaks", "112:100 113:6.6 114:32", "--explain")
    assert res.code == 0
    assert "C6H10NO: nitrogen rule: nominal mass 112 is even but N = 1" in res.out
    assert "C5H8N2O: " not in res.out  # two N, DBE 3: kept
    assert "C7H28: DBE = -6 < 0" in res.out


@pytest.mark.parametrize(
    "formula,expected",
    [
        ("C6H5Cl", "kept, rank 1"),
        ("C7H7Cl", "nominal mass 126"),
        ("C9H4", "kept"),
        ("C5H8N2O", "kept"),
        ("C2Cl2H2", "nominal mass 96"),
    ],
)
def test_why(cli, formula, expected):
    res = cli("formulas", "112", "--peaks", "112:100 113:6.6 114:32", "--why", formula)
    assert res.code == 0 and expected in res.out


def test_why_reports_the_rejecting_rule(cli):
    res = cli("formulas", "112", "--why", "C7H14N")  # even M with one N
    assert "rejected by nitrogen rule" in res.out
    res = cli("formulas", "112", "--elements", "C:0-10,H:0-20", "--why", "C6H5Cl")
    assert "outside the element limits" in res.out


def test_formula_nominal_masses_agree_with_query():
    for c in derive_formulas(FormulaQuery(233, DEFAULTS, (0, 20))).kept:
        assert c.nominal_mass == 233 == parse_formula(str(c.formula)).nominal_mass()


# ------------------------------------------------ element-ratio heuristic: demotes, never hides


def _molmass_peaks(formula: str) -> dict[int, float]:
    """The formula's nominal-mass isotope cluster from molmass (a general-purpose reference
    library), as a peak list in % of M+."""
    import molmass

    spectrum = molmass.Formula(formula).spectrum()
    nominal = parse_formula(formula).nominal_mass()
    m = spectrum[nominal].fraction
    return {k: round(v.fraction / m * 100, 1) for k, v in spectrum.items() if k >= nominal and v.fraction / m >= 0.002}


# Common laboratory compounds that break Kind & Fiehn's 'common' ratios (Cl/C, Br/C, N/C, O/C or
# no carbon at all): each must still rank its own formula first from its cluster alone.
@pytest.mark.parametrize(
    "formula",
    ["CH4O", "CH2Cl2", "CHCl3", "CCl4", "CHBr3", "C2H8N2", "CH2O"],
)
def test_heuristic_breakers_rank_their_own_formula_first(formula):
    peaks = _molmass_peaks(formula)  # every isotope peak of at least 0.2 % of M+ is listed
    mass = parse_formula(formula).nominal_mass()
    cluster = ObservedCluster.from_peaks(mass, peaks, complete_above=0.2)
    limits = {**DEFAULTS, "Cl": (0, 4), "Br": (0, 3)}  # CCl4 and CHBr3 exceed the default limits
    query = FormulaQuery(mass, limits, (0, 12), cluster=cluster)
    result = derive_formulas(query, top=5)
    assert str(result.kept[0].formula) == formula, [str(c.formula) for c in result.kept]


def test_enforced_ratios_eliminate_and_demoted_ones_say_why():
    peaks = _molmass_peaks("CH2Cl2")
    cluster = ObservedCluster.from_peaks(84, peaks)
    soft = derive_formulas(FormulaQuery(84, DEFAULTS, (0, 12), cluster=cluster), top=3)
    assert soft.kept[0].demoted_by and "Kind & Fiehn" in soft.kept[0].demoted_by
    assert soft.rejected_counts["element_ratios"] == 0
    hard = derive_formulas(FormulaQuery(84, DEFAULTS, (0, 12), cluster=cluster, enforce_ratios=True), top=3)
    assert "CH2Cl2" not in [str(c.formula) for c in hard.kept]
    assert hard.rejected_counts["element_ratios"] > 0
