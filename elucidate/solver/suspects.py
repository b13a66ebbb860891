"""Suspects: structures the chemist names, each given its rank or the exact constraint that
eliminates it, with its scores either way."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

from ..case import Case
from ..formula import parse_formula
from ..formula_search import case_query, check_formula
from ..generator.selection import CompiledSelection
from .records import FoundCandidate, KeptFormula, Ranked, SuspectResult

if TYPE_CHECKING:
    from ..evidence import Technique
    from .ranking import Evaluator

__all__ = ["assess_suspect"]


def assess_suspect(
    text: str,
    case: Case,
    candidates: Sequence[Ranked],
    kept: Sequence[KeptFormula],
    hypotheses: Sequence[int],
    compiled: CompiledSelection,
    evaluator: Evaluator,
    techniques: Sequence[Technique],
) -> SuspectResult:
    """The suspect's rank, or the first constraint that eliminates it, and why."""
    from .._rdkit import Chem, mol_from_smiles, quiet_rdkit, rdMolDescriptors

    mol = mol_from_smiles(text)
    if mol is None:  # the case loader already checked it
        return SuspectResult(text, None, None, None, "SMILES", "RDKit cannot read it", None)
    with quiet_rdkit():
        smiles: str = Chem.MolToSmiles(mol)
    formula = parse_formula(rdMolDescriptors.CalcMolFormula(mol))
    fstr = str(formula)
    for c in candidates:
        if c.smiles == smiles:
            return SuspectResult(text, smiles, fstr, c.rank, None, None, c.score, dict(c.components))
    match = next((k for k in kept if k.formula == formula), None)
    m = match.molecular_ion if match is not None else formula.nominal_mass()
    isotope = match.isotope_score if match is not None else None
    found = FoundCandidate(
        smiles,
        formula,
        m,
        isotope,
        match.demotion if match is not None else 0.0,
        match.demoted_by if match is not None else None,
    )
    combined, _ = evaluator.evaluate(found, mol, techniques)
    score, components = combined.score, dict(combined.components)
    if Chem.GetFormalCharge(mol) != 0 or any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        return SuspectResult(
            text, smiles, fstr, None, "structure", "not a neutral closed-shell molecule", score, components
        )
    if match is None:
        nominal = formula.nominal_mass()
        if nominal not in hypotheses:
            why = f"nominal mass {nominal} is not a molecular ion considered ({', '.join(map(str, hypotheses))})"
        else:
            verdict = check_formula(formula, case_query(case, nominal))
            why = (
                f"{fstr} is rejected by the formula stage: {verdict[1]}"
                if verdict
                else f"{fstr} is not among the formulas kept (isotope fit or --formulas)"
            )
        return SuspectResult(text, smiles, fstr, None, "formula", why, score, components)
    failed = compiled.first_failure(mol)
    if failed is not None:
        return SuspectResult(text, smiles, fstr, None, failed, compiled.reason(failed, mol), score, components)
    if match.skipped:
        return SuspectResult(
            text, smiles, fstr, None, None, f"{fstr} was not enumerated ({match.skipped})", score, components
        )
    return SuspectResult(
        text,
        smiles,
        fstr,
        None,
        "generator",
        "passes every constraint but was not generated (please report)",
        score,
        components,
    )
