"""Declared atom counts read off NMR spectra, as hard constraints pushed into generation.

Three counts a chemist reads straight off the spectra (``nmr`` in the case file):

* **carbon types**: how many carbons carry 3, 2, 1 and 0 hydrogens (DEPT, with symmetry
  resolved by the chemist);
* **exchangeable H**: the hydrogens on O and N (a D2O shake), as a range;
* **carbon kinds**: how many carbons are carbonyl (C=O), sp2 (one double or aromatic bond), sp
  (a triple bond or two double bonds), sp3 bonded to O or N, or other sp3 (``alkyl``), each as a
  range. Their 13C shift windows, for the chemist's reading, are in ``constraints/nmr13c.yaml``.

Every count is a function of the labelled multigraph alone (elements, bond orders, hydrogens),
and the same on every Kekulé form of an aromatic compound, since an atom's hydrogens and its
bond-order sum are the same in each. So testing the multigraph before any RDKit molecule is
built removes exactly what testing the finished molecule would (:func:`mol_counts` is that
second test, used to prove it). Two earlier, weaker tests prune more cheaply and never remove
a structure the exact test keeps:

* on the bare skeleton (hereditary, so skeleton growth prunes on it): a carbon with h
  hydrogens has at most 4 - h neighbours, so the carbon valences in the degree bounds become
  4 - h (:meth:`CountTest.degree_bounds`);
* on the element labelling: for each t, at least as many carbons must have at most 4 - t
  neighbours as there are carbons with t or more hydrogens (Hall's condition for these nested
  sets, :meth:`CountTest.colouring_ok`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from .._mol import atoms_of
from ..case import CARBON_KINDS
from ..errors import ElucidateError
from ..formula import Formula

if TYPE_CHECKING:
    from .._rdkit import Mol
    from .labelling import Structure

__all__ = ["CARBON_KINDS", "CountTest", "carbon_kind", "carbon_profile", "mol_counts", "structure_counts"]

_TYPE_NAMES = ("CH3", "CH2", "CH", "C")


def carbon_kind(unsaturation: int, carbonyl: bool, hetero_neighbour: bool) -> str:
    """The kind of one carbon from its bond orders above single (4 - neighbours - H), whether it
    carries a terminal O (C=O) and whether it is bonded to O or N."""
    if carbonyl:
        return "carbonyl"
    if unsaturation >= 2:
        return "sp"
    if unsaturation == 1:
        return "sp2"
    return "heteroatom_sp3" if hetero_neighbour else "alkyl"


@dataclass(frozen=True)
class Counts:
    """What the declared counts are measured on: carbons per H count (3, 2, 1, 0), H on O and
    N, and carbons per kind."""

    types: tuple[int, int, int, int]
    exchangeable: int
    kinds: dict[str, int]
    methane: int = 0  # carbons with 4 H (no DEPT type)


def structure_counts(s: Structure) -> Counts:
    """The counts of a labelled multigraph."""
    n = len(s.elements)
    degree = [0] * n
    terminal_o = [s.elements[i] == "O" and s.hydrogens[i] == 0 for i in range(n)]
    neighbours: list[list[int]] = [[] for _ in range(n)]
    for a, b, _ in s.bonds:
        degree[a] += 1
        degree[b] += 1
        neighbours[a].append(b)
        neighbours[b].append(a)
    types = [0, 0, 0, 0]
    kinds = dict.fromkeys(CARBON_KINDS, 0)
    exchangeable = methane = 0
    for i, sym in enumerate(s.elements):
        h = s.hydrogens[i]
        if sym in ("O", "N"):
            exchangeable += h
        if sym != "C":
            continue
        if h > 3:
            methane += 1
            continue
        types[3 - h] += 1
        carbonyl = any(terminal_o[j] and degree[j] == 1 for j in neighbours[i])
        hetero = any(s.elements[j] in ("O", "N") for j in neighbours[i])
        kinds[carbon_kind(4 - degree[i] - h, carbonyl, hetero)] += 1
    return Counts((types[0], types[1], types[2], types[3]), exchangeable, kinds, methane)


def mol_counts(mol: Mol) -> Counts:
    """The same counts read from an RDKit molecule (hydrogens implicit or explicit)."""
    types = [0, 0, 0, 0]
    kinds = dict.fromkeys(CARBON_KINDS, 0)
    exchangeable = methane = 0
    for atom in mol.GetAtoms():
        z = atom.GetAtomicNum()
        if z == 1:
            continue
        h = atom.GetTotalNumHs(includeNeighbors=True)
        if z in (7, 8):
            exchangeable += h
        if z != 6:
            continue
        heavy = [n for n in atom.GetNeighbors() if n.GetAtomicNum() != 1]
        if h > 3:
            methane += 1
            continue
        types[3 - h] += 1
        carbonyl = any(
            n.GetAtomicNum() == 8
            and sum(1 for m in n.GetNeighbors() if m.GetAtomicNum() != 1) == 1
            and n.GetTotalNumHs(includeNeighbors=True) == 0
            and n.GetFormalCharge() == 0
            for n in heavy
        )
        hetero = any(n.GetAtomicNum() in (7, 8) for n in heavy)
        kinds[carbon_kind(4 - len(heavy) - h, carbonyl, hetero)] += 1
    return Counts((types[0], types[1], types[2], types[3]), exchangeable, kinds, methane)


def carbon_profile(mol: Mol) -> tuple[tuple[str, str, int], ...]:
    """The carbons of a molecule (hydrogens implicit) by kind (:func:`carbon_kind`) and DEPT
    type (CH3, CH2, CH, C): (kind, type, carbons) for each pair present, sorted; the counts
    :func:`mol_counts` reads, per carbon. Only the N and O atoms' neighbours are looked up
    (generation reads this on every structure of a case with a 13C list); a carbonyl O has one
    neighbour, no H and a double bond. A carbon with four H (no DEPT type) is left out."""
    atoms = atoms_of(mol)
    z = [atom.GetAtomicNum() for atom in atoms]
    hetero: set[int] = set()  # carbons (and others) bonded to N or O
    carbonyl: set[int] = set()  # atoms bearing a carbonyl O
    for j, zj in enumerate(z):
        if zj == 7 or zj == 8:
            atom = atoms[j]
            around = [other.GetIdx() for other in atom.GetNeighbors()]
            hetero.update(around)
            if (
                zj == 8
                and len(around) == 1
                and atom.GetTotalNumHs() == 0
                and mol.GetBondBetweenAtoms(j, around[0]).GetBondTypeAsDouble() == 2.0
            ):
                carbonyl.add(around[0])
    found: dict[tuple[str, str], int] = {}
    for i, zi in enumerate(z):
        if zi != 6:
            continue
        atom = atoms[i]
        h = atom.GetTotalNumHs()
        if h > 3:
            continue
        key = (carbon_kind(4 - atom.GetDegree() - h, i in carbonyl, i in hetero), _TYPE_NAMES[3 - h])
        found[key] = found.get(key, 0) + 1
    return tuple(sorted((kind, name, k) for (kind, name), k in found.items()))


@dataclass(frozen=True)
class CountTest:
    """The declared counts of one case: ``types`` (CH3, CH2, CH, C carbons) or None,
    ``exchangeable`` (low, high) or None, ``kinds`` ((kind, low, high), ...)."""

    types: tuple[int, int, int, int] | None = None
    exchangeable: tuple[int, int] | None = None
    kinds: tuple[tuple[str, int, int], ...] = ()

    def __post_init__(self) -> None:
        for kind, low, high in self.kinds:
            if kind not in CARBON_KINDS:
                raise ElucidateError(f"unknown carbon kind {kind!r}; known: {', '.join(CARBON_KINDS)}")
            if low > high:
                raise ElucidateError(f"carbon kind {kind}: low {low} above high {high}")

    @property
    def empty(self) -> bool:
        return self.types is None and self.exchangeable is None and not self.kinds

    @property
    def label(self) -> str:
        """How the constraint reads in reports."""
        parts = []
        if self.types is not None:
            parts.append("carbon types " + " ".join(f"{k} {n}" for k, n in zip(_TYPE_NAMES, self.types, strict=True)))
        if self.exchangeable is not None:
            low, high = self.exchangeable
            parts.append(f"exchangeable H {low}" + (f"-{high}" if high != low else ""))
        for kind, low, high in self.kinds:
            parts.append(f"{kind} C {low}" + (f"-{high}" if high != low else ""))
        return "; ".join(parts)

    def formula_problem(self, formula: Formula) -> str | None:
        """Why no structure of ``formula`` can meet the counts, or None."""
        carbons, hydrogens = formula.get("C"), formula.get("H")
        elements = [sym for sym, _ in formula.counts]
        if self.types is not None:
            on_carbon = 3 * self.types[0] + 2 * self.types[1] + self.types[2]
            if sum(self.types) != carbons:
                return f"carbon types count {sum(self.types)} C, the formula has {carbons}"
            if on_carbon > hydrogens:
                return f"carbon types put {on_carbon} H on carbon, the formula has {hydrogens} H"
            if on_carbon < hydrogens and not set(elements) & {"N", "O", "S", "P", "Si", "B"}:
                return f"carbon types put {on_carbon} H on carbon, but all {hydrogens} H of the formula must be"
            if self.exchangeable is not None and hydrogens - on_carbon < self.exchangeable[0]:
                return f"{hydrogens - on_carbon} H are left off carbon, fewer than {self.exchangeable[0]} exchangeable"
        if self.kinds and sum(low for _, low, _ in self.kinds) > carbons:
            return f"the carbon kinds need at least {sum(low for _, low, _ in self.kinds)} C, the formula has {carbons}"
        return None

    def degree_bounds(self, labels: Sequence[tuple[str, int]], counts: Sequence[int]) -> list[int] | None:
        """The skeleton degree bounds with each carbon's valence 4 lowered to 4 - h, or None when
        the carbon types do not apply (not declared, or a carbon count that differs)."""
        if self.types is None:
            return None
        carbon = sum(n for (sym, _), n in zip(labels, counts, strict=True) if sym == "C")
        if carbon != sum(self.types):
            return None
        bounds: list[int] = []
        for (sym, valence), n in zip(labels, counts, strict=True):
            if sym != "C":
                bounds += [valence] * n
        for h, n in zip((3, 2, 1, 0), self.types, strict=True):
            bounds += [4 - h] * n
        return sorted(bounds, reverse=True)

    def colouring_ok(self, colouring: Sequence[int], degree: Sequence[int], carbon_labels: Sequence[bool]) -> bool:
        """Hall's condition on the labelled skeleton: enough carbons with few enough neighbours
        for the carbons that need t or more hydrogens, for t = 3, 2, 1."""
        if self.types is None:
            return True
        room = [0, 0, 0, 0, 0]  # carbons by neighbour count 1..4 (index 0 unused)
        for i, c in enumerate(colouring):
            if carbon_labels[c]:
                room[min(degree[i], 4)] += 1
        need = 0
        have = 0
        for t in (3, 2, 1):
            need += self.types[3 - t]
            have += room[4 - t]
            if have < need:
                return False
        return True

    def counts_ok(self, counts: Counts) -> bool:
        if self.types is not None and (counts.types != self.types or counts.methane):
            return False
        if self.exchangeable is not None:
            low, high = self.exchangeable
            if not low <= counts.exchangeable <= high:
                return False
        return all(low <= counts.kinds[kind] <= high for kind, low, high in self.kinds)

    def structure_ok(self, s: Structure) -> bool:
        """The exact test on a labelled multigraph (without declared carbon kinds, from the
        elements and hydrogens alone: the kinds are the only count that needs neighbours)."""
        if self.kinds:
            return self.counts_ok(structure_counts(s))
        types = [0, 0, 0, 0]
        exchangeable = 0
        for sym, h in zip(s.elements, s.hydrogens, strict=True):
            if sym == "C":
                if h > 3:
                    return self.types is None and self._exchangeable_ok(s)  # methane carbon: no DEPT type
                types[3 - h] += 1
            elif sym in ("O", "N"):
                exchangeable += h
        if self.types is not None and tuple(types) != self.types:
            return False
        return self.exchangeable is None or self.exchangeable[0] <= exchangeable <= self.exchangeable[1]

    def _exchangeable_ok(self, s: Structure) -> bool:
        if self.exchangeable is None:
            return True
        low, high = self.exchangeable
        return low <= sum(h for sym, h in zip(s.elements, s.hydrogens, strict=True) if sym in ("O", "N")) <= high

    def mol_ok(self, mol: Mol) -> bool:
        """The exact test on a finished molecule (what filtering would do)."""
        return self.counts_ok(mol_counts(mol))
