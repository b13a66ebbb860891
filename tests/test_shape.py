"""The rings and multiple bonds generation reads off a structure's bond orders
(generator/shape.py) against RDKit's reading of its canonical SMILES (RDKit, the registry's
general-purpose library, is the reference), and the strain technique on either reading.

Facts used: the ring sizes of every minimum cycle basis of a graph are the same (the cycle space
is a matroid, and all minimum-weight bases of a matroid have the same weights; Horton, SIAM J.
Comput. 16 (1987) 358, from memory); RDKit's smallest set of rings is such a basis for these
small molecules (checked here, not assumed)."""

from __future__ import annotations

import networkx as nx
import pytest
from rdkit import Chem
from rdkit.Chem import rdMolDescriptors

from elucidate import parse_formula
from elucidate.evidence import Strain
from elucidate.evidence.base import Perception, make_subject
from elucidate.evidence.strain import strain_energy, strain_of
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.groups import default_groups
from elucidate.generator.selection import Selection
from elucidate.generator.shape import RingShape, shape_of


def _shape_only(mol: Chem.Mol, shape: RingShape | None, features: object) -> RingShape | None:
    return shape


def _read(formula: str, workers: int = 1, engine: str = "compiled") -> list[tuple[str, RingShape | None]]:
    options = GeneratorOptions(selection=Selection(profile="stable"), rdkit_smiles=True, workers=workers, engine=engine)
    seen: list[object] = []
    smiles = list(isomer_smiles(parse_formula(formula), options, perceive=_shape_only, perceived=seen))
    return list(zip(smiles, seen, strict=True))  # type: ignore[arg-type]


# ring-rich and small-ring formulas (cubane-like C8H8, prismane-like C6H6), heteroatoms, and the
# unsaturation of the terpene cases
@pytest.mark.parametrize(
    "formula", ["C5H8O", "C6H8O", "C7H10O", "C8H12", "C6H6", "C4H4", "C8H8", "C5H5N", "C4H4O2", "C6H10O2", "C9H14"]
)
def test_the_shape_read_off_the_bond_orders_is_rdkits(formula: str) -> None:
    read = _read(formula)
    shaped = [(s, shape) for s, shape in read if shape is not None]
    assert len(shaped) > len(read) // 5  # a good part of them (not those that may be aromatic)
    whole = 0
    for smiles, shape in shaped:
        mol = Chem.MolFromSmiles(smiles)
        if not shape.partial:
            assert shape == shape_of(mol), smiles
            whole += 1
            continue
        # two small rings or more: what every pick of RDKit's set shares, and no more strain
        exact = shape_of(mol)
        assert sum(1 for size in exact.rings if size <= 4) >= 2, smiles
        assert (shape.bonds, shape.cumulated, shape.fused_small) == (exact.bonds, exact.cumulated, 0), smiles
        assert list(shape.rings) == _minimum_basis_sizes(mol), smiles
        assert strain_of(shape)[0] <= strain_of(exact)[0], smiles
    assert whole  # and some whole ones in every formula


def _minimum_basis_sizes(mol: Chem.Mol) -> list[int]:
    """The ring sizes of a minimum cycle basis of the molecule's graph by networkx (a
    general-purpose graph library from the registry; its documentation cites de Pina 1995 and
    Kavitha et al., Algorithmica 2008), ascending."""
    graph = nx.Graph([(b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in mol.GetBonds()])
    return sorted(len(cycle) for cycle in nx.minimum_cycle_basis(graph))


@pytest.mark.parametrize(
    ("smiles", "rings", "kcal"),
    [
        # bicyclo[1.1.0]butane: two 3-rings (the 4-atom rim is their sum), one fused pair
        ("C1C2CC12", (3, 3), 27.5 * 2 + 11.5),
        # bicyclo[1.1.1]pentane: two of its three 4-rings make a basis
        ("C1C2CC1C2", (4, 4), None),
        # spiropentane: two 3-rings sharing one atom, no fused pair
        ("C1CC12CC2", (3, 3), 27.5 * 2),
    ],
)
def test_a_partial_shape_by_hand(smiles: str, rings: tuple[int, ...], kcal: float | None) -> None:
    # ring strains and the fused-pair charge: constraints/strain.yaml
    formula = rdMolDescriptors.CalcMolFormula(Chem.MolFromSmiles(smiles))
    shape = dict(_read(formula))[smiles]
    assert shape is not None and shape.partial
    assert shape.rings == rings and shape.fused_small == 0
    exact = strain_of(shape_of(Chem.MolFromSmiles(smiles)))[0]
    assert strain_of(shape)[0] <= exact
    if kcal is not None:
        assert exact == pytest.approx(kcal)


def test_the_shapes_are_the_same_for_any_number_of_workers() -> None:
    assert _read("C7H10O", 1) == _read("C7H10O", 2)


@pytest.mark.parametrize("formula", ["C7H10O", "C6H8", "C5H7N"])
def test_the_shapes_are_the_same_whoever_labels_the_structures(formula: str) -> None:
    # the compiled core starts after a process has labelled some structures in Python: what is
    # perceived must not depend on which of them did (the solver's pass counts depend on it)
    python = _read(formula, engine="python")
    assert python == _read(formula, engine="compiled")
    assert sum(1 for _, shape in python if shape is not None) > len(python) // 5


def test_a_skeleton_with_two_small_rings_gets_a_partial_shape_that_the_strain_reads_off_the_molecule() -> None:
    # bicyclo[1.1.0]butane's two three-rings share a bond: which pairs RDKit's set holds can
    # depend on the atom order elsewhere, so generation gives only a partial shape, a floor
    shapes = dict(_read("C4H6"))
    partial = shapes["C1C2CC12"]
    assert partial == RingShape((3, 3), 0, (), 0, partial=True)
    assert shape_of(Chem.MolFromSmiles("C1C2CC12")).fused_small == 1
    assert shapes["C1=CCC1"] == RingShape((4,), 0, ((2, 4, ()),), 0)
    technique = Strain()
    formula, groups = parse_formula("C4H6"), default_groups()
    lazy = make_subject("C1C2CC12", None, formula, groups, None, seen=Perception(frozenset(), frozenset(), partial))
    assert technique.foresee(lazy, None) is None  # type: ignore[arg-type]
    assert technique.foresee_floor(lazy, None) == ((27.5 * 2) / 15, 0.0)  # type: ignore[arg-type]
    assert "mol" not in vars(lazy)
    whole = technique.assess(lazy, None)  # type: ignore[arg-type]
    assert whole.detail["kcal_per_mol"] == 27.5 * 2 + 11.5  # read off the molecule: the fused pair counts


@pytest.mark.parametrize(
    ("smiles", "shape"),
    [
        ("C=C1CC1", RingShape((3,), 0, ((2, 0, (3,)),), 0)),  # exocyclic on a three-ring
        ("C=C=C", RingShape((), 0, ((2, 0, ()), (2, 0, ())), 1)),  # allene: one cumulated carbon
        ("C1=CCCCC1", RingShape((6,), 0, ((2, 6, ()),), 0)),
        ("C=Cc1ccccc1", RingShape((), 0, ((2, 0, ()),), 0)),  # the benzene ring is left out
    ],
)
def test_shape_of_by_hand(smiles: str, shape: RingShape) -> None:  # common practice
    assert shape_of(Chem.MolFromSmiles(smiles)) == shape


def test_strain_from_a_shape_equals_strain_from_the_molecule_whatever_the_order() -> None:
    # the terms are summed exactly rounded, so the total does not depend on their order
    mol = Chem.MolFromSmiles("O=C1CC12C1C=CCCC2C1")
    kcal, terms = strain_energy(mol)
    assert (kcal, terms) == strain_of(shape_of(mol))
    assert kcal == 79.9  # 27.5 + 26.3 + 6.3 + 6.3 + 13.5, constraints/strain.yaml
    assert terms[:2] == ("3-ring 27.5", "4-ring 26.3")  # rings by size


def test_the_strain_technique_reads_the_perceived_shape_without_the_molecule() -> None:
    groups = default_groups()
    formula = parse_formula("C7H10O")
    technique = Strain()
    checked = 0
    for smiles, shape in _read("C7H10O"):
        if shape is None or shape.partial:
            continue
        lazy = make_subject(smiles, None, formula, groups, None, seen=Perception(frozenset(), frozenset(), shape))
        read = make_subject(smiles, Chem.MolFromSmiles(smiles), formula, groups, None)
        assert technique.assess(lazy, None) == technique.assess(read, None)  # type: ignore[arg-type]
        assert "mol" not in vars(lazy)
        checked += 1
    assert checked > 1000
