"""Nominal-mass isotope clusters: simulation by convolution and comparison with observed peaks.

The cluster of a formula is the distribution of the number of extra neutrons over its atoms. Each
element's single-atom distribution (offsets from its lightest isotope, which for every element in
the table is also its most abundant one) is raised to the atom count by repeated convolution
(exponentiation by squaring) and the elements are convolved together, all in numpy.
Intensities are reported relative to the M peak (M = 100), the way a chemist reads M+1 and M+2.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ..elements import ElementTable, default_elements
from ..formula import Formula

__all__ = [
    "ClusterFit",
    "ClusterReading",
    "IsotopeTolerance",
    "ObservedCluster",
    "atom_count_distribution",
    "chi2_matrix",
    "cluster_matrix",
    "fit_cluster",
    "isotope_pattern",
    "read_cluster",
]


def _truncate(arr: np.ndarray, length: int) -> np.ndarray:
    return arr[:length] if arr.shape[0] > length else arr


def _atom_distribution(table: ElementTable, symbol: str) -> np.ndarray:
    el = table[symbol]
    first = el.isotopes[0].mass_number
    dist = np.zeros(el.isotopes[-1].mass_number - first + 1)
    for iso in el.isotopes:
        dist[iso.mass_number - first] = iso.abundance / 100.0
    return dist / dist.sum()


@lru_cache(maxsize=4096)
def atom_count_distribution(table: ElementTable, symbol: str, count: int, length: int) -> np.ndarray:
    """The extra-neutron distribution of ``count`` atoms of one element (offsets 0 to
    ``length`` - 1 above the lightest isotopes), by repeated squaring of the one-atom one."""
    base = _atom_distribution(table, symbol)
    result = np.ones(1)
    square = base
    n = count
    while n:
        if n & 1:
            result = _truncate(np.convolve(result, square), length)
        n >>= 1
        if n:
            square = _truncate(np.convolve(square, square), length)
    return result


def isotope_pattern(
    formula: Formula,
    table: ElementTable | None = None,
    *,
    max_offset: int = 8,
) -> np.ndarray:
    """Relative intensities of M, M+1, …, M+max_offset (nominal), with M = 100."""
    t = table or default_elements()
    length = max_offset + 1
    total = np.ones(1)
    for symbol, n in formula.counts:
        total = _truncate(np.convolve(total, atom_count_distribution(t, symbol, n, length)), length)
    out = np.zeros(length)
    out[: total.shape[0]] = total
    return out / out[0] * 100.0


def cluster_matrix(arr: np.ndarray, symbols: list[str], table: ElementTable, max_offset: int) -> np.ndarray:
    """Isotope clusters (M = 100) of many compositions at once (one row each, columns in the
    order of ``symbols``); the same numbers as :func:`isotope_pattern` row by row."""
    length = max_offset + 1
    total = np.zeros((arr.shape[0], length))
    total[:, 0] = 1.0
    for j, sym in enumerate(symbols):
        top = int(arr[:, j].max()) if arr.shape[0] else 0
        if top == 0:
            continue
        lut = np.zeros((top + 1, length))
        for n in range(top + 1):
            p = atom_count_distribution(table, sym, n, length)
            lut[n, : p.shape[0]] = p
        factor = lut[arr[:, j]]
        new = np.zeros_like(total)
        for i in range(length):
            new[:, i:] += total[:, i : i + 1] * factor[:, : length - i]
        total = new
    return total / total[:, :1] * 100.0


@dataclass(frozen=True)
class IsotopeTolerance:
    """How closely an observed ratio I(M+k)/I(M) (in % of M) must match.

    ``sigma = relative * predicted + absolute + reading * 100 / I(M)``, where ``I(M)`` is the
    molecular-ion intensity in % of base peak and ``reading`` the precision of a reported
    intensity (in % of base peak). A weak M+ therefore widens the window.
    """

    relative: float = 0.10
    absolute: float = 0.5
    reading: float = 0.05
    #: an unlisted M+k counts as observed 0 only when predicted above this many times the
    #: smallest intensity in the peak list (clearly above what the list reports)
    unlisted_factor: float = 2.0
    #: the most an unlisted M+k taken as observed 0 adds to chi-square (z² capped): a peak left
    #: out of the list is weaker evidence than a peak listed at the wrong height
    unlisted_cap: float = 9.0

    def unlisted_counts(
        self, predicted_in_spectrum: float, threshold: float, complete_above: float | None = None
    ) -> bool:
        """Whether an unlisted peak predicted at this intensity (% of base) counts as observed 0:
        above the level the list claims to be complete to, or clearly above its smallest peak."""
        if complete_above is not None and predicted_in_spectrum > complete_above:
            return True
        return predicted_in_spectrum > self.unlisted_factor * threshold

    def sigma(self, predicted: float, m_intensity: float) -> float:
        return self.relative * predicted + self.absolute + self.reading * 100.0 / m_intensity


@dataclass(frozen=True)
class ObservedCluster:
    """The isotope peaks at and above a nominal molecular ion, from a peak list.

    ``ratios`` maps offset k (1, 2, …) to I(M+k)/I(M) in percent for the peaks listed.
    ``threshold`` is the smallest intensity in the peak list (% of base peak): an unlisted
    M+k peak predicted clearly above it (see :class:`IsotopeTolerance`) is taken as observed 0.
    ``complete_above`` (% of base peak), when the list claims to hold every peak at or above
    that intensity: an unlisted M+k predicted above it is taken as observed 0.
    """

    nominal_mass: int
    m_intensity: float
    ratios: Mapping[int, float]
    threshold: float = 0.0
    complete_above: float | None = None

    @classmethod
    def from_peaks(
        cls,
        nominal_mass: int,
        peaks: Mapping[int, float],
        *,
        max_offset: int = 8,
        complete_above: float | None = None,
    ) -> ObservedCluster | None:
        """Build the cluster, or ``None`` when there is nothing to compare: M itself is not in the
        peak list, or no peak above it is and the list does not claim to be complete (a fit would
        then read 1 for every formula without having compared anything)."""
        m = peaks.get(nominal_mass)
        if not m:
            return None
        ratios = {k: peaks[nominal_mass + k] / m * 100.0 for k in range(1, max_offset + 1) if nominal_mass + k in peaks}
        if not ratios and complete_above is None:
            return None
        threshold = min(peaks.values()) if peaks else 0.0
        return cls(nominal_mass, float(m), ratios, float(threshold), complete_above)

    def describe(self) -> str:
        parts = ["M 100"] + [f"M+{k} {v:.1f}" for k, v in sorted(self.ratios.items())]
        return ", ".join(parts) + " (% of M+)"


@dataclass(frozen=True)
class ClusterFit:
    """Result of comparing one formula's predicted cluster with the observed one."""

    score: float  # exp(-chi2 / 2), 1 = perfect
    chi2: float
    predicted: tuple[float, ...]  # % of M for offsets 0..max_offset
    compared: tuple[tuple[int, float, float, float], ...] = field(default=())
    # (offset, observed %, predicted %, z) for every offset compared

    def worst(self) -> tuple[int, float, float, float] | None:
        return max(self.compared, key=lambda c: abs(c[3])) if self.compared else None


def chi2_matrix(
    predicted: np.ndarray,
    observed: ObservedCluster,
    tolerance: IsotopeTolerance = IsotopeTolerance(),
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Vectorized comparison of many predicted clusters (rows, M = 100) with one observed one.

    Returns ``(chi2, z, used)``: chi-square per row, and per row and offset the z value and
    whether that offset was compared. Offsets compared: every listed M+k, and every unlisted M+k
    whose predicted intensity in the spectrum (% of base) is clearly above the smallest listed
    intensity (``tolerance.unlisted_factor`` times it) or above the level the list claims to be
    complete to, taken as observed 0 (it would have been listed) with its z² capped at
    ``tolerance.unlisted_cap``: one missing peak costs a bounded amount.
    """
    pred = np.atleast_2d(predicted)[:, 1:]
    offsets = np.arange(1, pred.shape[1] + 1)
    listed = np.array([k in observed.ratios for k in offsets])
    obs = np.array([observed.ratios.get(int(k), 0.0) for k in offsets])
    in_spectrum = pred * observed.m_intensity / 100.0
    unlisted_used = in_spectrum > tolerance.unlisted_factor * observed.threshold
    if observed.complete_above is not None:
        unlisted_used |= in_spectrum > observed.complete_above
    unlisted_used &= bool(observed.ratios) or observed.complete_above is not None
    used = listed[None, :] | unlisted_used
    sigma = tolerance.relative * pred + tolerance.absolute + tolerance.reading * 100.0 / observed.m_intensity
    z = np.where(used, (obs[None, :] - pred) / sigma, 0.0)
    z2 = np.where(listed[None, :], z * z, np.minimum(z * z, tolerance.unlisted_cap))
    return z2.sum(axis=1), z, used


def fit_cluster(
    predicted: np.ndarray,
    observed: ObservedCluster,
    tolerance: IsotopeTolerance = IsotopeTolerance(),
) -> ClusterFit:
    """Compare one predicted cluster (M = 100) with the observed ratios; see :func:`chi2_matrix`."""
    chi2, z, used = chi2_matrix(predicted, observed, tolerance)
    compared = tuple(
        (k + 1, float(observed.ratios.get(k + 1, 0.0)), float(predicted[k + 1]), float(z[0, k]))
        for k in range(used.shape[1])
        if used[0, k]
    )
    return ClusterFit(
        score=float(np.exp(-0.5 * chi2[0])),
        chi2=float(chi2[0]),
        predicted=tuple(float(x) for x in predicted),
        compared=compared,
    )


# ------------------------------------------------------------------ reading a cluster by eye


@dataclass(frozen=True)
class ClusterReading:
    """What the M+1 / M+2 / M+4 peaks say on their own, as a chemist reads them."""

    heavy_atoms: str  # e.g. "Cl1", "Br2", "S1", "none" or "Cl1 (or Br1)"
    heavy_fit: float
    carbon_estimate: float | None
    carbon_range: tuple[int, int] | None
    notes: tuple[str, ...]
    #: the best-read heavy-atom set (empty: none), None when the M+2 pattern could not be read
    heavy_counts: Mapping[str, int] | None = None
    #: the pattern reads as a heavy-atom set the element limits rule out (also in ``notes``)
    excluded_reading: str | None = None


def _label(counts: Mapping[str, int]) -> str:
    return " ".join(f"{s}{n}" for s, n in counts.items()) or "none"


def read_cluster(
    observed: ObservedCluster,
    table: ElementTable | None = None,
    tolerance: IsotopeTolerance = IsotopeTolerance(),
    *,
    allowed: Mapping[str, tuple[int, int]] | None = None,
    heavy_sets: Sequence[Mapping[str, int]] | None = None,
) -> ClusterReading:
    """Read the M+2/M+4 pattern for Cl, Br, S and Si, and M+1 for the carbon count.

    The M+2 pattern is compared with the even-offset clusters of each heavy-atom set on a
    nominal C6 skeleton; the carbon estimate is M+1 (after removing the heavy atoms'
    contributions) divided by the per-carbon 13C contribution, 1.0816 % with the table's
    abundances, with the range given by the M+1 tolerance. ``heavy_sets``: the heavy-atom sets
    compared (default: ``isotope_reading`` in formula_rules.yaml).
    """
    t = table or default_elements()
    if heavy_sets is None:
        from .rules import default_rules  # the rules table reads this module's tolerance type

        heavy_sets = default_rules().heavy_sets
    notes: list[str] = []
    best: tuple[float, str] = (-1.0, "none")
    scores: list[tuple[float, str, dict[str, int]]] = []
    excluded: list[tuple[float, str, str]] = []  # sets the element limits rule out: fit, label, why
    conflict: str | None = None
    even = {k: v for k, v in observed.ratios.items() if k % 2 == 0}
    for heavy in heavy_sets:
        beyond = [s for s, n in heavy.items() if allowed is not None and allowed.get(s, (0, 0))[1] < n]
        pattern = isotope_pattern(Formula.of({"C": 6, **heavy}), t, max_offset=8)
        chi2 = 0.0
        used = 0
        for k in (2, 4, 6):
            pred = float(pattern[k])
            if k in even:
                obs = even[k]
            elif (observed.ratios or observed.complete_above is not None) and tolerance.unlisted_counts(
                pred * observed.m_intensity / 100.0, observed.threshold, observed.complete_above
            ):
                obs = 0.0
            else:
                continue
            sigma = tolerance.sigma(pred, observed.m_intensity) + 0.5  # skeleton unknown: looser
            chi2 += ((obs - pred) / sigma) ** 2
            used += 1
        if used and beyond:
            assert allowed is not None
            most = {sym: allowed.get(sym, (0, 0))[1] for sym in beyond}
            why = ", ".join(f"excludes {sym}" if n == 0 else f"allows at most {n} {sym}" for sym, n in most.items())
            excluded.append((float(np.exp(-0.5 * chi2)), _label(heavy), why))
        elif used:
            scores.append((float(np.exp(-0.5 * chi2)), _label(heavy), dict(heavy)))
    heavy_counts: dict[str, int] = {}
    if scores:
        scores.sort(key=lambda s: (-s[0], s[1]))
        best = (scores[0][0], scores[0][1])
        heavy_counts = scores[0][2]
        if len(scores) > 1 and scores[1][0] > 0.5 * scores[0][0] and scores[1][0] > 0.05:
            best = (best[0], f"{scores[0][1]} (or {scores[1][1]})")
        if 2 in observed.ratios:
            notes.append(f"M+2 = {observed.ratios[2]:.1f} % of M+: best read as {best[1]}")
            # a pattern the element limits rule out, read far better than any they allow
            if excluded:
                fit, label, why = min(excluded, key=lambda e: (-e[0], e[1]))
                if fit > 0.5 and fit > 4 * best[0]:
                    conflict = (
                        f"M+2 = {observed.ratios[2]:.1f} % of M+ reads as {label} (fit {fit:.2f}), but "
                        f"formula.elements {why}; the best reading it allows is {best[1]} (fit {best[0]:.2f}): "
                        "widen formula.elements, or check the peak list"
                    )
                    notes.append(conflict)
    else:
        notes.append("no M+2 peak listed: halogens and sulfur cannot be read from the cluster")

    carbon: float | None = None
    c_range: tuple[int, int] | None = None
    if 1 in observed.ratios:
        heavy_m1 = float(isotope_pattern(Formula.of(heavy_counts), t, max_offset=1)[1]) if heavy_counts else 0.0
        per_c = float(isotope_pattern(Formula.of({"C": 1}), t, max_offset=1)[1])
        m1 = observed.ratios[1] - heavy_m1
        sigma = tolerance.sigma(max(m1, 0.0), observed.m_intensity)
        if m1 + sigma < per_c:  # below what even one carbon gives, after the heavy atoms' share
            besides = f" above the {heavy_m1:.2f} % of {best[1]}" if heavy_m1 else ""
            notes.append(
                f"M+1 = {observed.ratios[1]:.1f} % of M+: too low to read a carbon count "
                f"(one C alone gives {per_c:.2f} %{besides})"
            )
        else:
            carbon = max(m1, 0.0) / per_c
            low = max(0, int(np.floor((m1 - sigma) / per_c)))
            high = max(low, int(np.ceil((m1 + sigma) / per_c)))
            c_range = (low, high)
            notes.append(
                f"M+1 = {observed.ratios[1]:.1f} % of M+: about {carbon:.1f} C at {per_c:.2f} % per C "
                f"(range {low}-{high}; H, N and O add a little)"
            )
    return ClusterReading(
        best[1], best[0], carbon, c_range, tuple(notes), heavy_counts if scores else None, excluded_reading=conflict
    )
