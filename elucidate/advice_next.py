"""What to measure next: the cheap measurements ranked by how well they would split the
shortlist of a run.

Each candidate of the shortlist gets a weight, its posterior share exp(log-likelihood) over the
shortlist. A measurement predicts one outcome per candidate (a 13C signal count, the DEPT
counts, a band in an IR region present or absent, a UV maximum to the nearest 10 nm, the exact
formula from HRMS, the H exchanged with D2O, the 1H integral pattern). Since the outcome is fixed
by the candidate, the expected information gain of the measurement is the Shannon entropy of its
outcome distribution, H = -Σ p(o) log2 p(o) bits (Shannon 1948; Lindley 1956 for the expected
gain of an experiment): 0 when every candidate predicts the same, log2(k) at best when k equally
weighted outcomes split the list evenly. Measurements the case already holds are left out (an IR
band list counts as the whole IR spectrum).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from .case import Case

if TYPE_CHECKING:
    from ._rdkit import Mol

__all__ = ["Measurement", "rank_measurements"]

#: UV maxima are told apart to this many nm (the usual accuracy of the additivity rules)
UV_BIN_NM = 10


@dataclass(frozen=True)
class Measurement:
    name: str
    bits: float  # expected information gain
    outcomes: tuple[tuple[str, float, tuple[str, ...]], ...]  # outcome, its probability, candidates

    def describe(self, limit: int = 4) -> str:
        parts = []
        for outcome, p, smiles in self.outcomes:
            names = ", ".join(smiles[:limit]) + (f" and {len(smiles) - limit} more" if len(smiles) > limit else "")
            parts.append(f"{outcome} ({p:.0%}): {names}")
        return "; ".join(parts)


def _carbon_count(mol: Mol) -> str:
    from .evidence.carbon13 import carbon_classes

    return f"{len(carbon_classes(mol))} 13C signals"


def _dept(mol: Mol) -> str:
    from .evidence.carbon13 import carbon_classes

    counts = {"CH3": 0, "CH2": 0, "CH": 0, "C": 0}
    for _, kind, _n in carbon_classes(mol):
        counts[kind] += 1
    return "DEPT signals " + " ".join(f"{k} {v}" for k, v in counts.items())


def _exchangeable(mol: Mol) -> str:
    n = sum(a.GetTotalNumHs() for a in mol.GetAtoms() if a.GetAtomicNum() in (7, 8, 16))
    return f"{n} H exchanged with D2O"


def _integrals(mol: Mol) -> str:
    from .evidence.carbon13 import symmetry_ranks

    ranks = symmetry_ranks(mol)
    groups: dict[int, int] = {}
    for atom in mol.GetAtoms():
        h = atom.GetTotalNumHs()
        if h:
            groups[ranks[atom.GetIdx()]] = groups.get(ranks[atom.GetIdx()], 0) + h
    return "1H integrals " + ":".join(str(v) for v in sorted(groups.values(), reverse=True))


def _uv(mol: Mol) -> str:
    from .evidence.uv import predict_lambda_max

    lam = predict_lambda_max(mol).lambda_max
    return "no UV maximum above 210 nm" if lam is None else f"UV maximum near {UV_BIN_NM * round(lam / UV_BIN_NM)} nm"


def _band(group: str, low: float, high: float) -> Callable[[Mol], str]:
    from .generator.groups import default_groups

    pattern = default_groups()[group].pattern

    def outcome(mol: Mol) -> str:
        seen = mol.HasSubstructMatch(pattern)
        return f"band {low:.0f}-{high:.0f} cm-1 ({group}) {'present' if seen else 'absent'}"

    return outcome


def _entropy(weights: Mapping[str, float]) -> float:
    total = sum(weights.values())
    return -sum((w / total) * math.log2(w / total) for w in weights.values() if w > 0)


def rank_measurements(shortlist: Sequence[Mapping[str, Any]], case: Case | None = None) -> list[Measurement]:
    """The measurements that split ``shortlist`` (candidates of a run record: smiles, formula,
    log_likelihood), best first; those already in ``case`` are left out."""
    from ._rdkit import mol_from_smiles
    from .evidence.infrared import default_infrared

    if not shortlist:
        return []
    best = max(c["log_likelihood"] for c in shortlist)
    weight = {c["smiles"]: math.exp(c["log_likelihood"] - best) for c in shortlist}
    mols = {c["smiles"]: mol_from_smiles(c["smiles"]) for c in shortlist}
    formula = {c["smiles"]: str(c["formula"]) for c in shortlist}
    tests: list[tuple[str, Callable[[str], str]]] = []

    def on_mol(f: Callable[[Mol], str]) -> Callable[[str], str]:
        def apply(smiles: str) -> str:
            mol = mols[smiles]
            return "unreadable" if mol is None else f(mol)

        return apply

    nmr = case.nmr if case is not None else None
    if nmr is None or (nmr.c13_signals is None and not nmr.c13):
        tests.append(("a 13C spectrum (signal count)", on_mol(_carbon_count)))
    if nmr is None or (nmr.carbon_types is None and nmr.c13_multiplicity is None and not any(s.type for s in nmr.c13)):
        tests.append(("DEPT (carbons by H count)", on_mol(_dept)))
    if nmr is None or nmr.exchangeable_h is None:
        tests.append(("a D2O shake (exchangeable H)", on_mol(_exchangeable)))
    if nmr is None or not nmr.h1:
        tests.append(("a 1H spectrum (integral pattern)", on_mol(_integrals)))
    if case is None or case.uv_vis is None:
        tests.append(("a UV-Vis maximum", on_mol(_uv)))
    if case is None or case.mass_spec is None or case.mass_spec.exact_mass is None:
        tests.append(("an exact mass (HRMS)", lambda smiles: f"formula {formula[smiles]}"))
    table = default_infrared()
    measured_ir = case is not None and case.infrared is not None and bool(case.infrared.bands)
    for group in sorted(table.bands) if not measured_ir else ():  # a band list is the spectrum already
        key = [b for b in table.bands[group] if b.key]
        if key:
            tests.append((f"an IR band of {group}", on_mol(_band(group, key[0].low, key[0].high))))
    out = []
    for name, test in tests:
        outcomes: dict[str, list[str]] = {}
        for c in shortlist:
            outcomes.setdefault(test(c["smiles"]), []).append(c["smiles"])
        if len(outcomes) < 2:
            continue
        mass = {o: sum(weight[s] for s in members) for o, members in outcomes.items()}
        total = sum(mass.values())
        bits = _entropy(mass)
        listed = tuple(
            (o, mass[o] / total, tuple(members)) for o, members in sorted(outcomes.items(), key=lambda kv: -mass[kv[0]])
        )
        out.append(Measurement(name, bits, listed))
    out.sort(key=lambda m: (-round(m.bits, 9), m.name))
    return out
