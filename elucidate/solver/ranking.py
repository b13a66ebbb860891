"""The solver: case -> formulas -> generate -> evidence -> rank.

Hard constraints (the only things that eliminate): the formula stage (nominal mass, element
limits, DBE, nitrogen/Senior rules, element ratios), the constraints the techniques declare
from the case (``infrared.require`` / ``forbid``), the declared SMARTS
(``structure.require_smarts`` / ``forbid_smarts``) and the ``stable`` plausibility profile.
Everything else — IR bands, UV lambda max, EI fragments, 13C counts, isotope fit — only ranks
(see :mod:`elucidate.evidence` and ``constraints/scoring.yaml``).

Results are hypotheses to confirm against a reference standard under the lab's own procedures.
"""

from __future__ import annotations

import math
import threading
from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, cast

from ..case import CARBON_KINDS, Case
from ..defaults import FORMULAS_PER_ION, SHORTLIST, SOLVER_LIMIT, WORKERS
from ..errors import ElucidateError, TooLarge
from ..evidence import TECHNIQUES, Assessment, Technique
from ..evidence.base import Perception
from ..evidence.infrared import Infrared, Perceiver
from ..formula_search import Candidate, case_query, derive_formulas
from ..formula_search.search import check_space
from ..generator.counts import CountTest
from ..generator.groups import GroupTable, default_groups
from ..generator.selection import Selection
from ..parallel import Runner, local_runner
from ..progress import Progress, silent
from .advice import ADVISED_FORMULAS, size_advice
from .diagnosis import why_empty
from .hypotheses import considered_hypotheses, molecular_ion_hypotheses
from .passes import evaluate_in_passes, score_candidates
from .records import FoundCandidate, KeptFormula, Ranked, Solution, UntriedFormula
from .scoring import Combined, ScoringTable, default_scoring
from .suspects import assess_suspect

if TYPE_CHECKING:
    from .._rdkit import Mol
    from ..cache import CandidateCache
    from ..formula import Formula
    from ..generator import SpaceEstimate

__all__ = ["PROFILE", "Evaluator", "declared_counts", "hard_selection", "preflight", "solve"]

#: the plausibility profile the solver applies
PROFILE = "stable"
#: structures between two progress reports during generation
PROGRESS_EVERY = 500
#: a space estimated at this share of the limit or more is counted against the limit before it
#: is generated (:func:`~elucidate.generator.within_budget`: labelling alone, a part of the cost
#: of writing and testing each structure): the estimate is within about one standard error of
#: the limit there (the error was about a third of the estimate on the spaces measured), so it
#: may well be over it, and a count costs less than generating a limit's worth of structures
COUNT_FIRST_SHARE = 0.75
#: a space estimated lower is generated at once, and counted only once generation has taken
#: this many times the structures estimated, and at least COUNT_FLOOR_SHARE of the limit: the
#: estimate is then proven low, generation stops, the space is counted and generated again only
#: when within the limit (the count cost about 40 % of generating a space of 50,000 structures,
#: so a space the estimate reads right is never counted)
RECOUNT_AFTER = 2.0
#: see RECOUNT_AFTER
COUNT_FLOOR_SHARE = 0.25


class _EstimateLow(Exception):
    """Generation has taken far more structures than the estimate said (RECOUNT_AFTER)."""


class _Ahead:
    """The next formula's size estimate (and, when it is over the limit, its group advice) worked
    out in a background thread while worker processes generate the current formula's structures:
    the solver's own process mostly waits then, and would otherwise work them out afterwards
    while the workers wait. Both are deterministic functions of the formula, so what is used is
    the same whoever computed it; a formula not sent ahead is worked out when asked."""

    def __init__(self, space: Callable[[Formula], SpaceEstimate], advice: Callable[[Formula], str], limit: int) -> None:
        self._space, self._advice, self._limit = space, advice, limit
        self._formula: Formula | None = None
        self._thread: threading.Thread | None = None
        self._result: dict[str, object] = {}

    def start(self, formula: Formula, *, advise: bool) -> None:
        """Work on ``formula`` in the background (``advise``: its advice too, when over)."""
        if self._formula == formula:
            return
        self.wait()
        result: dict[str, object] = {}

        def work() -> None:
            try:
                space = result["space"] = self._space(formula)
                if advise and space.over(self._limit):
                    result["advice"] = self._advice(formula)
            except BaseException as exc:  # handed to the caller that asks (raised there)
                result["error"] = exc

        self._formula, self._result = formula, result
        self._thread = threading.Thread(target=work, name="elucidate-ahead", daemon=True)
        self._thread.start()

    def wait(self) -> None:
        if self._thread is not None:
            self._thread.join()
            self._thread = None

    def _ready(self, formula: Formula, what: str) -> object | None:
        if self._formula != formula:
            return None
        self.wait()
        error = self._result.get("error")
        if isinstance(error, BaseException):
            self._formula = None
            raise error
        return self._result.get(what)

    def space(self, formula: Formula) -> SpaceEstimate:
        found = self._ready(formula, "space")
        return cast("SpaceEstimate", found) if found is not None else self._space(formula)

    def advice(self, formula: Formula) -> str:
        found = self._ready(formula, "advice")
        return cast(str, found) if found is not None else self._advice(formula)


def _stop_past(most: float) -> Callable[[int], None]:
    """An ``on_taken`` watch for :func:`~elucidate.generator.isomer_smiles` that stops the
    work once more than ``most`` structures are taken."""

    def watch(taken: int) -> None:
        if taken > most:
            raise _EstimateLow

    return watch


def hard_selection(case: Case, techniques: Sequence[Technique]) -> Selection:
    """The hard constraints the case declares: each technique's, the SMARTS and the profile."""
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
        counts=declared_counts(case),
    )


def declared_counts(case: Case) -> CountTest | None:
    """The NMR counts the case declares as hard (carbon types, exchangeable H, carbon kinds)."""
    nmr = case.nmr
    if nmr is None:
        return None
    test = CountTest(
        types=nmr.carbon_types,
        exchangeable=nmr.exchangeable_h,
        kinds=tuple((k, *nmr.c13_regions[k]) for k in CARBON_KINDS if k in nmr.c13_regions) if nmr.c13_regions else (),
    )
    return None if test.empty else test


@dataclass(frozen=True)
class Evaluator:
    """Scores candidates of one case on every technique that applies (picklable, so worker
    processes can build their own techniques from it)."""

    case: Case
    groups: GroupTable
    scoring: ScoringTable

    def techniques(self) -> list[Technique]:
        """The techniques that apply to the case, built afresh (one set per process)."""
        return [t for t in (cls() for cls in TECHNIQUES) if t.applies(self.case)]

    def evaluate(
        self, candidate: FoundCandidate, mol: Mol, techniques: Sequence[Technique]
    ) -> tuple[Combined, tuple[Assessment, ...]]:
        """The combined log-likelihood (with its components) and the assessments of one candidate."""
        outcome = evaluate_in_passes(self, candidate, mol, techniques, -math.inf)
        assert outcome.combined is not None  # scored in full
        return outcome.combined, outcome.assessments


def formulas_to_enumerate(ranked: Sequence[Candidate], count: int) -> list[Candidate]:
    """The best ``count`` formulas in the formula stage's order, plus every formula the
    element-ratio heuristic demoted that ranks above the last of them: a heuristic may move a
    formula down, but never costs another formula its place."""
    chosen: list[Candidate] = []
    plain = 0
    for cand in ranked:
        if plain >= count:
            break
        chosen.append(cand)
        plain += cand.demoted_by is None
    return chosen


def solve(
    case: Case,
    *,
    limit: int = SOLVER_LIMIT,
    max_formulas: int = FORMULAS_PER_ION,
    workers: int = WORKERS,
    groups: GroupTable | None = None,
    scoring: ScoringTable | None = None,
    worse_formulas: bool = False,
    shortlist: int = SHORTLIST,
    watch: Sequence[str] = (),
    runner: Runner | None = None,
    progress: Progress | None = None,
    cache: CandidateCache | None = None,
) -> Solution:
    """Solve one case. ``limit``: largest structure space per formula that is enumerated
    (estimated first, with 10 partial skeletons allowed per structure, and counted while
    enumerating: a formula past it is dropped and named); ``max_formulas``: formulas kept per
    molecular-ion hypothesis (the best by isotope fit, and only those within the scoring table's
    ``formula_cut`` of the best fit);
    ``workers``: processes for generation and scoring (the result does not depend on it);
    ``worse_formulas``: also enumerate formulas ranked below a formula skipped for size (by more
    than the scoring table's ``worse_than_skipped`` factor), which are otherwise named and left;
    ``shortlist``: the places ranked exactly (0: every candidate; the rest are scored only as far
    as needed to show they rank lower, :mod:`.passes`); ``watch``: SMILES whose exact rank (or
    eliminating constraint) is wanted too, like the case's suspects (``Solution.followed``);
    ``runner``: where generation and scoring run (a Dask cluster:
    :class:`elucidate.cluster.DaskRunner`; default: ``workers`` local processes);
    ``progress``: told how far each stage has got (:mod:`elucidate.progress`); ``cache``: where
    generated candidate sets are kept between runs (:mod:`elucidate.cache`)."""
    if shortlist < 0:
        raise ElucidateError(f"shortlist must be 0 (every candidate) or more, got {shortlist}")
    work = runner if runner is not None else local_runner(workers)
    try:
        return _solve(
            case,
            limit,
            max_formulas,
            work,
            groups,
            scoring,
            worse_formulas,
            shortlist,
            watch,
            progress or silent,
            cache,
        )
    finally:
        if runner is None:
            work.close()


def preflight(case: Case, *, groups: GroupTable | None = None) -> None:
    """Every check :func:`solve` makes on a case before it derives formulas or enumerates: the
    molecular-ion hypotheses, the formula query of each, and the hard constraints compiled. It
    raises the :class:`~elucidate.errors.ElucidateError` solve would (``elucidate check`` runs it)."""
    g = groups or default_groups()
    considered = considered_hypotheses(case)
    masses = molecular_ion_hypotheses(case, considered)
    for m in masses:
        query = case_query(case, m)
        try:
            check_space(m, query.elements)
        except TooLarge as exc:
            raise TooLarge(
                exc.message, file=case.path, line=case.formula.elements_line, key="formula.elements"
            ) from exc
    hard_selection(case, [cls() for cls in TECHNIQUES]).compile(g)
    signals = case.nmr.c13_signals if case.nmr is not None else None
    if signals is not None and masses:
        # each signal needs a carbon of its own, and a carbon weighs 12 (nominal)
        most = max(min(case_query(case, m).elements.get("C", (0, 0))[1], m // 12) for m in masses)
        if signals > most:
            raise ElucidateError(
                f"{signals} 13C signals need at least {signals} carbons, but the molecular ion "
                f"({', '.join(map(str, masses))}) and formula.elements allow at most {most}",
                file=case.path,
                key="nmr.c13_signals",
            )


def formula_stage_hints(case: Case, hypotheses: Sequence[int]) -> tuple[str, ...]:
    """Why no formula may survive for a molecular ion, where a rule says so outright."""
    hints = []
    for m in hypotheses:
        if m % 2 == 1 and case_query(case, m).elements.get("N", (0, 0))[1] == 0:
            hints.append(
                f"M {m} is odd: by the nitrogen rule a closed-shell molecule of odd nominal mass has an odd number "
                "of nitrogen atoms, and formula.elements excludes N (allow N, or check the molecular ion)"
            )
    return tuple(hints)


def _solve(
    case: Case,
    limit: int,
    max_formulas: int,
    runner: Runner,
    groups: GroupTable | None,
    scoring: ScoringTable | None,
    worse_formulas: bool,
    shortlist: int,
    watch: Sequence[str],
    progress: Progress,
    cache: CandidateCache | None,
) -> Solution:
    from ..generator import GeneratorOptions, SpaceEstimate, estimate_space, isomer_smiles, within_budget
    from ..generator.kernel import worth_starting
    from ..generator.tasks import NODES_PER_STRUCTURE, TooManyStructures, beyond_generator

    g = groups or default_groups()
    preflight(case, groups=g)
    sc = scoring or default_scoring()
    every = [cls() for cls in TECHNIQUES]
    applied = [t for t in every if t.applies(case)]
    # the IR pass reads a candidate's groups and conditional bands: generation finds them on
    # each molecule while it holds it, so scoring need not read the SMILES for that pass
    infrared = next((t for t in applied if isinstance(t, Infrared)), None)
    perceptions: dict[object, object] = {}  # one object per distinct perception (pickled once a job)
    selection = hard_selection(case, every)
    compiled = selection.compile(g)
    considered = considered_hypotheses(case)
    hypotheses = molecular_ion_hypotheses(case, considered)
    untried: list[UntriedFormula] = []
    kept: list[KeptFormula] = []
    notes: list[str] = list(case.warnings)
    # the declared NMR counts prune before structures are built: not counted (generator.md)
    removed: dict[str, int] = dict.fromkeys(selection.compile(g, pushed_counts=True).labels, 0)
    generated = 0
    found: list[FoundCandidate] = []
    estimate_options = GeneratorOptions(selection=selection)
    # labelling conditioned by required groups or declared counts: the compiled core pays sooner
    conditioned = bool(selection.skeleton_patterns(g)) or selection.count_test is not None
    # candidates are named by RDKit's canonical SMILES (suspects, ties and reports compare them)
    options = GeneratorOptions(selection=selection, rdkit_smiles=True)
    advised = 0

    ahead = _Ahead(
        lambda f: estimate_space(f, estimate_options), lambda f: size_advice(f, estimate_options, g, limit), limit
    )

    def advise(formula: Formula) -> str:
        """Group advice for a formula skipped for size (per-group estimates for the first
        ADVISED_FORMULAS such formulas only: each costs seconds)."""
        nonlocal advised
        advised += 1
        if advised > ADVISED_FORMULAS:
            return "declare groups (infrared.require / forbid) or raise --limit"
        return ahead.advice(formula)

    derived = []
    for done, m in enumerate(hypotheses, start=1):
        query = case_query(case, m)
        # without isotope data the order is parsimony only: every formula not tried is named
        result = derive_formulas(query, top=None if query.cluster is None else 4 * max_formulas)
        chosen = formulas_to_enumerate(result.kept, max_formulas)
        if query.cluster is None:
            why = (
                f"no isotope peaks at M {m}: formulas are tried in parsimony order, the first {max_formulas} "
                "only (raise --formulas)"
            )
            untried += [UntriedFormula(c.formula, m, why) for c in result.kept[len(chosen) :]]
        if result.reading is not None and result.reading.excluded_reading is not None:
            notes.append(f"M {m}: {result.reading.excluded_reading}")
        derived.append((m, result, chosen))
        progress("formulas", done, len(hypotheses))
    # every formula in the order worked (with its molecular ion's results and best fit), for
    # the one after the formula being generated
    upcoming = [
        (m, result, max((c.ranking_score or 0.0 for c in chosen), default=0.0), cand)
        for m, result, chosen in derived
        for cand in chosen
    ]
    position = -1

    def needs_estimate(k: int, skipped: Candidate | None, m_now: int) -> Formula | None:
        """The formula at ``k`` in ``upcoming`` when it will be estimated as things stand (not cut
        by its fit, not held behind a skipped formula, not ruled out by the declared counts, and
        within the generator's reach), else None."""
        if k >= len(upcoming):
            return None
        m, result, best, cand = upcoming[k]
        fit = cand.ranking_score
        if fit is not None and best > 0 and fit < best / sc.formula_cut and not result.poor_cluster:
            return None
        held = (
            m == m_now
            and not worse_formulas
            and not result.poor_cluster
            and skipped is not None
            and fit is not None
            and fit < (skipped.ranking_score or 0.0) / sc.worse_than_skipped
        )
        if held:
            return None
        counts = selection.count_test
        if counts is not None and counts.formula_problem(cand.formula) is not None:
            return None
        return cand.formula if beyond_generator(cand.formula) is None else None

    for m, result, chosen in derived:
        best = max((c.ranking_score or 0.0 for c in chosen), default=0.0)
        skipped: Candidate | None = None  # the best-fitting formula skipped for size
        for cand in chosen:
            position += 1
            fit = cand.ranking_score
            if fit is not None and best > 0 and fit < best / sc.formula_cut and not result.poor_cluster:
                continue
            counts = selection.count_test
            problem = counts.formula_problem(cand.formula) if counts is not None else None
            if problem is not None:
                why = f"no structure can meet the declared NMR counts: {problem}"
                kept.append(KeptFormula(cand.formula, m, cand.score, 0, why, cand.demoted_by, cand.demotion))
                notes.append(f"{cand.formula} (M {m}) not enumerated: {why}")
                continue
            # Formulas are worked in order of fit. Once one is skipped for size, a formula fitting
            # worse is not enumerated unless asked: its shortlist could not hold the answer the
            # skipped formula may hold, and minutes spent on it would mislead. (Nor is its size
            # estimated: the estimate of a large space costs seconds.)
            held = (
                not worse_formulas
                and not result.poor_cluster
                and skipped is not None
                and fit is not None
                and fit < (skipped.ranking_score or 0.0) / sc.worse_than_skipped
            )
            key = cache.key(str(cand.formula), repr(options)) if cache is not None and not held else None
            hit = cache.get(key) if cache is not None and key is not None else None
            # what the IR pass reads is found on each molecule while generation holds it
            perceive = None
            if infrared is not None:
                # every structure generated has the required groups and lacks the forbidden ones
                perceive = Perceiver(
                    cand.formula,
                    g,
                    infrared.table,
                    having=frozenset(selection.require),
                    lacking=frozenset(selection.forbid),
                    carbons=bool(case.nmr is not None and case.nmr.c13),
                )
            if hit is not None and hit.tested <= limit:  # generated before under the same hard constraints
                kept_seen = None  # what generation perceived, when it was kept with the structures
                if cache is not None and key is not None and perceive is not None:
                    kept_seen = cache.get_seen(key, perceive.fingerprint, len(hit.smiles))
                    if kept_seen is None and perceive.carbons:
                        # kept by a run without a 13C list: all but the carbons, which only
                        # order the scoring
                        plain = replace(perceive, carbons=False)
                        kept_seen = cache.get_seen(key, plain.fingerprint, len(hit.smiles))
                found += [
                    FoundCandidate(
                        s,
                        cand.formula,
                        m,
                        cand.score,
                        cand.demotion,
                        cand.demoted_by,
                        cast(Perception, perceptions.setdefault(kept_seen[k], kept_seen[k])) if kept_seen else None,
                    )
                    for k, s in enumerate(hit.smiles)
                ]
                for label, n in hit.removed.items():
                    removed[label] = removed.get(label, 0) + n
                generated += hit.tested
                kept.append(
                    KeptFormula(cand.formula, m, cand.score, len(hit.smiles), None, cand.demoted_by, cand.demotion)
                )
                progress("generation", len(found), None)
                continue
            heavy = None if held else beyond_generator(cand.formula)
            space = SpaceEstimate(0.0, 0.0) if held or heavy else ahead.space(cand.formula)
            estimate = space.structures
            over = space.over(limit) or heavy is not None
            if over or held:
                if heavy is not None:
                    why = heavy
                elif over:
                    advice = advise(cand.formula)
                    if estimate > limit:
                        why = f"about {estimate:,.0f} structures estimated, above the limit {limit:,}: {advice}"
                    else:
                        why = (
                            f"about {estimate:,.0f} structures but about {space.nodes:,.0f} partial skeletons to "
                            f"grow estimated, above the {NODES_PER_STRUCTURE * limit:,} the limit allows: {advice}"
                        )
                else:
                    assert skipped is not None
                    why = (
                        f"it ranks below {skipped.formula} on the isotope fit, and {skipped.formula} was skipped "
                        "for size, so its structures alone would mislead (--worse-formulas enumerates it)"
                    )
                kept.append(KeptFormula(cand.formula, m, cand.score, 0, why, cand.demoted_by, cand.demotion))
                notes.append(f"{cand.formula} (M {m}) not enumerated: {why}")
                if over and skipped is None and fit is not None:
                    skipped = cand
                continue
            local: dict[str, int] = {}
            before = len(found)
            parallel = runner if runner.workers > 1 else None
            # while the workers generate (from their first structure on), this process works
            # out the next formula's size
            following = needs_estimate(position + 1, skipped, m) if parallel is not None else None
            # a space large enough for the compiled core's start-up to pay is labelled by it
            # from the first structure (the output is the same either way)
            large = worth_starting(estimate, conditioned=conditioned)
            run_options = replace(options, engine="compiled") if large else options
            # the limit also holds while enumerating: an estimate whose walks dead-ended (often
            # in aromatic spaces, or in a heavy tail) may read far too low, and the work must
            # not run away; near the limit the space is counted first, further below it once
            # generation proves the estimate low
            first = estimate >= COUNT_FIRST_SHARE * limit
            over = first and not within_budget(cand.formula, run_options, budget=limit, runner=parallel)
            # generation with a watch on the estimate, then (once it proved low) without
            attempts: tuple[Callable[[int], None] | None, ...] = (
                (_stop_past(max(RECOUNT_AFTER * estimate, COUNT_FLOOR_SHARE * limit)), None) if not first else (None,)
            )
            try:
                for attempt in attempts if not over else ():
                    seen: list[object] = []
                    try:
                        for k, smiles in enumerate(
                            isomer_smiles(
                                cand.formula,
                                run_options,
                                removed=local,
                                runner=parallel,
                                budget=limit,
                                on_taken=attempt,
                                perceive=perceive,
                                perceived=seen if perceive is not None else None,
                            )
                        ):
                            if k == 0 and following is not None:
                                ahead.start(following, advise=advised < ADVISED_FORMULAS)
                            perception = cast(Perception, perceptions.setdefault(seen[k], seen[k])) if seen else None
                            found.append(
                                FoundCandidate(
                                    smiles, cand.formula, m, cand.score, cand.demotion, cand.demoted_by, perception
                                )
                            )
                            if len(found) % PROGRESS_EVERY == 0:
                                progress("generation", len(found), None)
                        break
                    except _EstimateLow:
                        del found[before:]
                        local.clear()
                        if not within_budget(cand.formula, run_options, budget=limit, runner=parallel):
                            over = True
                            break
            except TooManyStructures:
                over = True
            progress("generation", len(found), None)
            if over:
                del found[before:]  # a part of a space would mislead
                advice = advise(cand.formula)
                why = (
                    f"more than {limit:,} structures to test or {NODES_PER_STRUCTURE * limit:,} partial skeletons to "
                    f"grow, above the limit (the estimate, about {estimate:,.0f}, was too low): {advice}"
                )
                kept.append(KeptFormula(cand.formula, m, cand.score, 0, why, cand.demoted_by, cand.demotion))
                notes.append(f"{cand.formula} (M {m}) not enumerated: {why}")
                if skipped is None and fit is not None:
                    skipped = cand
                continue
            count = len(found) - before
            if cache is not None and key is not None:
                cache.put(key, str(cand.formula), [f.smiles for f in found[before:]], local)
                perceived = [f.seen for f in found[before:]]
                if perceive is not None and all(p is not None for p in perceived):
                    cache.put_seen(key, perceive.fingerprint, cast(list[Perception], perceived))
            for label, n in local.items():
                removed[label] = removed.get(label, 0) + n
            generated += count + sum(local.values())
            kept.append(KeptFormula(cand.formula, m, cand.score, count, None, cand.demoted_by, cand.demotion))
    evaluator = Evaluator(case, g, sc)
    wanted = {_canonical(text) for text in (*(case.structure.suspects if case.structure else ()), *watch)}
    watched = frozenset(i for i, item in enumerate(found) if item.smiles in wanted)
    scored = score_candidates(found, evaluator, runner, shortlist=shortlist, watched=watched, progress=progress)
    full = scored.full
    level = {i: round(combined.log_likelihood, 6) for i, (combined, _) in full.items()}
    order = sorted(full, key=lambda i: (-level[i], -round(found[i].isotope_score or 0.0, 6), found[i].smiles))
    shared = Counter(level.values())
    candidates = []
    rank = 0
    for position, i in enumerate(order, start=1):
        item = found[i]
        combined, assessments = full[i]
        if position == 1 or level[i] != level[order[position - 2]]:
            rank = position
        reasons = tuple(r for a in assessments for r in a.reasons[:2])
        candidates.append(
            Ranked(
                rank,
                item.smiles,
                str(item.formula),
                item.molecular_ion,
                combined.score,
                combined.log_likelihood,
                combined.components,
                reasons,
                assessments,
                tied=shared[level[i]] > 1,
            )
        )
    suspects = tuple(
        assess_suspect(text, case, candidates, kept, hypotheses, compiled, evaluator, applied)
        for text in (case.structure.suspects if case.structure else ())
    )
    followed = tuple(
        assess_suspect(text, case, candidates, kept, hypotheses, compiled, evaluator, applied) for text in watch
    )
    readings = {t.reading_key: t.read(case) for t in every if t.reading_key is not None}
    empty = why_empty(kept, removed, selection, generated, hypotheses, limit) if not candidates else ()
    if not candidates and not kept:
        empty += formula_stage_hints(case, hypotheses)
    return Solution(
        case,
        hypotheses,
        tuple(kept),
        generated,
        removed,
        tuple(candidates),
        suspects,
        readings,
        tuple(t.name for t in applied if t.stage == "structure"),
        PROFILE,
        empty,
        tuple(notes),
        considered,
        tuple(untried),
        len(found),
        scored.passes,
        followed,
        scored.settled_before_passes,
    )


def _canonical(text: str) -> str:
    """RDKit's canonical SMILES of ``text`` ("" when it cannot be read)."""
    from .._rdkit import Chem, mol_from_smiles, quiet_rdkit

    mol = mol_from_smiles(text)
    if mol is None:
        return ""
    with quiet_rdkit():
        smiles: str = Chem.MolToSmiles(mol)
    return smiles
