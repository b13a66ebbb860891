"""Constraints on generation equal generating everything and filtering afterwards.

The reference side re-reads every exhaustive SMILES with RDKit and applies the groups' SMARTS
directly; the tested side is the generator with the constraint given.
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError, parse_formula
from elucidate.generator import GeneratorOptions, isomer_smiles
from elucidate.generator.groups import default_groups
from elucidate.generator.plausibility import default_profiles
from elucidate.generator.selection import Selection

GROUPS = default_groups()

CORPUS = [
    ("C4H8O", dict(require=("carbonyl",))),
    ("C4H8O", dict(require=("ketone",))),
    ("C4H8O", dict(forbid=("hydroxyl",))),
    ("C4H8O", dict(require=("ether",), forbid=("alkene",))),
    ("C4H8O", dict(max_ring_size=4)),
    ("C4H8O2", dict(require=("ester",))),
    ("C4H8O2", dict(require=("carboxylic_acid",))),
    ("C4H8O2", dict(forbid=("hydroxyl", "carbonyl"))),
    ("C3H6O2", dict(require=("ester",), forbid=("lactone",))),
    ("C4H6O2", dict(require=("lactone",))),
    ("C3H7NO", dict(require=("amide",))),
    ("C3H7NO", dict(require=("primary_amine",))),
    ("C3H7NO", dict(forbid=("amide", "hydroxyl"))),
    ("C4H11N", dict(require=("secondary_amine",))),
    ("C4H11N", dict(require=("tertiary_amine",))),
    ("C3H5N", dict(require=("nitrile",))),
    ("C3H5N", dict(require=("imine",))),
    ("C4H6", dict(require=("terminal_alkyne",))),
    ("C4H6", dict(require=("alkyne",), forbid=("terminal_alkyne",))),
    ("C5H8", dict(forbid=("alkene", "alkyne"))),
    ("C6H6O", dict(require=("aromatic_ring",))),
    ("C6H6O", dict(require=("phenol",))),
    ("C7H8", dict(require=("aromatic_ring",))),
    ("C3H7Cl", dict(require=("alkyl_halide",))),
    ("C6H5Cl", dict(require=("aryl_halide",))),
    ("C3H8S", dict(require=("thiol",))),
    ("C3H8S", dict(require=("sulfide",))),
    ("C2H6OS", dict(require=("sulfoxide",))),
    ("C2H3ClO", dict(require=("acid_chloride",))),
    ("C4H6O3", dict(require=("anhydride",))),
    ("CH3NO2", dict(require=("nitro",))),
    ("C4H8O", dict(require_smarts=("[CH3]C(=O)",))),
    ("C4H8O", dict(forbid_smarts=("[R]",))),
    ("C5H10O", dict(require=("aldehyde",), max_ring_size=3)),
    # required groups with a skeleton condition (pruned during generation)
    ("C7H6O", dict(require=("aromatic_ring", "aldehyde"))),
    ("C8H10", dict(require=("aromatic_ring",))),
    ("C7H8O", dict(require=("aromatic_ring",), forbid=("hydroxyl",))),
    ("C4H7N", dict(require=("nitrile",))),
    ("C3H4O2", dict(require=("carboxylic_acid",))),
    ("C5H10O", dict(require=("ketone",))),
    ("C4H6O2", dict(require=("ester",), forbid=("lactone",))),
    ("C4H9NO", dict(require=("amide",))),
    ("C5H8O", dict(require=("aldehyde",), profile="stable")),
    # ring bounds from the π bonds required groups imply (groups.yaml pi_bonds), with oxo bonds
    ("C7H8O", dict(require=("aromatic_ring", "ether"))),
    ("C7H6O", dict(require=("aromatic_ring", "carbonyl"))),
    ("C8H8", dict(require=("aromatic_ring", "alkene"))),
    ("C8H8", dict(require=("alkyne",))),
    ("C5H6O", dict(require=("ketone", "alkene"))),
    ("C6H8O", dict(require=("ketone", "alkene"))),  # C=O and C=C add up: at most 1 ring
    ("C5H5N", dict(require=("nitrile", "alkyne"))),  # C#N and C#C add up: no ring
    ("C4H4O", dict(require=("alkyne", "carbonyl"))),
    ("C4H5N", dict(require=("nitrile", "alkene"))),
    ("C3H5NO", dict(require=("amide", "alkene"))),
    ("C4H4O3", dict(require=("anhydride",))),
    ("C3H3ClO", dict(require=("acid_chloride",))),
    ("C2H3NO2", dict(require=("nitro", "alkene"))),
    ("C3H5NO2", dict(require=("nitro",))),
    ("C3H6OS", dict(require=("sulfoxide", "alkene"))),
    ("C2H6O2S", dict(require=("sulfone",))),
    ("C4H6N2", dict(require=("imine",))),
    # skeleton and Kekulé conditions of O-H, ether, amine and thiol groups
    ("C5H10O", dict(require=("alcohol",))),
    ("C5H8O", dict(require=("hydroxyl",), forbid=("alcohol",))),
    ("C7H8O", dict(require=("phenol",))),
    ("C4H8O2", dict(require=("ether", "alcohol"))),
    ("C4H9NO", dict(require=("primary_amine",))),
    ("C4H9N", dict(require=("secondary_amine",))),
    ("C4H6S", dict(require=("thiol",))),
    # a required group needs elements the formula lacks: nothing, without walking skeletons
    ("C6H14", dict(require=("alcohol",))),
    ("C4H8O", dict(require=("ester",))),
]


def _reference(formula, spec):
    require = [Chem.MolFromSmarts(GROUPS[n].smarts) for n in spec.get("require", ())]
    require += [Chem.MolFromSmarts(s) for s in spec.get("require_smarts", ())]
    forbid = [Chem.MolFromSmarts(GROUPS[n].smarts) for n in spec.get("forbid", ())]
    forbid += [Chem.MolFromSmarts(s) for s in spec.get("forbid_smarts", ())]
    limit = spec.get("max_ring_size")
    rules = default_profiles()[spec["profile"]] if "profile" in spec else ()
    kept = []
    # RDKit's SMILES throughout, as the constrained run writes them (a finished-molecule test
    # needs the RDKit molecule anyway)
    for smiles in isomer_smiles(parse_formula(formula), GeneratorOptions(rdkit_smiles=True)):
        mol = Chem.MolFromSmiles(smiles)
        if not all(mol.HasSubstructMatch(p) for p in require):
            continue
        if any(mol.HasSubstructMatch(p) for p in forbid):
            continue
        if limit is not None and any(len(r) > limit for r in mol.GetRingInfo().AtomRings()):
            continue
        if any(rule.matches(mol) for rule in rules):
            continue
        kept.append(smiles)
    return kept


@pytest.mark.parametrize("formula,spec", CORPUS, ids=[f"{f}-{sorted(s.items())}" for f, s in CORPUS])
def test_constrained_equals_filtered(formula, spec):
    removed: dict[str, int] = {}
    selection = Selection(**spec)
    pushed = list(isomer_smiles(parse_formula(formula), GeneratorOptions(selection=selection), removed=removed))
    reference = _reference(formula, spec)
    assert pushed == reference
    if not selection.pushed():  # pruned skeletons are never generated, so not counted
        assert len(pushed) + sum(removed.values()) == len(list(isomer_smiles(parse_formula(formula))))


def test_contradictory_constraints_are_refused():
    with pytest.raises(ElucidateError, match="both required and forbidden"):
        list(
            isomer_smiles(
                parse_formula("C4H8O"), GeneratorOptions(selection=Selection(require=("ketone",), forbid=("ketone",)))
            )
        )


def test_cli_require_and_removed_counts(cli):
    res = cli("isomers", "C7H6O", "--require", "aromatic_ring", "--require", "aldehyde")
    assert res.code == 0
    assert res.out.split() == ["O=Cc1ccccc1"]  # benzaldehyde, the only aromatic aldehyde C7H6O
    assert "removed by require aromatic_ring:" in res.err
