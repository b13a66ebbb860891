"""Case files: strict validation with file, line and key in every error; fuzzing."""

from __future__ import annotations

import hashlib
import textwrap
from pathlib import Path

import pytest
import yaml
from hypothesis import given, settings
from hypothesis import strategies as st

from elucidate import ElucidateError, load_case, parse_case

DEMO_CASES = Path(__file__).resolve().parents[1] / "cases"  # parametrizes at collection time

GOOD = textwrap.dedent(
    """\
    schema: 1
    id: t-001
    title: test unknown
    mass_spec:
      ionization: EI
      molecular_ion: 120
      peaks: {120: 30, 121: 2.7, 122: 0.2, 105: 100, 77: 75}
    formula:
      elements: {C: 0-40, H: 0-80, N: 0-4, O: 0-6}
      dbe: 0-20
    """
)


def test_good_case_loads_typed_values():
    case = parse_case(GOOD, file="t.yaml")
    assert case.id == "t-001" and case.mass_spec is not None
    assert case.mass_spec.molecular_ion == 120
    assert case.mass_spec.peaks[121] == pytest.approx(2.7)
    assert case.mass_spec.base_peak == 105
    assert case.formula.elements == {"C": (0, 40), "H": (0, 80), "N": (0, 4), "O": (0, 6)}
    assert case.formula.dbe == (0, 20)


@pytest.mark.parametrize("path", sorted(DEMO_CASES.glob("*.yaml")), ids=lambda p: p.name)
def test_demo_cases_load_and_stay_unmodified(path):
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    case = load_case(path)
    assert case.id == path.stem
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before


def _replace(old: str, new: str) -> str:
    assert old in GOOD
    return GOOD.replace(old, new)


BAD = [
    # (description, text, line, key, words in the message)
    ("typo in a top-level key", _replace("title:", "titel:"), 3, "titel", ["unknown key", "did you mean 'title'"]),
    (
        "typo in a nested key",
        _replace("molecular_ion:", "molecular_ino:"),
        6,
        "mass_spec.molecular_ino",
        ["unknown key"],
    ),
    ("decimal comma in a flow mapping", _replace("121: 2.7", "121: 2,7"), 7, "mass_spec.peaks.7", ["comma"]),
    (
        "decimal comma in block style",
        _replace("  molecular_ion: 120", "  molecular_ion: 120,5"),
        6,
        "mass_spec.molecular_ion",
        ["comma"],
    ),
    ("comma in a range", _replace("C: 0-40", "C: 0,40"), 9, "formula.elements.40", ["comma"]),
    ("negative m/z", _replace("77: 75", "-77: 75"), 7, "mass_spec.peaks.-77", ["positive m/z"]),
    ("fractional m/z", _replace("77: 75", "77.2: 75"), 7, "mass_spec.peaks.77.2", ["whole"]),
    ("intensity above 100", _replace("77: 75", "77: 175"), 7, "mass_spec.peaks.77", ["0 to 100"]),
    ("negative intensity", _replace("77: 75", "77: -5"), 7, "mass_spec.peaks.77", ["0 to 100"]),
    ("no base peak at 100", _replace("105: 100", "105: 90"), 7, "mass_spec.peaks", ["largest must be 100"]),
    ("range low above high", _replace("C: 0-40", "C: 40-10"), 9, "formula.elements.C", ["exceeds"]),
    ("dbe range reversed", _replace("dbe: 0-20", "dbe: 20-1"), 10, "formula.dbe", ["exceeds"]),
    (
        "unknown element",
        _replace("O: 0-6}", "O: 0-6, Xe: 0-1}"),
        9,
        "formula.elements.Xe",
        ["unknown element", "known elements"],
    ),
    ("other ionization", _replace("ionization: EI", "ionization: CI"), 5, "mass_spec.ionization", ["EI"]),
    (
        "fragment above M+",
        _replace("77: 75", "77: 75, 160: 5"),
        7,
        "mass_spec.peaks.160",
        ["above the molecular ion", "at most m/z 124"],
    ),
    (
        "gap above M+",
        _replace("77: 75", "77: 75, 126: 1").replace("O: 0-6}", "O: 0-6, Cl: 0-3}"),
        7,
        "mass_spec.peaks.126",
        ["not part of its isotope cluster"],
    ),
    ("wrong schema", _replace("schema: 1", "schema: 2"), 1, "schema", ["schema 1"]),
    ("bad id", _replace("id: t-001", "id: T 001"), 2, "id", ["not a valid id"]),
    ("duplicate key", _replace("title: test unknown", "title: a\ntitle: b"), 4, "title", ["duplicate"]),
    (
        "M+ wrong type",
        _replace("molecular_ion: 120", "molecular_ion: [120]"),
        6,
        "mass_spec.molecular_ion",
        ["nominal m/z"],
    ),
    ("M+ as text", _replace("molecular_ion: 120", "molecular_ion: absent"), 6, "mass_spec.molecular_ion", ["unknown"]),
    ("known formula mass mismatch", GOOD + "  known: C8H10O\n", 11, "formula.known", ["nominal mass 122"]),
    ("known formula unreadable", GOOD + "  known: C8H8O+\n", 11, "formula.known", ["cannot read"]),
    (
        "ppm without exact mass",
        _replace("  ionization: EI", "  ionization: EI\n  mass_tolerance_ppm: 3"),
        6,
        "mass_spec.mass_tolerance_ppm",
        ["without exact_mass"],
    ),
    (
        "exact mass far from M",
        _replace("  ionization: EI", "  ionization: EI\n  exact_mass: 122.07"),
        6,
        "mass_spec.exact_mass",
        ["cannot belong"],
    ),
    ("tab indentation", GOOD.replace("  ionization", "\tionization"), 5, None, ["not valid YAML"]),
    ("not a mapping", "- 1\n- 2\n", 1, None, ["YAML mapping"]),
    ("empty file", "", 1, None, ["empty"]),
    ("missing id", _replace("id: t-001\n", ""), 1, None, ["missing required key 'id'"]),
    (
        "section not a mapping",
        _replace("formula:\n  elements: {C: 0-40, H: 0-80, N: 0-4, O: 0-6}\n  dbe: 0-20\n", "formula: C8H8O\n"),
        8,
        "formula",
        ["expected a mapping"],
    ),
]


@pytest.mark.parametrize("text,line,key,words", [b[1:] for b in BAD], ids=[b[0] for b in BAD])
def test_bad_cases_name_line_and_key(text, line, key, words):
    with pytest.raises(ElucidateError) as info:
        parse_case(text, file="unk.yaml")
    err = info.value
    assert err.file == "unk.yaml"
    assert err.line == line, str(err)
    assert err.key == key, str(err)
    message = str(err)
    assert message.startswith(f"unk.yaml:{line}: ")
    for word in words:
        assert word in message


def test_known_formula_outside_limits_message():
    with pytest.raises(ElucidateError, match=r"outside formula\.elements"):
        parse_case(GOOD.replace("O: 0-6}", "O: 0-1}") + "  known: C7H4O2\n")


@pytest.mark.parametrize(
    "section,line,key,words",
    [
        (
            "infrared:\n  bands:\n    - {at: 1715, strength: strng}\n",
            13,
            "infrared.bands[0].strength",
            ["strong, medium, weak"],
        ),
        ("infrared:\n  bands: [1715, 99999]\n", 12, "infrared.bands[1]", ["400-4000"]),
        (
            "infrared:\n  require: [ketone]\n  forbid: [ketone]\n",
            13,
            "infrared.forbid",
            ["both required and forbidden"],
        ),
        ("uv_vis:\n  lambda_max: 250-235\n", 12, "uv_vis.lambda_max", ["exceeds"]),
        ("uv_vis:\n  lambda_max: [235, 250]\n", 12, "uv_vis.lambda_max", ["ambiguous", "235-250", "maxima"]),
        ("uv_vis:\n  maxima: [229, {nm: 273, strength: weakish}]\n", 12, "uv_vis.maxima[1].strength", ["weak"]),
        ("uv_vis:\n  lambda_max: 241\n  solvent: benzine\n", 13, "uv_vis.solvent", ["ethanol"]),
        (
            "nmr:\n  c13_signals: 6\n  c13_multiplicity: {CH3: 1, CH: 3, C: 1}\n",
            13,
            "nmr.c13_multiplicity",
            ["add up to 5"],
        ),
        ("nmr:\n  c13_multiplicity: {CH4: 1}\n", 12, "nmr.c13_multiplicity.CH4", ["unknown key"]),
        ("structure:\n  require_smarts: ['[C;=O']\n", 12, "structure.require_smarts[0]", ["SMARTS"]),
        ("structure:\n  suspects: ['c1ccccc']\n", 12, "structure.suspects[0]", ["SMILES"]),
    ],
)
def test_later_sections_are_validated(section, line, key, words):
    with pytest.raises(ElucidateError) as info:
        parse_case(GOOD + section, file="unk.yaml")
    assert (info.value.line, info.value.key) == (line, key), str(info.value)
    for word in words:
        assert word in str(info.value)


def test_full_later_sections_load(cases_dir):
    case = load_case(cases_dir / "cr-0502-h.yaml")
    assert case.uv_vis is not None and case.uv_vis.lambda_max == (241.0, 241.0)
    assert case.nmr is not None and case.nmr.c13_multiplicity == {"CH3": 1, "CH2": 0, "CH": 3, "C": 2}
    assert case.infrared is not None and case.infrared.bands[1].at == 1686


def test_molecular_ion_unknown():
    case = parse_case(GOOD.replace("molecular_ion: 120", "molecular_ion: unknown"))
    assert case.mass_spec is not None and case.mass_spec.molecular_ion is None


def test_missing_file_and_bad_bytes(tmp_path):
    with pytest.raises(ElucidateError, match="file not found"):
        load_case(tmp_path / "nope.yaml")
    bad = tmp_path / "latin1.yaml"
    bad.write_bytes(b"schema: 1\nid: x\ntitle: caf\xe9\n")
    with pytest.raises(ElucidateError, match="UTF-8") as info:
        load_case(bad)
    assert info.value.line == 3


def test_alias_bomb_is_refused():
    bomb = "a: &a [1,1,1,1,1,1,1,1,1,1]\n" + "".join(
        f"{c}: &{c} [{','.join(['*' + p] * 10)}]\n" for p, c in zip("abcdefgh", "bcdefghi")
    )
    with pytest.raises(ElucidateError, match="too large"):
        parse_case(bomb)


# ------------------------------------------------------------------ fuzzing
# Whatever the text, the loader answers with a case or with ElucidateError — never anything else.

_scalars = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(["EI", "CI", "unknown", "0-40", "40-0", "C8H8O", "2,7", "none", "1e400"]),
)
_keys = st.sampled_from(
    [
        "schema",
        "id",
        "title",
        "mass_spec",
        "ionization",
        "molecular_ion",
        "peaks",
        "formula",
        "known",
        "elements",
        "dbe",
        "infrared",
        "bands",
        "uv_vis",
        "lambda_max",
        "nmr",
        "c13_signals",
        "structure",
        "suspects",
        "C",
        "H",
        "exact_mass",
        "mass_tolerance_ppm",
        "at",
        "strength",
        "element_ratios",
        120,
        121,
        -5,
        1.5,
    ]
)
_values = st.recursive(
    _scalars,
    lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(_keys, inner, max_size=5)),
    max_leaves=8,
)


def _mutated_good():
    lines = GOOD.splitlines()
    return st.tuples(st.integers(0, len(lines) - 1), st.integers(0, 40), st.text(max_size=6)).map(
        lambda t: "\n".join(lines[: t[0]] + [lines[t[0]][: t[1]] + t[2] + lines[t[0]][t[1] :]] + lines[t[0] + 1 :])
    )


def _dumped():
    base = st.fixed_dictionaries(
        {"schema": st.sampled_from([1, 1, 2]), "id": st.sampled_from(["u1", "U 1"])},
        optional={
            "mass_spec": _values,
            "formula": _values,
            "title": _values,
            "nmr": _values,
            "infrared": _values,
            "uv_vis": _values,
            "structure": _values,
        },
    )
    return base.map(lambda d: yaml.safe_dump(d, default_flow_style=None))


# the cheapest and broadest fuzz: four times the profile's budget (2,000 examples under CI=true)
@settings(max_examples=4 * settings.default.max_examples)
@given(st.one_of(_mutated_good(), _dumped(), st.text(max_size=80)))
def test_fuzzed_case_text_raises_only_domain_errors(text):
    try:
        parse_case(text, file="fuzz.yaml")
    except ElucidateError as exc:
        assert str(exc).startswith("fuzz.yaml")


def test_infrared_group_names_are_checked_against_the_vocabulary():
    with pytest.raises(ElucidateError, match="did you mean 'alcohol'") as info:
        parse_case(GOOD + "infrared:\n  require: [ketone, alcohl]\n", file="unk.yaml")
    assert info.value.key == "infrared.require[1]" and info.value.line == 12


@pytest.mark.parametrize(
    ("tail", "words"),
    [
        # the characters are named by their Unicode names (The Unicode Standard, U+2013, U+2212)
        ("formula:\n  elements: {C: 0–20, H: 0-30}\n", "U+2013 EN DASH, not the hyphen-minus '-': write 0-20"),
        ("formula:\n  elements: {C: 0−20, H: 0-30}\n", "U+2212 MINUS SIGN"),
        ("infrared:\n  bands:\n    - {at: 1700, strength: s}\n", "got 's' (did you mean 'strong'?)"),
        ("infrared:\n  bands:\n    - {at: 1700, strength: med}\n", "(did you mean 'medium'?)"),
        ("notes: " + "[" * 3000 + "]" * 3000 + "\n", "values nested too deeply to read"),
    ],
)
def test_careless_input_gets_a_named_cause(tail, words):
    head = "schema: 1\nid: a\ntitle: t\nmass_spec:\n  molecular_ion: 134\n  peaks: {134: 100}\n"
    with pytest.raises(ElucidateError) as info:
        parse_case(head + tail, file="c.yaml")
    assert words in str(info.value)


def test_a_huge_number_is_refused_with_its_length_not_echoed():
    text = "schema: 1\nid: a\ntitle: t\nmass_spec:\n  molecular_ion: " + "9" * 5000 + "\n  peaks: {134: 100}\n"
    with pytest.raises(ElucidateError) as info:
        parse_case(text, file="c.yaml")
    message = str(info.value)
    assert "(5,000 characters)" in message and len(message) < 300


_HEAD = "schema: 1\nid: a\ntitle: t\n"
_MS = "mass_spec:\n  molecular_ion: 134\n  peaks: {134: 100}\n"


@pytest.mark.parametrize(
    ("text", "line", "words"),
    [
        (_HEAD + "mass_spec:\n  molecular_ion:\n  peaks: {134: 100}\n", 5, "no value; write the nominal m/z"),
        (_HEAD + "mass_spec:\n  molecular_ion: unknown\n  peaks: {99999999999999999999: 100}\n", 6,
         "from 1 to 5,000 (the range this version reads); got a number of 20 digits"),
        (_HEAD + _MS + "infrared:\n  require: [ketone, aromatic_ring, ketone]\n", 8, "'ketone' is listed twice"),
        (_HEAD + _MS + "infrared:\n  bands: [1715, 1600, 1715]\n", 8, "a band at this wavenumber is listed twice"),
        (_HEAD + _MS + 'structure:\n  suspects: ["CCO", "OCC"]\n', 8, "this structure is listed twice"),
        (_HEAD + _MS + 'structure:\n  require_smarts: ["C=O"]\n  forbid_smarts: ["C=O"]\n', 9,
         "'C=O' is both required and forbidden"),
    ],
)  # fmt: skip
def test_contradictions_repeats_and_out_of_range_values_are_named(text, line, words):
    with pytest.raises(ElucidateError) as info:
        parse_case(text, file="c.yaml")
    assert words in str(info.value)
    assert info.value.line == line


def test_too_many_peaks_are_refused_before_any_work():
    peaks = ", ".join(f"{mz}: 1" for mz in range(1, 1200)) + ", 1200: 100"
    with pytest.raises(ElucidateError, match=r"1,200 peaks; .* at most 1,000 peaks"):
        parse_case(_HEAD + f"mass_spec:\n  molecular_ion: unknown\n  peaks: {{{peaks}}}\n", file="c.yaml")


def test_an_oversized_case_file_is_refused_before_it_is_read(tmp_path, cli):
    path = tmp_path / "big.yaml"
    path.write_text(_HEAD + _MS + "notes: " + "x" * 1_200_000 + "\n")
    for command in ("check", "solve"):
        res = cli(command, str(path))
        assert res.code == 1 and "a case file is read up to 1,000,000 bytes" in res.err and str(path) in res.err
