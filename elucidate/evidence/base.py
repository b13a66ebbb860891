"""The interface every evidence technique implements, and the candidate it judges.

A technique reads its own section of the case and its own knowledge table. It may declare hard
constraints (only what the chemist declared: required/forbidden groups, SMARTS), and it scores
every candidate from 0 (contradicts the data) to 1 (fits), with one-line reasons and a detail
record for the full explanation. Soft evidence never eliminates a candidate. The technique also
says how it appears in reports: its component name, its weight key in
``constraints/scoring.yaml``, its short column label, how its detail renders and, if it has
one, its own reading of the case's data for the chemist.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Any, Literal, Protocol, runtime_checkable

from ..case import Case
from ..formula import Formula
from ..generator.groups import GroupTable
from ..generator.shape import RingShape

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = [
    "Assessment",
    "Bounded",
    "Estimated",
    "Foreseen",
    "ForeseenFloor",
    "Partial",
    "Perception",
    "Reading",
    "Staged",
    "Subject",
    "Technique",
    "make_subject",
]


@dataclass(frozen=True)
class Perception:
    """What generation found on a candidate's molecule while it held it, so that scoring need
    not read the SMILES again for the cheap techniques: the groups it has (as
    :attr:`Subject.groups`), the conditional IR bands of those groups that apply to it
    (group, position among the group's bands in the IR table), its rings and multiple bonds
    where generation read them off the bond orders (None: read off the molecule; a partial
    shape, :attr:`~elucidate.generator.shape.RingShape.partial`, only bounds), and its
    carbons by kind and DEPT type when the case has a 13C list
    (:func:`~elucidate.generator.counts.carbon_profile`; None: not read)."""

    groups: frozenset[str]
    bands: frozenset[tuple[str, int]]
    shape: RingShape | None = None
    carbons: tuple[tuple[str, str, int], ...] | None = None


@dataclass(frozen=True)
class Subject:
    """One candidate structure as the techniques see it."""

    smiles: str
    parsed: Mol | None  # RDKit's molecule (:attr:`mol`), or None: read from the SMILES when asked
    formula: Formula
    group_table: GroupTable  # the group vocabulary :attr:`groups` is read from
    molecular_ion: int | None  # the nominal M it is scored under (None: not known)
    isotope_score: float | None = None  # its formula's isotope-cluster fit (None: no cluster)
    formula_demotion: float = 0.0  # nats: its formula breaks the element-ratio heuristic
    demoted_by: str | None = None  # the rule it breaks
    seen: Perception | None = None  # what generation already found on its molecule

    @cached_property
    def mol(self) -> Mol:
        """The molecule (aromaticity perceived, hydrogens implicit); read from the SMILES on
        first use when not given (a candidate settled on what generation perceived never pays
        for it)."""
        if self.parsed is not None:
            return self.parsed
        from .._rdkit import plain_mol

        return plain_mol(self.smiles)  # the solver's SMILES are RDKit's own canonical ones

    @cached_property
    def groups(self) -> frozenset[str]:
        """The names from the group vocabulary that the structure has (matched on first use: a
        candidate the solver settles before any technique asks never pays for it; groups whose
        atoms need elements the formula lacks, or that imply a group the structure lacks, cannot
        match and are not tried: :meth:`~elucidate.generator.groups.GroupTable.present`), or
        those generation perceived."""
        if self.seen is not None:
            return self.seen.groups
        return self.group_table.present(self.mol, self.formula)

    @cached_property
    def symmetry_ranks(self) -> list[int]:
        """Each atom's symmetry class as the spectrum shows it (computed once, shared by the
        techniques: :func:`~elucidate.evidence.carbon13.symmetry_ranks`)."""
        from .carbon13 import symmetry_ranks

        return symmetry_ranks(self.mol)

    @property
    def ranked(self) -> bool:
        """Whether :attr:`symmetry_ranks` is already computed."""
        return "symmetry_ranks" in self.__dict__


def make_subject(
    smiles: str,
    mol: Mol | None,
    formula: Formula,
    groups: GroupTable,
    molecular_ion: int | None,
    isotope_score: float | None = None,
    *,
    formula_demotion: float = 0.0,
    demoted_by: str | None = None,
    seen: Perception | None = None,
) -> Subject:
    """A :class:`Subject`; ``mol`` None: read from ``smiles`` when a technique asks for it."""
    return Subject(smiles, mol, formula, groups, molecular_ion, isotope_score, formula_demotion, demoted_by, seen)


@dataclass(frozen=True)
class Assessment:
    """What one technique says about one candidate, in two parts kept apart (natural-log units,
    "nats", of likelihood lost; 0 is a perfect fit):

    ``against``: evidence against the candidate, data it cannot give (a strong band of a group it
    lacks, a strong predicted ion that is absent, more 13C signals than it has carbon classes);
    ``unexplained``: data the technique's rules do not account for (a peak no rule predicts, a
    chromophore the rules do not cover). Rule tables are incomplete, so this part is mild and
    the solver bounds it per technique (``constraints/scoring.yaml``).
    """

    technique: str
    against: float = 0.0
    unexplained: float = 0.0
    reasons: tuple[str, ...] = ()
    detail: Mapping[str, Any] = field(default_factory=dict)  # JSON-ready

    def __post_init__(self) -> None:
        if not (self.against >= 0 and self.unexplained >= 0):  # also refuses NaN
            raise ValueError(f"{self.technique}: against and unexplained must be 0 or more")

    @property
    def score(self) -> float:
        """exp(-(against + unexplained)): 1 fits, towards 0 contradicts (before the caps)."""
        return math.exp(-(self.against + self.unexplained))


@dataclass(frozen=True)
class Reading:
    """A technique's own reading of the case's data (not of a candidate), for the chemist to
    judge and copy into the case: text lines for the report and a JSON-ready record."""

    title: str
    lines: tuple[str, ...]
    data: Mapping[str, Any]


class Technique(Protocol):
    """One evidence technique: a module plus its knowledge table.

    ``name``: the component name in reports and JSON; ``weight_key``: its weight in
    ``constraints/scoring.yaml``; ``label``: the short column label; ``stage``: ``"formula"``
    for evidence about the formula (the isotope cluster), ``"structure"`` for evidence about the
    structure; ``reading_key``: the JSON key of its reading, or None if it has none;
    ``scoring_pass``: when the solver runs it, cheapest first (0: on every candidate; a later
    pass only on candidates whose best possible total can still reach the shortlist), the order
    the solver starts with; ``cost``: its mean time per candidate, relative (microseconds on the
    machine ``bench/bench_scoring_cost.py`` was run on), by which the solver may reorder the
    passes once it has seen how many candidates each pass settles (docs/solver.md).
    """

    name: str
    weight_key: str
    label: str
    stage: Literal["formula", "structure"]
    reading_key: str | None
    scoring_pass: int
    cost: float

    def applies(self, case: Case) -> bool:
        """Whether the case holds data this technique can use."""
        ...

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        """Declared constraints that eliminate (keys of :class:`~elucidate.generator.Selection`)."""
        ...

    def assess(self, subject: Subject, case: Case) -> Assessment | None:
        """Score one candidate with reasons; None when this candidate has no such evidence."""
        ...

    def detail_lines(self, assessment: Assessment) -> list[str]:
        """The full explanation of one assessment, one report line each."""
        ...

    def read(self, case: Case) -> Reading | None:
        """The technique's own reading of the case's data, or None."""
        ...


@runtime_checkable
class Bounded(Protocol):
    """A technique that can bound its assessment cheaply before making it (for the solver's
    later scoring passes)."""

    def floor(self, subject: Subject, case: Case) -> tuple[float, float]:
        """Lower bounds of the ``against`` and ``unexplained`` that :meth:`Technique.assess`
        would give ``subject`` (0, 0 when nothing cheap is known)."""
        ...


@runtime_checkable
class Foreseen(Protocol):
    """A technique that can often assess a candidate from its formula and what generation
    perceived (:attr:`Subject.seen`) alone, without reading its molecule: the solver sums these
    assessments to score the most promising candidates first."""

    def foresee(self, subject: Subject, case: Case) -> Assessment | None:
        """:meth:`Technique.assess`'s assessment of ``subject`` when it needs nothing beyond its
        formula and ``subject.seen``; None when it would need the molecule (or gives none)."""
        ...


@runtime_checkable
class ForeseenFloor(Protocol):
    """A technique that can bound its assessment from the candidate's formula and what
    generation perceived alone, never reading its molecule, where it cannot foresee the
    assessment itself (:class:`Foreseen`): the solver lowers the candidate's promise by it."""

    def foresee_floor(self, subject: Subject, case: Case) -> tuple[float, float]:
        """Lower bounds of the ``against`` and ``unexplained`` that :meth:`Technique.assess`
        would give ``subject``, from its formula and ``subject.seen`` only (0, 0: nothing known)."""
        ...


@runtime_checkable
class Estimated(Protocol):
    """A technique that can guess a candidate's assessment roughly from its formula and what
    generation perceived: the solver orders the candidates by these guesses (with the
    :class:`Foreseen` assessments), so that the threshold soon nears its final level; a guess
    never settles a candidate, so a poor one costs time, never a result."""

    def estimate(self, subject: Subject, case: Case) -> Assessment | None:
        """A rough guess of :meth:`Technique.assess`'s assessment from the formula and
        ``subject.seen`` alone; None when there is nothing to guess from."""
        ...


@dataclass(frozen=True)
class Partial:
    """The first, cheaper part of an assessment: lower bounds of the ``against`` and
    ``unexplained`` the whole assessment gives, and what the technique needs to finish it (its
    own, opaque to the solver). An incomplete part (``complete`` False) stopped early, once its
    ``against`` bound reached the level asked for: it cannot be finished, only compared."""

    against: float
    unexplained: float
    state: Any = None
    complete: bool = True


@runtime_checkable
class Staged(Protocol):
    """A technique whose assessment comes in two parts, the first cheaper and a lower bound of
    the whole (the solver may stop after it when the candidate can no longer reach the
    shortlist). ``finish(subject, case, begin(subject, case))`` is ``assess(subject, case)``."""

    def begin(self, subject: Subject, case: Case, *, enough: float = math.inf) -> Partial:
        """The first part of the assessment of ``subject``. ``enough``: an ``against`` at which
        the candidate is settled; the technique may stop as soon as it has proved an ``against``
        above it, returning that bound as an incomplete part (or it may ignore ``enough``)."""
        ...

    def finish(self, subject: Subject, case: Case, partial: Partial) -> Assessment | None:
        """The whole assessment, from the first part."""
        ...
