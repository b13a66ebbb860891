"""NMR: the observed 13C and 1H lists against the candidate's predicted signals, by optimal
assignment (``constraints/nmr13c.yaml``, ``constraints/nmr1h.yaml``).

Assignment. Observed signals and predicted symmetry classes are paired one to one by the
Hungarian algorithm (``scipy.optimize.linear_sum_assignment``) on the cost of each pair: the
squared deviation over the class's stated uncertainty (half of it taken as one standard
deviation), capped, plus a DEPT-type mismatch (13C) that makes a differing type all but
forbidden. Classes left over when there are fewer observed signals overlap the observed signal
that suits them best (a mild cost); observed signals left over are more than the structure can
give (a strong cost). For 1H the integrals are then compared with the H of the classes each
signal holds (scaled to the best common factor), and a resolved multiplet with the first-order
n + 1 prediction. Exchangeable H (OH, NH) may be missing from the list at no cost.

The counts a chemist declares (``carbon_types``, ``exchangeable_h``, ``c13_regions``) are hard
and pushed into generation (:mod:`elucidate.generator.counts`); this module only ranks.

Reading (:meth:`Nmr.read`): the tool's own reading of the lists, for the chemist to judge and
copy: DEPT counts as lower bounds on the carbon types, signals per shift window (carbonyl
kinds by region), the integral sum against the formula's H, and broad signals that may be
exchangeable.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass
from functools import cache, lru_cache
from typing import TYPE_CHECKING, Any, Literal

from ..case import CARBON_KINDS, MULTIPLICITIES, C13Signal, Case, H1Signal
from .base import Assessment, Partial, Reading, Subject
from .carbon13 import carbon_classes, graph_ranks
from .nmr_predict import CarbonShift, NmrPrediction, ProtonShift
from .nmr_tables import AssignmentCosts, NmrTables, default_nmr_tables

if TYPE_CHECKING:
    import numpy as np

__all__ = ["Nmr", "assign", "carbon_costs", "coupled_h"]

#: the order in which DEPT-type blocks of classes are predicted for the 13C bound
_BLOCK_ORDER = {"C": 0, "CH": 1, "CH2": 2, "CH3": 3}

#: coupled H a multiplet code stands for (first order, all couplings resolved)
_COUPLED = {"s": 0, "d": 1, "t": 2, "q": 3, "quint": 4, "sext": 5, "sept": 6}


def coupled_h(code: str | None) -> int | None:
    """How many neighbouring H a multiplet code reports (dd and t both 2); None when it does
    not say (m, br, or no code)."""
    if code is None or code.startswith("br") or code == "m":
        return None
    if code in _COUPLED:
        return _COUPLED[code]
    return sum(_COUPLED[letter] for letter in code)


@dataclass(frozen=True)
class Pair:
    """One row of an assignment table."""

    observed: int | None  # index into the observed list (None: a class with no signal of its own)
    predicted: int | None  # index into the predicted classes (None: an observed signal left over)
    cost: float
    overlap: bool = False  # the class shares its observed signal with another class


def _deviations(
    observed: Sequence[float], predicted: Sequence[float], uncertainty: Sequence[float], cap: float
) -> np.ndarray:
    """Each pair's deviation cost (observed rows, predicted columns): the squared deviation over
    sigma (half the stated uncertainty) halved, at most ``cap``."""
    import numpy as np

    obs = np.array(observed, dtype=float)[:, None]
    sigma = np.maximum(np.array(uncertainty, dtype=float) / 2, 1e-6)
    deviation = (obs - np.array(predicted, dtype=float)) / sigma
    cost: np.ndarray = np.minimum(0.5 * deviation**2, cap).reshape(len(observed), len(predicted))
    return cost


def _improve(
    place: list[int | None],
    fill: list[int],
    dev: np.ndarray,
    absent: np.ndarray,
    hydrogens: Sequence[int],
    slots: Sequence[int],
    per_h: float,
    *,
    rounds: int,
) -> None:
    """The 1H local search, in place: each round applies the single best change of the total,
    a class moved to another signal (or to none) or two classes on different signals swapped,
    while one lowers it by more than 1e-9; at most ``rounds`` rounds. ``place``: each class's
    signal (None: no signal); ``fill``: the H placed on each signal; ``dev``: deviation cost
    (signals × classes); ``absent``: each class's cost with no signal; ``slots``: the H each
    signal holds. The changes are weighed in a fixed order (per class: its moves to each signal
    then to none, then its swaps with each later class) and the first of the least is taken, so
    the result does not depend on how the weighing is computed. One round is a few array
    operations over every change at once."""
    import numpy as np

    n_obs, n_c = dev.shape
    if n_c == 0:
        return
    none = n_obs  # the "no signal" position
    h = np.array(hydrogens, dtype=np.int64)
    s_arr = np.array(slots, dtype=np.int64)
    width = n_obs + 1 + n_c
    order, upper = _change_order(n_obs, n_c)
    cols = np.arange(n_c)
    for _ in range(rounds):
        at = np.array([none if r is None else r for r in place], dtype=np.int64)
        f = np.array(fill, dtype=np.int64)
        placed = at != none
        safe = np.where(placed, at, 0)
        # what moving class c off its signal changes: minus its deviation and the signal's
        # integral mismatch it leaves behind (or its absence cost)
        gap = s_arr[safe] - f[safe]
        leave = np.where(placed, dev[safe, cols] + per_h * (np.abs(gap) - np.abs(gap + h)), absent)
        # what putting class c on signal r adds (r = none: its absence cost)
        room = (s_arr - f)[:, None]
        arrive = np.empty((n_obs + 1, n_c))
        arrive[:n_obs] = dev + per_h * (np.abs(room - h[None, :]) - np.abs(room))
        arrive[none] = absent
        moves = (0.0 - leave)[:, None] + arrive.T
        moves[cols, at] = np.inf  # a class stays where it is
        # swaps: c to c2's signal (as a move), then c2 to c's signal with c already moved
        r1, r2 = at[:, None], at[None, :]
        valid = upper & placed[:, None] & placed[None, :] & (r1 != r2)
        r1s, r2s = np.where(valid, r1, 0), np.where(valid, r2, 0)
        first = moves[cols[:, None], r2s]
        f2 = f[r2s] + h[:, None]  # c2's signal after c joined it
        f1 = f[r1s] - h[:, None]  # c's signal after c left it
        h2 = h[None, :]
        leave2 = dev[r2s, cols[None, :]] + per_h * (np.abs(s_arr[r2s] - f2) - np.abs(s_arr[r2s] - f2 + h2))
        arrive2 = dev[r1s, cols[None, :]] + per_h * (np.abs(s_arr[r1s] - f1 - h2) - np.abs(s_arr[r1s] - f1))
        swaps = np.where(valid, first + ((0.0 - leave2) + arrive2), np.inf)
        table = np.concatenate([moves, swaps], axis=1).ravel()[order]
        k = int(np.argmin(table))
        if not table[k] < -1e-9:
            break
        c, j = divmod(int(order[k]), width)
        if j <= n_obs:
            _shift(place, fill, hydrogens, c, None if j == none else j)
        else:
            c2 = j - n_obs - 1
            a, b = place[c], place[c2]
            _shift(place, fill, hydrogens, c, b)
            _shift(place, fill, hydrogens, c2, a)


@cache
def _change_order(n_obs: int, n_c: int) -> tuple[np.ndarray, np.ndarray]:
    """The changes of :func:`_improve` in the order they are weighed (per class c: its n_obs + 1
    moves, then its swaps with each c2 > c), as flat indices into the (n_c, n_obs + 1 + n_c)
    table [moves | swaps]; and the c < c2 mask of the swaps."""
    import numpy as np

    width = n_obs + 1 + n_c
    order = np.array(
        [c * width + k for c in range(n_c) for k in [*range(n_obs + 1), *(n_obs + 1 + c2 for c2 in range(c + 1, n_c))]],
        dtype=np.int64,
    )
    cols = np.arange(n_c)
    return order, cols[:, None] < cols[None, :]


def _shift(place: list[int | None], fill: list[int], hydrogens: Sequence[int], c: int, new: int | None) -> None:
    """Class c to signal ``new`` (None: no signal), keeping ``fill`` the H on each signal."""
    old = place[c]
    if old is not None:
        fill[old] -= hydrogens[c]
    if new is not None:
        fill[new] += hydrogens[c]
    place[c] = new


def carbon_costs(observed: Sequence[C13Signal], predicted: Sequence[CarbonShift], costs: AssignmentCosts) -> np.ndarray:
    """The 13C cost matrix (observed rows, predicted columns) at once: each pair's capped
    deviation cost (:func:`_deviations`) plus ``type_mismatch`` where a DEPT type differs."""
    import numpy as np

    cost = _deviations(
        [o.ppm for o in observed], [p.ppm for p in predicted], [p.uncertainty for p in predicted], costs.deviation_cap
    )
    otype = np.array([o.type or "" for o in observed], dtype=object)[:, None]
    ptype = np.array([p.type for p in predicted], dtype=object)
    mismatch: np.ndarray = ((otype != "") & (otype != ptype)) * costs.type_mismatch
    return cost + mismatch


def assign(cost: np.ndarray, costs: AssignmentCosts, *, optional: Sequence[bool] = ()) -> list[Pair]:
    """Observed (rows) to predicted (columns): one to one by least total cost, leftover classes
    overlapping their cheapest observed signal, leftover observed signals as extra. A class
    marked ``optional`` that is left over is dropped at no cost."""
    from .._scipy import linear_sum_assignment

    n_obs, n_pred = cost.shape
    pairs: list[Pair] = []
    if n_obs and n_pred:
        rows, cols = linear_sum_assignment(cost)
        pairs = [Pair(int(r), int(c), float(cost[r, c])) for r, c in zip(rows, cols, strict=True)]
    used_obs = {p.observed for p in pairs}
    used_pred = {p.predicted for p in pairs}
    for c in range(n_pred):
        if c in used_pred:
            continue
        if optional and optional[c]:
            continue
        if n_obs:
            r = min(range(n_obs), key=lambda r: (cost[r, c], r))
            pairs.append(Pair(r, c, float(cost[r, c]) + costs.overlap, overlap=True))
        else:
            pairs.append(Pair(None, c, costs.extra_signal))
    for r in range(n_obs):
        if r not in used_obs:
            pairs.append(Pair(r, None, costs.extra_signal))
    return sorted(pairs, key=lambda p: (p.observed if p.observed is not None else -1, p.predicted or 0))


@lru_cache(maxsize=4096)
def _window_misses(
    signals: tuple[tuple[float, str | None], ...], carbons: tuple[tuple[str, str, int], ...], tables: NmrTables
) -> int:
    """How many of the observed 13C ``signals`` (ppm, DEPT type or None) are left over by a
    largest matching to the ``carbons`` ((kind, DEPT type, count) rows), a signal matching a
    carbon of its type whose kind's shift window (``nmr13c.yaml`` regions) holds it (Kuhn's
    augmenting paths)."""
    regions = tables.c13.regions
    slots = [(kind, name) for kind, name, n in carbons for _ in range(n)]
    fits = [
        [
            k
            for k, (kind, name) in enumerate(slots)
            if (t is None or t == name) and regions[kind][0] <= ppm <= regions[kind][1]
        ]
        for ppm, t in signals
    ]
    held: dict[int, int] = {}  # slot -> signal

    def place(r: int, tried: set[int]) -> bool:
        for k in fits[r]:
            if k not in tried:
                tried.add(k)
                if k not in held or place(held[k], tried):
                    held[k] = r
                    return True
        return False

    return sum(1 for r in range(len(signals)) if not place(r, set()))


def _bounding_ranks(subject: Subject) -> Iterator[list[int]]:
    """The symmetry ranks to bound the 13C part on, the last being the spectrum's
    (:attr:`~elucidate.evidence.base.Subject.symmetry_ranks`).

    First, unless those are known already, the graph's (:func:`graph_ranks`, cheaper): a class
    the spectrum splits in two is predicted alike for both parts, one column twice, so the dual
    is feasible for the finer assignment too (the second copy takes v = 0) and bounds its
    against. That needs the atoms of a graph class predicted alike: with at most one ring,
    RDKit's rings read the same from each of them (with more, a ring set chosen among equal
    ones can tell them apart); tests/test_nmr.py checks this and the bound. Then, when they
    differ, the spectrum's."""
    if not subject.ranked and subject.mol.GetRingInfo().NumRings() <= 1:
        graph = graph_ranks(subject.mol)
        yield graph
        if subject.symmetry_ranks == graph:
            return
    yield subject.symmetry_ranks


class Nmr:
    """Observed 13C (with DEPT types) and 1H lists scored by optimal assignment."""

    name = "nmr"
    weight_key = "nmr"
    label = "NMR"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = "nmr_reading"
    scoring_pass: int = 5
    cost: float = 2700  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(self, tables: NmrTables | None = None) -> None:
        self.tables = tables or default_nmr_tables()

    def applies(self, case: Case) -> bool:
        return case.nmr is not None and case.nmr.has_lists

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def estimate(self, subject: Subject, case: Case) -> Assessment | None:
        """A guess from the carbons by kind and DEPT type that generation read
        (``subject.seen.carbons``), for ordering the candidates only: each observed 13C signal
        that no carbon of its DEPT type and of a kind whose shift window holds it can give (a
        largest matching of signals to carbons, :func:`_window_misses`) is taken as paired at
        the capped deviation."""
        nmr = case.nmr
        seen = subject.seen
        if nmr is None or not nmr.c13 or seen is None or seen.carbons is None:
            return None
        signals = tuple((s.ppm, s.type) for s in nmr.c13)
        missed = _window_misses(signals, seen.carbons, self.tables)
        return Assessment(self.name, against=missed * self.tables.c13.costs.deviation_cap)

    # ------------------------------------------------------------------ scoring

    def _carbon(self, observed: Sequence[C13Signal], predicted: Sequence[CarbonShift]) -> tuple[float, float, list]:

        costs = self.tables.c13.costs
        cost = carbon_costs(observed, predicted, costs)
        pairs = assign(cost, costs)
        against = unexplained = 0.0
        rows = []
        for pair in pairs:
            if pair.overlap:
                unexplained += costs.overlap
                against += pair.cost - costs.overlap
            else:
                against += pair.cost
            sig = observed[pair.observed] if pair.observed is not None else None
            cls = predicted[pair.predicted] if pair.predicted is not None else None
            rows.append(
                {
                    "observed_ppm": sig.ppm if sig else None,
                    "observed_type": sig.type if sig else None,
                    "predicted_ppm": cls.ppm if cls else None,
                    "uncertainty": cls.uncertainty if cls else None,
                    "type": cls.type if cls else None,
                    "carbons": list(cls.atoms) if cls else [],
                    "environment": cls.environment if cls else None,
                    "deviation": round(sig.ppm - cls.ppm, 2) if sig and cls else None,
                    "overlap": pair.overlap,
                }
            )
        return against, unexplained, rows

    def _proton(
        self, observed: Sequence[H1Signal], predicted: Sequence[ProtonShift]
    ) -> tuple[float, float, list, list[str]]:
        costs = self.tables.h1.costs
        ppm, unc = [p.ppm for p in predicted], [p.uncertainty for p in predicted]
        dev_arr = _deviations([o.ppm for o in observed], ppm, unc, costs.deviation_cap)
        dev = dev_arr.tolist()
        notes: list[str] = []
        if observed and all(o.integral is not None for o in observed):
            held, against, unexplained = self._by_integrals(observed, predicted, dev, dev_arr, notes)
        else:
            held, against, unexplained = self._one_to_one(observed, predicted, dev_arr)
        # resolved multiplets against the first-order prediction
        for r, o in enumerate(observed):
            classes = held.get(r, {})
            want = coupled_h(o.multiplicity)
            if want is None or len(classes) != 1:
                continue
            (c,) = classes
            have = predicted[c].neighbours
            if have != want:
                against += min(costs.multiplicity_per_h * abs(have - want), costs.multiplicity_cap)
                notes.append(f"1H {o.ppm:g} {o.multiplicity}: {have} neighbouring H predicted ({want} read)")
        rows = []
        placed = set()
        for r, o in enumerate(observed):
            classes = held.get(r, {})
            if not classes:
                rows.append(_h_row(o, None, 0, False))
            for c, units in sorted(classes.items()):
                placed.add(c)
                rows.append(_h_row(o, predicted[c], units, len(classes) > 1))
        for c, p in enumerate(predicted):
            if c not in placed:
                rows.append(_h_row(None, p, 0, False))
        return against, unexplained, rows, notes

    def _one_to_one(
        self, observed: Sequence[H1Signal], predicted: Sequence[ProtonShift], dev: np.ndarray
    ) -> tuple[dict[int, dict[int, int]], float, float]:
        """Without integrals: signals to classes one to one, leftover classes overlapping."""
        costs = self.tables.h1.costs
        pairs = assign(dev, costs, optional=[p.exchangeable for p in predicted])
        held: dict[int, dict[int, int]] = {}
        against = unexplained = 0.0
        for pair in pairs:
            against += pair.cost - (costs.overlap if pair.overlap else 0.0)
            unexplained += costs.overlap if pair.overlap else 0.0
            if pair.observed is not None and pair.predicted is not None:
                held.setdefault(pair.observed, {})[pair.predicted] = predicted[pair.predicted].hydrogens
        return held, against, unexplained

    def _by_integrals(
        self,
        observed: Sequence[H1Signal],
        predicted: Sequence[ProtonShift],
        dev: list[list[float]],
        dev_arr: np.ndarray,
        notes: list[str],
    ) -> tuple[dict[int, dict[int, int]], float, float]:
        """With integrals: every H of every class to one H of an observed signal (the signal's
        integral in H), by least total cost; a class's deviation cost is spread over its H. H the
        list does not hold, or integral the classes do not fill, cost ``integral_per_h`` each
        (exchangeable H may be missing at no cost)."""
        import numpy as np

        from .._scipy import linear_sum_assignment

        costs = self.tables.h1.costs
        total_h = sum(p.hydrogens for p in predicted)
        fixed_h = sum(p.hydrogens for p in predicted if not p.exchangeable)
        integral = sum(o.integral or 0.0 for o in observed)
        # integrals already in H (with or without the exchangeable H), else scaled to the H
        in_h = any(abs(integral - h) <= max(0.15 * h, 0.5) for h in (total_h, fixed_h))
        scale = 1.0 if in_h or integral <= 0 else total_h / integral
        slots = [max(1, round((o.integral or 0.0) * scale)) for o in observed]
        obs_units = [r for r, n in enumerate(slots) for _ in range(n)]
        pred_units = [c for c, p in enumerate(predicted) for _ in range(p.hydrogens)]
        n_o, n_p = len(obs_units), len(pred_units)
        size = n_o + n_p
        h_units = np.array([predicted[c].hydrogens for c in pred_units], dtype=float)
        big = np.zeros((size, size))
        rows_at, cols_at = np.array(obs_units, dtype=np.int64), np.array(pred_units, dtype=np.int64)
        big[:n_o, :n_p] = dev_arr[rows_at][:, cols_at] / h_units
        big[:n_o, n_p:] = costs.integral_per_h  # an observed H no class fills
        # an H with no signal
        big[n_o:, :n_p] = np.array([0.0 if predicted[c].exchangeable else costs.integral_per_h for c in pred_units])
        rows, cols = linear_sum_assignment(big)
        units: dict[int, dict[int, int]] = {}  # class -> signal -> H of it placed there
        for i, j in zip(rows, cols, strict=True):
            if i < n_o and j < n_p:
                c, r = pred_units[j], obs_units[i]
                units.setdefault(c, {})[r] = units.setdefault(c, {}).get(r, 0) + 1
        # each class whole to one signal: start from the signal that took most of its H, then
        # move or swap classes while that lowers the total (a class is one signal)
        n_obs = len(observed)
        place: list[int | None] = []
        for c in range(len(predicted)):
            where = units.get(c)
            place.append(max(where, key=lambda r: (where[r], -dev[r][c], -r)) if where else None)
        fill = [0] * n_obs
        for c, at in enumerate(place):
            if at is not None:
                fill[at] += predicted[c].hydrogens
        per_h = costs.integral_per_h

        def absent(c: int) -> float:
            return 0.0 if predicted[c].exchangeable else per_h * predicted[c].hydrogens

        _improve(
            place,
            fill,
            dev_arr,
            np.array([absent(c) for c in range(len(predicted))], dtype=float),
            [p.hydrogens for p in predicted],
            slots,
            per_h,
            rounds=4 * len(predicted) + 4,
        )
        held: dict[int, dict[int, int]] = {}
        against = 0.0
        missing = 0
        for c, at in enumerate(place):
            if at is None:
                against += absent(c)
                missing += 0 if predicted[c].exchangeable else predicted[c].hydrogens
                continue
            held.setdefault(at, {})[c] = predicted[c].hydrogens
            against += dev[at][c]
        off = sum(abs(slots[r] - fill[r]) for r in range(n_obs))
        against += per_h * off
        if off or missing:
            notes.append(f"1H integrals: {off} H apart from the H per signal, {missing} H with no signal")
        shared = sum(len(classes) - 1 for classes in held.values())
        return held, against, costs.overlap * shared

    def assess(self, subject: Subject, case: Case) -> Assessment:
        return self.finish(subject, case, self.begin(subject, case))

    def begin(self, subject: Subject, case: Case, *, enough: float = math.inf) -> Partial:
        """The 13C part (prediction and assignment): the 1H part only adds to it. With
        ``enough``, the classes are predicted type by type while a lower bound of the 13C
        ``against`` stays at or below it (:meth:`_carbon_bound`); once above, that bound is
        the (incomplete) part."""
        assert case.nmr is not None
        mol = subject.mol
        against = unexplained = 0.0
        rows: list = []
        prediction = None
        if case.nmr.c13 and enough < math.inf:
            for ranks in _bounding_ranks(subject):
                prediction = NmrPrediction(mol, self.tables, ranks=ranks)
                bound = self._carbon_bound(case.nmr.c13, prediction, enough)
                if bound is not None:
                    return Partial(bound, 0.0, complete=False)
        if prediction is None:
            prediction = NmrPrediction(mol, self.tables, ranks=subject.symmetry_ranks)
        if case.nmr.c13:
            against, unexplained, rows = self._carbon(case.nmr.c13, prediction.c13)
        return Partial(against, unexplained, (prediction, rows))

    def _carbon_bound(self, observed: Sequence[C13Signal], prediction: NmrPrediction, enough: float) -> float | None:
        """A lower bound above ``enough`` of the 13C ``against`` :meth:`_carbon` would give, or
        None when the bound stays at or below it with every class predicted (the prediction is
        then complete and kept).

        The bound is the value of a feasible dual of the assignment: each predicted class j
        takes v_j, its cheapest pair (a class left over overlaps exactly that signal), and each
        observed signal r takes u_r, the least of its pairs' costs less v_j, of
        ``extra_signal`` (it may be left over) and, for a class not yet predicted, of
        ``type_mismatch`` when the class has another DEPT type (else 0). Every pairing then
        costs at least Σu + Σv. The classes are predicted in DEPT-type blocks (C, CH, CH2, CH3):
        Σv grows with each, and u_r can exceed 0 only once the block of its type is complete,
        so the signals are added in at the end of each block."""
        costs = self.tables.c13.costs
        classes = prediction.c13_classes
        left = Counter(kind for _, kind in classes)
        order = sorted(range(len(classes)), key=lambda k: (_BLOCK_ORDER.get(classes[k][1], 4), k))
        signals = [(o.ppm, o.type) for o in observed]
        # per signal, the least of its pair costs less v_j over the classes predicted so far
        least = [math.inf] * len(signals)
        total_v = 0.0
        for k in order:
            shift = prediction.c13_class(k)
            sigma = max(shift.uncertainty / 2, 1e-6)
            column = [
                min(0.5 * ((ppm - shift.ppm) / sigma) ** 2, costs.deviation_cap)
                + (costs.type_mismatch if kind is not None and kind != shift.type else 0.0)
                for ppm, kind in signals
            ]
            v = min(column)
            least = [x if x <= c - v else c - v for x, c in zip(least, column, strict=True)]
            total_v += v
            left[shift.type] -= 1
            bound = total_v
            if left[shift.type] == 0:  # a block is complete: the signals' part
                waiting = sum(left.values())
                for r, (_, kind) in enumerate(signals):
                    if waiting and (kind is None or left[kind]):
                        continue  # a class still to come may pair with it at no cost
                    u = min(least[r], costs.extra_signal, costs.type_mismatch if waiting else math.inf)
                    bound += max(u, 0.0)
            # a margin for rounding (the assignment sums the same costs in another order)
            if bound - 1e-9 > enough:
                return bound - 1e-9
        return None

    def finish(self, subject: Subject, case: Case, partial: Partial) -> Assessment:
        assert case.nmr is not None
        assert partial.complete, "an incomplete part cannot be finished"
        nmr = case.nmr
        prediction, carbon_rows = partial.state
        against, unexplained = partial.against, partial.unexplained
        reasons: list[str] = []
        detail: dict[str, Any] = {}
        if nmr.c13:
            detail["c13"] = carbon_rows
            reasons.append(_summary("13C", carbon_rows, "ppm", len(prediction.c13)))
        if nmr.h1:
            a, u, rows, notes = self._proton(nmr.h1, prediction.h1)
            against += a
            unexplained += u
            detail["h1"] = rows
            reasons.append(_summary("1H", rows, "ppm", len(prediction.h1)))
            reasons += notes
        return Assessment(self.name, against, unexplained, tuple(reasons), detail)

    def floor(self, subject: Subject, case: Case) -> tuple[float, float]:
        """Lower bounds from the carbon symmetry classes alone, before any prediction: an
        observed 13C signal beyond the classes of its DEPT type, or beyond all the classes, is
        paired with a class of another type or left over, and costs at least the cheaper of the
        two; a class beyond the observed signals overlaps one (unexplained)."""
        nmr = case.nmr
        if nmr is None or not nmr.c13:
            return 0.0, 0.0
        classes = carbon_classes(subject.mol, subject.symmetry_ranks)
        have = Counter(kind for _, kind, _ in classes)
        typed = Counter(s.type for s in nmr.c13 if s.type is not None)
        beyond = max(sum(max(0, n - have[t]) for t, n in typed.items()), len(nmr.c13) - len(classes))
        costs = self.tables.c13.costs
        return (
            max(0, beyond) * min(costs.extra_signal, costs.type_mismatch),
            max(0, len(classes) - len(nmr.c13)) * costs.overlap,
        )

    def detail_lines(self, assessment: Assessment) -> list[str]:
        lines = []
        for nucleus, key in (("13C", "c13"), ("1H", "h1")):
            rows = assessment.detail.get(key)
            if not rows:
                continue
            lines.append(f"    {nucleus} assignment (observed / predicted ± uncertainty, deviation, environment):")
            for row in rows:
                obs = f"{row['observed_ppm']:7.2f}" if row["observed_ppm"] is not None else "      -"
                if row["predicted_ppm"] is None:
                    lines.append(f"      {obs}  -- no class left for this signal")
                    continue
                pred = f"{row['predicted_ppm']:7.2f} ± {row['uncertainty']:.2f}"
                dev = f"{row['deviation']:+6.2f}" if row["deviation"] is not None else "      "
                share = " (overlaps)" if row["overlap"] else ""
                what = row.get("type") or f"{row.get('hydrogens')}H"
                lines.append(f"      {obs}  {pred}  {dev}  {what} {row['environment']}{share}")
        return lines

    # ------------------------------------------------------------------ reading

    def read(self, case: Case) -> Reading | None:
        if case.nmr is None or not case.nmr.has_lists:
            return None
        nmr = case.nmr
        regions = self.tables.c13.regions
        lines = ["NMR reading (the tool's, from the lists alone; judge before copying into the case)"]
        data: dict[str, Any] = {}
        if nmr.c13:
            typed = [s for s in nmr.c13 if s.type is not None]
            dept = {k: sum(1 for s in typed if s.type == k) for k in MULTIPLICITIES}
            lines.append(f"  13C: {len(nmr.c13)} signals")
            if typed:
                text = ", ".join(f"{k} {n}" for k, n in dept.items())
                complete = " (every signal typed)" if len(typed) == len(nmr.c13) else " (signals typed so far)"
                lines.append(f"  DEPT: {text}{complete}; carbons of each type are at least these")
                data["dept_signals"] = dept
            windows = {k: [s.ppm for s in nmr.c13 if regions[k][0] <= s.ppm <= regions[k][1]] for k in CARBON_KINDS}
            data["windows"] = {k: len(v) for k, v in windows.items()}
            data["window_limits"] = {k: list(regions[k]) for k in CARBON_KINDS}
            carbonyls = []
            for s in sorted(nmr.c13, key=lambda s: -s.ppm):
                kind: str | None = None
                if s.ppm > 190:
                    kind = "aldehyde" if s.type == "CH" else "ketone" if s.type == "C" else "ketone or aldehyde"
                elif 160 <= s.ppm <= 185 and s.type in (None, "C"):
                    kind = "acid, ester or amide"
                if kind is not None:
                    carbonyls.append({"ppm": s.ppm, "kind": kind})
            data["carbonyl"] = carbonyls
            lines.append(
                "  carbonyl: " + (", ".join(f"{c['ppm']:g} ({c['kind']})" for c in carbonyls) or "none above 160 ppm")
            )
            lines.append(
                f"  sp2 window {regions['sp2'][0]:g}-{regions['sp2'][1]:g} ppm: {_signals(len(windows['sp2']))} "
                "(alkene and aromatic C; nitrile C also falls here)"
            )
            # the O/N-bearing window overlaps the alkyl one: only signals above the alkyl window
            # are certain (below it: alkyl, N-CH or a crowded quaternary C)
            het_low, het_high = regions["heteroatom_sp3"]
            top_alkyl = regions["alkyl"][1]
            certain = [p for p in windows["heteroatom_sp3"] if p > top_alkyl]
            shared = [p for p in windows["heteroatom_sp3"] if p <= top_alkyl]
            data["heteroatom_sp3_certain"] = len(certain)
            lines.append(
                f"  O/N-bearing sp3 C: {_signals(len(certain))} at {top_alkyl:g}-{het_high:g} ppm; "
                f"{_signals(len(shared))} at {het_low:g}-{top_alkyl:g} ppm that may be alkyl, N-CH or crowded "
                "quaternary C"
            )
        if nmr.h1:
            integrals = [s.integral for s in nmr.h1 if s.integral is not None]
            if integrals:
                total = sum(integrals)
                known = case.formula.known
                versus = f"; {known} has {known.get('H')} H" if known is not None else "; compare with the formula's H"
                lines.append(f"  1H: integrals sum to {total:g}{versus}")
                data["h1_integral_sum"] = total
            broad = [s.ppm for s in nmr.h1 if s.multiplicity is not None and s.multiplicity.startswith("br")]
            if broad:
                lines.append(
                    "  broad 1H signals (OH/NH? confirm by D2O exchange): " + ", ".join(f"{p:g}" for p in broad)
                )
            data["broad_h1"] = broad
        return Reading("NMR reading", tuple(lines), data)


def _signals(n: int) -> str:
    return f"{n} signal" + ("" if n == 1 else "s")


def _h_row(o: H1Signal | None, p: ProtonShift | None, units: int, shared: bool) -> dict[str, Any]:
    return {
        "observed_ppm": o.ppm if o else None,
        "integral": o.integral if o else None,
        "multiplicity": o.multiplicity if o else None,
        "predicted_ppm": p.ppm if p else None,
        "uncertainty": p.uncertainty if p else None,
        "hydrogens": p.hydrogens if p else None,
        "assigned_h": units,
        "neighbours": p.neighbours if p else None,
        "on_atoms": list(p.atoms) if p else [],
        "environment": p.environment if p else None,
        "deviation": round(o.ppm - p.ppm, 2) if o and p else None,
        "overlap": shared,
    }


def _summary(nucleus: str, rows: Sequence[Mapping[str, Any]], unit: str, classes: int) -> str:
    devs = [abs(r["deviation"]) for r in rows if r["deviation"] is not None]
    extra = sum(1 for r in rows if r["predicted_ppm"] is None)
    shared = sum(1 for r in rows if r["overlap"])
    text = f"{nucleus}: {classes} classes predicted"
    if devs:
        worst = max(rows, key=lambda r: abs(r["deviation"]) if r["deviation"] is not None else -1)
        text += (
            f", mean |dev| {sum(devs) / len(devs):.1f} {unit}, largest {worst['deviation']:+.1f} "
            f"at {worst['observed_ppm']:g} ({worst['environment']})"
        )
    if extra:
        text += f"; {extra} observed signal{'s' if extra > 1 else ''} more than the structure gives"
    if shared:
        text += f"; {shared} classes share a signal"
    return text
