"""Case files, version 1: loading and strict validation.

A case file describes one unknown (see ``docs/case-format.md``). :func:`load_case` reads it with
the safe YAML loader, checks every key and value, cross-checks the sections against each other,
and returns a frozen :class:`Case`. Any problem raises :class:`~elucidate.errors.ElucidateError`
naming the file, line and key. Case files are only ever read, never written.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from .defaults import ELEMENT_RATIOS, EXACT_MASS_KINDS, EXACT_MASS_OF, PPM_TOLERANCE, RATIO_LEVELS
from .elements import ElementTable, default_elements
from .errors import ElucidateError
from .formula import Formula, parse_formula, ppm_error
from .yamlnodes import (
    Located,
    as_bool,
    as_choice,
    as_int,
    as_list,
    as_number,
    as_range,
    as_str,
    check_gap,
    mapping,
    parse_range_text,
    parse_yaml,
    read_yaml_file,
)

if TYPE_CHECKING:
    from ._rdkit import Mol

__all__ = [
    "CARBON_KINDS",
    "IONIZATIONS",
    "MULTIPLET_CODES",
    "NMR_SOLVENTS",
    "SCHEMA_VERSION",
    "SOLVENTS",
    "C13Signal",
    "Case",
    "FormulaSpec",
    "H1Signal",
    "IRBand",
    "Infrared",
    "MassSpec",
    "Nmr",
    "StructureSpec",
    "UvVis",
    "base_peak_problem",
    "intensity_problem",
    "isotope_span",
    "load_case",
    "multiplet_lines",
    "mz_problem",
    "parse_case",
    "parse_multiplet",
]

SCHEMA_VERSION = 1
IONIZATIONS = ("EI",)
STRENGTHS = ("strong", "medium", "weak")
SHAPES = ("broad", "sharp")
SOLVENTS = (
    "ethanol",
    "methanol",
    "water",
    "chloroform",
    "dioxane",
    "diethyl_ether",
    "hexane",
    "cyclohexane",
    "acetonitrile",
)
MULTIPLICITIES = ("CH3", "CH2", "CH", "C")
NMR_SOLVENTS = ("CDCl3", "CD2Cl2", "C6D6", "acetone-d6", "CD3CN", "CD3OD", "DMSO-d6", "D2O")
#: 1H multiplet codes, the trade's usual abbreviations: lines per coupling
MULTIPLET_LINES = {"s": 1, "d": 2, "t": 3, "q": 4, "quint": 5, "sext": 6, "sept": 7}
#: codes offered in "did you mean" messages (any run of d/t/q up to 3 letters is also read)
MULTIPLET_CODES = (
    "s",
    "d",
    "t",
    "q",
    "quint",
    "sext",
    "sept",
    "m",
    "dd",
    "dt",
    "td",
    "ddd",
    "dq",
    "qd",
    "tt",
    "br",
    "br s",
    "br d",
    "br t",
)
#: structural carbon kinds that c13_regions counts (their shift windows: constraints/nmr13c.yaml)
CARBON_KINDS = ("carbonyl", "sp2", "sp", "heteroatom_sp3", "alkyl")
_SLUG = re.compile(r"^[a-z0-9][a-z0-9_.-]{0,63}$")
_GROUP = re.compile(r"^[a-z][a-z0-9_]*$")


@dataclass(frozen=True)
class MassSpec:
    ionization: str = "EI"
    molecular_ion: int | None = None  # nominal m/z of M+.; None = unknown / absent
    exact_mass: float | None = None  # measured m/z (HRMS)
    exact_mass_of: str = EXACT_MASS_OF  # "ion": m/z of M+. (electron removed); "neutral": neutral mass
    mass_tolerance_ppm: float = PPM_TOLERANCE
    peaks: Mapping[int, float] = field(default_factory=dict)  # m/z -> % of base peak
    #: the list holds every peak at or above this intensity (% of base peak); None: not claimed
    complete_above: float | None = None

    @property
    def base_peak(self) -> int | None:
        if not self.peaks:
            return None
        return min(mz for mz, v in self.peaks.items() if v == max(self.peaks.values()))


@dataclass(frozen=True)
class FormulaSpec:
    known: Formula | None = None
    elements: Mapping[str, tuple[int, int]] | None = None  # None = the table's defaults
    dbe: tuple[int, int] | None = None
    element_ratios: str = ELEMENT_RATIOS
    enforce_ratios: bool = False  # the element-ratio rules eliminate instead of demoting
    #: the line of ``elements`` in the case file (for checks made after loading)
    elements_line: int | None = field(default=None, compare=False, repr=False)


@dataclass(frozen=True)
class IRBand:
    at: float  # cm-1
    strength: str | None = None
    shape: str | None = None


@dataclass(frozen=True)
class Infrared:
    bands: tuple[IRBand, ...] = ()
    require: tuple[str, ...] = ()
    forbid: tuple[str, ...] = ()


@dataclass(frozen=True)
class UvVis:
    lambda_max: tuple[float, float] | None = None  # the main maximum (low, high) nm; None = none > 210 nm
    solvent: str = "ethanol"
    others: tuple[tuple[float, float], ...] = ()  # further maxima, weaker first listed last


@dataclass(frozen=True)
class C13Signal:
    """One observed 13C signal: its shift and, from DEPT, the carbon type (None: not measured)."""

    ppm: float
    type: str | None = None  # CH3, CH2, CH or C


@dataclass(frozen=True)
class H1Signal:
    """One observed 1H signal: shift, relative integral, multiplicity code and couplings."""

    ppm: float
    integral: float | None = None
    multiplicity: str | None = None  # a code from MULTIPLET_CODES (normalised: "br s", "dd", ...)
    j_hz: tuple[float, ...] = ()


@dataclass(frozen=True)
class Nmr:
    c13_signals: int | None = None  # observed 13C signal count (from c13 when that is listed)
    c13_multiplicity: Mapping[str, int] | None = None  # DEPT signal counts per type
    solvent: str | None = None
    c13: tuple[C13Signal, ...] = ()
    h1: tuple[H1Signal, ...] = ()
    #: carbons (not signals) carrying 3, 2, 1 and 0 H, in the order of MULTIPLICITIES: hard
    carbon_types: tuple[int, int, int, int] | None = None
    exchangeable_h: tuple[int, int] | None = None  # H on O and N (D2O exchange), low-high: hard
    c13_regions: Mapping[str, tuple[int, int]] | None = None  # carbons per kind (CARBON_KINDS): hard

    @property
    def has_lists(self) -> bool:
        """Whether shift lists were given (scored by assignment) rather than counts only."""
        return bool(self.c13 or self.h1)


@dataclass(frozen=True)
class StructureSpec:
    require_smarts: tuple[str, ...] = ()
    forbid_smarts: tuple[str, ...] = ()
    suspects: tuple[str, ...] = ()


@dataclass(frozen=True)
class SolveOptions:
    """The case's own choices for ``solve`` (the command line overrides them); None: the default."""

    formulas: int | None = None  # formulas kept per molecular ion
    limit: int | None = None  # largest estimated structure space enumerated per formula
    worse_formulas: bool | None = None  # also solve formulas ranked below one skipped for size


@dataclass(frozen=True)
class Case:
    path: str
    id: str
    title: str
    schema: int = SCHEMA_VERSION
    notes: str = ""
    mass_spec: MassSpec | None = None
    formula: FormulaSpec = field(default_factory=FormulaSpec)
    infrared: Infrared | None = None
    uv_vis: UvVis | None = None
    nmr: Nmr | None = None
    structure: StructureSpec | None = None
    solve: SolveOptions = field(default_factory=lambda: SolveOptions())
    #: things the file says that are allowed but worth a second look, each placed by file:line: key
    warnings: tuple[str, ...] = field(default=(), compare=False)


# ------------------------------------------------------------------ sections

_TOP = ("schema", "id", "title", "notes", "mass_spec", "formula", "infrared", "uv_vis", "nmr", "structure", "solve")


def isotope_span(limits: Mapping[str, tuple[int, int]]) -> int:
    """How far above M an isotope peak of a formula within ``limits`` can reach (nominal).

    Each Cl, Br, S or Si may add 2 (37Cl, 81Br, 34S, 30Si); 4 more covers 13C, 18O and their
    combinations, which stay below 0.1 % of M beyond that for organic formulas (common practice).
    """
    return 2 * sum(limits.get(s, (0, 0))[1] for s in ("Cl", "Br", "S", "Si")) + 4


def mz_problem(mz: object, *, what: str = "m/z") -> str | None:
    """What is wrong with a peak's m/z (a whole, positive nominal value up to MAX_MZ), or None."""
    if isinstance(mz, bool) or not isinstance(mz, int) or mz < 1:
        hint = " (nominal m/z only: round to a whole number)" if isinstance(mz, float) else ""
        return f"expected a whole, positive {what}; got {mz!r}{hint}"
    if mz > MAX_MZ:
        # str() of an int past Python's digit limit raises: count digits from the bit length
        digits = len(str(mz)) if mz < 10**100 else int(mz.bit_length() * math.log10(2)) + 1
        shown = f"{mz}" if mz < 10**12 else f"a number of {'about ' if mz >= 10**100 else ''}{digits} digits"
        return f"expected {what} from 1 to {MAX_MZ:,} (the range this version reads); got {shown}"
    return None


#: what a peak intensity is
INTENSITY = "an intensity from 0 to 100 (% of base peak)"
#: the largest nominal m/z read, and the most peaks in one spectrum (low-resolution EI of small
#: organic molecules: m/z 1-5000 is far beyond what the formula stage handles)
MAX_MZ = 5000
MAX_PEAKS = 1000


def intensity_problem(value: object) -> str | None:
    """What is wrong with a peak intensity (% of base peak, 0-100), or None."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return f"expected {INTENSITY}; got {value!r}"
    if not math.isfinite(value) or not 0 <= value <= 100:
        return f"expected {INTENSITY}; got {value!r}"
    return None


def base_peak_problem(intensities: Iterable[float]) -> str | None:
    """Intensities are % of the base peak, so the largest must be 100; None when it is."""
    values = list(intensities)
    if values and max(values) != 100:
        return f"intensities are % of the base peak, so the largest must be 100; the largest is {max(values):g}"
    return None


def _mass_spec(loc: Located) -> tuple[MassSpec, dict[str, Located]]:
    body = mapping(
        loc,
        ["ionization", "molecular_ion", "exact_mass", "exact_mass_of", "mass_tolerance_ppm", "peaks", "complete_above"],
    )
    ionization = "EI"
    if "ionization" in body:
        ionization = as_choice(body["ionization"], IONIZATIONS, what="an ionization method this version handles:")
    molecular_ion: int | None = None
    if "molecular_ion" in body:
        m = body["molecular_ion"]
        if m.value is None:
            raise m.error("no value; write the nominal m/z of M+. (e.g. 134), or unknown when it is not seen")
        if m.value == "unknown":
            molecular_ion = None
        else:
            molecular_ion = as_int(
                m, minimum=1, maximum=5000, what="the nominal m/z of M+. (a whole number 1-5000) or 'unknown'"
            )
    exact = None
    if "exact_mass" in body:
        exact = as_number(body["exact_mass"], minimum=0, exclusive_minimum=True, what="a measured m/z above 0")
    exact_of = EXACT_MASS_OF
    if "exact_mass_of" in body:
        exact_of = as_choice(body["exact_mass_of"], EXACT_MASS_KINDS, what="one of")
    ppm = PPM_TOLERANCE
    if "mass_tolerance_ppm" in body:
        if exact is None:
            raise body["mass_tolerance_ppm"].error("given without exact_mass; add exact_mass or remove it")
        ppm = as_number(
            body["mass_tolerance_ppm"],
            minimum=0,
            exclusive_minimum=True,
            maximum=1000,
            what="a tolerance in ppm (above 0, at most 1000)",
        )
    if exact is not None:
        where = body["exact_mass"]
        if molecular_ion is None:
            raise where.error("exact_mass needs the nominal molecular_ion as well")
        if abs(exact - molecular_ion) >= 1.0:
            raise where.error(f"exact mass {exact} cannot belong to a molecular ion at nominal m/z {molecular_ion}")
    peaks: dict[int, float] = {}
    if "peaks" in body:
        ploc = body["peaks"]
        if not isinstance(ploc.value, dict):
            raise ploc.error("expected a mapping of m/z to intensity (% of base peak), e.g. {120: 30, 105: 100}")
        if len(ploc.value) > MAX_PEAKS:
            raise ploc.error(
                f"{len(ploc.value):,} peaks; a low-resolution EI spectrum is read as at most {MAX_PEAKS:,} peaks "
                "(keep those above the noise, e.g. 0.1 % of the base peak)"
            )
        for mz, vloc in ploc.value.items():
            problem = mz_problem(mz, what="m/z as the key")
            if problem is not None:
                raise ElucidateError(problem, file=vloc.file, line=vloc.line, key=vloc.key)
            peaks[mz] = as_number(vloc, minimum=0, maximum=100, what=INTENSITY)
        problem = base_peak_problem(peaks.values())
        if problem is not None:
            raise ploc.error(problem)
    complete = None
    if "complete_above" in body:
        complete = as_number(body["complete_above"], minimum=0, maximum=100, what=INTENSITY)
        if "peaks" not in body:
            raise body["complete_above"].error("given without peaks; add the peak list or remove it")
    ms = MassSpec(ionization, molecular_ion, exact, exact_of, ppm, dict(sorted(peaks.items())), complete)
    return ms, body


def _formula_spec(loc: Located, table: ElementTable) -> tuple[FormulaSpec, dict[str, Located]]:
    body = mapping(loc, ["known", "elements", "dbe", "element_ratios", "enforce_element_ratios"])
    known = None
    if "known" in body:
        text = as_str(body["known"], what="a molecular formula such as C8H8O")
        try:
            known = parse_formula(text, table)
        except ElucidateError as exc:
            raise body["known"].error(exc.message) from exc
        dbe = known.dbe(table)
        if dbe < 0 or dbe.denominator != 1:
            raise body["known"].error(
                f"{known} has DBE {dbe}: not a neutral closed-shell molecule (with the usual valences)"
            )
    elements = None
    if "elements" in body:
        eloc = body["elements"]
        if not isinstance(eloc.value, dict) or not eloc.value:
            raise eloc.error("expected a mapping of element symbol to count or range, e.g. {C: 0-20, H: 0-40}")
        elements = {}
        for sym, rloc in eloc.value.items():
            check_gap(rloc)
            if not isinstance(sym, str) or sym not in table:
                raise ElucidateError(
                    f"unknown element {sym!r}; known elements: {', '.join(table.symbols)}",
                    file=rloc.file,
                    line=rloc.line,
                    key=rloc.key,
                )
            elements[sym] = as_range(rloc)
        elements = {s: elements[s] for s in table.symbols if s in elements}
    dbe_range = as_range(body["dbe"], what="a DBE value or range such as 0-20") if "dbe" in body else None
    ratios = ELEMENT_RATIOS
    if "element_ratios" in body:
        ratios = as_choice(body["element_ratios"], RATIO_LEVELS, what="one of")
    enforce = as_bool(body["enforce_element_ratios"]) if "enforce_element_ratios" in body else False
    if known is not None and elements is not None:
        for sym, n in known.counts:
            low, high = elements.get(sym, (0, 0))
            if not low <= n <= high:
                raise body["known"].error(f"{known} has {n} {sym}, outside formula.elements ({sym}: {low}-{high})")
    if known is not None and dbe_range is not None:
        dbe = known.dbe(table)
        if not dbe_range[0] <= dbe <= dbe_range[1]:
            raise body["known"].error(f"{known} has DBE {dbe}, outside formula.dbe {dbe_range[0]}-{dbe_range[1]}")
    line = body["elements"].line if "elements" in body else None
    return FormulaSpec(known, elements, dbe_range, ratios, enforce, line), body


def _names(loc: Located, what: str) -> tuple[str, ...]:
    out = []
    for item in as_list(loc, what=f"a list of {what}"):
        name = as_str(item, what=f"a {what[:-1]}")
        if not _GROUP.match(name):
            raise item.error(f"{name!r} is not a group name (lower case letters, digits and _)")
        out.append(name)
    _no_repeats(loc, out)
    return tuple(out)


def _no_repeats(loc: Located, values: Sequence[object], *, what: str = "") -> None:
    """A list whose entry repeats an earlier one is an error naming both lines (a repeat is
    usually a slip that hides the entry meant); ``values``: what each item of the list ``loc``
    (already read with ``as_list``) stands for."""
    first: dict[object, Located] = {}
    for item, value in zip(loc.value, values, strict=True):
        if value in first:
            raise item.error(f"{what or repr(value)} is listed twice (first on line {first[value].line}); give it once")
        first[value] = item


def _infrared(loc: Located) -> Infrared:
    body = mapping(loc, ["bands", "require", "forbid"])
    bands = []
    for item in as_list(body["bands"], what="a list of bands") if "bands" in body else []:
        if isinstance(item.value, dict):
            b = mapping(item, ["at", "strength", "shape"], required=["at"])
            bands.append(
                IRBand(
                    at=as_number(b["at"], minimum=400, maximum=4000, what="a wavenumber 400-4000 cm-1"),
                    strength=as_choice(b["strength"], STRENGTHS) if "strength" in b else None,
                    shape=as_choice(b["shape"], SHAPES) if "shape" in b else None,
                )
            )
        else:
            bands.append(IRBand(at=as_number(item, minimum=400, maximum=4000, what="a wavenumber 400-4000 cm-1")))
    require = _names(body["require"], "group names") if "require" in body else ()
    forbid = _names(body["forbid"], "group names") if "forbid" in body else ()
    if require or forbid:
        from .generator.groups import default_groups

        vocabulary = default_groups()
        for key, names in (("require", require), ("forbid", forbid)):
            if key not in body:
                continue
            for item, name in zip(as_list(body[key]), names, strict=False):
                if name not in vocabulary:
                    close = difflib.get_close_matches(name, list(vocabulary.names), n=1)
                    hint = f" (did you mean {close[0]!r}?)" if close else ""
                    raise item.error(
                        f"unknown group {name!r}{hint}; groups (constraints/groups.yaml): {', '.join(vocabulary.names)}"
                    )
    both = sorted(set(require) & set(forbid))
    if both:
        raise body["forbid"].error(f"{both[0]!r} is both required and forbidden")
    if "bands" in body:
        _no_repeats(body["bands"], [b.at for b in bands], what="a band at this wavenumber")
    return Infrared(tuple(bands), require, forbid)


_UV_WHAT = "a wavelength 190-800 nm, a range such as 235-250, or none (no maximum above 210 nm)"
_UV_STRENGTHS = ("strong", "weak")


def _wavelength(loc: Located) -> tuple[float, float]:
    """One maximum: a number, or an explicit range "low-high" (nm)."""
    if isinstance(loc.value, str):
        parsed = parse_range_text(loc.value)
        if parsed is None or not 190 <= parsed[0] <= parsed[1] <= 800:
            low_first = parsed is not None and parsed[0] > parsed[1]
            raise loc.error(
                f"range {loc.value!r}: the low end exceeds the high end" if low_first else f"expected {_UV_WHAT}"
            )
        return (float(parsed[0]), float(parsed[1]))
    x = as_number(loc, minimum=190, maximum=800, what=_UV_WHAT)
    return (x, x)


def _uv_vis(loc: Located) -> UvVis:
    body = mapping(loc, ["lambda_max", "maxima", "solvent"])
    if ("lambda_max" in body) == ("maxima" in body):
        raise loc.error("give either lambda_max (one maximum, or none) or maxima (a list of several)")
    value: tuple[float, float] | None
    others: list[tuple[float, float]] = []
    if "lambda_max" in body:
        lm = body["lambda_max"]
        if lm.value in ("none", None):
            value = None
        elif isinstance(lm.value, list):
            raise lm.error(
                "a list is ambiguous here: write one range as 235-250, or several maxima as uv_vis.maxima: [229, 273]"
            )
        else:
            value = _wavelength(lm)
    else:
        ranked = []
        for i, item in enumerate(as_list(body["maxima"], what="a list of maxima")):
            if isinstance(item.value, dict):
                m = mapping(item, ["nm", "strength", "log_eps"], required=["nm"])
                band = _wavelength(m["nm"])
                strength = as_choice(m["strength"], _UV_STRENGTHS, what="one of") if "strength" in m else None
                log_eps = as_number(m["log_eps"], minimum=0, maximum=6, what="log ε 0-6") if "log_eps" in m else None
            else:
                band, strength, log_eps = _wavelength(item), None, None
            # the main maximum: the largest log ε, else a strong one, else the first listed
            order = (-(log_eps if log_eps is not None else -1.0), {"strong": 0, None: 1, "weak": 2}[strength], i)
            ranked.append((order, band))
        if not ranked:
            raise body["maxima"].error("expected at least one maximum; write lambda_max: none for none")
        ranked.sort()
        value = ranked[0][1]
        others = [band for _, band in ranked[1:]]
    solvent = as_choice(body["solvent"], SOLVENTS) if "solvent" in body else "ethanol"
    return UvVis(value, solvent, tuple(others))


_MULTIPLET_WORDS = {
    "singlet": "s",
    "doublet": "d",
    "triplet": "t",
    "quartet": "q",
    "quintet": "quint",
    "pentet": "quint",
    "p": "quint",
    "sextet": "sext",
    "septet": "sept",
    "heptet": "sept",
    "hept": "sept",
    "multiplet": "m",
}


def parse_multiplet(text: str) -> str | None:
    """A 1H multiplet code in its normal form (``"br s"``, ``"dd"``, ``"quint"``), or None if it is
    not one: an optional ``br`` (broad), then ``s``, ``m``, ``quint``, ``sext``, ``sept`` or a run
    of one to three of ``d``, ``t``, ``q``."""
    words = text.strip().lower().replace(".", "").split()
    if not words:
        return None
    broad = False
    if words[0] in ("br", "broad"):
        broad, words = True, words[1:]
    elif len(words) == 1 and words[0].startswith("br") and len(words[0]) > 2:
        broad, words = True, [words[0][2:]]  # "brs" -> br s
    if not words:
        return "br" if broad else None
    if len(words) != 1:
        return None
    core = _MULTIPLET_WORDS.get(words[0], words[0])
    ok = core in ("s", "m", "quint", "sext", "sept") or (1 <= len(core) <= 3 and set(core) <= set("dtq"))
    if not ok:
        return None
    return f"br {core}" if broad else core


def multiplet_lines(code: str | None) -> int | None:
    """Lines of a first-order multiplet (product over its couplings), None for m, br or unknown."""
    if code is None:
        return None
    core = code.removeprefix("br").strip()
    if core in MULTIPLET_LINES:
        return MULTIPLET_LINES[core]
    if core and set(core) <= set("dtq"):
        lines = 1
        for letter in core:
            lines *= MULTIPLET_LINES[letter]
        return lines
    return None


def _c13_list(loc: Located) -> tuple[C13Signal, ...]:
    out = []
    for item in as_list(loc, what="a list of 13C signals such as {ppm: 199.6, type: C}"):
        if isinstance(item.value, dict):
            body = mapping(item, ["ppm", "type"], required=["ppm"], what="a 13C signal")
            ppm = as_number(body["ppm"], minimum=-10, maximum=250, what="a 13C shift in ppm (-10 to 250)")
            kind = _dept_type(body["type"]) if "type" in body else None
        else:
            ppm = as_number(item, minimum=-10, maximum=250, what="a 13C shift in ppm (-10 to 250) or {ppm, type}")
            kind = None
        out.append(C13Signal(ppm, kind))
    if not out:
        raise loc.error("expected at least one 13C signal")
    return tuple(out)


def _dept_type(loc: Located) -> str:
    check_gap(loc)
    text = str(loc.value) if isinstance(loc.value, str) else None
    if text in MULTIPLICITIES:
        return text
    spelled = {"ch3": "CH3", "ch2": "CH2", "ch": "CH", "c": "C", "cq": "C", "q": "C"}.get((text or "").lower())
    close = difflib.get_close_matches(text or "", list(MULTIPLICITIES), n=1)
    hint = f" (did you mean {spelled or close[0]!r}?)" if (spelled or close) else ""
    raise loc.error(f"expected a DEPT carbon type, one of {', '.join(MULTIPLICITIES)}; got {loc.value!r}{hint}")


def _h1_list(loc: Located) -> tuple[H1Signal, ...]:
    out = []
    for item in as_list(loc, what="a list of 1H signals such as {ppm: 2.58, integral: 3, multiplicity: s}"):
        body = mapping(item, ["ppm", "integral", "multiplicity", "j_hz"], required=["ppm"], what="a 1H signal")
        ppm = as_number(body["ppm"], minimum=-5, maximum=20, what="a 1H shift in ppm (-5 to 20)")
        integral = (
            as_number(
                body["integral"], minimum=0, maximum=1000, exclusive_minimum=True, what="a relative integral above 0"
            )
            if "integral" in body
            else None
        )
        code = None
        if "multiplicity" in body:
            mloc = body["multiplicity"]
            text = as_str(mloc, what="a multiplicity code such as s, d, dd, br s")
            code = parse_multiplet(text)
            if code is None:
                word = text.strip().lower()
                close = difflib.get_close_matches(word, [*MULTIPLET_CODES, *_MULTIPLET_WORDS], n=1)
                hint = f" (did you mean {_MULTIPLET_WORDS.get(close[0], close[0])!r}?)" if close else ""
                raise mloc.error(
                    f"unknown multiplicity {text!r}{hint}; use s, d, t, q, quint, sext, sept, m, a run of "
                    "d/t/q such as dd or dt, each optionally after br"
                )
        j: list[float] = []
        if "j_hz" in body:
            jloc = body["j_hz"]
            values = (
                as_list(jloc, what="a coupling in Hz or a list of them") if isinstance(jloc.value, list) else [jloc]
            )
            j = [
                as_number(v, minimum=0, maximum=300, exclusive_minimum=True, what="a coupling constant in Hz (0-300)")
                for v in values
            ]
        out.append(H1Signal(ppm, integral, code, tuple(j)))
    if not out:
        raise loc.error("expected at least one 1H signal")
    return tuple(out)


def _nmr(loc: Located) -> Nmr:
    keys = ["solvent", "c13", "h1", "carbon_types", "exchangeable_h", "c13_regions", "c13_signals", "c13_multiplicity"]
    body = mapping(loc, keys)
    signals = (
        as_int(body["c13_signals"], minimum=1, maximum=200, what="a number of 13C signals (1-200)")
        if "c13_signals" in body
        else None
    )
    mult = None
    if "c13_multiplicity" in body:
        mloc = body["c13_multiplicity"]
        m = mapping(mloc, list(MULTIPLICITIES), what="a mapping of CH3, CH2, CH, C to signal counts")
        mult = {k: as_int(v, minimum=0, maximum=200, what="a signal count") for k, v in m.items()}
        if signals is not None and sum(mult.values()) != signals:
            raise mloc.error(f"the multiplicities add up to {sum(mult.values())} signals but c13_signals is {signals}")
    solvent = None
    if "solvent" in body:
        text = as_str(body["solvent"], what="an NMR solvent")
        by_lower = {s.lower(): s for s in NMR_SOLVENTS}
        if text.lower() not in by_lower:
            close = difflib.get_close_matches(text, list(NMR_SOLVENTS), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise body["solvent"].error(f"unknown NMR solvent {text!r}{hint}; known: {', '.join(NMR_SOLVENTS)}")
        solvent = by_lower[text.lower()]
    c13 = _c13_list(body["c13"]) if "c13" in body else ()
    h1 = _h1_list(body["h1"]) if "h1" in body else ()
    if c13:
        if signals is not None and signals != len(c13):
            raise body["c13_signals"].error(f"c13_signals is {signals} but the c13 list holds {len(c13)} signals")
        signals = len(c13)
        if all(s.type is not None for s in c13):
            listed = {k: sum(1 for s in c13 if s.type == k) for k in MULTIPLICITIES}
            if mult is not None and any(mult.get(k, 0) != listed[k] for k in MULTIPLICITIES):
                raise body["c13_multiplicity"].error(
                    "c13_multiplicity disagrees with the DEPT types in the c13 list ("
                    + ", ".join(f"{k} {listed[k]}" for k in MULTIPLICITIES)
                    + "); give one of them"
                )
            mult = listed
    types = None
    if "carbon_types" in body:
        tloc = body["carbon_types"]
        t = mapping(
            tloc, list(MULTIPLICITIES), required=MULTIPLICITIES, what="a mapping of CH3, CH2, CH, C to carbon counts"
        )
        counts = tuple(as_int(t[k], minimum=0, maximum=200, what="a carbon count (0-200)") for k in MULTIPLICITIES)
        types = (counts[0], counts[1], counts[2], counts[3])
        if sum(types) == 0:
            raise tloc.error("carbon_types counts no carbon at all")
        if signals is not None and signals > sum(types):
            raise tloc.error(f"carbon_types counts {sum(types)} carbons, fewer than the {signals} 13C signals")
        if mult is not None:
            for k, n in zip(MULTIPLICITIES, types, strict=True):
                if mult.get(k, 0) > n:
                    raise t[k].error(f"{mult[k]} {k} signals are observed but carbon_types counts {n} {k} carbons")
    exchangeable = (
        as_range(body["exchangeable_h"], what="an H count or range such as 1 or 1-2")
        if "exchangeable_h" in body
        else None
    )
    regions = None
    if "c13_regions" in body:
        rloc = body["c13_regions"]
        r = mapping(rloc, list(CARBON_KINDS), what="a mapping of carbon kinds to carbon counts")
        regions = {k: as_range(v, what="a carbon count or range such as 4 or 4-6") for k, v in r.items()}
        if types is not None and sum(low for low, _ in regions.values()) > sum(types):
            raise rloc.error(f"c13_regions needs more carbons than the {sum(types)} carbon_types counts")
    return Nmr(signals, mult, solvent, c13, h1, types, exchangeable, regions)


def _solve_options(loc: Located) -> SolveOptions:
    body = mapping(loc, ["formulas", "limit", "worse_formulas"])
    formulas = (
        as_int(body["formulas"], minimum=1, maximum=1000, what="formulas per molecular ion, 1-1000")
        if "formulas" in body
        else None
    )
    limit = as_int(body["limit"], minimum=1, what="a structure count of 1 or more") if "limit" in body else None
    worse = as_bool(body["worse_formulas"]) if "worse_formulas" in body else None
    return SolveOptions(formulas, limit, worse)


def _no_contradiction(body: Mapping[str, Located]) -> None:
    """A required group or SMARTS that implies a forbidden one (every structure with a ketone
    has C=O) leaves nothing to find: an error naming both lines, before any work. The test
    (:func:`~elucidate.generator.implication.pattern_implies`) only reports what it proves."""
    from .generator.groups import default_groups
    from .generator.implication import first_implied
    from .smarts import compiled_smarts

    groups = default_groups()
    sides: dict[str, list[tuple[str, Mol, Located]]] = {"require": [], "forbid": []}
    for section, key, side in (
        ("infrared", "require", "require"),
        ("infrared", "forbid", "forbid"),
        ("structure", "require_smarts", "require"),
        ("structure", "forbid_smarts", "forbid"),
    ):
        if section not in body or not isinstance(body[section].value, dict) or key not in body[section].value:
            continue
        for item in body[section].value[key].value:
            if key in ("require", "forbid"):
                sides[side].append((f"group {item.value}", groups[item.value].pattern, item))
            else:  # the section loader has read it
                sides[side].append((f"SMARTS {item.value}", compiled_smarts(item.value), item))
    pair = first_implied([m for _, m, _ in sides["require"]], [m for _, m, _ in sides["forbid"]])
    if pair is not None:
        need, _, need_item = sides["require"][pair[0]]
        ban, _, ban_item = sides["forbid"][pair[1]]
        raise ban_item.error(
            f"forbids {ban}, but every structure with the required {need} (line {need_item.line}, "
            f"{need_item.key}) matches it: nothing could survive; drop one of the two"
        )


def _structure(loc: Located) -> StructureSpec:
    body = mapping(loc, ["require_smarts", "forbid_smarts", "suspects"])
    out: dict[str, tuple[str, ...]] = {}
    for key in ("require_smarts", "forbid_smarts", "suspects"):
        texts = []
        for item in as_list(body[key], what="a list") if key in body else []:
            text = as_str(item, what="a SMARTS pattern" if key != "suspects" else "a SMILES string")
            texts.append((item, text))
        if texts:
            from ._rdkit import mol_from_smarts, mol_from_smiles

            same: list[str] = []  # what makes two entries the same: the text, or the molecule
            for item, text in texts:
                mol = mol_from_smiles(text) if key == "suspects" else mol_from_smarts(text)
                if mol is None:
                    kind = "SMILES" if key == "suspects" else "SMARTS"
                    raise item.error(f"RDKit cannot read {text!r} as {kind}")
                same.append(_canonical_smiles(mol) if key == "suspects" else text)
            _no_repeats(body[key], same, what="this structure" if key == "suspects" else "")
        out[key] = tuple(t for _, t in texts)
    both = sorted(set(out.get("require_smarts", ())) & set(out.get("forbid_smarts", ())))
    if both:
        raise body["forbid_smarts"].error(f"{both[0]!r} is both required and forbidden")
    return StructureSpec(out.get("require_smarts", ()), out.get("forbid_smarts", ()), out.get("suspects", ()))


def _canonical_smiles(mol: object) -> str:
    from ._rdkit import Chem

    return str(Chem.MolToSmiles(mol))


# ------------------------------------------------------------------ the case


def _case(root: Located, table: ElementTable) -> Case:
    if not isinstance(root.value, dict):
        raise root.error("a case file is a YAML mapping with keys schema, id, title, mass_spec, …")
    body = mapping(root, _TOP, required=["schema", "id"])
    schema = as_int(body["schema"], what=f"schema version {SCHEMA_VERSION}")
    if schema != SCHEMA_VERSION:
        raise body["schema"].error(f"this version reads schema {SCHEMA_VERSION} case files, not {schema}")
    case_id = as_str(body["id"], what="an id (lower case letters, digits, . _ -)")
    if not _SLUG.match(case_id):
        raise body["id"].error(
            f"{case_id!r} is not a valid id: use 1-64 lower case letters, digits, '.', '_' or '-', "
            "starting with a letter or digit"
        )
    title = as_str(body["title"], what="a title (free text)") if "title" in body else ""
    notes = as_str(body["notes"], what="free text", allow_empty=True) if "notes" in body else ""
    ms = ms_body = None
    warnings: list[str] = []
    if "mass_spec" in body:
        ms, ms_body = _mass_spec(body["mass_spec"])
    spec = FormulaSpec()
    spec_body: dict[str, Located] = {}
    if "formula" in body:
        spec, spec_body = _formula_spec(body["formula"], table)
    infrared = _infrared(body["infrared"]) if "infrared" in body else None
    uv_vis = _uv_vis(body["uv_vis"]) if "uv_vis" in body else None
    nmr = _nmr(body["nmr"]) if "nmr" in body else None
    structure = _structure(body["structure"]) if "structure" in body else None
    if infrared is not None or structure is not None:
        _no_contradiction(body)
    solve_options = _solve_options(body["solve"]) if "solve" in body else SolveOptions()

    # ---- cross-checks between sections
    if ms is not None and ms_body is not None:
        if spec.known is not None and ms.molecular_ion is not None:
            nominal = spec.known.nominal_mass(table)
            if nominal != ms.molecular_ion:
                raise spec_body["known"].error(
                    f"{spec.known} has nominal mass {nominal}, but mass_spec.molecular_ion is {ms.molecular_ion}"
                )
            if ms.exact_mass is not None:
                mono = spec.known.monoisotopic_mass(table)
                ppm = ppm_error(ms.exact_mass, mono, electron_mass=table.electron_mass, of=ms.exact_mass_of)
                if abs(ppm) > ms.mass_tolerance_ppm:
                    raise spec_body["known"].error(
                        f"{spec.known} is {ppm:+.1f} ppm from mass_spec.exact_mass "
                        f"{ms.exact_mass} (tolerance {ms.mass_tolerance_ppm:g} ppm)"
                    )
        if ms.molecular_ion is not None and ms.peaks and ms.molecular_ion not in ms.peaks:
            mloc = ms_body["molecular_ion"]
            warnings.append(
                f"{mloc.file}:{mloc.line}: {mloc.key}: no peak at m/z {ms.molecular_ion} in mass_spec.peaks: "
                "its isotope cluster cannot be compared and the formulas are ranked by parsimony alone. "
                "Fine when M+ is absent from the EI spectrum and known otherwise (e.g. CI); "
                "else check the value"
            )
        if ms.molecular_ion is not None and ms.peaks:
            if spec.known is not None:
                limits = {s: (n, n) for s, n in spec.known.counts}
            else:
                from .formula_search.rules import default_rules

                limits = dict(spec.elements) if spec.elements is not None else dict(default_rules().default_elements)
            ceiling = ms.molecular_ion + isotope_span(limits)
            reached = {ms.molecular_ion}
            for mz in sorted(p for p in ms.peaks if p > ms.molecular_ion):
                # an isotope cluster climbs in steps of 1 or 2 without gaps
                contiguous = mz - 1 in reached or mz - 2 in reached
                if mz > ceiling or not contiguous:
                    ploc = ms_body["peaks"].value[mz]
                    why = (
                        f"by more than its isotope cluster allows (at most m/z {ceiling} with these element limits)"
                        if mz > ceiling
                        else "and is not part of its isotope cluster (no peak at either of the two m/z below it)"
                    )
                    raise ploc.error(
                        f"a peak at m/z {mz} lies above the molecular ion {ms.molecular_ion} {why}: "
                        "either molecular_ion is wrong or the peak belongs to something else"
                    )
                reached.add(mz)
    types_loc: Located | None = body["nmr"].value.get("carbon_types") if nmr is not None else None
    if nmr is not None and nmr.carbon_types is not None and types_loc is not None:
        carbons = sum(nmr.carbon_types)
        on_carbon = sum(h * n for h, n in zip((3, 2, 1, 0), nmr.carbon_types, strict=True))
        if spec.known is not None:
            c_low = c_high = spec.known.get("C")
            h_high = spec.known.get("H")
            where = str(spec.known)
        elif spec.elements is not None:
            c_low, c_high = spec.elements.get("C", (0, 0))
            h_high = spec.elements.get("H", (0, 0))[1]
            where = "formula.elements"
        else:
            c_low, c_high, h_high, where = 0, carbons, on_carbon, ""
        if not c_low <= carbons <= c_high or on_carbon > h_high:
            raise types_loc.error(
                f"carbon_types counts {carbons} C carrying {on_carbon} H, which {where} cannot hold "
                f"(C {c_low}-{c_high}, H up to {h_high})"
            )
    if nmr is not None and spec.known is not None:
        carbons = spec.known.get("C")
        if nmr.c13_signals is not None and nmr.c13_signals > carbons:
            raise body["nmr"].error(
                f"{nmr.c13_signals} 13C signals cannot come from {spec.known}, which has {carbons} C"
            )
    return Case(
        path=root.file,
        id=case_id,
        title=title,
        schema=schema,
        notes=notes,
        mass_spec=ms,
        formula=spec,
        infrared=infrared,
        uv_vis=uv_vis,
        nmr=nmr,
        structure=structure,
        solve=solve_options,
        warnings=tuple(warnings),
    )


def load_case(path: str | Path, *, table: ElementTable | None = None) -> Case:
    """Read and validate one case file."""
    return _case(read_yaml_file(path), table or default_elements())


def parse_case(text: str, *, file: str = "<text>", table: ElementTable | None = None) -> Case:
    """Validate case-file text (used by tests and by tools that hold the text already)."""
    return _case(parse_yaml(text, file=file), table or default_elements())
