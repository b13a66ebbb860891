"""The project's RDKit helpers (elucidate/_rdkit.py) against RDKit's own default reading.

`plain_mol` reads a SMILES unsanitized, keeping hydrogen atoms, then sanitizes it in full: on a
string with no hydrogen atom and no stereo (as the generator writes, Kekulé or aromatic, and as
RDKit writes its canonical SMILES of those) it must give exactly the molecule
`Chem.MolFromSmiles` gives, which is the reference (RDKit, a general-purpose library from the
package registry).
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import parse_formula
from elucidate._rdkit import plain_mol, quiet_rdkit
from elucidate.generator import GeneratorOptions, isomer_smiles


def _same(smiles: str) -> None:
    ours, reference = plain_mol(smiles), Chem.MolFromSmiles(smiles)
    assert reference is not None
    # atoms, bonds, charges, hydrogens, aromatic flags and ring facts alike
    assert ours.ToBinary() == reference.ToBinary(), smiles
    assert Chem.MolToSmiles(ours) == Chem.MolToSmiles(reference), smiles
    assert [len(r) for r in ours.GetRingInfo().AtomRings()] == [len(r) for r in reference.GetRingInfo().AtomRings()]
    assert [a.GetHybridization() for a in ours.GetAtoms()] == [a.GetHybridization() for a in reference.GetAtoms()]
    assert [b.GetIsConjugated() for b in ours.GetBonds()] == [b.GetIsConjugated() for b in reference.GetBonds()]
    potential = [(s.type, s.centeredOn) for s in Chem.FindPotentialStereo(Chem.Mol(ours))]
    assert potential == [(s.type, s.centeredOn) for s in Chem.FindPotentialStereo(Chem.Mol(reference))], smiles


# formulas with aromatic rings, heteroaromatics, cages and small rings among their isomers
@pytest.mark.parametrize("formula", ["C7H8O", "C5H5N", "C6H6O2", "C4H5NO", "C4H4N2"])
def test_plain_mol_is_rdkits_reading_of_generated_kekule_smiles(formula):
    written = list(isomer_smiles(parse_formula(formula), GeneratorOptions(kekule=True)))
    assert len(written) > 100
    for smiles in written:
        _same(smiles)


@pytest.mark.parametrize("formula", ["C7H8O", "C6H6O2", "C6H7N"])
def test_plain_mol_is_rdkits_reading_of_canonical_smiles(formula):
    canonical = list(isomer_smiles(parse_formula(formula), GeneratorOptions(rdkit_smiles=True)))
    assert any("c" in s for s in canonical)  # aromatic SMILES among them
    for smiles in canonical:
        _same(smiles)


@pytest.mark.parametrize("bad", ["C1CC", "C(C)(C)(C)(C)C", "c1cccc1", "not a smiles"])
def test_plain_mol_rejects_what_rdkit_rejects(bad):
    with quiet_rdkit():
        assert Chem.MolFromSmiles(bad) is None
        with pytest.raises(ValueError):
            plain_mol(bad)
