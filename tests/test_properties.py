"""Properties on random inputs (Hypothesis; quick profile locally, thorough under CI=true).

- Hill notation round trip: writing a formula and reading it back gives the same composition
  (Hill order as in IUPAC's Green Book, 3rd ed., 2007, §2.10.1 — common practice).
- Each vectorized formula filter equals its one-formula reference twin on random compositions.
- Generator invariants on random small formulas: every SMILES parses in RDKit (a general-purpose
  reference library), has exactly the asked formula by RDKit's own count, and appears once.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from rdkit import Chem
from rdkit.Chem.rdMolDescriptors import CalcMolFormula

from elucidate import FormulaQuery, check_formula, default_elements, isotope_pattern, parse_formula
from elucidate.formula import Formula
from elucidate.formula_search.isotopes import cluster_matrix
from elucidate.formula_search.rules import default_rules
from elucidate.formula_search.search import RULES, first_failure_codes, search_symbols
from elucidate.generator import count_isomers, isomer_smiles

TABLE = default_elements()
SYMBOLS = list(TABLE.symbols)
# the generator walks are the costly examples: a tenth of the profile's budget, at least 20
GENERATOR_EXAMPLES = max(20, settings.default.max_examples // 10)


@st.composite
def compositions(draw: st.DrawFn, *, max_count: int = 40) -> Formula:
    chosen = draw(st.lists(st.sampled_from(SYMBOLS), min_size=1, max_size=6, unique=True))
    counts = {s: draw(st.integers(1, max_count)) for s in chosen}
    return Formula.of(counts)


@given(compositions())
def test_written_formula_reads_back_the_same(formula):
    text = str(formula)
    assert parse_formula(text) == formula
    assert str(parse_formula(text)) == text


@given(compositions())
def test_formula_masses_add_up_from_the_element_table(formula):
    nominal = sum(n * TABLE[s].nominal_mass for s, n in formula.counts)
    assert formula.nominal_mass() == nominal


@st.composite
def filter_questions(draw: st.DrawFn) -> tuple[list[Formula], FormulaQuery]:
    limits = dict(default_rules().default_elements)
    formulas = []
    for _ in range(draw(st.integers(1, 12))):
        counts = {s: draw(st.integers(lo, min(hi, 30))) for s, (lo, hi) in limits.items()}
        counts["C"] = max(counts.get("C", 0), draw(st.integers(0, 3)))
        if any(counts.values()):
            formulas.append(Formula.of(counts))
    if not formulas:
        formulas.append(Formula.of({"C": 1, "H": 4}))
    low = draw(st.integers(-2, 8))
    dbe = (low, low + draw(st.integers(0, 12)))
    exact = draw(st.none() | st.floats(10, 900, allow_nan=False))
    query = FormulaQuery(
        formulas[0].nominal_mass(),
        limits,
        dbe,
        element_ratios=draw(st.sampled_from(["common", "extended", "off"])),
        exact_mass=exact,
        exact_mass_of=draw(st.sampled_from(["ion", "neutral"])),
        mass_tolerance_ppm=draw(st.sampled_from([5.0, 50.0, 5000.0, 1e6])),
    )
    return formulas, query


@given(filter_questions())
def test_vectorized_filters_equal_the_reference_on_random_compositions(question):
    formulas, query = question
    symbols = search_symbols(query.elements, TABLE)
    arr = np.array([[f.get(s) for s in symbols] for f in formulas], dtype=np.int64)
    codes = first_failure_codes(arr, symbols, query, TABLE, default_rules())
    for formula, code in zip(formulas, codes, strict=True):
        verdict = check_formula(formula, query)
        assert (verdict[0] if verdict else None) == (RULES[code] if code >= 0 else None), str(formula)


@given(st.lists(compositions(max_count=25), min_size=1, max_size=8))
def test_vectorized_isotope_clusters_equal_single_ones(formulas):
    rows = np.array([[f.get(s) for s in SYMBOLS] for f in formulas], dtype=np.int64)
    together = cluster_matrix(rows, SYMBOLS, TABLE, 8)
    for formula, row in zip(formulas, together, strict=True):
        assert np.allclose(row, isotope_pattern(formula, max_offset=8), rtol=1e-9, atol=1e-9), str(formula)


@st.composite
def small_formulas(draw: st.DrawFn) -> Formula:
    """Closed-shell formulas of up to six heavy atoms (C, N, O), H by parity."""
    c = draw(st.integers(1, 5))
    n = draw(st.integers(0, 1))
    o = draw(st.integers(0, min(2, 6 - c - n)))
    max_h = 2 * c + n + 2
    h = draw(st.integers(0, max_h).filter(lambda k: (k + n) % 2 == 0))
    return Formula.of({"C": c, "H": h, "N": n, "O": o})


@pytest.mark.slow
@settings(max_examples=GENERATOR_EXAMPLES)
@given(small_formulas())
def test_every_generated_smiles_parses_has_the_formula_and_is_unique(formula):
    smiles = list(isomer_smiles(formula))
    assert len(smiles) == len(set(smiles))
    canonical = set()
    for s in smiles:
        mol = Chem.MolFromSmiles(s)
        assert mol is not None, s
        assert CalcMolFormula(mol) == str(formula), s
        canonical.add(Chem.MolToSmiles(mol))
    assert len(canonical) == len(smiles)  # distinct after RDKit's own canonicalization too
    assert count_isomers(formula) == len(smiles)
