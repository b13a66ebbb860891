"""The solver: case -> formulas -> generate -> evidence -> rank.

Hard constraints (the only things that eliminate): the formula stage (nominal mass, element
limits, DBE, nitrogen/Senior rules, element ratios), the declared groups (``infrared.require`` /
``forbid``), the declared SMARTS (``structure.require_smarts`` / ``forbid_smarts``) and the
``stable`` plausibility profile. Everything else — IR bands, UV lambda max, EI fragments, 13C
counts, isotope fit — only ranks (see :mod:`elucidate.evidence` and ``constraints/scoring.yaml``).

Results are hypotheses to confirm against a reference standard under the lab's own procedures.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

from .case import Case
from .errors import ElucidateError
from .evidence import TECHNIQUES, Assessment, make_subject
from .evidence.infrared import Infrared
from .evidence.infrared import IRReading, read_bands
from .evidence.weights import ScoringTable, default_scoring
from .formula import Formula
from .formulas import case_query, check_formula, derive_formulas
from .groups import GroupTable, default_groups
from .selection import CompiledSelection, Selection

__all__ = [
    "molecular_ion_hypotheses",
    "KeptFormula",
    "Ranked",
    "SuspectResult",
    "Solution",
    "solve",
    "DEFAULT_LIMIT",
    "PROFILE",
]

#: largest estimated structure space per formula the solver enumerates without a raised limit
DEFAULT_LIMIT = 200_000
#: the plausibility profile the solver applies
PROFILE = "stable"
#: neutral losses tried when the molecular ion is not seen: highest peak + these (CH3, OH, H2O)
LOSSES_FOR_M = (0, 15, 17, 18)


def molecular_ion_hypotheses(case: Case) -> tuple[int, ...]:
    """The molecular ions to try: the declared one (or the known formula's mass); when the
    molecular ion is unknown, the highest peak (at least 1 % of base) and that peak plus the
    usual first losses (CH3 15, OH 17, H2O 18), since alcohols and branched compounds often show
    no M+."""
    ms = case.mass_spec
    if ms is not None and ms.molecular_ion is not None:
        return (ms.molecular_ion,)
    if case.formula.known is not None:
        return (case.formula.known.nominal_mass(),)
    if ms is None or not ms.peaks:
        raise ElucidateError(
            "no molecular ion and no peaks: give mass_spec.molecular_ion, mass_spec.peaks or formula.known",
            file=case.path,
            key="mass_spec",
        )
    highest = max(mz for mz, v in ms.peaks.items() if v >= 1.0)
    return tuple(highest + loss for loss in LOSSES_FOR_M)


@dataclass(frozen=True)
class KeptFormula:
    formula: Formula
    molecular_ion: int
    isotope_score: float | None  # exp(-chi2/2) of the isotope-cluster fit; None without a cluster
    structures: int = 0  # candidates that passed the hard constraints
    skipped: str | None = None  # why it was not enumerated (space above the limit)


@dataclass(frozen=True)
class Ranked:
    rank: int
    smiles: str
    formula: str
    molecular_ion: int | None
    score: float
    components: Mapping[str, float]
    reasons: tuple[str, ...]
    assessments: tuple[Assessment, ...] = ()

    @property
    def inchikey(self) -> str:
        """Standard InChIKey (RDKit), computed when first asked for."""
        return _inchikey(self.smiles)

    def as_dict(self) -> dict[str, Any]:
        return {
            "rank": self.rank,
            "smiles": self.smiles,
            "inchikey": self.inchikey,
            "formula": self.formula,
            "molecular_ion": self.molecular_ion,
            "score": round(self.score, 6),
            "components": {k: round(v, 6) for k, v in self.components.items()},
            "reasons": list(self.reasons),
        }


@dataclass(frozen=True)
class SuspectResult:
    given: str
    smiles: str | None  # canonical
    formula: str | None
    rank: int | None
    eliminated_by: str | None
    why: str | None
    score: float | None
    components: Mapping[str, float] = field(default_factory=dict)

    def as_dict(self) -> dict[str, Any]:
        return {
            "given": self.given,
            "smiles": self.smiles,
            "formula": self.formula,
            "rank": self.rank,
            "eliminated_by": self.eliminated_by,
            "why": self.why,
            "score": None if self.score is None else round(self.score, 6),
            "components": {k: round(v, 6) for k, v in self.components.items()},
        }


@dataclass(frozen=True)
class Solution:
    case: Case
    hypotheses: tuple[int, ...]
    formulas: tuple[KeptFormula, ...]
    generated: int
    eliminated: Mapping[str, int]
    candidates: tuple[Ranked, ...]
    suspects: tuple[SuspectResult, ...]
    reading: IRReading | None
    techniques: tuple[str, ...]
    empty_reason: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()


def _techniques(groups: GroupTable) -> list[Any]:
    """One instance of every technique, the group vocabulary given to those that read it."""
    return [Infrared(groups) if cls is Infrared else cls() for cls in TECHNIQUES]


def hard_selection(case: Case, techniques: Sequence[Any]) -> Selection:
    require: list[str] = []
    forbid: list[str] = []
    for technique in techniques:
        hard = technique.hard_constraints(case)
        require += hard.get("require", ())
        forbid += hard.get("forbid", ())
    s = case.structure
    return Selection(
        require=tuple(dict.fromkeys(require)),
        forbid=tuple(dict.fromkeys(forbid)),
        require_smarts=s.require_smarts if s else (),
        forbid_smarts=s.forbid_smarts if s else (),
        profile=PROFILE,
    )


def _combine(assessments: Sequence[Assessment], isotope: float | None, scoring: ScoringTable) -> tuple[float, dict[str, float]]:
    components: dict[str, float] = {}
    if isotope is not None:
        components["formula"] = isotope
    for a in assessments:
        components[a.technique] = a.score
    total_w = sum(scoring.weights[k] for k in components)
    if not total_w:
        return 1.0, components
    log = sum(scoring.weights[k] * math.log(max(v, scoring.floor)) for k, v in components.items())
    return math.exp(log / total_w), components


@lru_cache(maxsize=4096)
def _inchikey(smiles: str) -> str:
    from ._rdkit import Chem, quiet_rdkit

    with quiet_rdkit():
        return Chem.MolToInchiKey(Chem.MolFromSmiles(smiles)) or ""


#: candidates scored per task when scoring runs in worker processes
CHUNK = 500


_Job = tuple[Case, list[tuple[str, str, int, "float | None"]], GroupTable, ScoringTable]


def _score_chunk(job: _Job) -> list[tuple[float, dict[str, float], tuple[Assessment, ...]]]:
    """Score candidates (SMILES, formula, M, isotope fit) on every technique that applies."""
    from ._rdkit import Chem, quiet_rdkit
    from .formula import parse_formula

    case, items, groups, scoring = job
    techniques = [t for t in _techniques(groups) if t.applies(case)]
    out = []
    with quiet_rdkit():
        for smiles, formula, m, isotope in items:
            subject = make_subject(smiles, Chem.MolFromSmiles(smiles), parse_formula(formula), groups, m)
            assessments = tuple(t.assess(subject, case) for t in techniques)
            score, components = _combine(assessments, isotope, scoring)
            out.append((score, components, assessments))
    return out


def solve(
    case: Case,
    *,
    limit: int = DEFAULT_LIMIT,
    max_formulas: int = 5,
    workers: int = 1,
    groups: GroupTable | None = None,
    scoring: ScoringTable | None = None,
) -> Solution:
    """Solve one case. ``limit``: largest estimated structure space per formula that is
    enumerated; ``max_formulas``: formulas kept per molecular-ion hypothesis (the best by
    isotope fit, and only those within a factor 20 of the best fit); ``workers``: processes
    for generation and scoring (the result does not depend on it)."""
    from .generate import estimate_structures, isomer_smiles

    g = groups or default_groups()
    sc = scoring or default_scoring()
    every = _techniques(g)
    techniques = [t for t in every if t.applies(case)]
    selection = hard_selection(case, every)
    compiled = selection.compile(g)
    hypotheses = molecular_ion_hypotheses(case)
    kept: list[KeptFormula] = []
    notes: list[str] = []
    removed: dict[str, int] = {label: 0 for label in compiled.labels}
    generated = 0
    found: list[tuple[str, str, int, float | None]] = []  # (SMILES, formula, M, isotope fit)
    for m in hypotheses:
        result = derive_formulas(case_query(case, m), top=max_formulas)
        best = max((c.score or 0.0 for c in result.kept), default=0.0)
        for cand in result.kept:
            if cand.score is not None and best > 0 and cand.score < best / 20:
                continue
            estimate = estimate_structures(cand.formula, selection=selection)
            if estimate > limit:
                why = (
                    f"about {estimate:,.0f} structures estimated, above the limit {limit:,}: declare groups "
                    "(infrared.require / forbid) or raise --limit"
                )
                kept.append(KeptFormula(cand.formula, m, cand.score, 0, why))
                notes.append(f"{cand.formula} (M {m}) not enumerated: {why}")
                continue
            local: dict[str, int] = {}
            before = len(found)
            for smiles in isomer_smiles(cand.formula, selection=selection, removed=local, workers=workers):
                found.append((smiles, str(cand.formula), m, cand.score))
            count = len(found) - before
            for label, n in local.items():
                removed[label] = removed.get(label, 0) + n
            generated += count + sum(local.values())
            kept.append(KeptFormula(cand.formula, m, cand.score, count))
    chunks: list[_Job] = [(case, found[i : i + CHUNK], g, sc) for i in range(0, len(found), CHUNK)]
    if workers > 1 and len(chunks) > 1:
        import multiprocessing

        with multiprocessing.Pool(workers) as pool:
            scored = [r for part in pool.imap(_score_chunk, chunks) for r in part]
    else:
        scored = [r for job in chunks for r in _score_chunk(job)]
    order = sorted(range(len(found)), key=lambda i: (-round(scored[i][0], 6), -round(found[i][3] or 0.0, 6), found[i][0]))
    candidates = []
    for rank, i in enumerate(order, start=1):
        smiles, formula, m, _ = found[i]
        score, components, assessments = scored[i]
        reasons = tuple(r for a in assessments for r in a.reasons[:2])
        candidates.append(Ranked(rank, smiles, formula, m, score, components, reasons, assessments))
    suspects = tuple(
        _suspect(text, case, candidates, kept, hypotheses, compiled, techniques, sc, g) for text in (case.structure.suspects if case.structure else ())
    )
    reading = read_bands(case.infrared.bands, g) if case.infrared is not None and case.infrared.bands else None
    empty = _why_empty(case, kept, removed, selection, generated) if not candidates else ()
    return Solution(
        case, hypotheses, tuple(kept), generated, removed, tuple(candidates), suspects, reading,
        tuple(t.name for t in techniques), empty, tuple(notes),
    )


def _suspect(
    text: str,
    case: Case,
    candidates: Sequence[Ranked],
    kept: Sequence[KeptFormula],
    hypotheses: Sequence[int],
    compiled: CompiledSelection,
    techniques: Sequence[Any],
    scoring: ScoringTable,
    groups: GroupTable,
) -> SuspectResult:
    from ._rdkit import Chem, mol_from_smiles, quiet_rdkit
    from .formula import parse_formula

    mol = mol_from_smiles(text)
    if mol is None:  # the case loader already checked it
        return SuspectResult(text, None, None, None, "SMILES", "RDKit cannot read it", None)
    with quiet_rdkit():
        smiles = Chem.MolToSmiles(mol)
    from ._rdkit import rdMolDescriptors

    formula = parse_formula(rdMolDescriptors.CalcMolFormula(mol))
    fstr = str(formula)
    for c in candidates:
        if c.smiles == smiles:
            return SuspectResult(text, smiles, fstr, c.rank, None, None, c.score, dict(c.components))
    match = next((k for k in kept if k.formula == formula), None)
    m = match.molecular_ion if match is not None else formula.nominal_mass()
    subject = make_subject(smiles, mol, formula, groups, m)
    assessments = [t.assess(subject, case) for t in techniques]
    score, components = _combine(assessments, match.isotope_score if match else None, scoring)
    if Chem.GetFormalCharge(mol) != 0 or any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        return SuspectResult(text, smiles, fstr, None, "structure", "not a neutral closed-shell molecule", score, components)
    if match is None:
        nominal = formula.nominal_mass()
        if nominal not in hypotheses:
            why = f"nominal mass {nominal} is not a molecular ion considered ({', '.join(map(str, hypotheses))})"
        else:
            verdict = check_formula(formula, case_query(case, nominal))
            why = f"{fstr} is rejected by the formula stage: {verdict[1]}" if verdict else f"{fstr} is not among the formulas kept (isotope fit or --formulas)"
        return SuspectResult(text, smiles, fstr, None, "formula", why, score, components)
    failed = compiled.first_failure(mol)
    if failed is not None:
        return SuspectResult(text, smiles, fstr, None, failed, f"breaks the declared constraint: {failed}", score, components)
    if match.skipped:
        return SuspectResult(text, smiles, fstr, None, None, f"{fstr} was not enumerated ({match.skipped})", score, components)
    return SuspectResult(text, smiles, fstr, None, "generator", "passes every constraint but was not generated (please report)", score, components)


def _why_empty(case: Case, kept: Sequence[KeptFormula], removed: Mapping[str, int], selection: Selection, generated: int) -> tuple[str, ...]:
    from .generate import count_isomers

    if not kept:
        return ("no formula survived the formula stage for molecular ion(s) "
                + ", ".join(map(str, molecular_ion_hypotheses(case))) + " (see `elucidate formulas` with --explain)",)
    if all(k.skipped for k in kept):
        return ("every formula's structure space is above the limit; declare groups or raise --limit",)
    lines = [f"{k.formula} was not enumerated: {k.skipped}" for k in kept if k.skipped]
    last = [label for label, n in removed.items() if n]
    if last:
        lines.append("removed by: " + ", ".join(f"{label} ({removed[label]})" for label in last))
    declared = [("require", n) for n in selection.require] + [("forbid", n) for n in selection.forbid]
    declared += [("require_smarts", s) for s in selection.require_smarts] + [("forbid_smarts", s) for s in selection.forbid_smarts]
    formulas = [k.formula for k in kept if not k.skipped]

    def survivors(parts: Sequence[tuple[str, str]]) -> int:
        spec: dict[str, Any] = {"require": (), "forbid": (), "require_smarts": (), "forbid_smarts": ()}
        for key, value in parts:
            spec[key] = spec[key] + (value,)
        sel = Selection(**spec, profile=PROFILE)
        return sum(count_isomers(f, selection=sel) for f in formulas)

    alone = {d: survivors([d]) for d in declared}
    for d, n in alone.items():
        if n == 0:
            lines.append(f"{d[0]} {d[1]} alone leaves no structure of {', '.join(map(str, formulas))}")
    for i, a in enumerate(declared):
        for b in declared[i + 1 :]:
            if alone[a] and alone[b] and survivors([a, b]) == 0:
                lines.append(f"{a[0]} {a[1]} and {b[0]} {b[1]} contradict each other for {', '.join(map(str, formulas))}")
    if not lines:
        lines.append(f"all {generated} generated structures were removed by the plausibility profile {PROFILE!r}")
    return tuple(lines)
