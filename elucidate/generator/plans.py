"""Valence plans: each way of giving a formula's heavy atoms valence states, ready to generate.

Valence states come from ``constraints/elements.yaml`` (C, Si 4; N 3 or 5; P 3 or 5; O 2;
S 2, 4 or 6; H and halogens 1). A higher state stands for an oxo group and is described in
``constraints/valence_states.yaml`` (:class:`ValenceStates`).
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..elements import ElementTable, default_elements
from ..errors import ElucidateError
from ..formula import Formula
from ..tables import table_path, validated
from ..yamlnodes import as_bool, as_int, as_list, as_str, mapping, read_yaml_file
from .counts import CountTest
from .groups import default_groups, min_pi_bonds

__all__ = [
    "OxoState",
    "Plan",
    "ValenceStates",
    "default_valence_states",
    "has_group_elements",
    "load_valence_states",
    "valence_plans",
]


@dataclass(frozen=True)
class OxoState:
    """A higher valence state: the terminal atoms one of which must be double bonded to the atom,
    whether the atom may carry hydrogen, and whether SMILES write the oxo bond as X+ - O-."""

    element: str
    valence: int
    partners: frozenset[str]
    hydrogen: bool
    charge_separated: bool
    what: str


@dataclass(frozen=True, eq=False)
class ValenceStates:
    states: Mapping[tuple[str, int], OxoState]
    source: str = ""
    elements: ElementTable | None = None

    def __contains__(self, label: object) -> bool:
        return label in self.states

    def get(self, label: tuple[str, int]) -> OxoState | None:
        return self.states.get(label)

    def validate(self) -> None:
        t = self.elements or default_elements()
        for (sym, valence), state in self.states.items():
            key = f"states.{sym}{valence}"
            if sym not in t or valence not in t[sym].valences or valence == t[sym].valence:
                raise ElucidateError(f"{sym} has no higher valence {valence} in elements.yaml", key=key)
            for partner in state.partners:
                if partner not in t or t[partner].valence != 2:
                    raise ElucidateError(f"an oxo partner must be a divalent element, not {partner!r}", key=key)
        for sym in t.symbols:
            for valence in t[sym].valences[1:]:
                if (sym, valence) not in self.states:
                    raise ElucidateError(f"{sym} valence {valence} (elements.yaml) is not described", key="states")


def load_valence_states(path: str | Path | None = None, *, elements: ElementTable | None = None) -> ValenceStates:
    file = Path(path) if path is not None else table_path("valence_states.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(document, ["source", "states"], required=["states"])
    states: dict[tuple[str, int], OxoState] = {}
    keys = ["element", "valence", "oxo_partners", "hydrogen", "charge_separated", "what"]
    for item in as_list(root["states"], what="a list of valence states"):
        entry = mapping(item, keys, required=keys)
        state = OxoState(
            element=as_str(entry["element"], what="an element symbol"),
            valence=as_int(entry["valence"], minimum=1, maximum=8, what="a valence"),
            partners=frozenset(as_str(p, what="an element symbol") for p in as_list(entry["oxo_partners"])),
            hydrogen=as_bool(entry["hydrogen"]),
            charge_separated=as_bool(entry["charge_separated"]),
            what=as_str(entry["what"]),
        )
        label = (state.element, state.valence)
        if label in states:
            raise item.error(f"{state.element} valence {state.valence} is listed twice")
        states[label] = state
    source = as_str(root["source"]) if "source" in root else ""
    return validated(ValenceStates(states, source, elements), document)


@lru_cache(maxsize=1)
def default_valence_states() -> ValenceStates:
    return load_valence_states()


def _valence_splits(formula: Formula, table: ElementTable, lowest_valence: bool) -> Iterator[list[tuple[str, int]]]:
    """Each way of giving the formula's heavy atoms valence states (lowest first)."""
    per_element: list[list[list[tuple[str, int]]]] = []
    for sym, n in formula.counts:
        if sym == "H":
            continue
        states = table[sym].valences[:1] if lowest_valence else table[sym].valences
        options = []
        for split in _compositions(n, len(states)):
            atoms: list[tuple[str, int]] = []
            for v, k in zip(states, split, strict=True):
                atoms.extend([(sym, v)] * k)
            options.append(atoms)
        per_element.append(options)
    for choice in itertools.product(*per_element):
        yield [atom for part in choice for atom in part]


def _compositions(n: int, parts: int) -> Iterator[tuple[int, ...]]:
    """Ways to write n as an ordered sum of ``parts`` non-negative counts, lowest states first."""
    if parts == 1:
        yield (n,)
        return
    for first in range(n, -1, -1):
        for rest in _compositions(n - first, parts - 1):
            yield (first, *rest)


@dataclass(frozen=True)
class Plan:
    """One valence-state split of the formula's heavy atoms, ready to generate."""

    n: int
    labels: tuple[tuple[str, int], ...]  # distinct (element, valence), highest valence first
    counts: tuple[int, ...]  # atoms of each label
    bounds: tuple[int, ...]  # the atoms' valences: degree bounds for the skeletons
    bond_sum: int  # bond orders summed over all heavy-atom bonds
    rings_max: int
    max_extra: int  # highest bond order - 1
    hydrogens: int
    count_test: CountTest | None = None  # declared NMR counts the structures must meet
    cycles: tuple[int, ...] = ()  # simple-cycle lengths every skeleton must have (required rings)


def valence_plans(
    formula: Formula,
    table: ElementTable,
    *,
    max_rings: int | None,
    max_bond_order: int,
    lowest_valence: bool,
    required: tuple[str, ...] = (),
    states: ValenceStates | None = None,
    counts: CountTest | None = None,
) -> list[Plan]:
    """One plan per valence split. Each plan's ring bound is lowered by the π bonds (bond order
    − 1 summed) every wanted molecule must have — one oxo bond per higher-valence atom, and
    those the ``required`` groups imply (:func:`~.groups.min_pi_bonds`): rings = bond sum −
    (n − 1) − π bonds, and a ring bound is hereditary, so skeleton generation prunes on it.
    Declared ``counts`` (:mod:`.counts`) lower the carbons' degree bounds to 4 − h and travel
    with the plan to the labelling; a formula that cannot meet them gets no plan. The rings of
    the required groups' skeleton conditions (:attr:`~.groups.Group.cycles`) travel with it to
    skeleton growth."""
    oxo_states = states or default_valence_states()
    hydrogens = formula.get("H")
    plans: list[Plan] = []
    if not has_group_elements(formula, required):
        return plans  # a required group needs an element (or more atoms of it) the formula lacks
    if counts is not None and counts.formula_problem(formula) is not None:
        return plans
    for heavy in _valence_splits(formula, table, lowest_valence):
        n = len(heavy)
        total_valence = sum(v for _, v in heavy)
        if n == 0 or (total_valence - hydrogens) % 2:
            continue
        bond_sum = (total_valence - hydrogens) // 2
        oxo = sum(1 for atom in heavy if atom in oxo_states)
        rings_max = bond_sum - (n - 1) - min_pi_bonds(required, default_groups(), oxo=oxo)
        if rings_max < 0:
            continue
        if max_rings is not None:
            rings_max = min(rings_max, max_rings)
        labels = sorted(set(heavy), key=lambda a: (-a[1], a[0]))
        per_label = [sum(1 for atom in heavy if atom == label) for label in labels]
        bounds = counts.degree_bounds(labels, per_label) if counts is not None else None
        cycles = tuple(sorted({length for name in required for length in default_groups()[name].cycles}))
        plans.append(
            Plan(
                n,
                tuple(labels),
                tuple(per_label),
                tuple(bounds) if bounds is not None else tuple(v for _, v in heavy),
                bond_sum,
                rings_max,
                max_bond_order - 1,
                hydrogens,
                counts,
                cycles,
            )
        )
    return plans


def has_group_elements(formula: Formula, required: Sequence[str]) -> bool:
    """Whether the formula has the atoms every required group needs (read from the groups'
    skeleton conditions)."""
    from .._rdkit import Chem

    if not required:
        return True
    table = Chem.GetPeriodicTable()
    groups = default_groups()
    for name in required:
        for z, n in groups[name].elements.items():
            if formula.get(table.GetElementSymbol(z)) < n:
                return False
    return True
