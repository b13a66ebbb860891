"""Declared NMR counts pushed into generation (elucidate/generator/counts.py).

The proof the module docstring promises: generating with the counts pushed into the skeleton
bounds, the labelling and the multigraph gives exactly the structures (and order) that
generating everything and filtering the finished molecules gives. Carbon types of real
compounds are counted by hand from their structures (common practice: a DEPT reading).
"""

from __future__ import annotations

from functools import cache

import pytest

from elucidate._rdkit import Chem
from elucidate.formula import parse_formula
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.counts import CountTest, carbon_profile, mol_counts
from elucidate.generator.selection import Selection


@cache
def _everything(formula: str, max_rings: int | None) -> tuple[str, ...]:
    return tuple(isomer_smiles(parse_formula(formula), GeneratorOptions(max_rings=max_rings, workers=1)))


T = CountTest
# (formula, ring limit, declared counts); types are (CH3, CH2, CH, C)
PAIRS = [
    ("C5H10O", None, T(types=(2, 2, 0, 1))),  # pentan-2-one
    ("C5H10O", None, T(types=(1, 3, 1, 0))),  # pentanal
    ("C5H10O", None, T(types=(3, 0, 1, 1))),  # 3-methylbutan-2-one
    ("C5H10O", None, T(kinds=(("carbonyl", 1, 1),))),
    ("C5H10O", None, T(exchangeable=(1, 1))),
    ("C5H10O", None, T(types=(0, 4, 1, 0), exchangeable=(1, 1))),  # cyclopentanol
    ("C6H12O", None, T(types=(2, 2, 1, 1))),
    ("C6H12O", None, T(types=(4, 0, 2, 0))),  # 2,4-dimethyl... (diisopropyl ether)
    ("C6H12O", None, T(kinds=(("heteroatom_sp3", 2, 2),))),
    ("C6H12O", None, T(kinds=(("sp2", 2, 2), ("heteroatom_sp3", 1, 1)), exchangeable=(0, 0))),
    ("C7H8O", None, T(types=(1, 0, 5, 1))),  # anisole
    ("C7H8O", None, T(types=(0, 1, 5, 1), exchangeable=(1, 1))),  # benzyl alcohol
    ("C7H8O", None, T(types=(1, 0, 4, 2), exchangeable=(1, 1))),  # cresols
    ("C7H8O", None, T(kinds=(("sp2", 6, 6), ("heteroatom_sp3", 1, 1)))),
    ("C7H8O", None, T(kinds=(("sp", 1, 4),))),
    ("C8H10", None, T(types=(2, 0, 4, 2))),  # xylenes
    ("C8H10", None, T(types=(1, 1, 5, 1))),  # ethylbenzene
    ("C8H8O", None, T(types=(1, 0, 5, 2))),  # acetophenone
    ("C8H8O", None, T(kinds=(("carbonyl", 1, 1), ("sp2", 6, 6)))),
    ("C6H10", None, T(types=(0, 4, 2, 0))),  # cyclohexene
    ("C6H10", None, T(kinds=(("sp", 2, 2),))),
    ("C4H9NO", None, T(types=(1, 2, 0, 1), exchangeable=(2, 2))),  # butanamide
    ("C4H9NO", None, T(exchangeable=(0, 0))),
    ("C5H11N", None, T(types=(0, 5, 0, 0), exchangeable=(1, 1))),  # piperidine
    ("C5H11N", None, T(types=(3, 0, 1, 1))),
    ("C4H8O2", None, T(types=(2, 1, 0, 1), kinds=(("carbonyl", 1, 1),))),  # ethyl acetate
    ("C4H8O2", None, T(exchangeable=(1, 2))),
    ("C3H6Cl2", None, T(types=(1, 1, 1, 0))),
    ("C10H16", 1, T(types=(2, 4, 2, 2))),  # a limonene-like count, one ring at most
    ("C10H16", 1, T(types=(3, 1, 3, 3))),
    ("C10H16", 0, T(types=(2, 3, 3, 2), kinds=(("sp2", 6, 6),))),  # ocimene-like
    ("C10H18O", 0, T(types=(3, 3, 2, 2))),  # linalool-like
    ("C10H18O", 0, T(types=(3, 3, 2, 2), exchangeable=(1, 1), kinds=(("sp2", 4, 4),))),
    ("C10H18O", 0, T(kinds=(("carbonyl", 1, 1),), types=(3, 4, 2, 1))),
]


@pytest.mark.parametrize(
    ("formula", "max_rings", "test"),
    [
        pytest.param(*pair, id=f"{pair[0]}-{pair[2].label}", marks=pytest.mark.xdist_group(f"counts-{pair[0]}"))
        for pair in PAIRS
    ],
)
def test_pushed_counts_equal_filtering(formula: str, max_rings: int | None, test: CountTest) -> None:
    everything = _everything(formula, max_rings)
    filtered = [s for s in everything if test.mol_ok(Chem.MolFromSmiles(s))]
    pushed = list(
        isomer_smiles(
            parse_formula(formula), GeneratorOptions(max_rings=max_rings, workers=1, selection=Selection(counts=test))
        )
    )
    assert pushed == filtered
    assert len(everything) > len(filtered)  # the constraint removes something


def test_the_corpus_has_thirty_pairs_and_the_terpene_formulas() -> None:
    assert len(PAIRS) >= 30
    assert {"C10H16", "C10H18O"} <= {f for f, _, _ in PAIRS}


@pytest.mark.parametrize(
    ("smiles", "types", "exchangeable", "kinds"),
    [
        # counted by hand from the structures (common practice)
        ("CC(=O)c1ccccc1", (1, 0, 5, 2), 0, {"carbonyl": 1, "sp2": 6, "alkyl": 1}),
        ("CC1=CCC(CC1)C(C)=C", (2, 4, 2, 2), 0, {"sp2": 4, "alkyl": 6}),  # limonene
        ("CC(C)(O)C=C", (2, 1, 1, 1), 1, {"sp2": 2, "heteroatom_sp3": 1, "alkyl": 2}),
        ("N#Cc1ccccc1", (0, 0, 5, 2), 0, {"sp": 1, "sp2": 6}),
        ("CC(N)=O", (1, 0, 0, 1), 2, {"carbonyl": 1, "alkyl": 1}),
        ("O=[N+]([O-])c1ccccc1", (0, 0, 5, 1), 0, {"sp2": 6}),
        ("C=C=C", (0, 2, 0, 1), 0, {"sp2": 2, "sp": 1}),
        ("OC(=O)CCO", (0, 2, 0, 1), 2, {"carbonyl": 1, "heteroatom_sp3": 1, "alkyl": 1}),
    ],
)
def test_counts_of_known_structures(
    smiles: str, types: tuple[int, ...], exchangeable: int, kinds: dict[str, int]
) -> None:
    counts = mol_counts(Chem.MolFromSmiles(smiles))
    assert counts.types == types
    assert counts.exchangeable == exchangeable
    assert {k: v for k, v in counts.kinds.items() if v} == kinds


def test_carbon_profile_of_acetophenone() -> None:
    # counted by hand (common practice): CH3, C=O, the ipso C and five aromatic CH
    profile = carbon_profile(Chem.MolFromSmiles("CC(=O)c1ccccc1"))
    assert profile == (("alkyl", "CH3", 1), ("carbonyl", "C", 1), ("sp2", "C", 1), ("sp2", "CH", 5))


@pytest.mark.parametrize("formula", ["C7H12O", "C7H8O", "C5H5NO", "C5H8O2"])
def test_carbon_profile_adds_up_to_the_counts_read_atom_by_atom(formula: str) -> None:
    # the profile read from the bond-order matrix against mol_counts (read atom by atom) on every
    # isomer: its kinds and its DEPT types, each summed over the other, are the counts (C7H8O and
    # C5H5NO hold aromatic carbons with an exocyclic double bond, whose H a bond-order sum misreads)
    names = ("CH3", "CH2", "CH", "C")
    for smiles in isomer_smiles(parse_formula(formula)):
        mol = Chem.MolFromSmiles(smiles)
        counts = mol_counts(mol)
        profile = carbon_profile(mol)
        assert tuple(sum(n for _, t, n in profile if t == name) for name in names) == counts.types, smiles
        assert {k: sum(n for kind, _, n in profile if kind == k) for k in counts.kinds} == counts.kinds, smiles


def test_hall_condition_and_degree_bounds() -> None:
    test = CountTest(types=(2, 4, 2, 2))
    # the carbons' valence 4 becomes 4 - h: two CH3 (1), four CH2 (2), two CH (3), two C (4)
    assert test.degree_bounds([("C", 4)], [10]) == [4, 4, 3, 3, 2, 2, 2, 2, 1, 1]
    assert test.degree_bounds([("C", 4)], [9]) is None  # another carbon count: not applicable
    # two CH3 need two carbons with one neighbour; a labelling with one such carbon fails
    assert not test.colouring_ok([0] * 10, [1, 2, 2, 2, 2, 2, 2, 3, 3, 3], [True])
    assert test.colouring_ok([0] * 10, [1, 1, 2, 2, 2, 2, 3, 3, 4, 4], [True])


@pytest.mark.parametrize(
    ("formula", "test", "problem"),
    [
        ("C10H16O", CountTest(types=(3, 3, 2, 2)), "carbon types put 17 H on carbon, the formula has 16 H"),
        ("C9H16", CountTest(types=(2, 4, 2, 2)), "carbon types count 10 C, the formula has 9"),
        ("C10H18", CountTest(types=(2, 4, 2, 2)), "but all 18 H of the formula must be"),
        ("C10H16", CountTest(types=(2, 4, 2, 2)), None),
        ("C5H10O", CountTest(types=(2, 2, 0, 1), exchangeable=(1, 1)), "0 H are left off carbon, fewer than 1"),
    ],
)
def test_formula_problems(formula: str, test: CountTest, problem: str | None) -> None:
    found = test.formula_problem(parse_formula(formula))
    if problem is None:
        assert found is None
    else:
        assert found is not None and problem in found
