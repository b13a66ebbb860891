"""Questions too large to answer are refused before any work, by the command line with exit 4
and a message naming the file, line and key, the size found and the documented maximum."""

from __future__ import annotations

import pytest

from elucidate.formula_search.search import MAX_COMPOSITIONS, composition_count
from elucidate.generator.tasks import MAX_HEAVY_ATOMS

WIDE = "{C: 0-120, H: 0-250, N: 0-40, O: 0-40, S: 0-10, Cl: 0-6}"
WIDE_LIMITS = {"C": (0, 120), "H": (0, 250), "N": (0, 40), "O": (0, 40), "S": (0, 10), "Cl": (0, 6)}


def _case(m: int, elements: str) -> str:
    return (
        f"schema: 1\nid: wide\ntitle: wide element limits\nmass_spec:\n  molecular_ion: {m}\n"
        f"  peaks: {{{m}: 100, {m + 1}: 30}}\nformula:\n  elements: {elements}\n"
    )


@pytest.mark.parametrize("command", ["check", "formulas", "solve"])
def test_element_limits_above_the_composition_maximum_exit_4_naming_the_line(tmp_path, cli, command):
    path = tmp_path / "wide.yaml"
    path.write_text(_case(1500, WIDE))
    n = composition_count(1500, WIDE_LIMITS)
    assert n > MAX_COMPOSITIONS
    res = cli(command, str(path))
    assert res.code == 4, res.err
    assert f"{path}:8: formula.elements: these element limits allow {n:,} compositions" in res.err
    assert f"above the {MAX_COMPOSITIONS:,} the formula search takes" in res.err
    assert "Traceback" not in res.err


def test_element_limits_on_the_command_line_are_named(cli):
    res = cli("formulas", "1500", "--elements", "C:0-120,H:0-250,N:0-40,O:0-40,S:0-10,Cl:0-6")
    assert res.code == 4 and res.err.startswith("error: --elements: these element limits allow")


def test_check_prefers_bad_input_over_a_refusal_for_size(tmp_path, cli):
    wide, bad = tmp_path / "wide.yaml", tmp_path / "bad.yaml"
    wide.write_text(_case(1500, WIDE))
    bad.write_text(_case(150, "{C: 0-10, H: 0-x}"))
    res = cli("check", str(wide), str(bad))
    assert res.code == 1
    assert "1 of 2 case file(s) invalid" in res.err and "1 of 2 case file(s) refused as too large" in res.err


def test_just_below_the_maximum_is_answered(tmp_path, cli):
    # the largest space the documented limit allows is answered (bench/bench_formulas.py prints
    # its peak memory); a small composition space of heavy formulas is answered at once too
    mass = next(m for m in range(1177, 1100, -1) if composition_count(m, WIDE_LIMITS) <= MAX_COMPOSITIONS)
    path = tmp_path / "max.yaml"
    path.write_text(_case(mass, WIDE))
    res = cli("formulas", str(path), "--top", "3")
    assert res.code == 0, res.err
    assert f"compositions at nominal mass {mass}: {composition_count(mass, WIDE_LIMITS)};" in res.out


def test_formulas_beyond_the_generator_are_skipped_by_solve_with_the_reason(tmp_path, cli):
    # N up to 499 and O up to 499 (a careless range) once took gigabytes; now every formula of
    # M 1500 is about 100 heavy atoms and none is grown
    path = tmp_path / "heavy.yaml"
    path.write_text(_case(1500, "{C: 0-1, H: 0-400, N: 0-499, O: 0-499, S: 0-49}"))
    res = cli("solve", str(path), "--no-record", "--no-cache")
    assert res.code == 4, res.err
    assert f"heavy atoms, above the {MAX_HEAVY_ATOMS} the structure generator takes" in res.out


def test_isomers_refuses_a_formula_beyond_the_generator(cli):
    res = cli("isomers", "C30H20N10O10")
    assert res.code == 4
    expected = f"C30H20N10O10: 50 heavy atoms, above the {MAX_HEAVY_ATOMS} the structure generator takes"
    assert res.err == f"error: {expected}\n"
