"""The element table against independent references.

Sources: AME2020 (Huang et al., Chin. Phys. C 45, 030002, 2021) masses and IUPAC 2009
(Berglund & Wieser, Pure Appl. Chem. 83, 397, 2011) abundances, as carried by two
general-purpose libraries from the package registry: RDKit's periodic table (masses) and
molmass's element data (masses and abundances).
"""

from __future__ import annotations

import pytest

from elucidate import ElucidateError, default_elements, load_elements
from elucidate.elements import Element, ElementTable, Isotope

TABLE = default_elements()
ISOTOPES = [(sym, iso) for sym, el in TABLE.elements.items() for iso in el.isotopes]


def test_shipped_table_validates():
    TABLE.validate()
    assert set(TABLE.symbols) == {"H", "C", "N", "O", "F", "Si", "P", "S", "Cl", "Br", "I"}


@pytest.mark.parametrize("symbol,isotope", ISOTOPES, ids=[f"{s}{i.mass_number}" for s, i in ISOTOPES])
def test_isotope_mass_matches_rdkit(symbol, isotope):
    # RDKit periodic table (older AME); AME2020 differs from it by < 2e-6 u for these isotopes.
    from rdkit import Chem

    ref = Chem.GetPeriodicTable().GetMassForIsotope(symbol, isotope.mass_number)
    assert isotope.mass == pytest.approx(ref, abs=5e-6)


@pytest.mark.parametrize("symbol,isotope", ISOTOPES, ids=[f"{s}{i.mass_number}" for s, i in ISOTOPES])
def test_isotope_mass_and_abundance_match_molmass(symbol, isotope):
    import molmass

    ref = molmass.ELEMENTS[symbol].isotopes[isotope.mass_number]
    assert isotope.mass == pytest.approx(ref.mass, abs=5e-6)
    # IUPAC 2009 representative abundances (molmass keeps fractions)
    assert isotope.abundance == pytest.approx(ref.abundance * 100, abs=0.02)


@pytest.mark.parametrize(
    "symbol,weight",
    # IUPAC/CIAAW conventional atomic weights (abridged, 2013 onwards): the abundance-weighted
    # mean mass must land on them within natural variation.
    [
        ("H", 1.008),
        ("C", 12.011),
        ("N", 14.007),
        ("O", 15.999),
        ("F", 18.998),
        ("Si", 28.085),
        ("P", 30.974),
        ("S", 32.06),
        ("Cl", 35.45),
        ("Br", 79.904),
        ("I", 126.90),
    ],
)
def test_average_mass_matches_conventional_atomic_weight(symbol, weight):
    assert TABLE[symbol].average_mass == pytest.approx(weight, abs=0.005)


@pytest.mark.parametrize(
    "symbol,valence,nominal",
    # usual lowest valences (common practice); nominal = most abundant isotope
    [
        ("H", 1, 1),
        ("C", 4, 12),
        ("N", 3, 14),
        ("O", 2, 16),
        ("S", 2, 32),
        ("P", 3, 31),
        ("Si", 4, 28),
        ("F", 1, 19),
        ("Cl", 1, 35),
        ("Br", 1, 79),
        ("I", 1, 127),
    ],
)
def test_valence_and_nominal_mass(symbol, valence, nominal):
    assert TABLE[symbol].valence == valence
    assert TABLE[symbol].nominal_mass == nominal


def test_electron_mass_is_codata():
    # CODATA 2018: 5.48579909065e-4 u
    assert TABLE.electron_mass == pytest.approx(5.48579909065e-4, rel=1e-8)


def test_unknown_element_lists_known_ones():
    with pytest.raises(ElucidateError, match="known: H, C"):
        TABLE["Xx"]


@pytest.mark.parametrize(
    "isotopes,message",
    [
        ((Isotope(12, 12.0, 60.0), Isotope(13, 13.003, 30.0)), "sum to"),
        ((Isotope(12, 12.0, 40.0), Isotope(13, 13.003, 60.0)), "lightest"),
        ((Isotope(12, 12.5, 100.0),), "far from its mass number"),
    ],
)
def test_validate_rejects_broken_tables(isotopes, message):
    table = ElementTable({"C": Element("C", (4,), isotopes)}, electron_mass=0.000548579909)
    with pytest.raises(ElucidateError, match=message):
        table.validate()


def test_broken_table_file_names_file_and_key(tmp_path):
    bad = tmp_path / "elements.yaml"
    bad.write_text(
        "electron_mass: 0.000548579909\nelements:\n  C:\n    valences: [4]\n"
        "    isotopes:\n      - {mass_number: 12, mass: 12.0, abundnce: 98.93}\n"
    )
    with pytest.raises(ElucidateError) as info:
        load_elements(bad)
    assert info.value.file == str(bad)
    assert info.value.line == 6
    assert "abundnce" in str(info.value)
