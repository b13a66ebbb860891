"""Shift prediction by additivity (elucidate/evidence/nmr_predict.py, constraints/nmr13c.yaml,
constraints/nmr1h.yaml) against experimental shifts.

Experimental values: CDCl3, ppm from TMS, as listed in the usual handbook tables and spectral
libraries (Pretsch, Buehlmann & Badertscher, Structure Determination of Organic Compounds;
SDBS-style library spectra), values from memory. The compounds that the tables' derived
increments were taken from (cyclohexanone, cyclohexene, tetrahydropyran, piperidine, tetralin,
naphthalene, propene, 2-methylpropene, the acetophenone methyl H) are kept out of this set.
"""

from __future__ import annotations

import pytest

from elucidate._rdkit import Chem
from elucidate.evidence.nmr_predict import predict_c13, predict_h1
from elucidate.evidence.nmr_tables import default_nmr_tables, load_nmr_tables

# SMILES -> {heavy-atom index: experimental 13C shift}
C13 = {
    "CCCC": {0: 13.4, 1: 25.2},  # butane
    "CC(C)CC": {0: 22.2, 1: 30.0, 3: 32.0, 4: 11.7},  # 2-methylbutane
    "CCCCCC": {0: 14.1, 1: 22.9, 2: 31.9},  # hexane
    "CCO": {0: 18.4, 1: 58.3},  # ethanol
    "CC(C)O": {0: 25.3, 1: 64.0},  # propan-2-ol
    "CC(=O)CC": {0: 29.4, 1: 209.3, 3: 36.9, 4: 7.9},  # butan-2-one
    "CCOC(C)=O": {0: 14.2, 1: 60.4, 3: 171.1, 4: 21.0},  # ethyl acetate
    "Cc1ccccc1": {0: 21.5, 1: 137.9, 2: 129.1, 3: 128.3, 4: 125.4},  # toluene
    "CC(=O)c1ccccc1": {0: 26.6, 1: 198.1, 3: 137.1, 4: 128.3, 5: 128.6, 6: 133.1},  # acetophenone
    "COc1ccccc1": {0: 55.1, 2: 159.9, 3: 114.0, 4: 129.5, 5: 120.7},  # anisole
    "O=Cc1ccccc1": {1: 192.3, 2: 136.4, 3: 129.7, 4: 129.0, 5: 134.4},  # benzaldehyde
    "O=[N+]([O-])c1ccccc1": {3: 148.3, 4: 123.5, 5: 129.4, 6: 134.7},  # nitrobenzene
    "Clc1ccccc1": {1: 134.3, 2: 128.6, 3: 129.7, 4: 126.4},  # chlorobenzene
    "COC(=O)c1ccccc1": {0: 52.1, 2: 167.1, 4: 130.2, 5: 129.6, 6: 128.4, 7: 132.9},  # methyl benzoate
    "CCOCC": {0: 15.4, 1: 65.9},  # diethyl ether
    "C=CC(C)=O": {0: 128.5, 1: 137.2, 2: 198.3, 3: 26.3},  # but-3-en-2-one
    "ClCCCC": {1: 44.7, 2: 34.8, 3: 20.3, 4: 13.4},  # 1-chlorobutane
    "Cc1ccc(C)cc1": {0: 20.9, 1: 134.7, 2: 129.0},  # p-xylene
    # limonene
    "CC1=CCC(CC1)C(C)=C": {
        0: 23.4,
        1: 133.7,
        2: 120.7,
        3: 30.6,
        4: 41.1,
        5: 27.9,
        6: 30.8,
        7: 150.2,
        8: 20.8,
        9: 108.4,
    },
}

# SMILES -> {heavy-atom index carrying the H: experimental 1H shift}
H1 = {
    "CCCC": {0: 0.90, 1: 1.31},
    "CCCCCC": {0: 0.89, 1: 1.29, 2: 1.27},
    "CCO": {0: 1.22, 1: 3.69},
    "CC(C)O": {0: 1.20, 1: 4.01},
    "CC(=O)CC": {0: 2.14, 3: 2.44, 4: 1.06},
    "CCOC(C)=O": {0: 1.26, 1: 4.12, 4: 2.05},
    "Cc1ccccc1": {0: 2.35, 2: 7.17, 3: 7.25, 4: 7.15},
    "CC(=O)c1ccccc1": {4: 7.96, 5: 7.46, 6: 7.56},
    "COc1ccccc1": {0: 3.80, 3: 6.90, 4: 7.29, 5: 6.94},
    "O=Cc1ccccc1": {1: 10.0, 3: 7.88, 4: 7.53, 5: 7.63},
    "O=[N+]([O-])c1ccccc1": {4: 8.23, 5: 7.56, 6: 7.71},
    "COC(=O)c1ccccc1": {0: 3.91, 5: 8.04, 6: 7.43, 7: 7.55},
    "CCOCC": {0: 1.21, 1: 3.48},
    "ClCCCC": {1: 3.54, 2: 1.76, 3: 1.45, 4: 0.94},
    "Cc1ccc(C)cc1": {0: 2.31, 2: 7.05},
    "CC1=CCC(CC1)C(C)=C": {0: 1.65, 2: 5.40, 8: 1.73},
}


def _c13_cases() -> list[tuple[str, int, float]]:
    return [(smiles, atom, ppm) for smiles, shifts in C13.items() for atom, ppm in shifts.items()]


def _h1_cases() -> list[tuple[str, int, float]]:
    return [(smiles, atom, ppm) for smiles, shifts in H1.items() for atom, ppm in shifts.items()]


def _c13(smiles: str, atom: int) -> tuple[float, float]:
    for p in predict_c13(Chem.MolFromSmiles(smiles)):
        if atom in p.atoms:
            return p.ppm, p.uncertainty
    raise AssertionError(f"no prediction for atom {atom} of {smiles}")


def _h1(smiles: str, atom: int) -> tuple[float, float]:
    for p in predict_h1(Chem.MolFromSmiles(smiles)):
        if atom in p.atoms:
            return p.ppm, p.uncertainty
    raise AssertionError(f"no prediction for the H on atom {atom} of {smiles}")


def test_the_sets_are_as_large_as_promised() -> None:
    assert len(_c13_cases()) >= 40 and len(C13) >= 15
    assert len(_h1_cases()) >= 30


@pytest.mark.parametrize(("smiles", "atom", "observed"), _c13_cases())
def test_each_13c_prediction_is_within_its_stated_uncertainty(smiles: str, atom: int, observed: float) -> None:
    ppm, uncertainty = _c13(smiles, atom)
    assert abs(ppm - observed) <= uncertainty


@pytest.mark.parametrize(("smiles", "atom", "observed"), _h1_cases())
def test_each_1h_prediction_is_within_its_stated_uncertainty(smiles: str, atom: int, observed: float) -> None:
    ppm, uncertainty = _h1(smiles, atom)
    assert abs(ppm - observed) <= uncertainty


def test_mean_absolute_errors() -> None:
    c13 = [abs(_c13(s, a)[0] - v) for s, a, v in _c13_cases()]
    h1 = [abs(_h1(s, a)[0] - v) for s, a, v in _h1_cases()]
    assert sum(c13) / len(c13) <= 3.0
    assert sum(h1) / len(h1) <= 0.25


def test_both_alkane_schemes_fit_the_alkanes() -> None:
    """Grant-Paul and Lindeman-Adams both describe the acyclic alkanes to about 1 ppm."""
    from dataclasses import replace

    tables = default_nmr_tables()
    grant_paul = replace(tables, c13=replace(tables.c13, scheme="grant_paul"))
    for smiles in ("CCCC", "CC(C)CC", "CCCCCC"):
        for atom, observed in C13[smiles].items():
            mol = Chem.MolFromSmiles(smiles)
            for scheme in (tables, grant_paul):
                (p,) = [p for p in predict_c13(mol, scheme) if atom in p.atoms]
                assert abs(p.ppm - observed) <= 1.5, (smiles, atom, scheme.c13.scheme)


@pytest.mark.parametrize(
    ("smiles", "neighbours"),
    [
        # first-order n + 1 (common practice): ethyl CH3 a triplet, CH2 a quartet
        ("CCOC(C)=O", {0: 2, 1: 3, 4: 0}),
        ("CC(C)O", {0: 1, 1: 6, 3: 0}),  # isopropyl: doublet, septet; OH not coupled
        ("Cc1ccc(C)cc1", {2: 0}),  # the four equivalent ring H of p-xylene: one singlet
        ("O=Cc1ccccc1", {1: 0, 3: 1, 4: 2, 5: 2}),
    ],
)
def test_first_order_neighbour_counts(smiles: str, neighbours: dict[int, int]) -> None:
    found = {a: p.neighbours for p in predict_h1(Chem.MolFromSmiles(smiles)) for a in p.atoms}
    for atom, n in neighbours.items():
        assert found[atom] == n


def test_para_ring_and_terminal_alkene_classes() -> None:
    """Para-disubstituted: the two ortho and the two meta positions are one class each; a
    terminal =CH2 on an unsymmetric alkene gives two 1H classes, on a symmetric one a single
    class of two H (common practice)."""
    c = predict_c13(Chem.MolFromSmiles("CC(=O)c1ccc(C)cc1"))
    assert len(c) == 7  # 9 C: two pairs of equivalent ring CH
    vinyl = [p for p in predict_h1(Chem.MolFromSmiles("C=CC(C)=O")) if p.atoms == (0,)]
    assert len(vinyl) == 2 and vinyl[0].ppm != vinyl[1].ppm
    iso = [p for p in predict_h1(Chem.MolFromSmiles("C=C(C)C")) if p.atoms == (0,)]
    assert len(iso) == 1 and iso[0].hydrogens == 2


def test_tables_validate_and_name_their_sources() -> None:
    tables = load_nmr_tables()
    tables.validate()
    assert "Grant" in tables.source and "Pascual" in tables.source


@pytest.mark.parametrize(
    "smiles",
    # a ketone, an enone, an ester, an amide, an aryl nitrile, a lactone, an aldehyde and an
    # alkynyl halide: molecules that meet most of the tables' patterns
    [
        "CC(=O)CCC(C)C",
        "CC1=CCC(CC1=O)C(C)=C",
        "CCOC(=O)c1ccccc1",
        "CCN(CC)C(=O)c1cccc(C)c1",
        "N#Cc1ccc(O)cc1",
        "O=C1CCCO1",
        "CC(C)=CCCC(C)=CC=O",
        "ClCC(Br)C#CC",
    ],
)
def test_rooted_pattern_tests_equal_whole_molecule_searches(smiles: str) -> None:
    # the prediction tests a table pattern at one atom by its first query atom and element
    # counts before any search (nmr_predict._first_match, _Context.name); RDKit's search of the
    # whole molecule (from the package registry) is the reference
    from elucidate.evidence.nmr_predict import _Context, _first_match

    tables = default_nmr_tables()
    mol = Chem.MolFromSmiles(smiles)
    ctx = _Context(mol, tables)
    hits = 0
    for entries in (tables.c13.carbonyl, tables.c13.special, tables.h1.special):
        starts = [
            {m[0] for m in mol.GetSubstructMatches(Chem.MolFromSmarts(e.smarts), uniquify=False)} for e in entries
        ]
        for atom in range(mol.GetNumAtoms()):
            expected = next((e for e, found in zip(entries, starts, strict=True) if atom in found), None)
            assert _first_match(ctx, atom, entries) == expected, (atom, expected)
            hits += expected is not None
    assert hits > 0
    patterns = [(name, Chem.MolFromSmarts(smarts)) for name, smarts in tables.c13.substituents]
    for atom in range(mol.GetNumAtoms()):
        for other in [n.GetIdx() for n in mol.GetAtomWithIdx(atom).GetNeighbors()]:
            found = [
                name
                for name, pattern in patterns
                if any(m[0] == atom and other not in m[1:] for m in mol.GetSubstructMatches(pattern, uniquify=False))
            ]
            expected = found[0] if found else "other"
            assert ctx.name(atom, other) == expected, (atom, other)
