"""Isotope clusters against published ratios and an independent library.

Halogen ratios: the textbook values Cl1 100:32, Cl2 100:65:10 (9:6:1), Br1 100:98 (1:1),
Br2 51:100:49 (1:2:1), S1 M+2 4.4 % (common practice; e.g. Silverstein, Spectrometric
Identification of Organic Compounds, isotope-abundance tables — from memory). The fine values are
compared with molmass's isotope spectrum (a general-purpose library from the package registry).
"""

from __future__ import annotations

import numpy as np
import pytest

from elucidate import ObservedCluster, isotope_pattern, parse_formula, read_cluster
from elucidate.formula_search import FormulaQuery, derive_formulas
from elucidate.formula_search.isotopes import IsotopeTolerance, chi2_matrix, cluster_matrix, fit_cluster


def _relative_to_max(pattern):
    return pattern / pattern.max() * 100


@pytest.mark.parametrize(
    "formula,offsets,expected,tol",
    [
        ("CH3Cl", (0, 2), (100, 32), 1.5),
        ("CH2Cl2", (0, 2, 4), (100, 65, 10), 1.5),
        ("CH3Br", (0, 2), (100, 98), 1.5),
        ("CH2Br2", (0, 2, 4), (51, 100, 49), 1.5),
    ],
)
def test_halogen_patterns_match_textbook_ratios(formula, offsets, expected, tol):
    rel = _relative_to_max(isotope_pattern(parse_formula(formula)))
    for k, value in zip(offsets, expected):
        assert rel[k] == pytest.approx(value, abs=tol)


def test_sulfur_m_plus_2():
    # one S: M+2 about 4.4 % of M from 34S (common practice), before 13C2 and 18O contributions
    pattern = isotope_pattern(parse_formula("H2S"))
    assert pattern[2] == pytest.approx(4.47, abs=0.1)


@pytest.mark.parametrize("n", [1, 2, 5, 8, 12, 20])
def test_m_plus_1_about_1_1_percent_per_carbon(n):
    # 13C: 1.07 % abundance -> 1.08 % of M per carbon (IUPAC 2009 abundances; the textbook 1.1 %)
    pattern = isotope_pattern(parse_formula(f"C{n}"))
    assert pattern[1] == pytest.approx(1.0816 * n, rel=1e-3)


@pytest.mark.parametrize(
    "formula",
    [
        "C6H5Cl",
        "C6H4Cl2",
        "C6H5Br",
        "C6H4Br2",
        "C4H4S",
        "C8H8O",
        "C2H3Cl3",
        "C3H9OSi",
        "CHBrCl2",
        "C10H12N2O3S",
        "C6Cl6",
    ],
)
def test_pattern_matches_molmass(formula):
    import molmass

    spectrum = molmass.Formula(formula).spectrum()
    nominal = parse_formula(formula).nominal_mass()
    ours = isotope_pattern(parse_formula(formula), max_offset=8)
    m = spectrum[nominal].fraction
    for k in range(9):
        ref = spectrum[nominal + k].fraction / m * 100 if nominal + k in spectrum else 0.0
        assert ours[k] == pytest.approx(ref, abs=0.02 + 1e-3 * ref)


def test_vectorized_patterns_equal_single_patterns():
    formulas = ["C6H5Cl", "CH2Cl2", "C4H4S", "C8H8O", "C18H5IN4O6", "C2H6ClFSi"]
    from elucidate import default_elements

    symbols = list(default_elements().symbols)
    rows = np.array([[parse_formula(f).get(s) for s in symbols] for f in formulas])
    together = cluster_matrix(rows, symbols, default_elements(), 8)
    for f, row in zip(formulas, together):
        assert np.allclose(row, isotope_pattern(parse_formula(f), max_offset=8), rtol=1e-12, atol=1e-12)


def test_fit_prefers_the_right_chlorine_count():
    observed = ObservedCluster.from_peaks(112, {112: 100, 113: 6.6, 114: 32.1})
    one = fit_cluster(isotope_pattern(parse_formula("C6H5Cl")), observed)
    none = fit_cluster(isotope_pattern(parse_formula("C7H12O")), observed)
    assert one.score > 0.9 > 0.01 > none.score


def test_fit_vectorized_matches_single():
    observed = ObservedCluster.from_peaks(120, {120: 30, 121: 2.64, 122: 0.16, 105: 100})
    pats = np.array([isotope_pattern(parse_formula(f)) for f in ("C8H8O", "C9H12", "C7H4O2")])
    chi2, _, _ = chi2_matrix(pats, observed)
    for p, c in zip(pats, chi2):
        assert fit_cluster(p, observed).chi2 == pytest.approx(c)


def test_unlisted_peak_above_threshold_counts_as_zero():
    # 114 not listed although the list reports peaks down to 5 %: a Cl compound would show it
    observed = ObservedCluster.from_peaks(112, {112: 100, 113: 6.6, 77: 5})
    fit = fit_cluster(isotope_pattern(parse_formula("C6H5Cl")), observed)
    assert any(k == 2 and obs == 0.0 for k, obs, _, _ in fit.compared)
    # a missing peak costs a bounded amount: z² capped at the table's unlisted_cap (3 sigma)
    assert fit.chi2 == pytest.approx(9.0, abs=0.01)
    benzene_like = fit_cluster(isotope_pattern(parse_formula("C7H12O")), observed)
    assert benzene_like.score > fit.score


def test_a_listed_peak_at_the_wrong_height_costs_more_than_a_missing_one():
    # common practice: an M+2 listed at 0 % is stronger evidence than an M+2 left out
    missing = ObservedCluster.from_peaks(112, {112: 100, 113: 6.6, 77: 5})
    listed = ObservedCluster.from_peaks(112, {112: 100, 113: 6.6, 114: 0.0001, 77: 0.0001})
    pattern = isotope_pattern(parse_formula("C6H5Cl"))
    assert fit_cluster(pattern, listed).chi2 > 5 * fit_cluster(pattern, missing).chi2


def _bromide_query(peaks: dict[int, float]) -> FormulaQuery:
    limits = {"C": (0, 12), "H": (0, 30), "N": (0, 2), "O": (0, 3), "Br": (0, 2), "Cl": (0, 2), "S": (0, 1)}
    return FormulaQuery(136, limits, (0, 20), cluster=ObservedCluster.from_peaks(136, peaks))


def test_a_bromine_cluster_missing_its_m1_still_ranks_the_bromide_first():
    # 1-bromobutane C4H9Br, M 136 with M+2 97 % of M (79Br/81Br, IUPAC abundances) and M+1 left
    # out of a list that reports 0.1 % peaks: the Br formula must rank first (it fits on M+2)
    query = _bromide_query({136: 97, 138: 94, 139: 0.1, 57: 100, 41: 60, 29: 40, 27: 30})
    result = derive_formulas(query, top=3)
    assert str(result.kept[0].formula) == "C4H9Br"


def test_a_cluster_every_formula_fits_badly_falls_back_to_the_reading_by_eye():
    # an interfering ion at M+3 (20 % of M) spoils every fit; the 97 % M+2 still means one Br
    query = _bromide_query({136: 97, 137: 4.4, 138: 94, 139: 20, 57: 100, 41: 60})
    result = derive_formulas(query, top=3)
    assert result.poor_cluster
    assert any("by-eye reading (Br1)" in n for n in result.notes)
    assert all(c.formula.get("Br") == 1 for c in result.kept)
    assert str(result.kept[0].formula) == "C4H9Br"


def test_weak_molecular_ion_widens_tolerance():
    tol = IsotopeTolerance()
    assert tol.sigma(7.0, 2.0) > tol.sigma(7.0, 100.0)


def test_no_m_peak_gives_no_cluster():
    assert ObservedCluster.from_peaks(120, {105: 100, 121: 2}) is None


@pytest.mark.parametrize(
    "peaks,expected",
    [
        ({112: 100, 113: 6.6, 114: 32.4}, "Cl1"),
        ({84: 62, 85: 0.7, 86: 40, 88: 6.3, 49: 100}, "Cl2"),
        ({156: 100, 157: 6.6, 158: 97.5}, "Br1"),
        ({234: 51, 235: 3.3, 236: 100, 238: 49}, "Br2"),
        ({84: 100, 85: 5.3, 86: 4.6}, "S1"),
        ({120: 30, 121: 2.64, 122: 0.16, 105: 100}, "none"),
    ],
)
def test_read_cluster_names_heavy_atoms(peaks, expected):
    m = min(mz for mz in peaks if mz + 1 in peaks)
    reading = read_cluster(ObservedCluster.from_peaks(m, peaks))
    assert reading.heavy_atoms.split(" (or")[0] == expected


def test_read_cluster_carbon_estimate():
    # M+1 = 8.8 % -> about 8 C at 1.08 % per carbon (acetophenone-like cluster, common practice)
    reading = read_cluster(ObservedCluster.from_peaks(120, {120: 30, 121: 2.64, 122: 0.16, 105: 100}))
    assert reading.carbon_estimate == pytest.approx(8.1, abs=0.2)
    assert reading.carbon_range is not None and reading.carbon_range[0] <= 8 <= reading.carbon_range[1]


@pytest.mark.parametrize(
    "mass,peaks",
    [
        (120, {120: 100, 121: 0.3, 105: 50}),  # M+1 below what one carbon gives (1.08 %, common practice)
        (112, {112: 100, 113: 0.0, 114: 32}),  # the same beside a chlorine's M+2
    ],
)
def test_m1_too_low_is_said_and_never_read_as_a_negative_carbon_count(mass, peaks):
    from elucidate import default_elements

    reading = read_cluster(ObservedCluster.from_peaks(mass, peaks), default_elements())
    assert reading.carbon_estimate is None and reading.carbon_range is None
    assert any("too low to read" in n for n in reading.notes), reading.notes
    assert not any("about -" in n for n in reading.notes)
