"""The SMILES written from the skeleton (elucidate/generator/writer.py), checked against RDKit's
reading of each string (RDKit from the package registry is the reference)."""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import parse_formula
from elucidate.generator import GeneratorOptions, Selection, isomer_smiles, structures
from elucidate.generator.counts import CountTest
from elucidate.generator.smiles import to_smiles
from elucidate.generator.writer import Template, atom_token


def _kekule_name(text: str) -> str:
    """RDKit's canonical Kekulé SMILES of a string, aromaticity not perceived."""
    mol = Chem.MolFromSmiles(text, sanitize=False)
    assert mol is not None, text
    Chem.SanitizeMol(mol, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY)
    return str(Chem.MolToSmiles(mol, kekuleSmiles=True))


@pytest.mark.parametrize(
    ("symbol", "hydrogens", "bond_sum", "token"),
    # OpenSMILES specification 3.1.5: an organic-subset atom written bare has the hydrogens
    # that bring it to its lowest default valence at or above its bond sum (B 3, C 4, N 3 5,
    # O 2, P 3 5, S 2 4 6, halogens 1); anything else is written in brackets
    [
        ("C", 4, 0, "C"),
        ("C", 0, 4, "C"),
        ("N", 1, 2, "N"),
        ("N", 0, 5, "N"),
        ("O", 0, 2, "O"),
        ("S", 0, 4, "S"),
        ("S", 0, 6, "S"),
        ("S", 1, 3, "S"),
        ("S", 0, 3, "[S]"),
        ("P", 0, 5, "P"),
        ("Cl", 0, 1, "Cl"),
        ("Si", 4, 0, "[SiH4]"),
        ("Si", 1, 3, "[SiH]"),
        ("Se", 2, 0, "[SeH2]"),
        ("C", 2, 1, "[CH2]"),
    ],
)
def test_atom_tokens_follow_the_organic_subset_rule(symbol: str, hydrogens: int, bond_sum: int, token: str) -> None:
    assert atom_token(symbol, hydrogens, bond_sum) == token
    # RDKit reads the same H count with the bond sum made of single bonds to dummy atoms
    mol = Chem.MolFromSmiles(token + "([*])" * bond_sum, sanitize=False)
    mol.UpdatePropertyCache(strict=False)
    assert mol.GetAtomWithIdx(0).GetTotalNumHs() == hydrogens


@pytest.mark.parametrize("formula", ["C7H8O", "C6H6", "C5H5NO", "C4H4OS", "C3H6ClBr", "C2H6O2S", "C2H7O3P", "C4H12Si"])
def test_every_written_structure_is_the_multigraph_rdkit_writes(formula: str) -> None:
    # each structure on its skeleton, written by the template and by RDKit (Kekulé form, the
    # multigraph itself): RDKit must read both as the same molecule
    current, template = None, None
    count = 0
    for s in structures(parse_formula(formula)):
        edges = tuple((a, b) for a, b, _ in s.bonds)
        if edges != current:
            current, template = edges, Template(len(s.elements), edges)
        assert template is not None
        if any(e == "N" and v == 5 for e, v in zip(s.elements, s.valences, strict=True)):
            continue  # charge-separated states are always written by RDKit
        assert _kekule_name(template.write(s.elements, s.bonds, s.hydrogens)) == to_smiles(s, kekule=True)
        count += 1
    assert count > 0


@pytest.mark.parametrize("formula", ["C7H8O", "C6H6", "C4H5N", "C3H3NO", "C8H6O", "C4H4N2", "C5H5NO", "C4H4OS"])
def test_may_be_aromatic_misses_no_aromatic_atom(formula: str) -> None:
    # the structures the writer keeps from RDKit must have no aromatic atom in RDKit's model
    current, template = None, None
    kept = sent = 0
    for s in structures(parse_formula(formula)):
        edges = tuple((a, b) for a, b, _ in s.bonds)
        if edges != current:
            current, template = edges, Template(len(s.elements), edges)
        assert template is not None
        mol = Chem.MolFromSmiles(to_smiles(s))
        aromatic = any(atom.GetIsAromatic() for atom in mol.GetAtoms())
        if template.may_be_aromatic(s.elements, s.bonds, s.hydrogens, s.valences):
            sent += 1
        else:
            assert not aromatic, to_smiles(s)
            kept += 1
    assert kept > 0 and sent > 0


@pytest.mark.parametrize(
    ("formula", "narrower"),
    [
        ("C7H8O", GeneratorOptions(max_rings=1)),
        ("C7H14O", GeneratorOptions(max_bond_order=1)),
        ("C6H10O", GeneratorOptions(selection=Selection(counts=CountTest(types=(1, 3, 1, 1))))),
        ("C6H12O", GeneratorOptions(workers=3)),
    ],
)
def test_a_molecule_is_written_the_same_way_in_every_run(formula: str, narrower: GeneratorOptions) -> None:
    # canonical within elucidate: a narrower question (fewer rings, declared carbon types
    # changing the skeleton degree bounds, another partition of the tree) writes each of its
    # molecules exactly as the unconstrained run does
    f = parse_formula(formula)
    full = list(isomer_smiles(f))
    by_molecule = {Chem.MolToSmiles(Chem.MolFromSmiles(s)): s for s in full}
    assert len(by_molecule) == len(full)
    narrow = list(isomer_smiles(f, narrower))
    assert narrow
    for s in narrow:
        assert by_molecule[Chem.MolToSmiles(Chem.MolFromSmiles(s))] == s


def test_ring_closures_reuse_digits_only_after_the_atom() -> None:
    # spiro[2.2]pentane-like skeleton: vertex 0 in two triangles
    edges = ((0, 1), (0, 2), (1, 2), (0, 3), (0, 4), (3, 4))
    template = Template(5, edges)
    text = template.write(("C",) * 5, tuple((a, b, 1) for a, b in edges), (0, 2, 2, 2, 2))
    mol = Chem.MolFromSmiles(text)
    assert mol is not None and mol.GetNumAtoms() == 5 and mol.GetRingInfo().NumRings() == 2, text


def test_cycle_edges_are_the_edges_that_are_not_bridges() -> None:
    # a bridge is an edge whose removal disconnects its ends (graph theory, common practice):
    # the template's depth-first low-point reading against removing each edge in turn, on
    # random connected graphs with up to four extra edges (random.Random(7): reproducible)
    import random

    def by_removal(n: int, edges: tuple[tuple[int, int], ...]) -> tuple[tuple[int, int], ...]:
        out = []
        for j, (a, b) in enumerate(edges):
            reach, stack = {a}, [a]
            while stack:
                v = stack.pop()
                for k, (x, y) in enumerate(edges):
                    w = y if x == v else x if y == v else None
                    if k != j and w is not None and w not in reach:
                        reach.add(w)
                        stack.append(w)
            if b in reach:
                out.append((a, b))
        return tuple(out)

    rng = random.Random(7)
    rings = 0
    for _ in range(400):
        n = rng.randint(1, 11)
        edges = {(rng.randrange(v), v) for v in range(1, n)}
        for _ in range(rng.randint(0, 4)):
            a, b = sorted(rng.sample(range(n), 2)) if n > 1 else (0, 0)
            if a != b:
                edges.add((a, b))
        ordered = tuple(sorted(edges))
        expected = by_removal(n, ordered)
        assert Template(n, ordered)._cycle_edges == expected, ordered
        rings += bool(expected)
    assert rings > 100
