"""The formula engine: candidate molecular formulas for a nominal molecular ion.

Stages: enumerate every composition within the element limits whose nominal mass equals M;
apply the chemist's filters in a fixed order (each rejection keeps its rule and reason); score the
survivors' simulated isotope clusters against the observed peaks; rank.

Enumeration has two interchangeable methods that give the same set (a test checks it):
``"direct"`` (default) solves for H given every heteroatom and carbon count, vectorized with
numpy; ``"constraint"`` states the same problem for python-constraint. ``bench/bench_formulas.py``
prints both timings side by side; the direct method is kept as default because it is faster.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from fractions import Fraction

import numpy as np

from ..elements import ElementTable, default_elements
from ..errors import ElucidateError, TooLarge
from ..formula import Formula, ppm_error
from .isotopes import ClusterFit, ClusterReading, chi2_matrix, cluster_matrix, fit_cluster, read_cluster
from .query import FormulaQuery
from .rules import FormulaRules, RuleOf13, default_rules, kind_fiehn, nitrogen_rule, rule_of_13, senior_rules

__all__ = [
    "MAX_COMPOSITIONS",
    "RULES",
    "Candidate",
    "FormulaResult",
    "check_formula",
    "check_space",
    "composition_array",
    "composition_count",
    "derive_formulas",
    "enumerate_compositions",
    "first_failure_codes",
    "search_symbols",
]

#: filter names in the order they are applied
RULES = ("dbe_negative", "nitrogen_rule", "senior", "dbe_range", "element_ratios", "exact_mass")
METHODS = ("direct", "constraint")
#: rejected compositions explained per rule (the counts cover them all)
EXPLAINED_PER_RULE = 1_000
#: isotope-fit scores closer than this rank as equal (then parsimony decides)
SCORE_STEP = 0.01


@dataclass(frozen=True)
class Candidate:
    formula: Formula
    dbe: Fraction
    nominal_mass: int
    monoisotopic_mass: float
    mz: float
    ppm_error: float | None = None
    fit: ClusterFit | None = None
    rejected_by: str | None = None
    reason: str | None = None
    demoted_by: str | None = None  # the element-ratio rule it breaks, when they only demote
    demotion: float = 0.0  # nats

    @property
    def score(self) -> float | None:
        """The isotope-cluster fit, exp(-chi2/2); None without a cluster."""
        return self.fit.score if self.fit is not None else None

    @property
    def ranking_score(self) -> float | None:
        """The fit the formulas are ranked by: the isotope fit times exp(-demotion)."""
        return None if self.score is None else self.score * math.exp(-self.demotion)

    def as_dict(self) -> dict[str, object]:
        d: dict[str, object] = {
            "formula": str(self.formula),
            "dbe": float(self.dbe) if self.dbe.denominator != 1 else int(self.dbe),
            "nominal_mass": self.nominal_mass,
            "monoisotopic_mass": round(self.monoisotopic_mass, 6),
            "mz": round(self.mz, 6),
            "score": None if self.score is None else round(self.score, 6),
            "ranking_score": None if self.ranking_score is None else round(self.ranking_score, 6),
        }
        if self.ppm_error is not None:
            d["ppm_error"] = round(self.ppm_error, 2)
        if self.fit is not None:
            d["isotopes"] = [
                {"offset": k, "observed": round(o, 3), "predicted": round(p, 3), "z": round(z, 3)}
                for k, o, p, z in self.fit.compared
            ]
        if self.rejected_by is not None:
            d["rejected_by"] = self.rejected_by
            d["reason"] = self.reason
        if self.demoted_by is not None:
            d["demoted_by"] = self.demoted_by
        return d


@dataclass(frozen=True)
class FormulaResult:
    query: FormulaQuery
    kept: tuple[Candidate, ...]  # best first; at most `top` of them
    kept_count: int  # all survivors
    rejected: tuple[Candidate, ...]  # filled only with keep_rejected
    rejected_counts: Mapping[str, int]
    total: int
    rule13: RuleOf13 | None = None
    reading: ClusterReading | None = None
    notes: tuple[str, ...] = field(default=())
    #: every formula fits the cluster below the rules' poor_fit: ranked by the by-eye reading
    poor_cluster: bool = False


# ------------------------------------------------------------------ enumeration


#: the most compositions of one nominal mass the engine enumerates, filters and ranks (the
#: documented maximum composition space; bench/bench_formulas.py prints the peak memory there).
#: Element limits allowing more are refused, with the count, before any row is built.
MAX_COMPOSITIONS = 2_000_000
#: cells (rows x carbon counts) of the hydrogen solve done at once, so memory stays bounded
_CHUNK_CELLS = 4_000_000


def search_symbols(limits: Mapping[str, tuple[int, int]], table: ElementTable) -> list[str]:
    """The limited elements in element-table order (the columns of a composition array)."""
    for sym in limits:
        table[sym]  # raises with the list of known elements
    return [s for s in table.symbols if s in limits]


def _add_element(ways: np.ndarray, w: int, lo: int, hi: int) -> np.ndarray:
    """The counts by total nominal mass after one more element of mass ``w`` taken ``lo`` to
    ``hi`` times: sliding sums along each residue class mod ``w`` (O(len(ways)))."""
    top = ways.shape[0] - 1
    new = np.zeros(top + 1)
    for r in range(min(w, top + 1)):
        seq = ways[r::w]
        prefix = np.concatenate(([0.0], np.cumsum(seq)))
        k = np.arange(seq.shape[0])
        upper = k - lo + 1  # sum of seq[k-hi .. k-lo]
        lower = np.maximum(k - hi, 0)
        top_i = np.clip(upper, 0, None)
        new[r::w] = np.where(upper > 0, prefix[top_i] - prefix[np.minimum(lower, top_i)], 0.0)
    return new


def _ways(masses: Sequence[int], ranges: Sequence[tuple[int, int]], top: int) -> np.ndarray:
    """How many count vectors (element i between ``ranges[i]``) have each total nominal mass
    0..top: a bounded-knapsack count by dynamic programming, O(top) per element. Floats: exact
    below 2**53, and anything larger is refused anyway."""
    ways = np.zeros(top + 1)
    ways[0] = 1.0
    for w, (lo, hi) in zip(masses, ranges, strict=True):
        ways = _add_element(ways, w, lo, hi)
    return ways


def _within_mass(mass: int, limits: Mapping[str, tuple[int, int]], table: ElementTable) -> dict[str, tuple[int, int]]:
    """The limits with each upper bound cut to what the mass can hold (a careless 0-10**20 range
    must cost nothing); a lower bound above it leaves an empty range (low > high)."""
    out = {}
    for sym, (lo, hi) in limits.items():
        w = table[sym].nominal_mass
        out[sym] = (lo, min(hi, max(mass, 0) // w)) if w > 0 else (lo, hi)
    return out


def composition_count(mass: int, limits: Mapping[str, tuple[int, int]], table: ElementTable | None = None) -> int:
    """How many compositions within ``limits`` have nominal mass ``mass``, counted without
    building them (so a question too large to answer is refused in milliseconds)."""
    t = table or default_elements()
    symbols = search_symbols(limits, t)
    limits = _within_mass(mass, limits, t)
    if mass < 0 or any(lo > hi for lo, hi in limits.values()):
        return 0
    ways = _ways([t[s].nominal_mass for s in symbols], [limits[s] for s in symbols], mass)
    return round(float(ways[mass]))


def check_space(mass: int, limits: Mapping[str, tuple[int, int]], table: ElementTable | None = None) -> int:
    """The composition count of ``mass`` within ``limits``; raises :class:`TooLarge` above
    :data:`MAX_COMPOSITIONS`, naming the count and what to narrow."""
    n = composition_count(mass, limits, table)
    if n > MAX_COMPOSITIONS:
        widest = sorted((s for s in limits if s not in ("C", "H")), key=lambda s: limits[s][0] - limits[s][1])
        hint = f" (widest: {', '.join(f'{s} {limits[s][0]}-{limits[s][1]}' for s in widest[:3])})" if widest else ""
        raise TooLarge(
            f"these element limits allow {n:,} compositions of nominal mass {mass}, above the "
            f"{MAX_COMPOSITIONS:,} the formula search takes; "
            f"narrow the ranges of the rarer elements{hint}"
        )
    return n


def _bounded_grid(
    masses: Sequence[int], ranges: Sequence[tuple[int, int]], low: int, high: int
) -> tuple[np.ndarray, np.ndarray]:
    """Every count vector (one column per element) whose nominal mass lies in [low, high], and its
    mass. Built element by element; a partial vector is kept only when some completion reaches
    the window (read from the suffix counts), so no intermediate array outgrows the answer."""
    k = len(masses)
    if high < 0 or low > high:
        return np.zeros((0, k), dtype=np.int64), np.zeros(0, dtype=np.int64)
    low = max(low, 0)
    # reach[j][x] > 0: elements j.. can add exactly x (x <= high), built from the last element back
    reach = [np.zeros(high + 1)]
    reach[0][0] = 1.0
    for j in range(k - 1, -1, -1):
        reach.append(_add_element(reach[-1], masses[j], *ranges[j]))
    reach.reverse()
    rows = np.zeros((1, 0), dtype=np.int64)
    mass = np.zeros(1, dtype=np.int64)
    for j in range(k):
        lo, hi = ranges[j]
        hi = min(hi, high // masses[j])
        counts = np.arange(lo, hi + 1, dtype=np.int64)
        if counts.shape[0] == 0:
            return np.zeros((0, k), dtype=np.int64), np.zeros(0, dtype=np.int64)
        new_mass = (mass[:, None] + counts[None, :] * masses[j]).ravel()
        # some completion by the remaining elements lands in [low, high]
        hit = np.concatenate(([0.0], np.cumsum(reach[j + 1] > 0)))
        a = np.clip(low - new_mass, 0, high + 1)
        b = np.clip(high - new_mass + 1, 0, high + 1)
        keep = (new_mass <= high) & (hit[b] > hit[a])
        idx = np.nonzero(keep)[0]
        parent, which = np.divmod(idx, counts.shape[0])
        rows = np.concatenate((rows[parent], counts[which][:, None]), axis=1)
        mass = new_mass[idx]
    return rows, mass


def _direct(mass: int, limits: Mapping[str, tuple[int, int]], table: ElementTable) -> np.ndarray:
    symbols = search_symbols(limits, table)
    check_space(mass, limits, table)
    k = len(symbols)
    limits = _within_mass(mass, limits, table)
    if any(lo > hi for lo, hi in limits.values()) or mass < 0:
        return np.zeros((0, k), dtype=np.int64)
    if k == 0:
        return np.zeros((1 if mass == 0 else 0, 0), dtype=np.int64)
    out = np.zeros((0, k), dtype=np.int64)
    solve_ch = "C" in symbols and "H" in symbols and table["H"].nominal_mass == 1
    if not solve_ch:
        # the last element is solved by division; the others form a bounded grid
        last = symbols[-1]
        w = table[last].nominal_mass
        lo, hi = limits[last]
        masses = [table[s].nominal_mass for s in symbols[:-1]]
        grid, gm = _bounded_grid(masses, [limits[s] for s in symbols[:-1]], mass - hi * w, mass - lo * w)
        rest = mass - gm
        ok = (rest % w == 0) & (rest // w >= lo) & (rest // w <= hi)
        return np.concatenate((grid[ok], (rest[ok] // w)[:, None]), axis=1)
    others = [s for s in symbols if s not in ("C", "H")]
    c_lo, c_hi = limits["C"]
    h_lo, h_hi = limits["H"]
    wc = table["C"].nominal_mass
    grid, gm = _bounded_grid(
        [table[s].nominal_mass for s in others],
        [limits[s] for s in others],
        mass - wc * c_hi - h_hi,
        mass - wc * c_lo - h_lo,
    )
    cs = np.arange(c_lo, c_hi + 1, dtype=np.int64)
    ci, hi_col = symbols.index("C"), symbols.index("H")
    other_cols = [symbols.index(s) for s in others]
    step = max(1, _CHUNK_CELLS // max(1, cs.shape[0]))
    parts = [out]
    for start in range(0, grid.shape[0], step):
        sub, rest = grid[start : start + step], mass - gm[start : start + step]
        hs = rest[:, None] - wc * cs[None, :]
        rows, cols = np.nonzero((hs >= h_lo) & (hs <= h_hi))
        part = np.zeros((rows.shape[0], k), dtype=np.int64)
        part[:, ci] = cs[cols]
        part[:, hi_col] = hs[rows, cols]
        if other_cols:
            part[:, other_cols] = sub[rows]
        parts.append(part)
    return np.concatenate(parts, axis=0)


def _constraint(mass: int, limits: Mapping[str, tuple[int, int]], table: ElementTable) -> np.ndarray:
    import constraint  # python-constraint2

    symbols = search_symbols(limits, table)
    check_space(mass, limits, table)
    limits = _within_mass(mass, limits, table)
    problem = constraint.Problem()
    for s in symbols:
        problem.addVariable(s, list(range(limits[s][0], limits[s][1] + 1)))
    problem.addConstraint(constraint.ExactSumConstraint(mass, [table[s].nominal_mass for s in symbols]), symbols)
    rows = [tuple(sol[s] for s in symbols) for sol in problem.getSolutionIter()]
    return np.array(rows, dtype=np.int64).reshape(-1, len(symbols))


def composition_array(
    mass: int,
    limits: Mapping[str, tuple[int, int]],
    table: ElementTable | None = None,
    *,
    method: str = "direct",
) -> tuple[list[str], np.ndarray]:
    """The compositions as an integer array (one row each, columns in element-table order),
    rows in a fixed order. This is what the engine works on; no Python object per row."""
    t = table or default_elements()
    if method not in METHODS:
        raise ElucidateError(f"unknown method {method!r}; choose one of {', '.join(METHODS)}")
    symbols = search_symbols(limits, t)
    arr = (_direct if method == "direct" else _constraint)(mass, limits, t)
    return symbols, _sort_rows(arr)


def enumerate_compositions(
    mass: int,
    limits: Mapping[str, tuple[int, int]],
    table: ElementTable | None = None,
    *,
    method: str = "direct",
) -> list[Formula]:
    """Every composition within ``limits`` whose nominal mass is ``mass``, in a fixed order."""
    symbols, arr = composition_array(mass, limits, table, method=method)
    return [Formula.of(dict(zip(symbols, map(int, row), strict=True))) for row in arr]


def _sort_rows(arr: np.ndarray) -> np.ndarray:
    if arr.shape[0] == 0:
        return arr
    order = np.lexsort(arr.T[::-1])
    return arr[order]


# ------------------------------------------------------------------ filters


def _ppm(formula: Formula, query: FormulaQuery, table: ElementTable) -> float:
    assert query.exact_mass is not None
    return float(
        ppm_error(
            query.exact_mass,
            formula.monoisotopic_mass(table),
            electron_mass=table.electron_mass,
            of=query.exact_mass_of,
        )
    )


def check_formula(
    formula: Formula,
    query: FormulaQuery,
    *,
    table: ElementTable | None = None,
    rules: FormulaRules | None = None,
) -> tuple[str, str] | None:
    """The first filter that rejects ``formula`` as ``(rule, reason)``, or None if it passes.

    This is the reference definition; :func:`derive_formulas` applies the same tests vectorized.
    """
    t = table or default_elements()
    r = rules or default_rules()
    dbe = formula.dbe(t)
    if dbe < 0:
        return "dbe_negative", f"DBE = {dbe} < 0: too many H and halogens for the skeleton"
    reason = nitrogen_rule(formula, t)
    if reason:
        return "nitrogen_rule", reason
    reason = senior_rules(formula, t)
    if reason:
        return "senior", reason
    low, high = query.dbe
    if not low <= dbe <= high:
        return "dbe_range", f"DBE = {dbe} outside the allowed {low}-{high}"
    reason = kind_fiehn(formula, r, query.element_ratios) if query.enforce_ratios else None
    if reason:
        return "element_ratios", reason
    if query.exact_mass is not None:
        ppm = _ppm(formula, query, t)
        if abs(ppm) > query.mass_tolerance_ppm:
            expected = formula.mz(t) if query.exact_mass_of == "ion" else formula.monoisotopic_mass(t)
            message = (
                f"exact mass {query.exact_mass:.5f} is {ppm:+.1f} ppm from {expected:.5f} "
                f"(tolerance {query.mass_tolerance_ppm:g} ppm)"
            )
            return ("exact_mass", message)
    return None


def _columns(arr: np.ndarray, symbols: list[str]) -> Callable[[str], np.ndarray]:
    """The count column of an element (zeros for an element not searched)."""

    def col(sym: str) -> np.ndarray:
        return arr[:, symbols.index(sym)] if sym in symbols else np.zeros(arr.shape[0], dtype=np.int64)

    return col


def ratio_violations(
    arr: np.ndarray,
    symbols: list[str],
    query: FormulaQuery,
    table: ElementTable,
    rules: FormulaRules,
) -> np.ndarray:
    """Which rows break the Kind & Fiehn rules at the query's level (vectorized kind_fiehn)."""
    rows = arr.shape[0]
    if query.element_ratios == "off" or rows == 0:
        return np.zeros(rows, dtype=bool)

    col = _columns(arr, symbols)

    nominal = arr @ np.array([table[s].nominal_mass for s in symbols], dtype=np.int64)
    c = col("C")
    bad = c == 0
    safe_c = np.where(c == 0, 1, c)
    for sym, (lo, hi) in rules.ratios[query.element_ratios].items():
        ratio = col(sym) / safe_c
        bad |= (ratio < lo - 1e-12) | (ratio > hi + 1e-12)
    picked = np.zeros(rows, dtype=bool)
    for below_mass, counts in rules.max_counts:
        here = (~picked) & (nominal < below_mass)
        for sym, limit in counts.items():
            bad |= here & (col(sym) > limit)
        picked |= here
    for rule in rules.combined_counts:
        applies = np.ones(rows, dtype=bool)
        for sym in rule.elements:
            applies &= col(sym) > rule.when_all_above
        for sym, limit in rule.below.items():
            bad |= applies & (col(sym) >= limit)
    return bad


def _demotions(
    arr: np.ndarray, symbols: list[str], query: FormulaQuery, table: ElementTable, rules: FormulaRules
) -> tuple[np.ndarray, np.ndarray]:
    """Which rows break the element-ratio heuristic at the level asked for (when it is not
    enforced), and the nats each is demoted by: the 'extended' demotion when it breaks that
    level, else the 'common' one."""
    rows = arr.shape[0]
    if query.enforce_ratios or query.element_ratios == "off":
        return np.zeros(rows, dtype=bool), np.zeros(rows)
    extended = ratio_violations(arr, symbols, replace(query, element_ratios="extended"), table, rules)
    asked = extended if query.element_ratios == "extended" else ratio_violations(arr, symbols, query, table, rules)
    nats = np.where(extended, rules.ratio_demotion["extended"], np.where(asked, rules.ratio_demotion["common"], 0.0))
    return asked | extended, nats


def first_failure_codes(
    arr: np.ndarray,
    symbols: list[str],
    query: FormulaQuery,
    table: ElementTable,
    rules: FormulaRules,
) -> np.ndarray:
    """Index into RULES of the first filter each row fails, or -1 (vectorized check_formula).

    Same tests in the same order as :func:`check_formula`; a test checks the two agree row by row.
    """
    rows = arr.shape[0]
    out = np.full(rows, -1, dtype=np.int64)
    if rows == 0:
        return out

    col = _columns(arr, symbols)

    def mark(code: int, failed: np.ndarray) -> None:
        out[(out < 0) & failed] = code

    val = np.array([table[s].valence for s in symbols], dtype=np.int64)
    twice_dbe = 2 + arr @ (val - 2)
    nominal = arr @ np.array([table[s].nominal_mass for s in symbols], dtype=np.int64)
    mark(0, twice_dbe < 0)
    mark(1, (nominal % 2) != (col("N") % 2))
    total = arr @ val
    present_max = np.max(np.where(arr > 0, val[None, :], 0), axis=1)
    atoms = arr.sum(axis=1)
    mark(2, (total % 2 == 1) | (total < 2 * present_max) | (total < 2 * (atoms - 1)))
    low, high = query.dbe
    mark(3, (twice_dbe < 2 * low) | (twice_dbe > 2 * high))
    if query.enforce_ratios:
        mark(4, ratio_violations(arr, symbols, query, table, rules))
    if query.exact_mass is not None:
        mono = arr @ np.array([table[s].monoisotopic_mass for s in symbols])
        with np.errstate(divide="ignore", invalid="ignore"):
            ppm = ppm_error(query.exact_mass, mono, electron_mass=table.electron_mass, of=query.exact_mass_of)
        mark(5, ~(np.abs(ppm) <= query.mass_tolerance_ppm))
    return out


def derive_formulas(
    query: FormulaQuery,
    *,
    table: ElementTable | None = None,
    rules: FormulaRules | None = None,
    method: str = "direct",
    top: int | None = None,
    keep_rejected: bool = False,
) -> FormulaResult:
    """Enumerate, filter, score and rank candidate formulas for ``query``.

    All survivors are scored and ranked; ``top`` limits how many are returned as
    :class:`Candidate` objects (``kept_count`` still counts all). Ranking: isotope-fit score to
    the nearest SCORE_STEP (best first), then |ppm error| when an exact mass is given, then
    parsimony (fewest atoms beyond C, H, N, O; fewest heteroatoms; most carbons), then
    composition order (the element table's order), so ties never depend on anything but the
    input. With ``keep_rejected`` rejected compositions are returned with their rule and reason,
    the first :data:`EXPLAINED_PER_RULE` of each rule (``rejected_counts`` counts them all).
    """
    t = table or default_elements()
    r = rules or default_rules()
    if top is not None and top < 0:
        raise ElucidateError(f"top must be 0 or more, got {top}")
    symbols, arr = composition_array(query.nominal_mass, query.elements, t, method=method)
    failed = first_failure_codes(arr, symbols, query, t, r)
    counts = {rule: int(np.count_nonzero(failed == i)) for i, rule in enumerate(RULES)}
    rejected: list[Candidate] = []
    if keep_rejected:
        # the first EXPLAINED_PER_RULE of each rule in composition order (counts stay complete)
        shown = np.zeros(arr.shape[0], dtype=bool)
        for i in range(len(RULES)):
            shown[np.nonzero(failed == i)[0][:EXPLAINED_PER_RULE]] = True
        for row in arr[shown]:
            formula = Formula.of(dict(zip(symbols, map(int, row), strict=True)))
            verdict = check_formula(formula, query, table=t, rules=r)
            if verdict is None:  # pragma: no cover - vectorized filter and reference disagree
                raise AssertionError(f"filter mismatch for {formula}")
            rejected.append(_candidate(formula, query, t, rejected=verdict))
    good = arr[failed < 0]
    n_good = good.shape[0]
    score = np.zeros(n_good)
    patterns = None
    if query.cluster is not None and n_good:
        patterns = cluster_matrix(good, symbols, t, r.isotope_max_offset)
        chi2, _, _ = chi2_matrix(patterns, query.cluster, r.isotope_tolerance)
        score = np.exp(-0.5 * chi2)
    # the element-ratio heuristic, when not enforced, demotes: the ranking uses the isotope fit
    # times exp(-demotion), and without a cluster a demoted formula comes after the others
    demoted, demotion = _demotions(good, symbols, query, t, r)
    ranked = score * np.exp(-demotion)
    ppm = np.zeros(n_good)
    if query.exact_mass is not None and n_good:
        mono = good @ np.array([t[s].monoisotopic_mass for s in symbols])
        ppm = np.abs(ppm_error(query.exact_mass, mono, electron_mass=t.electron_mass, of=query.exact_mass_of))
    # Fits within SCORE_STEP of each other are not distinguishable by a low-resolution cluster;
    # such ties (and every row when nothing is scored) fall back to parsimony: fewest atoms
    # beyond C, H, N and O, then fewest heteroatoms, then most carbons, then composition order.
    # lexsort: the last key is primary.
    hetero = good[:, [j for j, s in enumerate(symbols) if s not in ("C", "H")]].sum(axis=1)
    rare = good[:, [j for j, s in enumerate(symbols) if s not in ("C", "H", "N", "O")]].sum(axis=1)
    carbons = good[:, symbols.index("C")] if "C" in symbols else np.zeros(n_good, dtype=np.int64)
    score_class = np.floor(ranked / SCORE_STEP + 0.5 + 1e-9)
    notes: list[str] = []
    reading = None
    if query.cluster is not None:
        reading = read_cluster(query.cluster, t, r.isotope_tolerance, allowed=query.elements, heavy_sets=r.heavy_sets)
    # When even the best formula fits the cluster badly, the cluster is unreliable as a whole (an
    # interfering ion, a mistyped peak); a chemist then trusts the M+2/M+4 pattern read by eye
    # (a 97 % M+2 means Br whatever else is wrong): formulas agreeing with it rank first.
    disagrees = np.zeros(n_good, dtype=bool)
    poor = query.cluster is not None and n_good > 0 and float(score.max()) < r.isotope_poor_fit
    if poor and reading is not None and reading.heavy_counts is not None:
        col = _columns(good, symbols)
        heavy = sorted({s for h in r.heavy_sets for s in h})
        for sym in heavy:
            disagrees |= col(sym) != reading.heavy_counts.get(sym, 0)
        notes.append(
            f"every formula fits the isotope cluster poorly (best fit {float(score.max()):.3g}): the cluster "
            f"may hold an interfering or mistyped peak; formulas agreeing with the by-eye reading "
            f"({reading.heavy_atoms}) are ranked first"
        )
    order = np.lexsort((np.arange(n_good), -carbons, hetero, rare, np.round(ppm, 9), demoted, -score_class, disagrees))
    if top is not None and top > 0:
        order = order[:top]
    kept = []
    for i in order:
        formula = Formula.of(dict(zip(symbols, map(int, good[i]), strict=True)))
        fit = None
        if patterns is not None and query.cluster is not None:
            fit = fit_cluster(patterns[i], query.cluster, r.isotope_tolerance)
        why = None
        if demoted[i]:
            why = kind_fiehn(formula, r, "extended") or kind_fiehn(formula, r, query.element_ratios)
        kept.append(_candidate(formula, query, t, fit=fit, demoted_by=why, demotion=float(demotion[i])))
    if reading is not None:
        notes[:0] = reading.notes
        best_kept = float(score.max()) if n_good else 0.0
        warning = (
            _heuristic_warning(arr[failed == 4], symbols, query, t, r, best_kept) if query.enforce_ratios else None
        )
        if warning:
            notes.append(warning)
    else:
        notes.append(
            "no isotope peaks at M+ in the peak list: candidates are not scored; listed by parsimony "
            "(fewest atoms beyond C, H, N, O; fewest heteroatoms; most carbons)"
        )
    rule13 = rule_of_13(query.nominal_mass) if query.nominal_mass >= 13 else None
    return FormulaResult(
        query=query,
        kept=tuple(kept),
        kept_count=int(n_good),
        rejected=tuple(rejected),
        rejected_counts=counts,
        total=int(arr.shape[0]),
        rule13=rule13,
        reading=reading,
        notes=tuple(notes),
        poor_cluster=bool(poor),
    )


def _heuristic_warning(
    rows: np.ndarray,
    symbols: list[str],
    query: FormulaQuery,
    table: ElementTable,
    rules: FormulaRules,
    best_kept: float,
) -> str | None:
    """A warning when a formula removed only by the element-ratio heuristic fits the cluster
    clearly better than every kept one (e.g. CH2Cl2 or CHCl3, outside Kind & Fiehn's Cl/C).

    The heuristic is library statistics, not chemistry, so it must never hide the right answer
    without saying so.
    """
    if query.cluster is None or rows.shape[0] == 0:
        return None
    chi2, _, _ = chi2_matrix(
        cluster_matrix(rows, symbols, table, rules.isotope_max_offset), query.cluster, rules.isotope_tolerance
    )
    scores = np.exp(-0.5 * chi2)
    best = int(np.lexsort((np.arange(rows.shape[0]), -np.round(scores, 12)))[0])
    if scores[best] < 0.5 or scores[best] < 2 * best_kept:
        return None
    formula = Formula.of(dict(zip(symbols, map(int, rows[best]), strict=True)))
    reason = kind_fiehn(formula, rules, query.element_ratios)
    return (
        f"warning: {formula} fits the isotope cluster better (fit {scores[best]:.3f}) than any kept "
        f"formula (best {best_kept:.3f}) but was removed by the element-ratio heuristic ({reason}); "
        "rerun with element ratios 'extended' or 'off' if such a compound is possible"
    )


def _candidate(
    formula: Formula,
    query: FormulaQuery,
    table: ElementTable,
    *,
    fit: ClusterFit | None = None,
    rejected: tuple[str, str] | None = None,
    demoted_by: str | None = None,
    demotion: float = 0.0,
) -> Candidate:
    mono = formula.monoisotopic_mass(table)
    ppm = _ppm(formula, query, table) if query.exact_mass is not None else None
    return Candidate(
        formula=formula,
        dbe=formula.dbe(table),
        nominal_mass=formula.nominal_mass(table),
        monoisotopic_mass=mono,
        mz=mono - table.electron_mass,
        ppm_error=ppm,
        fit=fit,
        rejected_by=rejected[0] if rejected else None,
        reason=rejected[1] if rejected else None,
        demoted_by=demoted_by,
        demotion=demotion,
    )
