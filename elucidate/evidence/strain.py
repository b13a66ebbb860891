"""Strain and rarity: a prior against possible but unlikely structures (``constraints/strain.yaml``).

The candidate's strain is the sum of its non-aromatic rings' strain energies, plus the extra
strain of small-ring unsaturation (cyclopropenes, cyclobutenes, methylenecyclopropanes), fused
small rings (bicyclobutanes) and triple bonds in small rings, plus a rarity charge per cumulated
double bond. It counts against the candidate at ``kcal_per_nat`` kcal/mol per nat; the scoring
table caps it, so a strained structure is ranked down, never eliminated.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal

from ..case import Case
from ..errors import ElucidateError
from ..generator.shape import RingShape, shape_of
from ..tables import table_path, validated
from ..yamlnodes import Located, as_number, as_str, mapping, read_yaml_file
from .base import Assessment, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = ["Strain", "StrainTable", "default_strain", "load_strain", "strain_energy", "strain_of"]


@dataclass(frozen=True, eq=False)
class StrainTable:
    kcal_per_nat: float
    rings: Mapping[int, float]  # ring size -> kcal/mol
    endocyclic_double_bond: Mapping[int, float]
    exocyclic_double_bond: Mapping[int, float]
    fused_small_rings: float
    small_ring_triple_bond: float
    cumulated_double_bond: float
    source: str = ""

    def validate(self) -> None:
        if set(self.rings) != set(range(3, 9)):
            raise ElucidateError("rings must give the strain of every ring size from 3 to 8", key="rings")

    def ring(self, size: int) -> float:
        return self.rings[min(size, 8)]


def _sized(loc: Located) -> dict[int, float]:
    if not isinstance(loc.value, dict):
        raise loc.error("expected a mapping of ring size (3-8) to kcal/mol")
    out: dict[int, float] = {}
    for key, value in loc.value.items():
        if not isinstance(key, int) or not 3 <= key <= 8:
            raise value.error(f"ring size {key!r}: expected a whole number from 3 to 8")
        out[key] = float(as_number(value, minimum=0, what="kcal/mol of 0 or more"))
    return out


def load_strain(path: str | Path | None = None) -> StrainTable:
    file = Path(path) if path is not None else table_path("strain.yaml")
    document = read_yaml_file(file, table=True)
    keys = [
        "source",
        "kcal_per_nat",
        "rings",
        "endocyclic_double_bond",
        "exocyclic_double_bond",
        "fused_small_rings",
        "small_ring_triple_bond",
        "cumulated_double_bond",
    ]
    root = mapping(document, keys, required=keys[1:])
    table = StrainTable(
        kcal_per_nat=float(
            as_number(root["kcal_per_nat"], minimum=0, exclusive_minimum=True, what="a positive number")
        ),
        rings=_sized(root["rings"]),
        endocyclic_double_bond=_sized(root["endocyclic_double_bond"]),
        exocyclic_double_bond=_sized(root["exocyclic_double_bond"]),
        fused_small_rings=float(as_number(root["fused_small_rings"], minimum=0, what="kcal/mol")),
        small_ring_triple_bond=float(as_number(root["small_ring_triple_bond"], minimum=0, what="kcal/mol")),
        cumulated_double_bond=float(as_number(root["cumulated_double_bond"], minimum=0, what="kcal/mol")),
        source=as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_strain() -> StrainTable:
    return load_strain()


def strain_energy(mol: Mol, table: StrainTable | None = None) -> tuple[float, tuple[str, ...]]:
    """Estimated strain and rarity of ``mol`` in kcal/mol, with the terms that make it up."""
    return strain_of(shape_of(mol), table)


def strain_of(shape: RingShape, table: StrainTable | None = None) -> tuple[float, tuple[str, ...]]:
    """Estimated strain and rarity of a structure of this shape in kcal/mol, with the terms that
    make it up (in the shape's order: rings by size, then the multiple bonds)."""
    t = table or default_strain()
    terms: list[tuple[str, float]] = []
    for size in shape.rings:
        if t.ring(size):
            terms.append((f"{size}-ring", t.ring(size)))
    terms += [("fused small rings", t.fused_small_rings)] * shape.fused_small
    for order, size, ends in shape.bonds:
        if size:
            if order == 3 and size <= 7:
                terms.append((f"C≡C in a {size}-ring", t.small_ring_triple_bond))
            elif order == 2 and size in t.endocyclic_double_bond:
                terms.append((f"double bond in a {size}-ring", t.endocyclic_double_bond[size]))
            continue
        for end in ends:  # an exocyclic double bond on a small ring atom
            if order == 2 and end in t.exocyclic_double_bond:
                terms.append((f"exocyclic double bond on a {end}-ring", t.exocyclic_double_bond[end]))
    terms += [("cumulated double bonds", t.cumulated_double_bond)] * shape.cumulated
    total = math.fsum(kcal for _, kcal in terms)  # exactly rounded, whatever the terms' order
    return total, tuple(f"{name} {kcal:g}" for name, kcal in terms)


class Strain:
    """Strain and rarity of every candidate, whatever the case holds."""

    name = "strain"
    weight_key = "strain"
    label = "strain"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = None
    scoring_pass: int = 3
    cost: float = 120  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(self, table: StrainTable | None = None) -> None:
        self.table = table or default_strain()

    def applies(self, case: Case) -> bool:
        return True

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        shape = self._perceived(subject)
        if shape is None or shape.partial:
            shape = shape_of(subject.mol)
        kcal, terms = strain_of(shape, self.table)
        reasons = (f"strain: about {kcal:g} kcal/mol ({', '.join(terms)})",) if terms else ()
        detail = {"kcal_per_mol": round(kcal, 3), "terms": list(terms)}
        return Assessment(self.name, against=kcal / self.table.kcal_per_nat, reasons=reasons, detail=detail)

    def foresee(self, subject: Subject, case: Case) -> Assessment | None:
        """The assessment when generation read the whole ring shape off the bond orders."""
        shape = self._perceived(subject)
        return self.assess(subject, case) if shape is not None and not shape.partial else None

    def floor(self, subject: Subject, case: Case) -> tuple[float, float]:
        """The strain of the ring shape generation read (a partial one's is at most the
        structure's), never reading the molecule; 0 when it read none."""
        shape = self._perceived(subject)
        if shape is None:
            return 0.0, 0.0
        kcal, _ = strain_of(shape, self.table)
        return kcal / self.table.kcal_per_nat, 0.0

    def foresee_floor(self, subject: Subject, case: Case) -> tuple[float, float]:
        """:meth:`floor`: it reads only what generation perceived."""
        return self.floor(subject, case)

    @staticmethod
    def _perceived(subject: Subject) -> RingShape | None:
        seen = subject.seen
        return seen.shape if seen is not None else None

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        if not d["terms"]:
            return []
        return [f"    strain about {d['kcal_per_mol']:g} kcal/mol: {', '.join(d['terms'])}"]

    def read(self, case: Case) -> Reading | None:
        return None
