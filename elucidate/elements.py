"""Elements, valences and isotopes (the ``constraints/elements.yaml`` table)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property, lru_cache
from pathlib import Path

from .errors import ElucidateError
from .tables import table_path, validated
from .yamlnodes import Located, as_int, as_list, as_number, as_str, mapping, read_yaml_file

__all__ = ["Element", "ElementTable", "Isotope", "default_elements", "load_elements"]


@dataclass(frozen=True)
class Isotope:
    mass_number: int
    mass: float  # u, AME2020
    abundance: float  # mole fraction in percent


@dataclass(frozen=True)
class Element:
    symbol: str
    valences: tuple[int, ...]
    isotopes: tuple[Isotope, ...]

    @cached_property
    def valence(self) -> int:
        """The lowest (default) valence, used for DBE and the nitrogen rule."""
        return self.valences[0]

    @cached_property
    def principal(self) -> Isotope:
        """The most abundant isotope."""
        return max(self.isotopes, key=lambda iso: iso.abundance)

    @cached_property
    def nominal_mass(self) -> int:
        """Mass number of the most abundant isotope."""
        return self.principal.mass_number

    @cached_property
    def monoisotopic_mass(self) -> float:
        """Exact mass of the most abundant isotope."""
        return self.principal.mass

    @cached_property
    def average_mass(self) -> float:
        """Abundance-weighted mean isotope mass."""
        total = sum(iso.abundance for iso in self.isotopes)
        return sum(iso.mass * iso.abundance for iso in self.isotopes) / total


@dataclass(frozen=True, eq=False)
class ElementTable:
    """A table of elements. Pass a small one to functions to test them by hand.

    Compared and hashed by identity, so derived values can be cached per table.
    """

    elements: Mapping[str, Element]
    electron_mass: float
    source: str = ""

    def __getitem__(self, symbol: str) -> Element:
        try:
            return self.elements[symbol]
        except KeyError as exc:
            raise ElucidateError(f"unknown element {symbol!r}; known: {', '.join(self.symbols)}") from exc

    def __contains__(self, symbol: object) -> bool:
        return symbol in self.elements

    @property
    def symbols(self) -> tuple[str, ...]:
        return tuple(self.elements)

    def validate(self) -> None:
        """Check the table is self-consistent; raise :class:`ElucidateError` if not."""
        if not 0.0005 < self.electron_mass < 0.0006:
            raise ElucidateError(f"electron mass {self.electron_mass} u is implausible")
        for symbol, el in self.elements.items():
            where = f"elements.{symbol}"
            if el.symbol != symbol:
                raise ElucidateError(f"symbol mismatch {el.symbol!r}", key=where)
            if not el.valences or any(v < 1 for v in el.valences):
                raise ElucidateError("valences must be positive whole numbers", key=where)
            if list(el.valences) != sorted(set(el.valences)):
                raise ElucidateError("valences must be listed lowest first, once each", key=where)
            if not el.isotopes:
                raise ElucidateError("no isotopes", key=where)
            total = sum(iso.abundance for iso in el.isotopes)
            if abs(total - 100.0) > 0.02:
                raise ElucidateError(f"isotope abundances sum to {total:.4f} %, not 100", key=where)
            numbers = [iso.mass_number for iso in el.isotopes]
            if numbers != sorted(set(numbers)):
                raise ElucidateError("isotopes must be in increasing mass number", key=where)
            for iso in el.isotopes:
                if abs(iso.mass - iso.mass_number) > 0.2:
                    raise ElucidateError(
                        f"isotope {iso.mass_number}: mass {iso.mass} is far from its mass number",
                        key=where,
                    )
                if not 0 < iso.abundance <= 100:
                    raise ElucidateError(
                        f"isotope {iso.mass_number}: abundance {iso.abundance} outside (0, 100]",
                        key=where,
                    )
            if el.principal.mass_number != numbers[0]:
                # The nominal-mass isotope cluster code counts offsets up from the principal
                # isotope; it relies on the lightest isotope being the most abundant.
                raise ElucidateError(
                    "the most abundant isotope must be the lightest for nominal-mass clusters",
                    key=where,
                )


def _element(symbol: str, loc: Located) -> Element:
    body = mapping(loc, ["valences", "isotopes"], required=["valences", "isotopes"])
    valences = tuple(as_int(v, minimum=1, maximum=8) for v in as_list(body["valences"]))
    isotopes = []
    for item in as_list(body["isotopes"]):
        iso = mapping(item, ["mass_number", "mass", "abundance"], required=["mass_number", "mass", "abundance"])
        isotopes.append(
            Isotope(
                mass_number=as_int(iso["mass_number"], minimum=1),
                mass=as_number(iso["mass"], minimum=0, exclusive_minimum=True, what="a mass in u"),
                abundance=as_number(iso["abundance"], minimum=0, maximum=100, what="a percentage"),
            )
        )
    return Element(symbol, valences, tuple(isotopes))


def load_elements(path: str | Path | None = None) -> ElementTable:
    """Load and validate an element table (default: the shipped ``elements.yaml``)."""
    file = Path(path) if path is not None else table_path("elements.yaml")
    root = read_yaml_file(file, table=True)
    top = mapping(root, ["source", "electron_mass", "elements"], required=["electron_mass", "elements"])
    source = ""
    if "source" in top:
        src = top["source"]
        source = (
            "; ".join(f"{k}: {v.value}" for k, v in src.value.items()) if isinstance(src.value, dict) else as_str(src)
        )
    body = top["elements"]
    if not isinstance(body.value, dict) or not body.value:
        raise body.error("expected a mapping of element symbols")
    elements = {str(sym): _element(str(sym), loc) for sym, loc in body.value.items()}
    table = ElementTable(
        elements=elements,
        electron_mass=as_number(top["electron_mass"], minimum=0, what="the electron mass in u"),
        source=source,
    )
    return validated(table, root)


@lru_cache(maxsize=1)
def default_elements() -> ElementTable:
    """The shipped element table, loaded once."""
    return load_elements()
