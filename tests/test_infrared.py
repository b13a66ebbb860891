"""IR vocabulary against a named correlation table, and the band-list reading.

Reference ranges: Encyclopedia of Physical Science and Technology, 3rd ed. (2002), "Infrared
Spectroscopy", Table IV, and the UMass OWL / NIU tables, as collected in the project's
reference notes; each tabulated band must overlap the published range it cites.
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import parse_case, parse_formula
from elucidate.evidence.base import make_subject
from elucidate.evidence.infrared import Infrared, default_infrared, read_bands
from elucidate.generator.groups import default_groups

GROUPS = default_groups()
IR = default_infrared()

PUBLISHED = [
    # (group, mode text in infrared.yaml, published low, high, source)
    ("nitrile", "C≡N", 2220, 2260, "Table IV [E]"),
    ("ketone", "stretch, saturated", 1705, 1725, "Table IV [E]"),
    ("ketone", "conjugated", 1640, 1700, "Table IV [E]"),
    ("ester", "stretch, saturated", 1735, 1750, "UMass OWL"),
    ("aldehyde", "CHO", 2695, 2830, "educational IR tables"),
    ("carboxylic_acid", "O-H", 2500, 3300, "UMass OWL; NIU"),
    ("amide", "amide I", 1630, 1690, "Table IV [E]"),
    ("acid_chloride", "C=O", 1790, 1810, "Table IV [E]"),
    ("terminal_alkyne", "≡C-H", 3267, 3340, "Table IV [E]"),
    ("alcohol", "O-H", 3200, 3550, "UCLA WebSpectra; NIU"),
    ("nitro", "asymmetric", 1475, 1550, "CU Boulder"),
    ("primary_amine", "N-H stretch", 3300, 3500, "UCLA WebSpectra"),
    ("alkene", "C=C", 1620, 1680, "UMass OWL"),
]


@pytest.mark.parametrize("group,mode,low,high,source", PUBLISHED, ids=[f"{p[0]}-{p[1]}" for p in PUBLISHED])
def test_bands_follow_the_published_table(group, mode, low, high, source):
    bands = [b for b in IR.of(group) if mode in b.mode]
    assert bands, f"{group}: no band described as {mode!r}"
    for b in bands:
        assert b.low < high and b.high > low  # overlaps the published range
        assert abs(b.low - low) <= 15 and abs(b.high - high) <= 15


def _case(bands: str):
    return parse_case(f"schema: 1\nid: t\ninfrared:\n  bands:\n{bands}")


def test_reading_argues_against_carbonyl_without_a_band_in_its_region():
    case = _case("    - {at: 2960, strength: strong}\n    - {at: 3350, strength: strong, shape: broad}\n")
    reading = read_bands(case.infrared.bands)
    against = {g for g, _ in reading.against}
    assert {"carbonyl", "ketone", "ester"} <= against
    assert "alcohol" in {g for g, _ in reading.indicated}


def test_reading_indicates_an_acid_from_broad_oh_and_co():
    case = _case("    - {at: 3000, strength: medium, shape: broad}\n    - {at: 1710, strength: strong}\n")
    assert "carboxylic_acid" in {g for g, _ in read_bands(case.infrared.bands).indicated}


def test_reading_does_not_take_ch_bends_for_a_nitro_group():
    # an alkane's bands: C-H stretch 2960, CH2 scissoring 1465, CH3 umbrella 1375 (common
    # practice); nitroarene NO2 is 1550-1475 / 1360-1290 (CU Boulder nitro tutorial)
    case = _case(
        "    - {at: 2960, strength: strong}\n    - {at: 1465, strength: strong}\n    - {at: 1375, strength: strong}\n"
    )
    assert "nitro" not in {g for g, _ in read_bands(case.infrared.bands).indicated}


def test_reading_never_indicates_a_group_the_element_limits_exclude():
    bands = (
        "    - {at: 1530, strength: strong}\n    - {at: 1350, strength: strong}\n"
        "    - {at: 2250, strength: medium, shape: sharp}\n"
    )
    case = _case(bands)
    assert {"nitro", "nitrile"} <= {g for g, _ in read_bands(case.infrared.bands).indicated}
    no_nitrogen = {"C": (0, 20), "H": (0, 40), "O": (0, 4)}
    indicated = {g for g, _ in read_bands(case.infrared.bands, allowed=no_nitrogen).indicated}
    assert not indicated & {"nitro", "nitrile", "amide", "imine", "primary_amine"}


def test_provenance_tags_stay_in_the_table_not_in_what_users_read():
    for name in default_groups().names:
        for band in default_infrared().of(name):
            assert "from memory" not in band.mode


@pytest.mark.parametrize(
    "smiles,better,worse",
    [
        ("1715 strong", "CCC(C)=O", "CCCCO"),  # a ketone explains 1715, an alcohol does not
        ("1740 strong", "CCOC=O", "CCCC(C)=O"),
    ],
)
def test_scores_prefer_the_group_that_explains_the_band(smiles, better, worse):
    at, strength = smiles.split()
    case = _case(f"    - {{at: {at}, strength: {strength}}}\n    - {{at: 2960, strength: strong}}\n")
    ir = Infrared()

    def score(s: str) -> float:
        mol = Chem.MolFromSmiles(s)
        return ir.assess(make_subject(s, mol, parse_formula("C4H8O"), GROUPS, None), case).score

    assert score(better) > score(worse)


@pytest.mark.parametrize(
    "bands,group,present",
    [
        # 1-hexene: C=C 1642 with the vinyl bends 993 / 910 (UMass OWL table; common practice)
        ("    - {at: 1642, strength: medium}\n    - {at: 910, strength: strong}\n", "alkene", True),
        ("    - {at: 1642, strength: medium}\n", "alkene", False),
        # toluene: Ar-H 3030, ring stretches 1605 / 1495 (UCLA WebSpectra; common practice)
        (
            (
                "    - {at: 3030, strength: weak}\n    - {at: 1605, strength: medium}\n"
                "    - {at: 1495, strength: medium}\n"
            ),
            "aromatic_ring",
            True,
        ),
        ("    - {at: 3030, strength: weak}\n", "aromatic_ring", False),
    ],
)
def test_reading_recognises_band_patterns(bands, group, present):
    indicated = {g for g, _ in read_bands(_case(bands).infrared.bands).indicated}
    assert (group in indicated) == present


def test_one_technique_over_many_candidates_gives_each_its_own_assessment():
    # the technique keeps an assessment per case and set of applicable bands; every candidate
    # must get what a fresh technique gives it, and another case must not reuse the first's
    from rdkit.Chem import rdMolDescriptors

    from elucidate.generator import isomer_smiles

    first = _case("    - {at: 1715, strength: strong}\n    - {at: 3350, strength: strong}\n")
    second = _case("    - {at: 1650, strength: medium}\n    - {at: 2960, strength: strong}\n")
    texts = list(isomer_smiles(parse_formula("C4H6O"))) + list(isomer_smiles(parse_formula("C3H6O2")))
    subjects = []
    for text in texts:
        mol = Chem.MolFromSmiles(text)
        subjects.append(make_subject(text, mol, parse_formula(rdMolDescriptors.CalcMolFormula(mol)), GROUPS, None))
    shared = Infrared()
    kinds = set()
    for case in (first, second, first):
        for subject in subjects:
            got = shared.assess(subject, case)
            fresh = Infrared().assess(subject, case)
            assert (got.against, got.unexplained, got.reasons, got.detail) == (
                fresh.against,
                fresh.unexplained,
                fresh.reasons,
                fresh.detail,
            ), subject.smiles
            kinds.add((case is first, got.against, got.unexplained))
        assert len(shared._known) < len(subjects)  # candidates shared assessments
    assert len(kinds) > 4  # the candidates are told apart


# The saturated ketone band's condition was one recursive SMARTS; it is now written as the list
# of patterns the other ketone bands use, any one matching. A molecule matches a one-atom pattern
# of recursive alternatives exactly when it matches one alternative (RDKit's SMARTS semantics),
# so both must agree on every isomer (RDKit's matcher is the reference).
FORMER_KETONE_UNLESS = "[$([CX3](=[OX1])-[c,$([CX3]=[CX3])]),$([CX3;r4,r5]=[OX1])]"


@pytest.mark.parametrize("formula", ["C5H6O", "C6H8O", "C7H6O", "C6H6O2"])
def test_a_band_condition_written_as_a_list_means_any_of_its_patterns(formula):
    from elucidate.generator import GeneratorOptions, isomer_smiles

    (saturated,) = [b for b in IR.of("ketone") if b.mode.startswith("C=O stretch, saturated")]
    assert len(saturated.unless) == 3
    former = Chem.MolFromSmarts(FORMER_KETONE_UNLESS)
    differ = applies = 0
    for smiles in isomer_smiles(parse_formula(formula), GeneratorOptions(rdkit_smiles=True)):
        mol = Chem.MolFromSmiles(smiles)
        found: dict[str, bool] = {}
        now = saturated.applies(mol, found=found)
        differ += now != (not mol.HasSubstructMatch(former))
        applies += now
        # each pattern searched at most once, and the shared record agrees with a fresh search
        assert saturated.applies(mol) == now
        assert all(found[s] == mol.HasSubstructMatch(Chem.MolFromSmarts(s)) for s in found)
    assert differ == 0
    assert applies > 0


@pytest.mark.parametrize(
    "condition,message",
    [
        ("[]", "expected a SMARTS pattern or a list of them; got an empty list"),
        ("[{a: 1}]", "expected a SMARTS pattern"),
    ],
)
def test_a_band_condition_must_be_smarts_or_a_list_of_them(tmp_path, condition, message):
    from elucidate.errors import ElucidateError
    from elucidate.evidence.infrared import load_infrared

    text = (
        "regions: []\n"
        "scoring: {tolerance: 10, weights: {strong: 1, medium: 0.5, weak: 0.2}, non_key_divisor: 3, scale: 1,"
        " fingerprint_below: 1500}\n"
        "bands:\n"
        f"  ketone:\n    - {{from: 1700, to: 1725, strength: strong, mode: m, unless: {condition}}}\n"
    )
    path = tmp_path / "infrared.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ElucidateError, match="unless") as caught:
        load_infrared(path)
    assert message in str(caught.value)
