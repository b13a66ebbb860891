"""Formula rules: nitrogen rule, Senior's rules, Kind & Fiehn element heuristics, rule of 13.

The numbers live in ``constraints/formula_rules.yaml`` (:class:`FormulaRules`); the functions here
are pure and take the tables as parameters so tests can pass small hand-checkable ones.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from fractions import Fraction
from functools import lru_cache
from pathlib import Path

from ..defaults import ELEMENT_RATIOS, RATIO_LEVELS
from ..elements import ElementTable, default_elements
from ..errors import ElucidateError
from ..formula import Formula
from ..tables import table_path, validated
from ..yamlnodes import (
    Located,
    as_int,
    as_list,
    as_number,
    as_range,
    as_str,
    mapping,
    read_yaml_file,
)
from .isotopes import IsotopeTolerance

__all__ = [
    "FormulaRules",
    "RuleOf13",
    "default_rules",
    "kind_fiehn",
    "load_formula_rules",
    "nitrogen_rule",
    "rule_of_13",
    "rule_of_13_formulas",
    "senior_rules",
]


@dataclass(frozen=True)
class CombinedCount:
    elements: tuple[str, ...]
    when_all_above: int
    below: Mapping[str, int]


@dataclass(frozen=True, eq=False)
class FormulaRules:
    """The contents of ``formula_rules.yaml``."""

    default_elements: Mapping[str, tuple[int, int]]
    default_dbe: tuple[int, int]
    ratios: Mapping[str, Mapping[str, tuple[float, float]]]  # level -> element -> (low, high)
    max_counts: tuple[tuple[int, Mapping[str, int]], ...]  # (below_mass, counts)
    combined_counts: tuple[CombinedCount, ...]
    rule13_removals: Mapping[str, Mapping[str, int]]
    isotope_tolerance: IsotopeTolerance = field(default_factory=IsotopeTolerance)
    isotope_max_offset: int = 8
    #: below this best isotope fit the cluster is unreliable: the by-eye reading orders formulas
    isotope_poor_fit: float = 0.01
    #: nats a formula that breaks the Kind & Fiehn rules at a level is demoted by, when they are
    #: not enforced ("extended" also for the count rules)
    ratio_demotion: Mapping[str, float] = field(default_factory=lambda: {"common": 0.1, "extended": 2.3})
    #: element sets whose M+2 / M+4 pattern the by-eye reading of a cluster compares
    heavy_sets: tuple[Mapping[str, int], ...] = ({},)

    def validate(self, table: ElementTable | None = None) -> None:
        t = table or default_elements()
        for sym in self.default_elements:
            if sym not in t:
                raise ElucidateError(f"default limit for unknown element {sym!r}", key="default_limits")
        for level in ("common", "extended"):
            if level not in self.ratios:
                raise ElucidateError(f"ratio level {level!r} missing", key="kind_fiehn.ratios")
            for sym, (low, high) in self.ratios[level].items():
                if sym not in t or low > high or low < 0:
                    raise ElucidateError(f"bad ratio {sym}: {low}-{high}", key=f"kind_fiehn.ratios.{level}")
            common, extended = self.ratios["common"], self.ratios["extended"]
            if level == "extended":
                for sym, (low, high) in common.items():
                    elow, ehigh = extended.get(sym, (low, high))
                    if elow > low or ehigh < high:
                        raise ElucidateError(
                            f"extended range for {sym} must contain the common one",
                            key="kind_fiehn.ratios.extended",
                        )
        for i, heavy in enumerate(self.heavy_sets):
            for sym in heavy:
                if sym not in t:
                    raise ElucidateError(f"unknown element {sym!r}", key=f"isotope_reading.heavy_sets[{i}]")
        masses = [m for m, _ in self.max_counts]
        if masses != sorted(masses):
            raise ElucidateError("max_counts must be in increasing mass", key="kind_fiehn.max_counts")
        for sym, removal in self.rule13_removals.items():
            if sym not in t:
                raise ElucidateError(f"unknown element {sym!r}", key="rule_of_13.substitutions")
            removed = removal.get("C", 0) * t["C"].nominal_mass + removal.get("H", 0) * t["H"].nominal_mass
            if removed != t[sym].nominal_mass:
                raise ElucidateError(
                    f"{sym}: removing C{removal.get('C', 0)}H{removal.get('H', 0)} ({removed} u) does not "
                    f"balance the added {t[sym].nominal_mass} u",
                    key=f"rule_of_13.substitutions.{sym}",
                )


def _counts(loc: Located) -> dict[str, int]:
    if not isinstance(loc.value, dict):
        raise loc.error("expected a mapping of element symbol to count")
    return {str(k): as_int(v, minimum=0) for k, v in loc.value.items()}


def _ratio(loc: Located) -> tuple[float, float]:
    text = as_str(loc, what="a ratio range such as 0-1.5")
    parts = text.split("-")
    try:
        low, high = float(parts[0]), float(parts[1])
    except (IndexError, ValueError) as exc:
        raise loc.error(f"expected a ratio range such as 0-1.5; got {text!r}") from exc
    if len(parts) != 2 or low > high:
        raise loc.error(f"expected a ratio range low-high; got {text!r}")
    return low, high


def load_formula_rules(path: str | Path | None = None, table: ElementTable | None = None) -> FormulaRules:
    file = Path(path) if path is not None else table_path("formula_rules.yaml")
    document = read_yaml_file(file, table=True)
    sections = ["default_limits", "kind_fiehn", "rule_of_13", "isotope_fit", "isotope_reading"]
    root = mapping(document, sections, required=sections)
    dl = mapping(root["default_limits"], ["source", "elements", "dbe"], required=["source", "elements", "dbe"])
    elements_loc = dl["elements"]
    if not isinstance(elements_loc.value, dict):
        raise elements_loc.error("expected a mapping of element symbol to range")
    default_limits = {str(k): as_range(v) for k, v in elements_loc.value.items()}
    kf = mapping(
        root["kind_fiehn"],
        ["source", "ratios", "max_counts", "combined_counts", "demotion"],
        required=["source", "ratios", "max_counts", "combined_counts", "demotion"],
    )
    ratios_loc = kf["ratios"]
    if not isinstance(ratios_loc.value, dict):
        raise ratios_loc.error("expected a mapping of level to ratio ranges")
    ratios: dict[str, dict[str, tuple[float, float]]] = {}
    for level, v in ratios_loc.value.items():
        if not isinstance(v.value, dict):
            raise v.error("expected a mapping of element symbol to ratio range")
        ratios[str(level)] = {str(sym): _ratio(r) for sym, r in v.value.items()}
    max_counts = []
    for item in as_list(kf["max_counts"]):
        body = mapping(item, ["below_mass", "counts"], required=["below_mass", "counts"])
        max_counts.append((as_int(body["below_mass"], minimum=1), _counts(body["counts"])))
    combined = []
    for item in as_list(kf["combined_counts"]):
        body = mapping(item, ["elements", "when_all_above", "below"], required=["elements", "when_all_above", "below"])
        combined.append(
            CombinedCount(
                elements=tuple(as_str(e) for e in as_list(body["elements"])),
                when_all_above=as_int(body["when_all_above"], minimum=0),
                below=_counts(body["below"]),
            )
        )
    r13 = mapping(root["rule_of_13"], ["source", "substitutions"], required=["substitutions"])
    subs_loc = r13["substitutions"]
    if not isinstance(subs_loc.value, dict):
        raise subs_loc.error("expected a mapping of element to removal")
    removals = {
        str(sym): _counts(mapping(v, ["remove"], required=["remove"])["remove"]) for sym, v in subs_loc.value.items()
    }
    fit = mapping(
        root["isotope_fit"],
        ["source", "relative", "absolute", "reading", "unlisted_factor", "unlisted_cap", "poor_fit", "max_offset"],
        required=["relative", "absolute", "reading", "unlisted_factor", "unlisted_cap", "poor_fit", "max_offset"],
    )
    reading = mapping(root["isotope_reading"], ["source", "heavy_sets"], required=["heavy_sets"])
    heavy_sets = tuple(_counts(item) for item in as_list(reading["heavy_sets"], what="a list of element counts"))
    rules = FormulaRules(
        default_elements=default_limits,
        default_dbe=as_range(dl["dbe"]),
        ratios=ratios,
        max_counts=tuple(max_counts),
        combined_counts=tuple(combined),
        rule13_removals=removals,
        isotope_tolerance=IsotopeTolerance(
            relative=as_number(fit["relative"], minimum=0),
            absolute=as_number(fit["absolute"], minimum=0),
            reading=as_number(fit["reading"], minimum=0),
            unlisted_factor=as_number(fit["unlisted_factor"], minimum=1),
            unlisted_cap=as_number(fit["unlisted_cap"], minimum=0),
        ),
        isotope_max_offset=as_int(fit["max_offset"], minimum=2, maximum=20),
        isotope_poor_fit=float(as_number(fit["poor_fit"], minimum=0, what="a fit between 0 and 1")),
        ratio_demotion={
            level: float(as_number(v, minimum=0, what="nats of 0 or more"))
            for level, v in mapping(kf["demotion"], ["common", "extended"], required=["common", "extended"]).items()
        },
        heavy_sets=heavy_sets,
    )
    return validated(rules, document, check=lambda: rules.validate(table))


@lru_cache(maxsize=1)
def default_rules() -> FormulaRules:
    return load_formula_rules()


# ------------------------------------------------------------------ the rules themselves
# Each returns None when the formula passes, or a one-line reason when it fails.


def nitrogen_rule(formula: Formula, table: ElementTable | None = None) -> str | None:
    """Odd nominal mass <=> odd number of N (common practice; valid for C H N O S P Si halogens)."""
    t = table or default_elements()
    mass = formula.nominal_mass(t)
    n = formula.get("N")
    if mass % 2 != n % 2:
        return f"nitrogen rule: nominal mass {mass} is {'odd' if mass % 2 else 'even'} but N = {n}"
    return None


def senior_rules(formula: Formula, table: ElementTable | None = None) -> str | None:
    """Senior (1951): valence sum even; sum >= 2 * max valence; sum >= 2 (atoms - 1)."""
    t = table or default_elements()
    valences = [(t[s].valence, n) for s, n in formula.counts]
    total = sum(v * n for v, n in valences)
    atoms = formula.atom_count
    if total % 2:
        return f"Senior's rule 1: the valence sum {total} is odd (an odd-electron composition)"
    vmax = max(v for v, _ in valences)
    if total < 2 * vmax:
        return f"Senior's rule 2: the valence sum {total} is below twice the largest valence ({vmax})"
    if total < 2 * (atoms - 1):
        return (
            f"Senior's rule 3: the valence sum {total} is below 2 x (atoms - 1) = {2 * (atoms - 1)} "
            "(too many monovalent atoms to connect: DBE < 0)"
        )
    return None


def kind_fiehn(formula: Formula, rules: FormulaRules, level: str = ELEMENT_RATIOS) -> str | None:
    """Kind & Fiehn (2007) rules 1, 4, 5 and 6 (element counts and ratios to carbon)."""
    if level == "off":
        return None
    if level not in rules.ratios:
        raise ElucidateError(f"unknown element-ratio level {level!r}; choose one of {', '.join(RATIO_LEVELS)}")
    c = formula.get("C")
    if c == 0:
        return "Kind & Fiehn: no carbon, element ratios to C are undefined (not an organic formula)"
    for sym, (low, high) in rules.ratios[level].items():
        ratio = formula.get(sym) / c
        if ratio < low - 1e-12 or ratio > high + 1e-12:
            number = "4" if sym == "H" else "5"
            return f"Kind & Fiehn rule {number} ({level}): {sym}/C = {ratio:.2f} outside {low:g}-{high:g}"
    mass = formula.nominal_mass()
    for below_mass, counts in rules.max_counts:
        if mass < below_mass:
            for sym, limit in counts.items():
                if formula.get(sym) > limit:
                    return f"Kind & Fiehn rule 1: {formula.get(sym)} {sym} exceeds {limit} for M < {below_mass}"
            break
    for rule in rules.combined_counts:
        if all(formula.get(s) > rule.when_all_above for s in rule.elements):
            for sym, limit in rule.below.items():
                if formula.get(sym) >= limit:
                    return (
                        f"Kind & Fiehn rule 6: with {', '.join(rule.elements)} all above "
                        f"{rule.when_all_above}, {sym} must be below {limit}"
                    )
    return None


# ------------------------------------------------------------------ rule of 13


@dataclass(frozen=True)
class RuleOf13:
    mass: int
    n: int
    r: int
    base: Formula  # CnH(n+r)
    u: Fraction

    def describe(self) -> str:
        return f"rule of 13: {self.mass} = 13 x {self.n} + {self.r} -> {self.base}, U = {self.u}"


def rule_of_13(mass: int) -> RuleOf13:
    """Bright & Chen (1983): M = 13n + r gives the base hydrocarbon CnH(n+r), U = (n - r + 2)/2."""
    if mass < 13:
        raise ElucidateError(f"rule of 13 needs M >= 13, got {mass}")
    n, r = divmod(mass, 13)
    return RuleOf13(mass, n, r, Formula.of({"C": n, "H": n + r}), Fraction(n - r + 2, 2))


def rule_of_13_formulas(
    mass: int,
    limits: Mapping[str, tuple[int, int]],
    rules: FormulaRules,
) -> set[Formula]:
    """All compositions reached from the base hydrocarbon by the published substitutions.

    Heteroatoms are added by removing their C/H equivalents (the rule-of-13 table), then C is
    traded for H12 either way. Keeps only compositions within ``limits`` with non-negative counts.
    This is an independent route to the same set the formula engine enumerates (used by tests).
    """
    base = rule_of_13(mass).base
    hetero = [s for s in limits if s not in ("C", "H")]
    for s in hetero:
        if s not in rules.rule13_removals:
            raise ElucidateError(f"rule of 13 has no substitution for {s}")
    results: set[Formula] = set()

    def walk(i: int, counts: dict[str, int]) -> None:
        if i == len(hetero):
            c, h = counts["C"], counts["H"]
            # trade C <-> H12 in both directions (12 H weigh as much as one C)
            for k in range(-c, h // 12 + 1):
                cc, hh = c + k, h - 12 * k
                if cc < 0 or hh < 0:
                    continue
                lo_c, hi_c = limits.get("C", (0, 0))
                lo_h, hi_h = limits.get("H", (0, 0))
                if lo_c <= cc <= hi_c and lo_h <= hh <= hi_h:
                    results.add(Formula.of({**counts, "C": cc, "H": hh}))
            return
        sym = hetero[i]
        low, high = limits[sym]
        rem = rules.rule13_removals[sym]
        for j in range(low, high + 1):
            nxt = dict(counts)
            nxt[sym] = j
            nxt["C"] = counts["C"] - j * rem.get("C", 0)
            nxt["H"] = counts["H"] - j * rem.get("H", 0)
            walk(i + 1, nxt)

    walk(0, {"C": base.get("C"), "H": base.get("H")})
    return results
