"""The interface every evidence technique implements, and the candidate it judges.

A technique reads its own section of the case and its own knowledge table. It may declare hard
constraints (only what the chemist declared: required/forbidden groups, SMARTS), and it scores
every candidate from 0 (contradicts the data) to 1 (fits), with one-line reasons and a detail
record for the full explanation. Soft evidence never eliminates a candidate.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any, Protocol

from ..case import Case
from ..formula import Formula
from ..groups import GroupTable

__all__ = ["Subject", "Assessment", "Technique", "make_subject"]


@dataclass(frozen=True)
class Subject:
    """One candidate structure as the techniques see it."""

    smiles: str
    mol: Any  # RDKit Mol, aromaticity perceived, hydrogens implicit
    formula: Formula
    groups: frozenset[str]  # names from the group vocabulary that the structure has
    molecular_ion: int | None  # the nominal M it is scored under (None: not known)


def make_subject(smiles: str, mol: Any, formula: Formula, groups: GroupTable, molecular_ion: int | None) -> Subject:
    present = frozenset(name for name in groups.names if mol.HasSubstructMatch(groups[name].pattern))
    return Subject(smiles, mol, formula, present, molecular_ion)


@dataclass(frozen=True)
class Assessment:
    """What one technique says about one candidate."""

    technique: str
    score: float  # 0..1
    reasons: tuple[str, ...] = ()
    detail: Mapping[str, Any] = field(default_factory=dict)


class Technique(Protocol):
    """One evidence technique: a module plus its knowledge table."""

    name: str

    def applies(self, case: Case) -> bool:
        """Whether the case holds data this technique can use."""

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        """Declared constraints that eliminate (keys of :class:`~elucidate.selection.Selection`)."""

    def assess(self, subject: Subject, case: Case) -> Assessment:
        """Score one candidate with reasons."""
