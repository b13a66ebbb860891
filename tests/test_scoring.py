"""How the techniques' parts combine (constraints/scoring.yaml): a capped log-likelihood sum in
which no single technique can veto a candidate.

The properties are checked with Hypothesis on random assessments; the arithmetic of a weighted
sum of log-likelihoods is the usual one (common practice).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from elucidate import ElucidateError
from elucidate.evidence import TECHNIQUES, Assessment
from elucidate.solver.scoring import combine, component_keys, default_scoring, load_scoring

SCORING = default_scoring()
KEYS = {t.name: t.weight_key for t in (cls() for cls in TECHNIQUES)}
NAMES = sorted(KEYS)

nats = st.floats(0, 50, allow_nan=False)


@st.composite
def evidence(draw: st.DrawFn) -> dict[str, Assessment]:
    return {name: Assessment(name, draw(nats), draw(nats)) for name in NAMES}


def total(assessments: dict[str, Assessment]) -> float:
    return combine(list(assessments.values()), KEYS, SCORING).log_likelihood


def test_shipped_table_validates_and_names_every_technique():
    SCORING.validate()
    assert set(SCORING.techniques) == set(component_keys())
    for weight in SCORING.techniques.values():
        assert weight.weight >= 0 and weight.against_cap >= 0 and weight.unexplained_cap >= 0


def test_a_table_missing_a_technique_is_refused_with_its_key(tmp_path):
    text = tmp_path / "scoring.yaml"
    keys = component_keys()
    lines = [f"  {k}: {{weight: 1, against_cap: 3, unexplained_cap: 1}}" for k in keys[:-1]]
    text.write_text("techniques:\n" + "\n".join(lines) + "\nformula_cut: 20\nworse_than_skipped: 1\n")
    with pytest.raises(ElucidateError, match=keys[-1]) as info:
        load_scoring(text)
    assert info.value.file == str(text)


def test_a_perfect_fit_has_log_likelihood_zero_and_score_one():
    combined = combine([Assessment(n) for n in NAMES], KEYS, SCORING)
    assert combined.log_likelihood == 0 and combined.score == 1


def test_log_likelihood_is_the_weighted_capped_sum():
    a = Assessment("fragments", against=0.5, unexplained=10.0)  # unexplained far above its cap
    w = SCORING.techniques["fragments"]
    combined = combine([a], KEYS, SCORING)
    assert combined.log_likelihood == pytest.approx(-w.weight * (0.5 + w.unexplained_cap))
    assert combined.score == pytest.approx(math.exp(-(0.5 + w.unexplained_cap)))


@given(evidence(), st.sampled_from(NAMES), nats, nats)
def test_one_technique_moves_a_candidate_by_at_most_its_bound(assessments, name, against, unexplained):
    changed = dict(assessments)
    changed[name] = Assessment(name, against, unexplained)
    assert abs(total(changed) - total(assessments)) <= SCORING.techniques[KEYS[name]].bound + 1e-9


@given(evidence(), st.sampled_from(NAMES), nats)
def test_data_a_technique_cannot_explain_costs_at_most_its_unexplained_cap(assessments, name, unexplained):
    perfect = dict(assessments)
    perfect[name] = Assessment(name)
    unexplained_only = dict(assessments)
    unexplained_only[name] = Assessment(name, 0.0, unexplained)
    w = SCORING.techniques[KEYS[name]]
    assert total(perfect) - total(unexplained_only) <= w.weight * w.unexplained_cap + 1e-9


@given(evidence(), evidence(), st.sampled_from(NAMES))
def test_no_technique_vetoes(first, second, name):
    # whatever technique `name` says of `first`, it cannot take it below `second` when `second`
    # is behind on the other techniques by more than that technique's bound
    others = [n for n in NAMES if n != name]
    margin = total({n: first[n] for n in others}) - total({n: second[n] for n in others})
    if margin > SCORING.techniques[KEYS[name]].bound + 1e-9:
        worst = dict(first)
        worst[name] = Assessment(name, 1e9, 1e9)
        best = dict(second)
        best[name] = Assessment(name)
        assert total(worst) > total(best)


@given(evidence(), st.sampled_from(NAMES), st.floats(0, 5, allow_nan=False))
def test_more_evidence_against_never_raises_a_candidate(assessments, name, extra):
    worse = dict(assessments)
    a = assessments[name]
    worse[name] = Assessment(name, a.against + extra, a.unexplained)
    assert total(worse) <= total(assessments) + 1e-12


def test_an_assessment_refuses_negative_or_nan_parts():
    with pytest.raises(ValueError):
        Assessment("fragments", against=-1.0)
    with pytest.raises(ValueError):
        Assessment("fragments", unexplained=float("nan"))
