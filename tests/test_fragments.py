"""EI fragmentation: classic diagnostic ions (common practice) must be predicted strongly."""

from __future__ import annotations

import pytest
from rdkit import Chem

from elucidate import ElucidateError
from elucidate.evidence.fragments import default_fragments, load_fragments, predict_ions

DIAGNOSTIC = [
    ("Cc1ccccc1", 91, "toluene: tropylium"),
    ("CCc1ccccc1", 91, "ethylbenzene: benzylic cleavage"),
    ("CC(=O)c1ccccc1", 105, "aryl methyl ketone: benzoyl ion"),
    ("CC(=O)c1ccccc1", 77, "aryl methyl ketone: phenyl cation"),
    ("CCCCC(C)=O", 58, "2-alkanone: McLafferty ion"),
    ("CCCCC(C)=O", 43, "methyl ketone: acetyl ion"),
    ("CCCCC=O", 44, "straight-chain aldehyde: McLafferty ion"),
    ("CCCCN", 30, "primary amine: CH2=NH2+"),
    ("CCCCCO", 31, "primary alcohol: CH2=OH+"),
    ("CCCc1ccccc1", 92, "propylbenzene: McLafferty ion"),
    ("CCCCC(=O)OC", 74, "methyl ester: McLafferty ion"),
    ("C1=CCCCC1", 54, "cyclohexene: retro-Diels-Alder"),
    ("O=[N+]([O-])c1ccccc1", 77, "nitrobenzene: M - NO2"),
    ("CC(=O)Nc1ccccc1", 93, "acetanilide: M - ketene"),
]


@pytest.mark.parametrize("smiles,mz,why", DIAGNOSTIC, ids=[d[2] for d in DIAGNOSTIC])
def test_diagnostic_ion_predicted(smiles, mz, why):
    ions = predict_ions(Chem.MolFromSmiles(smiles))
    assert mz in ions and ions[mz].weight >= 0.4, (why, {k: v.weight for k, v in ions.items()})


def test_larger_radical_loss_preferred():
    # 2-hexanone: losing butyl (-> 43) beats losing methyl (-> 85) (common practice)
    ions = predict_ions(Chem.MolFromSmiles("CCCCC(C)=O"))
    assert ions[43].weight > ions[85].weight


def test_mclafferty_needs_a_gamma_hydrogen():
    # 3,3-dimethylbutan-2-one has no gamma-H: no m/z 58 rearrangement ion
    assert 58 not in predict_ions(Chem.MolFromSmiles("CC(=O)C(C)(C)C"))


def test_table_validates_and_bad_rule_is_located(tmp_path):
    default_fragments().validate()
    bad = tmp_path / "fragments.yaml"
    bad.write_text(
        "strong_weight: 0.7\nmissing_penalty: 0.5\nlowest_mz: 26\ngeneric_credit: 0.5\nloss_credit: 0.75\n"
        "max_h_transfer: 2\nunexplained_scale: 2\nrules:\n"
        "  - {name: x, kind: cleave, smarts: 'CC', weight: 0.5, what: w}\n"
    )
    with pytest.raises(ElucidateError) as info:
        load_fragments(bad)
    assert info.value.line == 9 and "mapped atoms" in info.value.message


# ------------------------------------------------ pieces of the candidate's own graph


def _rdkit_piece_masses(smiles: str) -> set[int]:
    """Independent twin of graph_pieces: RDKit's FragmentOnBonds on every one- and two-bond
    cut, nominal masses of the connected pieces (dummy atoms dropped) from RDKit's own
    periodic table (a general-purpose reference library)."""
    import itertools

    mol = Chem.MolFromSmiles(smiles)
    table = Chem.GetPeriodicTable()
    # each atom with the hydrogens it carries in the intact molecule
    atom_mass = [table.GetMostCommonIsotope(a.GetAtomicNum()) + a.GetTotalNumHs() for a in mol.GetAtoms()]
    out = set()
    bonds = range(mol.GetNumBonds())
    for cut in itertools.chain(itertools.combinations(bonds, 1), itertools.combinations(bonds, 2)):
        broken = Chem.FragmentOnBonds(mol, list(cut), addDummies=False)  # atom indices are kept
        pieces = Chem.GetMolFrags(broken, asMols=False, sanitizeFrags=False)
        if len(pieces) > 1:
            out.update(sum(atom_mass[i] for i in piece) for piece in pieces)
    return out


def _our_piece_masses(smiles: str) -> set[int]:
    from elucidate.evidence.fragments import graph_pieces

    return set(graph_pieces(Chem.MolFromSmiles(smiles)))


@pytest.mark.parametrize("smiles", ["CCC(C)=O", "CC(C)(C)O", "c1ccccc1C", "C1CCCC1C(=O)OC", "ClCCBr", "CN(C)C=O"])
def test_graph_pieces_equal_rdkits_fragmentation(smiles):
    assert _our_piece_masses(smiles) == _rdkit_piece_masses(smiles)


def _assess(smiles, peaks, molecular_ion):
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    from elucidate.case import parse_case
    from elucidate.evidence import Fragments, make_subject
    from elucidate.formula import parse_formula
    from elucidate.generator.groups import default_groups

    listed = ", ".join(f"{mz}: {v}" for mz, v in peaks.items())
    case = parse_case(f"schema: 1\nid: t\nmass_spec:\n  molecular_ion: {molecular_ion}\n  peaks: {{{listed}}}\n")
    mol = Chem.MolFromSmiles(smiles)
    subject = make_subject(smiles, mol, parse_formula(CalcMolFormula(mol)), default_groups(), molecular_ion)
    return Fragments().assess(subject, case)


def test_a_peak_no_rule_predicts_is_unexplained_not_against():
    # 2,3-dimethylbuta-1,3-diene (M 82): base peak M-15 (CH3 loss; common practice for
    # methyl-branched dienes); whatever the named rules say, the loss of a CH3 the graph has
    # is credited, and no peak costs "against"
    a = _assess("C=C(C)C(C)=C", {82: 60, 83: 4, 67: 100, 41: 40, 39: 35}, 82)
    by_mz = {x["mz"]: x["explained_by"] for x in a.detail["assignments"]}
    assert by_mz[67] is not None
    assert a.unexplained < 2.0


def test_halogen_isotope_partner_of_a_fragment_is_explained():
    # 1-chloropropane (M 78): C-Cl-bearing CH2Cl+ at 49 and its 37Cl partner at 51 (about a
    # third: the 35Cl/37Cl ratio, common practice)
    a = _assess("CCCCl", {78: 20, 80: 6.5, 49: 30, 51: 10, 42: 100, 43: 60}, 78)
    by_mz = {x["mz"]: x["explained_by"] for x in a.detail["assignments"]}
    assert by_mz[51] is not None and "isotope" in by_mz[51]


def test_neutral_loss_table_validates_and_a_repeated_loss_is_located(tmp_path):
    from elucidate.evidence.fragments import default_neutral_losses, load_neutral_losses

    table = default_neutral_losses()
    table.validate()
    # Lange's Handbook 15th ed. 7.8.2.4: CH3 15, H2O 18, CO / C2H4 28, HBr 80 among the usual losses
    assert {15, 18, 28, 80} <= set(table.by_mass())
    bad = tmp_path / "neutral_losses.yaml"
    bad.write_text("losses:\n  - {loss: 15, neutral: CH3, first: true}\n  - {loss: 15, neutral: again, first: false}\n")
    with pytest.raises(ElucidateError, match="listed twice") as info:
        load_neutral_losses(bad)
    assert info.value.line == 3


def test_implausible_losses_are_the_published_gaps_and_never_a_listed_loss(tmp_path):
    from elucidate.evidence.fragments import default_neutral_losses, load_neutral_losses

    table = default_neutral_losses()
    # McLafferty & Turecek (from memory): losses of about 3-14 and 21-25 u from M+ are implausible
    assert [table.is_implausible(d) for d in (2, 3, 14, 15, 20, 21, 25, 26)] == [
        False, True, True, False, False, True, True, False,
    ]  # fmt: skip
    bad = tmp_path / "neutral_losses.yaml"
    bad.write_text("implausible: [3-14]\nlosses:\n  - {loss: 14, neutral: CH2, first: false}\n")
    with pytest.raises(ElucidateError, match="also listed as implausible"):
        load_neutral_losses(bad)
