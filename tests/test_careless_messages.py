"""What a careless case gets told: a contradiction before any work, an M+ with no peak, an
isotope pattern the element limits exclude, no isotope fit where nothing was compared, and a
suspect's elimination said once, with where it breaks the constraint."""

from __future__ import annotations

import pytest

from elucidate import ObservedCluster, parse_case
from elucidate.errors import ElucidateError
from elucidate.formula_search.isotopes import read_cluster

HEAD = "schema: 1\nid: a\ntitle: t\nmass_spec:\n  molecular_ion: 134\n  peaks: {134: 100, 135: 10.5, 119: 80}\n"


@pytest.mark.parametrize(
    ("tail", "line", "words"),
    [
        # every ketone has C=O (IUPAC Gold Book, 'ketones')
        ("infrared:\n  require: [ketone]\nstructure:\n  forbid_smarts: [\"C=O\"]\n", 10,
         "forbids SMARTS C=O, but every structure with the required group ketone (line 8, infrared.require[0])"),
        # an alcohol has a hydroxy group (Gold Book, 'alcohols')
        ("infrared:\n  require: [alcohol]\n  forbid: [hydroxyl]\n", 9,
         "forbids group hydroxyl, but every structure with the required group alcohol"),
        ("structure:\n  require_smarts: [\"[CH3]C(=O)c\"]\n  forbid_smarts: [\"[CH3]\"]\n", 9,
         "forbids SMARTS [CH3], but every structure with the required SMARTS [CH3]C(=O)c (line 8"),
    ],
)  # fmt: skip
def test_a_contradiction_visible_before_enumeration_is_an_error(tail, line, words):
    with pytest.raises(ElucidateError) as info:
        parse_case(HEAD + tail, file="c.yaml")
    assert words in str(info.value) and "nothing could survive" in str(info.value)
    assert info.value.line == line


def test_a_forbidden_pattern_that_does_not_follow_is_accepted():
    # benzophenone is a ketone with no CH3 and no aliphatic C-C: nothing to refuse
    parse_case(HEAD + 'infrared:\n  require: [ketone]\nstructure:\n  forbid_smarts: ["[CH3]", "CC"]\n', file="c.yaml")


def test_isomers_refuses_the_contradiction_too(cli):
    res = cli("isomers", "C8H8O", "--require", "ketone", "--forbid-smarts", "[#6]=O")
    assert res.code == 1
    assert "every structure with the required group ketone matches the forbidden SMARTS [#6]=O" in res.err


def test_a_molecular_ion_without_its_peak_is_flagged_not_refused(tmp_path, cli):
    # EI often shows no M+ (alcohols): allowed, but check and solve say so (common practice)
    path = tmp_path / "m.yaml"
    path.write_text("schema: 1\nid: m\ntitle: t\nmass_spec:\n  molecular_ion: 136\n  peaks: {121: 100, 93: 40}\n")
    res = cli("check", str(path))
    assert res.code == 0
    assert f"warning: {path}:5: mass_spec.molecular_ion: no peak at m/z 136 in mass_spec.peaks" in res.err
    solved = cli("solve", str(path), "--no-record", "--json", "--formulas", "1", "--limit", "20000")
    assert solved.code in (0, 3, 4), solved.err
    assert any("no peak at m/z 136" in n for n in solved.json()["notes"])


def test_no_fit_is_shown_where_no_isotope_peak_was_compared(cli):
    # M listed alone: nothing to compare, so no cluster and no fit (formerly every formula 1.000)
    assert ObservedCluster.from_peaks(136, {136: 30, 121: 100, 93: 40}) is None
    assert ObservedCluster.from_peaks(136, {136: 30, 121: 100}, complete_above=5.0) is not None
    res = cli("formulas", "136", "--peaks", "136:30 121:100 93:40 77:20", "--json", "--top", "5")
    assert res.code == 0 and all(d["score"] is None for d in res.json())
    text = cli("formulas", "136", "--peaks", "136:30 121:100 93:40 77:20", "--top", "3").out
    assert "no isotope peaks at M+ in the peak list" in text and "1.000" not in text


def test_a_cluster_reading_as_chlorine_while_chlorine_is_excluded_says_so(cli):
    # M+2 about 32 % of M+ is one Cl (35Cl:37Cl about 3:1, IUPAC isotopic abundances)
    cluster = ObservedCluster.from_peaks(112, {112: 100, 113: 6.6, 114: 32.4, 115: 2.1, 77: 46})
    assert cluster is not None
    reading = read_cluster(cluster, allowed={"C": (0, 20), "H": (0, 40), "O": (0, 4)})
    assert reading.excluded_reading is not None
    assert "reads as Cl1" in reading.excluded_reading and "formula.elements excludes Cl" in reading.excluded_reading
    assert read_cluster(cluster, allowed={"C": (0, 20), "H": (0, 40), "Cl": (0, 2)}).excluded_reading is None
    res = cli(
        "formulas", "112", "--peaks", "112:100 113:6.6 114:32.4 115:2.1 77:46", "--elements", "C:0-20,H:0-40,O:0-4"
    )
    assert "M+2 = 32.4 % of M+ reads as Cl1" in res.out and "widen formula.elements" in res.out


def test_a_suspect_eliminated_by_a_constraint_is_told_where_not_the_constraint_twice(cases_dir, tmp_path, cli):
    text = (cases_dir / "cr-0509-i.yaml").read_text()
    text = text.replace('"Cc1ccccc1"]', '"Cc1ccccc1", "CCC(=O)c1ccccc1"]\n  forbid_smarts: ["[CH2]C(=O)"]')
    text = text.replace('  suspects: ["CC(=O)c1ccc(C)cc1", "CCC(=O)c1ccccc1", ', '  suspects: ["CC(=O)c1ccc(C)cc1", ')
    path = tmp_path / "s.yaml"
    path.write_text(text)
    res = cli("solve", str(path), "--no-record", "--json")
    assert res.code == 0, res.err
    suspect = next(s for s in res.json()["suspects"] if s["given"] == "CCC(=O)c1ccccc1")
    assert suspect["eliminated_by"] == "forbid SMARTS [CH2]C(=O)"
    # propiophenone: C2 is the CH2, C3 the carbonyl carbon, O4 its oxygen, as written
    assert suspect["why"] == "a match at atoms C2, C3, O4 (numbered from 1 in the order of its SMILES)"
    assert "[CH2]C(=O)" not in suspect["why"]
