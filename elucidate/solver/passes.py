"""Scoring in passes with bounds: the shortlist that full scoring gives, for less work.

Each technique runs in one scoring pass (its ``scoring_pass``, cheapest first). Candidates are
scored in batches of a fixed size, watched ones (suspects) first, then in generation order.
After each batch the threshold T is the log-likelihood of the shortlist's last place among the
candidates scored in full so far (or the lowest watched candidate's, when lower). In a later
batch, after each pass, a candidate's upper bound is its score so far less what the later
techniques' floors (:class:`~elucidate.evidence.Bounded`) already cost; every component is 0
or less, so the later passes cannot raise it. A candidate whose bound is below T cannot reach
the shortlist and is scored no further (branch and bound). T only rises, and every candidate
at or above the final T has been scored in full, so the shortlist, the ranks and the ties are
those of full scoring.

The batches and their thresholds do not depend on the number of workers or where they run, so
the counts of what each pass settled are the same for any runner too."""

from __future__ import annotations

import heapq
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, cast

from ..evidence import Assessment, Bounded, Subject, Technique, make_subject
from ..parallel import Runner
from ..progress import Progress, silent
from .records import FoundCandidate, PassCount
from .scoring import Combined, combine

if TYPE_CHECKING:
    from .._rdkit import Mol
    from .ranking import Evaluator

__all__ = [
    "BATCH",
    "EPSILON",
    "Outcome",
    "Scored",
    "Scoring",
    "evaluate_in_passes",
    "score_candidates",
    "technique_passes",
]

#: candidates scored in full per batch, between updates of the threshold
BATCH = 256
#: margin below the threshold before a bound prunes: levels are rounded to 1e-6, and partial
#: sums add the same components in another order
EPSILON = 1e-6

Scored = tuple[Combined, tuple[Assessment, ...]]


@dataclass(frozen=True)
class Scoring:
    """What the passes found: the candidates scored in full at or above the final threshold
    (index into the candidates -> score), the threshold, and the per-pass counts."""

    full: dict[int, Scored]
    threshold: float
    passes: tuple[PassCount, ...]


def technique_passes(techniques: Sequence[Technique]) -> list[list[Technique]]:
    """The techniques grouped by scoring pass, cheapest pass first (report order within one);
    one empty pass when there are none."""
    numbers = sorted({t.scoring_pass for t in techniques})
    return [[t for t in techniques if t.scoring_pass == k] for k in numbers] or [[]]


@dataclass(frozen=True)
class Outcome:
    """How far one candidate was scored: the last pass run, its score so far, its assessments
    so far, whether it was scored in full, and its upper bound (its score if in full)."""

    last_pass: int
    combined: Combined
    assessments: tuple[Assessment, ...]
    complete: bool
    bound: float


def evaluate_in_passes(
    evaluator: Evaluator, candidate: FoundCandidate, mol: Mol, techniques: Sequence[Technique], threshold: float
) -> Outcome:
    """Run the passes on one candidate until its bound falls below ``threshold`` (-inf: every
    pass; +inf: pass 0 only). The bound after a pass is the score so far less what the later
    techniques' floors (:class:`~elucidate.evidence.Bounded`) already cost, capped and weighted
    as in the score."""
    subject = make_subject(
        candidate.smiles,
        mol,
        candidate.formula,
        evaluator.groups,
        candidate.molecular_ion,
        candidate.isotope_score,
        formula_demotion=candidate.formula_demotion,
        demoted_by=candidate.demoted_by,
    )
    keys = {t.name: t.weight_key for t in techniques}
    position = {t.name: i for i, t in enumerate(techniques)}
    passes = technique_passes(techniques)
    last = len(passes) - 1
    found: list[Assessment] = []
    owed = [0.0] * len(passes)  # what each pass's floors already cost, in log-likelihood
    for k, group in enumerate(passes):
        found += [a for a in (t.assess(subject, evaluator.case) for t in group) if a is not None]
        if k == last:
            found.sort(key=lambda a: position[a.technique])  # report order, as full scoring gives
            break
        combined = combine(found, keys, evaluator.scoring)
        if k == 0 and threshold > -math.inf:
            owed = [0.0] + [sum(_floor(t, subject, evaluator) for t in later) for later in passes[1:]]
        bound = combined.log_likelihood - sum(owed[k + 1 :])
        if bound < threshold - EPSILON:
            return Outcome(k, combined, tuple(found), False, bound)
    combined = combine(found, keys, evaluator.scoring)
    return Outcome(last, combined, tuple(found), True, combined.log_likelihood)


_BOUNDED: dict[type, bool] = {}


def _is_bounded(technique: Technique) -> bool:
    """Whether the technique gives a floor (an isinstance test of a runtime protocol costs tens
    of microseconds, so it is made once per technique class)."""
    kind = type(technique)
    known = _BOUNDED.get(kind)
    if known is None:
        known = _BOUNDED[kind] = isinstance(technique, Bounded)
    return known


def _floor(technique: Technique, subject: Subject, evaluator: Evaluator) -> float:
    """What the technique's floor costs the candidate's log-likelihood at least (0 or more)."""
    if not _is_bounded(technique):
        return 0.0
    against, unexplained = cast(Bounded, technique).floor(subject, evaluator.case)
    w = evaluator.scoring.techniques[technique.weight_key]
    return w.weight * (min(against, w.against_cap) + min(unexplained, w.unexplained_cap))


@dataclass(frozen=True)
class _Job:
    evaluator: Evaluator
    items: tuple[FoundCandidate, ...]
    thresholds: tuple[float, ...]  # per item: +inf stops after pass 0, -inf scores in full


def _run_job(job: _Job) -> list[Outcome]:
    from .._rdkit import Chem, quiet_rdkit

    techniques = job.evaluator.techniques()
    with quiet_rdkit():
        return [
            evaluate_in_passes(job.evaluator, item, Chem.MolFromSmiles(item.smiles), techniques, limit)
            for item, limit in zip(job.items, job.thresholds, strict=True)
        ]


def _split(items: Sequence[int], parts: int) -> list[list[int]]:
    size = max(1, math.ceil(len(items) / parts))
    return [list(items[i : i + size]) for i in range(0, len(items), size)]


def score_candidates(
    found: Sequence[FoundCandidate],
    evaluator: Evaluator,
    runner: Runner,
    *,
    shortlist: int,
    watched: frozenset[int] = frozenset(),
    progress: Progress = silent,
) -> Scoring:
    """Score ``found`` so that every candidate that can reach the first ``shortlist`` places
    (0: every candidate) or rank at or above a ``watched`` one is scored in full."""
    techniques = evaluator.techniques()
    passes = technique_passes(techniques)
    names = [tuple(t.name for t in group) for group in passes]
    n = len(found)
    order = sorted(watched) + [i for i in range(n) if i not in watched]
    settled = [0] * len(passes)
    best: list[float] = []  # min-heap of the best `shortlist` levels scored in full
    lowest_watched = math.inf
    unscored_watched = len(watched)  # the threshold waits for every watched level
    threshold = -math.inf
    full: dict[int, Scored] = {}
    position = 0
    while position < len(order):
        batch = order[position : position + BATCH]
        position += len(batch)
        limits = {i: -math.inf if i in watched else threshold for i in batch}
        jobs = [
            _Job(evaluator, tuple(found[i] for i in part), tuple(limits[i] for i in part))
            for part in _split(batch, runner.workers)
        ]
        outcomes = [o for part in runner.map(_run_job, jobs) for o in part]
        for i, outcome in zip(batch, outcomes, strict=True):
            settled[outcome.last_pass] += 1
            if not outcome.complete:
                continue
            level = round(outcome.combined.log_likelihood, 6)
            full[i] = (outcome.combined, outcome.assessments)
            if i in watched:
                lowest_watched = min(lowest_watched, level)
                unscored_watched -= 1
            if shortlist:
                if len(best) < shortlist:
                    heapq.heappush(best, level)
                elif level > best[0]:
                    heapq.heapreplace(best, level)
        progress("scoring", position, n)
        if shortlist and len(best) == shortlist and not unscored_watched:
            threshold = max(threshold, min(best[0], lowest_watched))
            full = {i: s for i, s in full.items() if round(s[0].log_likelihood, 6) >= threshold}
    counts = []
    remaining = n
    for k, group in enumerate(names):
        counts.append(PassCount(group, remaining, settled[k]))
        remaining -= settled[k]
    return Scoring(full, threshold, tuple(counts))
