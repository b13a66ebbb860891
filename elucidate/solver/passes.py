"""Scoring in passes with bounds: the shortlist that full scoring gives, for less work.

Each technique runs in one scoring pass (its ``scoring_pass``). Candidates are scored in
batches, watched ones (suspects) first, then a sample of :data:`SAMPLE` spread evenly over the
generation order, then the rest most promising first, :data:`BATCH` at a time: a candidate's
promise is what the :class:`~elucidate.evidence.Foreseen` techniques say from its formula and
what generation perceived (less what the :class:`~elucidate.evidence.ForeseenFloor` techniques
cost at least), an upper bound of its score known without reading its molecule (:func:`_promise`);
once T is known, the candidates whose promise is below it are settled before any pass.
After each batch the threshold T is the log-likelihood of the shortlist's last place among the
candidates scored in full so far (or the lowest watched candidate's, when lower). In a later
batch, after each pass, a candidate's upper bound is its score so far less what the later
techniques' floors (:class:`~elucidate.evidence.Bounded`) already cost; every component is 0
or less, so the later passes cannot raise it. A technique that assesses in two parts
(:class:`~elucidate.evidence.Staged`: NMR, 13C then 1H) is bounded after its first part too.
A candidate whose bound is below T cannot reach the shortlist and is scored no further
(branch and bound). T only rises, and every candidate
at or above the final T has been scored in full, so the shortlist, the ranks and the ties are
those of full scoring.

The passes start cheapest first. Once the threshold is first known (after the first batches,
scored in full), the passes are put in the order that settles candidates for the least work:
the order whose passes, run on the candidates scored so far until their running sum falls
below the threshold expected at the end (the total of the candidate ranked at the shortlist's
share of all candidates among those scored so far), would have cost least, by the techniques'
``cost`` (:func:`pass_order`). When T later rises above that threshold (the sample held nothing
as good as the best candidates found since), the order is chosen again on the same sample
against T. With 13C and DEPT declared the NMR pass often settles most and
moves first (carvone, camphor, menthone; not linalool). The order only changes the work: the
bounds still hold, so the shortlist is that of full scoring whatever the order.

The batches, their thresholds and the order do not depend on the number of workers or where they
run, so the counts of what each pass settled are the same for any runner too."""

from __future__ import annotations

import heapq
import math
from collections import deque
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, cast

from ..evidence import (
    Assessment,
    Bounded,
    Estimated,
    Foreseen,
    ForeseenFloor,
    Partial,
    Staged,
    Subject,
    Technique,
    make_subject,
)
from ..parallel import Runner
from ..progress import Progress, silent
from .records import FoundCandidate, PassCount
from .scoring import Combined, ScoringTable, combine

if TYPE_CHECKING:
    from .._rdkit import Mol
    from .ranking import Evaluator

__all__ = [
    "BATCH",
    "EPSILON",
    "MAX_ORDERED_PASSES",
    "SAMPLE",
    "Outcome",
    "Scored",
    "Scoring",
    "evaluate_in_passes",
    "pass_order",
    "score_candidates",
    "technique_passes",
]

#: candidates scored in full per batch, between updates of the threshold
BATCH = 256
#: candidates spread evenly over the generation order and scored in full first: a sample of the
#: whole space for the first threshold and the pass order (each costs every technique in full,
#: milliseconds: 256 cost carvone about 0.9 s on one worker, 128 about half, docs/solver.md)
SAMPLE = 128
#: passes beyond this many are run in their first order (2^passes sets are searched)
MAX_ORDERED_PASSES = 12
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
    #: candidates settled on their promise (:func:`_promise`) before any pass ran on them
    settled_before_passes: int = 0


def technique_passes(techniques: Sequence[Technique]) -> list[list[Technique]]:
    """The techniques grouped by scoring pass, cheapest pass first (report order within one);
    one empty pass when there are none."""
    numbers = sorted({t.scoring_pass for t in techniques})
    return [[t for t in techniques if t.scoring_pass == k] for k in numbers] or [[]]


@dataclass(frozen=True)
class Outcome:
    """How far one candidate was scored: the last pass run, its score (in full only), its
    assessments so far, whether it was scored in full, and an upper bound of its score (the
    score itself if in full; for a settled candidate, the first bound found below the
    threshold)."""

    last_pass: int
    combined: Combined | None  # None when settled (nothing reads a settled candidate's score)
    assessments: tuple[Assessment, ...]
    complete: bool
    bound: float


def evaluate_in_passes(
    evaluator: Evaluator,
    candidate: FoundCandidate,
    mol: Mol | None,
    techniques: Sequence[Technique],
    threshold: float,
    order: Sequence[int] | None = None,
    *,
    known: Sequence[Assessment] = (),
) -> Outcome:
    """Run the passes on one candidate until its bound falls below ``threshold`` (-inf: every
    pass; +inf: the first pass only), in ``order`` (indices into :func:`technique_passes`;
    None: cheapest first); ``mol`` None: read from the SMILES when a technique needs it (what
    generation perceived, ``candidate.seen``, may be enough for the cheap passes). The bound
    after a pass is the score so far less what the later techniques' floors
    (:class:`~elucidate.evidence.Bounded`) already cost, capped and weighted as in the score. A
    two-part technique (:class:`~elucidate.evidence.Staged`) is bounded the same way after its
    first part, and not finished when that settles the candidate. ``Outcome.last_pass`` is a
    position in that order. ``known``: assessments already made (what the
    :class:`~elucidate.evidence.Foreseen` techniques said, :func:`foreseen`); they count in every
    bound from the first pass on, and their techniques are not run again."""
    subject = _subject(candidate, mol, evaluator)
    keys, position, passes, staged_names, bounded = _layout(techniques, order, frozenset(a.technique for a in known))
    last = len(passes) - 1
    found: list[Assessment] = list(known)
    bounding = -math.inf < threshold < math.inf
    # what each later pass's floors already cost, in log-likelihood (computed once, when needed)
    owed: list[float] | None = None
    # two-part techniques whose second part waits: (position in found, technique, first part)
    deferred: list[tuple[int, Staged, Partial]] = []

    def later(k: int) -> float:
        nonlocal owed
        if owed is None:
            owed = [0.0] + [sum(_floor(t, subject, evaluator) for t in group) for group in bounded[1:]]
        return sum(owed[k + 1 :])

    for k, group in enumerate(passes):
        for t in group:
            if bounding and t.name in staged_names:
                # a two-part technique: stop after its first part when that already settles
                staged = cast(Staged, t)
                partial = staged.begin(subject, evaluator.case, enough=_enough(t, found, threshold, keys, evaluator))
                if not partial.complete:
                    # stopped early on a bound of its against: settles here, or the part is redone whole
                    first = Assessment(t.name, partial.against, partial.unexplained)
                    bound = _log_likelihood([*found, first], keys, evaluator.scoring)
                    if bound < threshold - EPSILON:
                        return Outcome(k, None, tuple(found), False, bound)
                    partial = staged.begin(subject, evaluator.case)
                first = Assessment(t.name, partial.against, partial.unexplained)
                bound = _log_likelihood([*found, first], keys, evaluator.scoring)
                if bound >= threshold - EPSILON:  # the later floors (0 or more) only lower it
                    bound -= later(k)
                if bound < threshold - EPSILON:
                    return Outcome(k, None, tuple(found), False, bound)
                # the second part waits until after the last pass (a later pass may settle the
                # candidate first); until then the first part stands in for the whole, a lower
                # bound of its cost
                deferred.append((len(found), staged, partial))
                found.append(first)
                continue
            assessment = t.assess(subject, evaluator.case)
            if assessment is not None:
                found.append(assessment)
        if k == last:
            if deferred:
                finished = _finished(found, deferred, subject, evaluator, keys, threshold)
                if isinstance(finished, float):
                    return Outcome(k, None, tuple(found), False, finished)
                found = finished
            found.sort(key=lambda a: position[a.technique])  # report order, as full scoring gives
            break
        bound = _log_likelihood(found, keys, evaluator.scoring)
        if bounding and bound >= threshold - EPSILON:
            bound -= later(k)
        if bound < threshold - EPSILON:
            return Outcome(k, None, tuple(found), False, bound)
    combined = combine(found, keys, evaluator.scoring)
    return Outcome(last, combined, tuple(found), True, combined.log_likelihood)


def _subject(candidate: FoundCandidate, mol: Mol | None, evaluator: Evaluator) -> Subject:
    """The candidate as the techniques see it (``mol`` None: read from its SMILES when asked)."""
    return make_subject(
        candidate.smiles,
        mol,
        candidate.formula,
        evaluator.groups,
        candidate.molecular_ion,
        candidate.isotope_score,
        formula_demotion=candidate.formula_demotion,
        demoted_by=candidate.demoted_by,
        seen=candidate.seen,
    )


_Layout = tuple[dict[str, str], dict[str, int], list[list[Technique]], frozenset[str], list[list[Technique]]]
#: the last layout made, with the techniques, order and skipped techniques it was made for (a
#: job passes the same techniques for each of its candidates, and most share what was foreseen)
_last_layout: list[tuple[Sequence[Technique], Sequence[int] | None, frozenset[str], _Layout]] = []


def _layout(
    techniques: Sequence[Technique], order: Sequence[int] | None, skipped: frozenset[str] = frozenset()
) -> _Layout:
    """Each technique's weight key and report position by name, the passes in ``order`` less the
    ``skipped`` techniques (assessed already), the names of the two-part techniques
    (:class:`Staged`), and per pass its techniques with a floor (:class:`Bounded`; the others'
    floors are 0)."""
    if _last_layout:
        known, known_order, known_skipped, layout = _last_layout[0]
        if known is techniques and known_order == order and known_skipped == skipped:
            return layout
    keys = {t.name: t.weight_key for t in techniques}
    position = {t.name: i for i, t in enumerate(techniques)}
    grouped = technique_passes(techniques)
    chosen = order if order is not None else range(len(grouped))
    passes = [[t for t in grouped[k] if t.name not in skipped] for k in chosen]
    staged = frozenset(t.name for t in techniques if _implements(t, Staged))
    bounded = [[t for t in group if _implements(t, Bounded)] for group in passes]
    layout = (keys, position, passes, staged, bounded)
    _last_layout[:] = [(techniques, order, skipped, layout)]
    return layout


def _log_likelihood(found: Sequence[Assessment], keys: Mapping[str, str], scoring: ScoringTable) -> float:
    """``combine(found, keys, scoring).log_likelihood`` to the last bit (the same terms added
    in the same order), without building the combined score: the bounds need only this."""
    total = 0.0
    for a in found:
        w = scoring.techniques[keys[a.technique]]
        total -= w.weight * (min(a.against, w.against_cap) + min(a.unexplained, w.unexplained_cap))
    return total


def _finished(
    found: Sequence[Assessment],
    deferred: Sequence[tuple[int, Staged, Partial]],
    subject: Subject,
    evaluator: Evaluator,
    keys: Mapping[str, str],
    threshold: float,
) -> list[Assessment] | float:
    """``found`` with each waiting first part replaced by its technique's whole assessment
    (dropped when the technique gives none), finished one at a time in the order they were
    deferred; before each, the candidate is settled when the bound so far (the parts still
    waiting stand in for their wholes) is below ``threshold``: that bound is returned instead."""
    now: list[Assessment | None] = list(found)
    for i, staged, partial in deferred:
        bound = _log_likelihood([a for a in now if a is not None], keys, evaluator.scoring)
        if bound < threshold - EPSILON:
            return bound
        now[i] = staged.finish(subject, evaluator.case, partial)
    return [a for a in now if a is not None]


_KINDS: dict[tuple[type, type], bool] = {}


def _implements(technique: Technique, protocol: type) -> bool:
    """Whether the technique implements a runtime protocol (:class:`Bounded`, :class:`Staged`);
    an isinstance test of a runtime protocol costs tens of microseconds, so it is made once per
    technique class."""
    key = (type(technique), protocol)
    known = _KINDS.get(key)
    if known is None:
        known = _KINDS[key] = isinstance(technique, protocol)
    return known


def _enough(
    technique: Technique, found: Sequence[Assessment], threshold: float, keys: Mapping[str, str], evaluator: Evaluator
) -> float:
    """The ``against`` of the technique above which the candidate falls below ``threshold`` on
    what is ``found`` so far (its unexplained taken as 0, the later floors left out: both only
    lower the score); inf when even its capped ``against`` could not."""
    w = evaluator.scoring.techniques[technique.weight_key]
    room = _log_likelihood(found, keys, evaluator.scoring) - (threshold - EPSILON)
    if w.weight <= 0 or room >= w.weight * w.against_cap:
        return math.inf
    return room / w.weight


def _floor(technique: Technique, subject: Subject, evaluator: Evaluator) -> float:
    """What a :class:`Bounded` technique's floor costs the candidate's log-likelihood at least
    (0 or more)."""
    against, unexplained = cast(Bounded, technique).floor(subject, evaluator.case)
    return _cost_of(technique, against, unexplained, evaluator)


def _cost_of(technique: Technique, against: float, unexplained: float, evaluator: Evaluator) -> float:
    """What lower bounds of a technique's ``against`` and ``unexplained`` cost the candidate's
    log-likelihood at least, capped and weighted as in the score (0 or more)."""
    w = evaluator.scoring.techniques[technique.weight_key]
    return w.weight * (min(against, w.against_cap) + min(unexplained, w.unexplained_cap))


@dataclass(frozen=True)
class _Job:
    evaluator: Evaluator
    items: tuple[FoundCandidate, ...]
    thresholds: tuple[float, ...]  # per item: +inf stops after the first pass, -inf scores in full
    order: tuple[int, ...]  # the passes, as indices into technique_passes


def _run_job(job: _Job) -> list[Outcome | int]:
    """The outcome of each candidate of a job: in full when it was scored in full, else only
    the position of the pass that settled it (all the solver reads of it), so that what goes
    back to the solver's process stays small (a settled candidate's assessments and scores made
    up most of the bytes, and reading them back cost that process seconds)."""
    from .._rdkit import plain_mol, quiet_rdkit

    techniques = job.evaluator.techniques()
    foreseeing = _foreseeing(techniques)
    memo: dict[tuple[object, ...], tuple[Assessment, ...]] = {}
    out: list[Outcome | int] = []
    with quiet_rdkit():
        for item, limit in zip(job.items, job.thresholds, strict=True):
            # with what generation perceived, the SMILES is read only when a pass needs more
            mol = plain_mol(item.smiles) if item.seen is None else None
            known = foreseen(item, job.evaluator, foreseeing, memo)
            outcome = evaluate_in_passes(job.evaluator, item, mol, techniques, limit, job.order, known=known)
            out.append(outcome if outcome.complete else outcome.last_pass)
    return out


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
    sequence = tuple(range(len(passes)))  # the pass order, as indices into passes
    seen: list[tuple[float, ...]] = []  # per candidate scored in full before the order is set: each pass's part
    n = len(found)
    # watched first, then an even spread over the generation order (a sample of the whole space
    # for the threshold and the pass order: the first candidates generated are much alike),
    # then the rest in generation order
    rest = [i for i in range(n) if i not in watched]
    spread = rest[:: max(1, len(rest) // SAMPLE)][:SAMPLE]
    taken = set(spread)
    # the rest most promising first (what the foreseeing techniques say: the threshold then
    # soon nears its final level, and settles more in the cheap passes), ties in generation order
    remaining = [i for i in rest if i not in taken]
    promise, guess = _promise([found[i] for i in remaining], evaluator, techniques)
    ranked = sorted(range(len(remaining)), key=lambda k: -guess[k])  # stable: ties keep their order
    order = sorted(watched) + spread + [remaining[k] for k in ranked]
    # the promise of each candidate of the tail of ``order``: one whose promise is below T
    # cannot reach the shortlist and is settled before any pass
    tail = len(order) - len(remaining)
    bound = [promise[k] for k in ranked]
    foreseen = 0
    ran = [0] * len(passes)  # per pass (index into passes): candidates it ran on
    settled = [0] * len(passes)  # per pass: candidates whose bound fell below T in it
    complete = 0  # candidates scored in full
    best: list[float] = []  # min-heap of the best `shortlist` levels scored in full
    lowest_watched = math.inf
    unscored_watched = len(watched)  # the threshold waits for every watched level
    threshold = -math.inf
    target = -math.inf  # the threshold the pass order was chosen for
    costs = [_cost(g) for g in passes]
    full: dict[int, Scored] = {}
    position = read = 0
    steady = False  # T is known and the last batch read left it where it was
    ahead = runner.workers > 1  # one worker gains nothing from a batch sent ahead
    # batches sent and not yet read: (batch, its pass order, its results as they come)
    pending: deque[tuple[list[int], tuple[int, ...], Iterator[list[Outcome | int]]]] = deque()
    while position < len(order) or pending:
        # with several workers, once T holds steady, the next batch is sent before this one is
        # read, so that no worker waits for the slowest job of a batch and for the reading; it
        # is judged against the T of the batches read before (a lower T only settles less,
        # never wrongly; whether a batch goes ahead depends on the scores, not on timing)
        while position < len(order) and (not pending or (ahead and steady and len(pending) < 2)):
            batch: list[int] = []
            # the watched and the spread sample make the first batches (T and the pass order
            # are first set on them alone)
            size = min(BATCH, tail - position) if position < tail else BATCH
            while position < len(order) and len(batch) < size:
                if position >= tail and bound[position - tail] < threshold - EPSILON:
                    foreseen += 1  # its promise is below T: no pass runs on it
                else:
                    batch.append(order[position])
                position += 1
            if not batch:  # the rest was settled on its promise
                break
            limits = {i: -math.inf if i in watched else threshold for i in batch}
            jobs = [
                _Job(evaluator, tuple(found[i] for i in part), tuple(limits[i] for i in part), sequence)
                for part in _split(batch, runner.workers)
            ]
            pending.append((batch, sequence, runner.map(_run_job, jobs)))
        if not pending:  # the rest was settled on its promise
            break
        batch, used, results = pending.popleft()
        read += len(batch)
        before = threshold
        outcomes = [o for part in results for o in part]
        for i, outcome in zip(batch, outcomes, strict=True):
            if isinstance(outcome, int):  # settled in the pass at that position
                for k in used[: outcome + 1]:
                    ran[k] += 1
                settled[used[outcome]] += 1
                continue
            for k in used:
                ran[k] += 1
            complete += 1
            assert outcome.combined is not None
            level = round(outcome.combined.log_likelihood, 6)
            full[i] = (outcome.combined, outcome.assessments)
            if threshold == -math.inf:
                seen.append(_pass_parts(outcome.assessments, passes, evaluator))
            if i in watched:
                lowest_watched = min(lowest_watched, level)
                unscored_watched -= 1
            if shortlist:
                if len(best) < shortlist:
                    heapq.heappush(best, level)
                elif level > best[0]:
                    heapq.heapreplace(best, level)
        progress("scoring", read, n)
        if shortlist and len(best) == shortlist and not unscored_watched:
            if threshold == -math.inf:
                # chosen first from the candidates scored in full so far (all passes ran on
                # them), against the threshold expected at the end: the sample's total at the
                # shortlist's share of all candidates (T rises as more are scored, so today's T
                # would settle too few)
                totals = sorted((sum(p) for p in seen), reverse=True)
                expected = totals[min(len(totals) - 1, shortlist * len(totals) // n)]
                target = min(expected, lowest_watched)
                sequence = pass_order(seen, target, costs)
            threshold = max(threshold, min(best[0], lowest_watched))
            if threshold > target:
                # T has passed the threshold the order was chosen for (the sample held nothing
                # as good as the best candidates found since): chosen again on the same sample
                target = threshold
                sequence = pass_order(seen, target, costs)
            full = {i: s for i, s in full.items() if round(s[0].log_likelihood, 6) >= threshold}
        steady = -math.inf < threshold == before
    last = sequence[-1]  # candidates scored in full count as settled by the last pass
    counts = tuple(
        PassCount(
            tuple(t.name for t in passes[k]),
            ran[k],
            settled[k] + (complete if k == last else 0),
            complete if k == last else 0,
        )
        for k in sequence
    )
    if foreseen:
        progress("scoring", n, n)
    return Scoring(full, threshold, counts, foreseen)


def _promise(
    items: Sequence[FoundCandidate], evaluator: Evaluator, techniques: Sequence[Technique]
) -> tuple[list[float], list[float]]:
    """Each candidate's promise, its log-likelihood on what the
    :class:`~elucidate.evidence.Foreseen` techniques say from its formula and what generation
    perceived (0 when they say nothing), less what the :class:`~elucidate.evidence.ForeseenFloor`
    techniques that said nothing cost at least from the same: an upper bound of its score, known
    without reading any molecule; and its guess, the promise with what the
    :class:`~elucidate.evidence.Estimated` techniques guess from the same (for the order only).
    Candidates that share a formula hypothesis and a perception (generation's perceptions are
    shared objects) share both, so they are worked out once for each such pair."""
    foreseeing = _foreseeing(techniques)
    flooring = [t for t in techniques if _implements(t, ForeseenFloor)]
    estimating = [cast(Estimated, t) for t in techniques if _implements(t, Estimated)]
    if not foreseeing and not flooring and not estimating:
        return [0.0] * len(items), [0.0] * len(items)
    keys = {t.name: t.weight_key for t in techniques}
    said: dict[tuple[object, ...], tuple[Assessment, ...]] = {}
    known: dict[tuple[int, int], tuple[float, float]] = {}  # by the ids of what was said and seen
    promise, guess = [], []
    for item in items:
        assessments = foreseen(item, evaluator, foreseeing, said)
        value = known.get((id(assessments), id(item.seen)))
        if value is None:
            bound = _log_likelihood(assessments, keys, evaluator.scoring)
            subject = _subject(item, None, evaluator)
            assessed = {a.technique for a in assessments}
            for t in flooring:
                if t.name not in assessed:
                    against, unexplained = cast(ForeseenFloor, t).foresee_floor(subject, evaluator.case)
                    bound -= _cost_of(t, against, unexplained, evaluator)
            guessed = bound
            if estimating:
                rough = [a for t in estimating if (a := t.estimate(subject, evaluator.case)) is not None]
                guessed += _log_likelihood(rough, keys, evaluator.scoring)
            value = known[(id(assessments), id(item.seen))] = (bound, guessed)
        promise.append(value[0])
        guess.append(value[1])
    return promise, guess


def _foreseeing(techniques: Sequence[Technique]) -> list[Foreseen]:
    return [cast(Foreseen, t) for t in techniques if _implements(t, Foreseen)]


def foreseen(
    item: FoundCandidate,
    evaluator: Evaluator,
    foreseeing: Sequence[Foreseen],
    memo: dict[tuple[object, ...], tuple[Assessment, ...]],
) -> tuple[Assessment, ...]:
    """What the foreseeing techniques say of a candidate from its formula and what generation
    perceived, in technique order (each exactly its :meth:`~elucidate.evidence.Technique.assess`).
    Candidates that share a formula hypothesis and a perception (generation's perceptions are
    shared objects, and stay alive while ``memo`` is used) share it, so it is worked out once
    for each such pair; ``memo`` holds it by that pair."""
    if not foreseeing:
        return ()
    key = (
        id(item.seen),
        id(item.formula),
        item.molecular_ion,
        item.isotope_score,
        item.formula_demotion,
        item.demoted_by,
    )
    found = memo.get(key)
    if found is None:
        subject = _subject(item, None, evaluator)
        found = memo[key] = tuple(a for t in foreseeing if (a := t.foresee(subject, evaluator.case)) is not None)
    return found


def _cost(group: Sequence[Technique]) -> float:
    return sum(t.cost for t in group)


def _pass_parts(
    assessments: Sequence[Assessment], passes: Sequence[Sequence[Technique]], evaluator: Evaluator
) -> tuple[float, ...]:
    """Each pass's part of a fully scored candidate's log-likelihood (the parts add up to it)."""
    keys = {t.name: t.weight_key for group in passes for t in group}
    parts = []
    for group in passes:
        names = {t.name for t in group}
        parts.append(combine([a for a in assessments if a.technique in names], keys, evaluator.scoring).log_likelihood)
    return tuple(parts)


def pass_order(parts: Sequence[Sequence[float]], threshold: float, costs: Sequence[float]) -> tuple[int, ...]:
    """The order of the passes that would have cost least on the candidates seen: ``parts``
    holds each candidate's log-likelihood part per pass; in a given order a candidate runs pass
    after pass until the sum of its parts so far falls below ``threshold`` (later parts are 0 or
    less, so it could no longer reach it), and each pass run costs ``costs[k]``. Whether a
    candidate runs the next pass depends only on the set of passes run before it, so the best
    order is found exactly by dynamic programming over those sets (2^passes of them); among
    orders of equal cost (within 1e-9) the first in the lexicographic order of the
    permutations is taken, so the first order wins when nothing settles."""
    import numpy as np

    count = len(costs)
    first = tuple(range(count))
    if not parts or count > MAX_ORDERED_PASSES:
        return first
    sets = 1 << count
    members = np.array([[(s >> k) & 1 for s in range(sets)] for k in range(count)], dtype=float)
    sums = np.asarray(parts, dtype=float).reshape(len(parts), count) @ members  # candidate x set
    running = (sums >= threshold - EPSILON).sum(axis=0)  # candidates not settled by each set
    rest = [0.0] * sets  # least cost of the passes still to run, from each set
    for done in range(sets - 2, -1, -1):
        rest[done] = min(costs[k] * running[done] + rest[done | 1 << k] for k in range(count) if not done >> k & 1)
    order: list[int] = []
    done = 0
    while done != sets - 1:
        for k in range(count):
            if not done >> k & 1 and costs[k] * running[done] + rest[done | 1 << k] <= rest[done] + 1e-9:
                order.append(k)
                done |= 1 << k
                break
    return tuple(order)
