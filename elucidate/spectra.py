"""Spectrum import: IR and EI mass spectra from JCAMP-DX (IUPAC's open exchange format, read
with the ``jcamp`` package) or two-column CSV, turned into the band and peak lists a case file
holds.

Peak picking, documented so a reviewer can repeat it:

- **IR.** Transmittance (JCAMP ``YUNITS`` says so, or, without units, the baseline (the median)
  lies nearer the top of the trace than the bottom) is turned into absorbance,
  A = -log10(T) with T as a fraction (percent divided by 100). Bands are the local maxima of A
  whose topographic prominence is at least ``prominence`` (default 5 %) of the trace's absorbance
  range (:func:`scipy.signal.find_peaks`), between 4000 and 400 cm-1, rounded to 1 cm-1.
  Strength from the prominence relative to the strongest band: strong from 0.5, medium from
  0.2, weak below (common practice for s/m/w labels).
- **MS.** A peak table (JCAMP ``PEAK TABLE`` or sparse CSV: points more than 0.5 apart) is taken
  as centroids. Profile data (points closer than 0.5 m/z) is centroided: each local maximum whose
  prominence is at least ``min_percent`` of the base peak's height gives one centroid, the
  intensity-weighted mean m/z of its points above half its height, with its height as intensity.
  Centroids are rounded to nominal m/z (sums when two fall on one), scaled to the base peak =
  100, and those below ``min_percent`` (default 0.1 %) are dropped.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import ElucidateError
from .yamlnodes import read_text_file

__all__ = ["KINDS", "ImportedSpectrum", "bands_text", "peaks_text", "pick", "read_spectrum"]

#: what a spectrum can be
KINDS = ("ir", "ms")
_JCAMP = (".jdx", ".dx", ".jcamp", ".jcm")
_TABLE = (".csv", ".txt", ".tsv")
IR_RANGE = (400.0, 4000.0)


@dataclass(frozen=True)
class Trace:
    """The x and y values of a spectrum as read, and what they are."""

    kind: str  # "ir" or "ms"
    x: np.ndarray
    y: np.ndarray
    y_units: str  # "transmittance", "absorbance" or "intensity"
    centroided: bool  # MS: already a peak table


@dataclass(frozen=True)
class ImportedSpectrum:
    kind: str
    source: str
    peaks: dict[int, float]  # MS: nominal m/z -> % of base peak
    bands: tuple[tuple[float, str], ...]  # IR: (cm-1, strength), highest wavenumber first
    method: str  # how they were picked, in words


def _units(text: str) -> str:
    t = text.lower()
    if "transm" in t or t.strip() in ("%t", "t"):
        return "transmittance"
    if "absorb" in t:
        return "absorbance"
    return ""


def _guess_kind(header: str, x: np.ndarray) -> str | None:
    h = header.lower()
    if any(k in h for k in ("infrared", "cm-1", "cm^-1", "1/cm", "wavenumber")):
        return "ir"
    if any(k in h for k in ("mass", "m/z", "abundance")):
        return "ms"
    return None


def _read_jcamp(path: str, text: str) -> tuple[np.ndarray, np.ndarray, str, str, bool]:
    import jcamp

    if "##" not in text:
        raise ElucidateError("not a JCAMP-DX file (no ##LABEL= lines)", file=path)
    try:
        data = jcamp.read(io.StringIO(text))
    except Exception as exc:  # the reader raises many kinds on malformed files
        raise ElucidateError(f"not a readable JCAMP-DX file: {type(exc).__name__}: {exc}", file=path) from exc
    if "x" not in data or "y" not in data:
        raise ElucidateError("the JCAMP-DX file holds no XYDATA or PEAK TABLE block", file=path)
    x = np.asarray(data["x"], dtype=float)
    y = np.asarray(data["y"], dtype=float)
    header = " ".join(str(data.get(k, "")) for k in ("data type", "xunits", "yunits", "title"))
    centroided = "peak" in str(data.get("data class", "")).lower() or "peak table" in data
    return x, y, header, _units(str(data.get("yunits", ""))), centroided


def _read_table(path: str, text: str) -> tuple[np.ndarray, np.ndarray, str, str, bool]:
    sample = text[:4096]
    try:
        dialect: type[csv.Dialect] | csv.Dialect = csv.Sniffer().sniff(sample, delimiters=",;\t ")
    except csv.Error:
        dialect = csv.excel
    xs: list[float] = []
    ys: list[float] = []
    header = ""
    for number, row in enumerate(csv.reader(io.StringIO(text), dialect), start=1):
        cells = [c.strip() for c in row if c.strip()]
        if not cells or cells[0].startswith("#"):
            continue
        if len(cells) < 2:
            raise ElucidateError(f"expected two columns (x, y), found {len(cells)}", file=path, line=number)
        try:
            x, y = float(cells[0]), float(cells[1])
        except ValueError as exc:
            if not xs and not header:
                header = " ".join(cells)  # a header row
                continue
            raise ElucidateError(
                f"expected two numbers, found {cells[0]!r}, {cells[1]!r}", file=path, line=number
            ) from exc
        if not (math.isfinite(x) and math.isfinite(y)):
            raise ElucidateError("expected finite numbers", file=path, line=number)
        xs.append(x)
        ys.append(y)
    x_arr, y_arr = np.asarray(xs), np.asarray(ys)
    gaps = np.diff(np.sort(x_arr)) if len(x_arr) > 1 else np.array([1.0])
    return x_arr, y_arr, header, _units(header), bool(np.median(gaps) > 0.5)


def read_spectrum(path: str | Path, *, kind: str | None = None) -> Trace:
    """Read one spectrum file (JCAMP-DX by suffix .jdx/.dx/.jcamp, else two-column CSV)."""
    name = str(path)
    if kind is not None and kind not in KINDS:
        raise ElucidateError(f"unknown spectrum kind {kind!r}; known: {', '.join(KINDS)}")
    suffix = Path(name).suffix.lower()
    if suffix not in _JCAMP + _TABLE:
        raise ElucidateError(
            f"unknown spectrum file type {suffix or '(none)'!r}; known: {', '.join(_JCAMP + _TABLE)}", file=name
        )
    text = read_text_file(path)
    reader = _read_jcamp if suffix in _JCAMP else _read_table
    x, y, header, units, centroided = reader(name, text)
    if len(x) < 1 or len(x) != len(y):
        raise ElucidateError("no data points", file=name)
    found = kind or _guess_kind(header, x)
    if found is None:
        raise ElucidateError("cannot tell an IR from a mass spectrum here: give --kind ir or --kind ms", file=name)
    order = np.argsort(x)
    return Trace(found, x[order], y[order], units or ("intensity" if found == "ms" else ""), centroided)


def _absorbance(t: Trace) -> tuple[np.ndarray, str]:
    y = t.y
    units = t.y_units
    if units not in ("transmittance", "absorbance"):
        # no units: transmittance when the baseline (median) lies nearer the top than the bottom
        low, high = float(np.min(y)), float(np.max(y))
        units = "transmittance" if np.median(y) - low > high - np.median(y) else "absorbance"
    if units == "absorbance":
        return y, "absorbance as given"
    fraction = y / 100.0 if np.max(y) > 1.5 else y
    return -np.log10(np.clip(fraction, 1e-6, None)), "transmittance turned into absorbance, A = -log10(T)"


def pick(trace: Trace, *, source: str, prominence: float = 0.05, min_percent: float = 0.1) -> ImportedSpectrum:
    """Bands or peaks of ``trace`` by the documented method (module docstring)."""
    from scipy.signal import find_peaks

    if not 0 < prominence < 1:
        raise ElucidateError(f"prominence must be between 0 and 1 (a fraction), got {prominence}")
    if trace.kind == "ir":
        a, how = _absorbance(trace)
        keep = (trace.x >= IR_RANGE[0]) & (trace.x <= IR_RANGE[1])
        x, a = trace.x[keep], a[keep]
        if len(x) < 3:
            raise ElucidateError("fewer than 3 points between 4000 and 400 cm-1: not an IR trace")
        span = float(np.max(a) - np.min(a)) or 1.0
        index, props = find_peaks(a, prominence=prominence * span)
        proms = props["prominences"]
        top = float(np.max(proms)) if len(proms) else 1.0
        bands = []
        for i, p in zip(index, proms, strict=True):
            strength = "strong" if p >= 0.5 * top else "medium" if p >= 0.2 * top else "weak"
            bands.append((float(round(x[i])), strength))
        bands.sort(key=lambda b: -b[0])
        method = f"{how}; local maxima with prominence >= {prominence:.0%} of the absorbance range"
        return ImportedSpectrum("ir", source, {}, tuple(bands), method)
    x, y = trace.x, np.clip(trace.y, 0.0, None)
    if float(np.max(y)) <= 0:
        raise ElucidateError("the mass spectrum has no positive intensity")
    centroids: list[tuple[float, float]] = []
    if trace.centroided:
        centroids = [(float(a), float(b)) for a, b in zip(x, y, strict=True) if b > 0]
        method = "peak table taken as centroids"
    else:
        index, _ = find_peaks(np.concatenate(([0.0], y, [0.0])), prominence=min_percent / 100 * float(np.max(y)))
        for i in index - 1:
            half = y[i] / 2
            lo = i
            while lo > 0 and y[lo - 1] >= half and y[lo - 1] <= y[lo]:
                lo -= 1
            hi = i
            while hi < len(y) - 1 and y[hi + 1] >= half and y[hi + 1] <= y[hi]:
                hi += 1
            w = y[lo : hi + 1]
            centroids.append((float(np.sum(x[lo : hi + 1] * w) / np.sum(w)), float(y[i])))
        method = (
            f"profile centroided: maxima with prominence >= {min_percent:g}% of the base peak, intensity-weighted "
            "m/z above half height"
        )
    nominal: dict[int, float] = {}
    for mz, height in centroids:
        if mz >= 0.5:
            nominal[round(mz)] = nominal.get(round(mz), 0.0) + height
    base = max(nominal.values(), default=0.0)
    if base <= 0:
        raise ElucidateError("no peak at m/z 1 or above")
    peaks = {mz: round(100.0 * h / base, 1) for mz, h in sorted(nominal.items()) if 100.0 * h / base >= min_percent}
    return ImportedSpectrum(
        "ms", source, peaks, (), method + f"; nominal m/z, base peak = 100, below {min_percent:g}% dropped"
    )


def peaks_text(spectrum: ImportedSpectrum) -> str:
    """The ``peaks:`` line of a case file's mass_spec section."""
    body = ", ".join(f"{mz}: {v:g}" for mz, v in sorted(spectrum.peaks.items(), reverse=True))
    return f"  peaks: {{{body}}}\n"


def bands_text(spectrum: ImportedSpectrum) -> str:
    """The ``bands:`` block of a case file's infrared section."""
    lines = ["  bands:"] + [f"    - {{at: {at:g}, strength: {s}}}" for at, s in spectrum.bands]
    return "\n".join(lines) + "\n"
