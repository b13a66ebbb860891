"""Molecular formulas: parsing, Hill notation, masses and ring-plus-double-bond equivalents."""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING, TypeVar

from .elements import ElementTable, default_elements
from .errors import ElucidateError

if TYPE_CHECKING:
    import numpy as np
    from numpy.typing import NDArray

Masses = TypeVar("Masses", float, "NDArray[np.float64]")

__all__ = ["Formula", "hill_order", "parse_formula", "ppm_error"]

_TOKEN = re.compile(r"([A-Z][a-z]?)(\d*)")


def hill_order(symbols: list[str] | tuple[str, ...]) -> list[str]:
    """Hill system order: C, then H, then the rest alphabetically; without C, all alphabetical."""
    syms = sorted(set(symbols))
    if "C" in syms:
        rest = [s for s in syms if s not in ("C", "H")]
        return ["C"] + (["H"] if "H" in syms else []) + rest
    return syms


@dataclass(frozen=True, order=False)
class Formula(Mapping[str, int]):
    """An elemental composition with positive counts, written in Hill order."""

    counts: tuple[tuple[str, int], ...]

    @classmethod
    def of(cls, counts: Mapping[str, int]) -> Formula:
        clean = {s: int(n) for s, n in counts.items() if n}
        if any(n < 0 for n in clean.values()):
            raise ElucidateError(f"negative element count in {dict(counts)}")
        return cls(tuple((s, clean[s]) for s in hill_order(list(clean))))

    def __getitem__(self, symbol: str) -> int:
        for s, n in self.counts:
            if s == symbol:
                return n
        raise KeyError(symbol)

    # An absent element counts 0, never None: this narrows Mapping.get's signature on purpose.
    def get(self, symbol: str, default: int = 0) -> int:  # type: ignore[override]
        for s, n in self.counts:
            if s == symbol:
                return n
        return default

    def __iter__(self) -> Iterator[str]:
        return (s for s, _ in self.counts)

    def __len__(self) -> int:
        return len(self.counts)

    def __str__(self) -> str:
        return "".join(f"{s}{n if n != 1 else ''}" for s, n in self.counts)

    def __repr__(self) -> str:
        return f"Formula({str(self)!r})"

    @property
    def atom_count(self) -> int:
        return sum(n for _, n in self.counts)

    # ------------------------------------------------------------------ masses
    def nominal_mass(self, table: ElementTable | None = None) -> int:
        """Sum of the mass numbers of each element's most abundant isotope."""
        t = table or default_elements()
        return sum(t[s].nominal_mass * n for s, n in self.counts)

    def monoisotopic_mass(self, table: ElementTable | None = None) -> float:
        """Exact mass of the neutral molecule made of each element's most abundant isotope (u)."""
        t = table or default_elements()
        return sum(t[s].monoisotopic_mass * n for s, n in self.counts)

    def average_mass(self, table: ElementTable | None = None) -> float:
        """Abundance-weighted molar mass (g/mol) from the table's isotopic compositions."""
        t = table or default_elements()
        return sum(t[s].average_mass * n for s, n in self.counts)

    def mz(self, table: ElementTable | None = None, *, charge: int = 1) -> float:
        """m/z of the monoisotopic radical cation M+. (one electron removed per charge)."""
        t = table or default_elements()
        return (self.monoisotopic_mass(t) - charge * t.electron_mass) / charge

    # ------------------------------------------------------------------ DBE
    def dbe(self, table: ElementTable | None = None) -> Fraction:
        """Ring-plus-double-bond equivalents with the lowest valences: 1 + sum n(v-2)/2.

        Non-integer for odd-electron-count (radical or ion) compositions.
        """
        t = table or default_elements()
        return 1 + Fraction(sum(n * (t[s].valence - 2) for s, n in self.counts), 2)


def ppm_error(measured: float, monoisotopic: Masses, *, electron_mass: float, of: str = "ion") -> Masses:
    """ppm error of a measured exact mass against neutral monoisotopic mass(es).

    ``of="ion"``: ``measured`` is the m/z of M+., so one electron mass is subtracted from the
    neutral mass first; ``of="neutral"``: compared as given. Works on floats and numpy arrays.
    """
    theory = monoisotopic - electron_mass if of == "ion" else monoisotopic
    return (measured - theory) / theory * 1e6


def parse_formula(text: str, table: ElementTable | None = None) -> Formula:
    """Parse a formula such as ``C8H8O`` or ``CH2Cl2`` (repeated symbols add up)."""
    t = table or default_elements()
    src = text.strip() if isinstance(text, str) else ""
    if not src:
        raise ElucidateError("empty formula; expected e.g. C8H8O")
    pos = 0
    counts: dict[str, int] = {}
    for match in _TOKEN.finditer(src):
        if match.start() != pos:
            break
        symbol, digits = match.group(1), match.group(2)
        if symbol not in t:
            raise ElucidateError(f"formula {src!r}: unknown element {symbol!r}; known elements: {', '.join(t.symbols)}")
        n = int(digits) if digits else 1
        if digits and n == 0:
            raise ElucidateError(f"formula {src!r}: a count of 0 for {symbol}; leave the element out")
        counts[symbol] = counts.get(symbol, 0) + n
        pos = match.end()
    if pos != len(src):
        raise ElucidateError(
            f"formula {src!r}: cannot read {src[pos:]!r}; write element symbols with counts, "
            "e.g. C8H8O or CH2Cl2 (no brackets, charges or spaces)"
        )
    return Formula.of(counts)
