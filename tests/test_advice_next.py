"""What to measure next (elucidate.advice_next): the expected information gain is the Shannon
entropy of the outcome distribution (Shannon, Bell Syst. Tech. J. 27, 379 (1948)), checked by hand
here. Signal counts of the methylacetophenones (para 7, meta and ortho 9 13C signals) follow from
their symmetry (common practice, as in any spectroscopy text).
"""

from __future__ import annotations

import math

import pytest

from elucidate.advice_next import rank_measurements
from elucidate.case import parse_case

PARA, META, ORTHO = "CC(=O)c1ccc(C)cc1", "CC(=O)c1cccc(C)c1", "CC(=O)c1ccccc1C"


def _shortlist(*pairs: tuple[str, float]) -> list[dict]:
    return [{"smiles": s, "formula": "C9H10O", "log_likelihood": ll} for s, ll in pairs]


def test_a_13c_count_splits_the_ortho_meta_and_para_isomers() -> None:
    ranked = {m.name: m for m in rank_measurements(_shortlist((PARA, -1.0), (META, -1.0), (ORTHO, -1.0)))}
    c13 = ranked["a 13C spectrum (signal count)"]
    by_outcome = {o: set(s) for o, _, s in c13.outcomes}
    assert by_outcome == {"7 13C signals": {PARA}, "9 13C signals": {META, ORTHO}}
    # H = -(1/3 log2 1/3 + 2/3 log2 2/3) = 0.9183 bits
    assert c13.bits == pytest.approx(-(1 / 3) * math.log2(1 / 3) - (2 / 3) * math.log2(2 / 3))
    assert "an exact mass (HRMS)" not in ranked  # one formula: HRMS cannot split them


def test_weights_follow_the_log_likelihoods() -> None:
    # weights e^0 : e^-ln3 = 3 : 1 -> p = 3/4, 1/4
    ranked = {m.name: m for m in rank_measurements(_shortlist((PARA, 0.0), (META, -math.log(3))))}
    c13 = ranked["a 13C spectrum (signal count)"]
    assert [round(p, 6) for _, p, _ in c13.outcomes] == [0.75, 0.25]
    assert c13.bits == pytest.approx(-(0.75 * math.log2(0.75) + 0.25 * math.log2(0.25)))


def test_measurements_already_in_the_case_are_left_out() -> None:
    case = parse_case(
        "schema: 1\nid: x\ntitle: t\nmass_spec:\n  molecular_ion: 134\n  peaks: {134: 100}\n"
        "infrared:\n  bands: [1685]\nnmr:\n  c13_signals: 7\n"
    )
    names = {m.name for m in rank_measurements(_shortlist((PARA, -1.0), (META, -1.0), (ORTHO, -1.0)), case)}
    assert "a 13C spectrum (signal count)" not in names
    assert not any(name.startswith("an IR band") for name in names)
    assert "a 1H spectrum (integral pattern)" in names


def test_next_on_the_command_line(cli, tmp_path, cases_dir) -> None:
    import shutil

    case = tmp_path / "u.yaml"
    shutil.copy(cases_dir / "cr-0509-i.yaml", case)
    text = case.read_text().replace("nmr:\n  c13_signals: 7\n  c13_multiplicity: {CH3: 2, CH: 2, C: 3}\n", "")
    case.write_text(text)
    assert cli("solve", str(case), "--top", "5").code == 0
    res = cli("next", str(case), "--json")
    assert res.code == 0, res.err
    data = res.json()["measurements"]
    assert data and data == sorted(data, key=lambda m: -m["bits"])
    assert any(m["measurement"] == "a 13C spectrum (signal count)" for m in data)
    text_out = cli("next", str(case)).out
    assert text_out.startswith("what to measure next for cr-0509-i") and "bits expected" in text_out
