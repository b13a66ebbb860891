"""EI fragmentation: the ions a candidate's molecular ion is expected to give, against the peaks.

Rules (``constraints/fragments.yaml``): simple cleavages (alpha to N, O, S and C=O, benzylic,
allylic, at branch points, C-X), McLafferty rearrangements, retro-Diels-Alder, common neutral
losses and fixed ions, each with a weight for how abundant its ion usually is. A rule's ion may
go on to lose a neutral (ArCO+ -> Ar+ + CO). Predicted ions at one m/z keep the largest weight.

Score. Peaks of the molecular-ion cluster (M and above) are left out. Of the remaining observed
intensity (m/z >= 26), the share that a predicted ion explains — the ion itself, or its 13C / 37Cl
/ 81Br isotope peak one or two above — is the base; each strong predicted ion (weight >=
``strong_weight``) inside the observed m/z range but absent costs ``missing_penalty`` x its
weight: score = share x exp(-cost). Every observed peak gets the cleavage that explains it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cache, lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal

from ..case import Case
from ..elements import ElementTable, default_elements
from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import as_choice, as_int, as_list, as_number, as_str, mapping, read_yaml_file
from .base import Assessment, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = ["FragmentRule", "FragmentTable", "Fragments", "default_fragments", "load_fragments", "predict_ions"]

KINDS = ("cleave", "rearrange", "retro_diels_alder", "loss", "ion")


@dataclass(frozen=True)
class FragmentRule:
    name: str
    kind: str
    smarts: str
    weight: float
    what: str
    neutral: int | None = None
    mz: int | None = None
    then_loss: int | None = None
    lost_size: float = 0.1

    @property
    def pattern(self) -> Mol:
        return compiled_smarts(self.smarts)

    @property
    def mapped(self) -> dict[int, int]:
        """Map number -> query atom index (cached: iterating RDKit atoms is slow)."""
        return _mapped(self.smarts)


@cache
def _mapped(smarts: str) -> dict[int, int]:
    return {a.GetAtomMapNum(): a.GetIdx() for a in compiled_smarts(smarts).GetAtoms() if a.GetAtomMapNum()}


@dataclass(frozen=True, eq=False)
class FragmentTable:
    rules: tuple[FragmentRule, ...]
    strong_weight: float
    missing_penalty: float
    lowest_mz: int = 26  # peaks below this m/z are not scored (too unspecific)
    source: str = ""

    def validate(self) -> None:
        for i, rule in enumerate(self.rules):
            where = f"rules[{i}]"
            try:
                pattern = rule.pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"{where}.smarts") from exc
            maps = {a.GetAtomMapNum() for a in pattern.GetAtoms()} - {0}
            need = {"cleave": {1, 2}, "rearrange": {1, 2}, "retro_diels_alder": {1, 2, 3, 4, 5, 6}}.get(
                rule.kind, set()
            )
            if not need <= maps:
                raise ElucidateError(f"a {rule.kind} rule needs mapped atoms {sorted(need)}", key=f"{where}.smarts")
            if rule.kind == "loss" and rule.neutral is None:
                raise ElucidateError("a loss rule needs `neutral`", key=where)
            if rule.kind == "ion" and rule.mz is None:
                raise ElucidateError("an ion rule needs `mz`", key=where)


def load_fragments(path: str | Path | None = None) -> FragmentTable:
    file = Path(path) if path is not None else table_path("fragments.yaml")
    document = read_yaml_file(file)
    keys = ["source", "strong_weight", "missing_penalty", "lowest_mz", "rules"]
    root = mapping(document, keys, required=keys[1:])
    rules = []
    for item in as_list(root["rules"], what="a list of rules"):
        r = mapping(
            item,
            ["name", "kind", "smarts", "weight", "what", "neutral", "mz", "then_loss", "lost_size"],
            required=["name", "kind", "smarts", "weight", "what"],
        )
        rules.append(
            FragmentRule(
                name=as_str(r["name"]),
                kind=as_choice(r["kind"], KINDS, what="a rule kind:"),
                smarts=as_str(r["smarts"], what="a SMARTS pattern"),
                weight=as_number(r["weight"], minimum=0, maximum=1, what="a weight 0-1"),
                what=as_str(r["what"]),
                neutral=as_int(r["neutral"], minimum=1, what="a neutral mass") if "neutral" in r else None,
                mz=as_int(r["mz"], minimum=1, what="an m/z") if "mz" in r else None,
                then_loss=as_int(r["then_loss"], minimum=1, what="a neutral mass") if "then_loss" in r else None,
                lost_size=as_number(r["lost_size"], minimum=0, maximum=0.5, what="0-0.5") if "lost_size" in r else 0.1,
            )
        )
    table = FragmentTable(
        tuple(rules),
        as_number(root["strong_weight"], minimum=0, maximum=1, what="a weight 0-1"),
        as_number(root["missing_penalty"], minimum=0, what="a penalty of 0 or more"),
        as_int(root["lowest_mz"], minimum=1, what="a whole m/z"),
        as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_fragments() -> FragmentTable:
    return load_fragments()


# ------------------------------------------------------------------ prediction


def _atom_masses(mol: Mol, table: ElementTable) -> list[int]:
    h = table["H"].nominal_mass
    out = []
    for i in range(mol.GetNumAtoms()):  # indexing is much faster than iterating GetAtoms()
        a = mol.GetAtomWithIdx(i)
        out.append(table[a.GetSymbol()].nominal_mass + h * a.GetTotalNumHs())
    return out


def _piece(mol: Mol, start: int, cut: set[frozenset[int]]) -> set[int] | None:
    """Atoms reachable from ``start`` without crossing the cut bonds; None if the cut does not
    separate the molecule."""
    seen = {start}
    stack = [start]
    while stack:
        i = stack.pop()
        for nb in mol.GetAtomWithIdx(i).GetNeighbors():
            j = nb.GetIdx()
            if j in seen or frozenset((i, j)) in cut:
                continue
            seen.add(j)
            stack.append(j)
    return None if len(seen) == mol.GetNumAtoms() else seen


@dataclass(frozen=True)
class PredictedIon:
    mz: int
    weight: float
    rule: str
    what: str


def predict_ions(
    mol: Mol, *, table: FragmentTable | None = None, elements: ElementTable | None = None
) -> dict[int, PredictedIon]:
    """Predicted fragment ions of ``mol`` (aromaticity perceived): m/z -> the strongest reason."""
    t = table or default_fragments()
    e = elements or default_elements()
    masses = _atom_masses(mol, e)
    total = sum(masses)
    heavy = mol.GetNumAtoms()
    out: dict[int, PredictedIon] = {}

    def add(mz: int, weight: float, rule: FragmentRule, what: str) -> None:
        if mz <= 0 or mz >= total:
            return
        weight = min(weight, 1.0)
        if mz not in out or out[mz].weight < weight:
            out[mz] = PredictedIon(mz, round(weight, 4), rule.name, what)

    for rule in t.rules:
        if rule.kind == "loss":
            if mol.HasSubstructMatch(rule.pattern):
                assert rule.neutral is not None
                add(total - rule.neutral, rule.weight, rule, f"M-{rule.neutral}: {rule.what}")
                if rule.then_loss:
                    add(
                        total - rule.neutral - rule.then_loss,
                        rule.weight * 0.6,
                        rule,
                        f"{rule.what}, then -{rule.then_loss}",
                    )
            continue
        if rule.kind == "ion":
            if mol.HasSubstructMatch(rule.pattern):
                assert rule.mz is not None
                add(rule.mz, rule.weight, rule, rule.what)
                if rule.then_loss:
                    add(rule.mz - rule.then_loss, rule.weight * 0.5, rule, f"{rule.what}, then -{rule.then_loss}")
            continue
        maps = rule.mapped
        done: set[tuple[tuple[int, int], ...]] = set()
        for match in mol.GetSubstructMatches(rule.pattern, uniquify=False, maxMatches=200):
            at = {k: match[i] for k, i in maps.items()}
            key = tuple(sorted(at.items()))
            if key in done:  # the same cleavage through another mapping of unmapped atoms
                continue
            done.add(key)
            if rule.kind == "retro_diels_alder":
                cut = {frozenset((at[3], at[4])), frozenset((at[5], at[6]))}
            else:
                cut = {frozenset((at[1], at[2]))}
            piece = _piece(mol, at[1], cut)
            if piece is None:
                continue
            mz = sum(masses[i] for i in piece)
            if rule.kind == "rearrange":
                mz += e["H"].nominal_mass
            lost = heavy - len(piece)
            weight = rule.weight * (min(1.0, 0.6 + rule.lost_size * lost) if rule.kind == "cleave" else 1.0)
            add(mz, weight, rule, rule.what)
            if rule.then_loss:
                add(mz - rule.then_loss, weight * 0.6, rule, f"{rule.what}, then -{rule.then_loss}")
    return dict(sorted(out.items()))


def _cluster(peaks: Mapping[int, float], molecular_ion: int | None) -> set[int]:
    if molecular_ion is None:
        return set()
    return {mz for mz in peaks if mz >= molecular_ion}


class Fragments:
    """The EI fragment ions the candidate predicts against the peak list."""

    name = "fragments"
    weight_key = "fragments"
    label = "EI"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = None

    def __init__(self, table: FragmentTable | None = None, elements: ElementTable | None = None) -> None:
        self.table = table or default_fragments()
        self.elements = elements or default_elements()

    def applies(self, case: Case) -> bool:
        return case.mass_spec is not None and len(case.mass_spec.peaks) > 1

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        assert case.mass_spec is not None
        peaks = case.mass_spec.peaks
        predicted = predict_ions(subject.mol, table=self.table, elements=self.elements)
        skip = _cluster(peaks, subject.molecular_ion)
        lowest = self.table.lowest_mz
        scored = {mz: v for mz, v in peaks.items() if mz not in skip and mz >= lowest}
        total = sum(scored.values())
        explained = 0.0
        assignments = []
        for mz, intensity in sorted(scored.items(), key=lambda kv: (-kv[1], kv[0])):
            ion = predicted.get(mz)
            label = None
            if ion is not None:
                label = f"{ion.what} [{ion.rule}]"
                explained += intensity
            else:
                for step in (1, 2):
                    parent = predicted.get(mz - step)
                    if parent is not None and peaks.get(mz - step, 0) > intensity:
                        label = f"isotope peak of m/z {mz - step}"
                        explained += intensity
                        break
            assignments.append({"mz": mz, "intensity": intensity, "explained_by": label})
        share = explained / total if total else 1.0
        low = min(scored) if scored else 0
        missing = [
            ion
            for mz, ion in predicted.items()
            if ion.weight >= self.table.strong_weight
            and mz >= max(low, lowest)
            and mz not in peaks
            and (subject.molecular_ion is None or mz < subject.molecular_ion)
        ]
        cost = self.table.missing_penalty * sum(ion.weight for ion in missing)
        score = share * math.exp(-cost)
        reasons = [f"EI: predicted ions explain {100 * share:.0f}% of the fragment intensity"]
        top = [a for a in assignments if a["explained_by"]][:3]
        if top:
            reasons.append("EI: " + "; ".join(f"{a['mz']} {a['explained_by']}" for a in top))
        if missing:
            reasons.append("EI: expected but absent: " + ", ".join(f"{ion.mz} ({ion.rule})" for ion in missing[:4]))
        detail = {
            "assignments": assignments,
            "missing": [{"mz": ion.mz, "rule": ion.rule, "weight": ion.weight} for ion in missing],
            "predicted": [{"mz": ion.mz, "weight": ion.weight, "rule": ion.rule} for ion in predicted.values()],
        }
        return Assessment(self.name, score, tuple(reasons), detail)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        lines = []
        for item in d["assignments"][:8]:
            why = item["explained_by"] or "not explained"
            lines.append(f"    EI  m/z {item['mz']:>4} ({item['intensity']:g}%): {why}")
        for item in d["missing"][:4]:
            lines.append(f"    EI  m/z {item['mz']:>4} expected ({item['rule']}) but not listed")
        return lines

    def read(self, case: Case) -> Reading | None:
        return None
