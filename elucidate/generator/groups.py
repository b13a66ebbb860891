"""The functional-group vocabulary (``constraints/groups.yaml``): names, SMARTS, definitions, and
the necessary conditions the generator prunes on (skeleton, Kekulé form, π bonds)."""

from __future__ import annotations

import difflib
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import cached_property, lru_cache
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import Located, as_choice, as_int, as_str, mapping, read_yaml_file
from .implication import Features, excluded_by, pattern_implies, pattern_needs

if TYPE_CHECKING:
    from .._rdkit import Mol
    from ..formula import Formula

__all__ = [
    "PI_CLASSES",
    "Group",
    "GroupTable",
    "SearchSteps",
    "could_hold",
    "default_groups",
    "found_by",
    "load_groups",
    "min_pi_bonds",
]

_NAME = re.compile(r"^[a-z][a-z0-9_]*$")
_ELEMENT = re.compile(r"#\d+")

#: classes of π bonds (see groups.yaml and :func:`min_pi_bonds`)
PI_CLASSES = ("aromatic", "aliphatic", "aliphatic_cc", "aliphatic_cx", "carbon", "hetero")


@dataclass(frozen=True)
class Group:
    name: str
    smarts: str
    definition: str
    source: str
    skeleton: str | None = None  # necessary condition on the labelled skeleton (see groups.yaml)
    pi_bonds: tuple[int, str] | None = None  # (at least, class): π bonds every match implies
    kekule: str | None = None  # necessary condition on the labelled multigraph (see groups.yaml)

    @property
    def pattern(self) -> Mol:
        """The compiled RDKit query (cached per group)."""
        return compiled_smarts(self.smarts)

    @property
    def skeleton_pattern(self) -> Mol | None:
        return compiled_smarts(self.skeleton) if self.skeleton is not None else None

    @property
    def elements(self) -> dict[int, int]:
        """Atomic number -> how many atoms of it any molecule with the group has at least: the
        bracket atoms of the skeleton condition that name exactly one element (``[#8;D1]``), or
        the atoms of the group's SMARTS that must be one element (a match maps query atoms to
        distinct atoms), whichever asks more."""
        need: dict[int, int] = {}
        for atom in re.findall(r"\[([^\]]*)\]", self.skeleton or ""):
            numbers = _ELEMENT.findall(atom)
            if len(numbers) == 1 and "," not in atom.split(";")[0]:
                z = int(numbers[0][1:])
                need[z] = need.get(z, 0) + 1
        from_smarts: dict[int, int] = {}
        for query_atom in self.pattern.GetAtoms():
            z = query_atom.GetAtomicNum()  # 0 unless the query atom must be this one element
            if z:
                from_smarts[z] = from_smarts.get(z, 0) + 1
        return {z: max(need.get(z, 0), from_smarts.get(z, 0)) for z in sorted(set(need) | set(from_smarts))}

    @property
    def kekule_pattern(self) -> Mol | None:
        return compiled_smarts(self.kekule) if self.kekule is not None else None

    @property
    def shape(self) -> str | None:
        """The skeleton condition with its element primitives (``#n``) dropped: a weaker condition
        on the bare graph, tested once per skeleton before any element labels are placed."""
        return _ELEMENT.sub("*", self.skeleton) if self.skeleton is not None else None

    @property
    def shape_pattern(self) -> Mol | None:
        return compiled_smarts(self.shape) if self.shape is not None else None

    @property
    def cycles(self) -> tuple[int, ...]:
        """Lengths of the rings in the skeleton condition: any molecule with the group has a
        simple cycle of each length in its skeleton (a match maps a ring of the pattern onto
        one)."""
        from .._rdkit import Chem

        shape = self.shape_pattern
        if shape is None:
            return ()
        probe = Chem.Mol(shape)
        Chem.FastFindRings(probe)
        return tuple(sorted(len(ring) for ring in probe.GetRingInfo().AtomRings()))


@dataclass(frozen=True, eq=False)
class GroupTable:
    groups: Mapping[str, Group]
    source: str = ""

    def __getitem__(self, name: str) -> Group:
        try:
            return self.groups[name]
        except KeyError as exc:
            close = difflib.get_close_matches(name, list(self.names), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise ElucidateError(f"unknown group {name!r}{hint}; known groups: {', '.join(self.names)}") from exc

    def __contains__(self, name: object) -> bool:
        return name in self.groups

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(self.groups)

    def names_for(self, formula: Formula) -> tuple[str, ...]:
        """The groups a molecule of ``formula`` could have: every group but those
        :func:`could_hold` rules out by their atoms' elements (computed once per formula)."""
        return _names_for(self._smarts_by_name, formula)

    def present(
        self,
        mol: Mol,
        formula: Formula,
        *,
        having: frozenset[str] = frozenset(),
        lacking: frozenset[str] = frozenset(),
        features: Features | None = None,
    ) -> frozenset[str]:
        """The groups ``mol`` (aromaticity perceived, of ``formula``) has: the same names as
        matching every group of :meth:`names_for`, with fewer searches (:meth:`search_steps`).
        (Reading a molecule's bonds and rings in Python costs more than the searches it would
        save.)"""
        return found_by(mol, self.search_steps(formula, having=having, lacking=lacking, features=features))

    def search_steps(
        self,
        formula: Formula,
        *,
        having: frozenset[str] = frozenset(),
        lacking: frozenset[str] = frozenset(),
        features: Features | None = None,
    ) -> SearchSteps:
        """How :meth:`present` finds the groups of a molecule of ``formula`` (found once per
        formula and arguments). A group is not searched when every match needs more atoms of an
        element than the formula has (:func:`~.implication.pattern_needs`: an ester needs two
        O), or when a group its pattern provably implies (:func:`~.implication.pattern_implies`:
        a ketone is a carbonyl) was not found. ``having`` and ``lacking``: groups the caller
        knows the molecule has and lacks (the case's required and forbidden groups, which every
        generated structure obeys): not searched, nor the groups a group in ``having`` implies,
        nor those a group in ``having`` rules out by taking all the formula's atoms of an element
        (:func:`~.implication.excluded_by`: no hydroxyl where the one O is a required ketone's).
        ``features``: what the molecule has (its Kekulé form's multiple bonds, rings, whether it
        may be aromatic): a group whose every match needs something it lacks is not searched."""
        key = None if features is None else features.kind
        return _search_steps(self._smarts_by_name, formula, having, lacking, key)

    @cached_property
    def _smarts_by_name(self) -> tuple[tuple[str, str], ...]:
        """The table's content as the per-formula caches key it: a copy of the table (each worker
        job unpickles its own) finds what its first copy computed."""
        return tuple((name, group.smarts) for name, group in self.groups.items())

    def validate(self) -> None:
        for name, group in self.groups.items():
            if not _NAME.match(name) or group.name != name:
                raise ElucidateError(f"bad group name {name!r}", key=f"groups.{name}")
            try:
                _ = group.pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.smarts") from exc
            try:
                _ = group.skeleton_pattern
                _ = group.shape_pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.skeleton") from exc
            try:
                _ = group.kekule_pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"groups.{name}.kekule") from exc
            if group.kekule is not None and group.skeleton is None:
                raise ElucidateError("a kekule condition needs a skeleton condition too", key=f"groups.{name}.kekule")
            if group.shape is not None and re.search(r"[A-CE-Za-z]", group.shape):
                raise ElucidateError(
                    f"skeleton condition {group.skeleton!r}: use only #n element primitives, D degrees "
                    "and ~ bonds, so that dropping the elements gives a condition on the bare graph",
                    key=f"groups.{name}.skeleton",
                )


def load_groups(path: str | Path | None = None) -> GroupTable:
    file = Path(path) if path is not None else table_path("groups.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(document, ["source", "groups"], required=["groups"])
    body = root["groups"]
    if not isinstance(body.value, dict) or not body.value:
        raise body.error("expected a mapping of group names")
    groups = {}
    for name, loc in body.value.items():
        entry = mapping(
            loc,
            ["smarts", "definition", "source", "skeleton", "kekule", "pi_bonds"],
            required=["smarts", "definition", "source"],
        )
        groups[str(name)] = Group(
            name=str(name),
            smarts=as_str(entry["smarts"], what="a SMARTS pattern"),
            definition=as_str(entry["definition"], what="a one-line definition"),
            source=as_str(entry["source"], what="a source"),
            skeleton=as_str(entry["skeleton"], what="a SMARTS pattern") if "skeleton" in entry else None,
            pi_bonds=_pi_bonds(entry["pi_bonds"]) if "pi_bonds" in entry else None,
            kekule=as_str(entry["kekule"], what="a SMARTS pattern") if "kekule" in entry else None,
        )
    table = GroupTable(groups, as_str(root["source"]) if "source" in root else "")
    return validated(table, document)


def _pi_bonds(loc: Located) -> tuple[int, str]:
    entry = mapping(loc, ["at_least", "among"], required=["at_least", "among"])
    count = as_int(entry["at_least"], what="a whole number of π bonds", minimum=1)
    kind = as_choice(entry["among"], PI_CLASSES, what="a class of π bonds:")
    return count, kind


def min_pi_bonds(required: Iterable[str], groups: GroupTable, *, oxo: int = 0) -> int:
    """A lower bound on the π bonds (bond order − 1 summed over all bonds, in the generator's
    Kekulé multigraph) of any molecule that has every group in ``required`` and ``oxo``
    higher-valence atoms (each needs its own double bond to a terminal O or S).

    Classes: ``aromatic`` (a bond with an aromatic carbon end) and ``aliphatic`` (a bond with a
    carbon end, both ends non-aromatic) are disjoint and make up ``carbon`` (a bond with a carbon
    end); ``aliphatic`` is made of the disjoint ``aliphatic_cc`` (both ends carbon) and
    ``aliphatic_cx`` (the other end another element); ``hetero`` (no carbon end, as every oxo
    bond) is disjoint from all of them. A class holds at least its own bound and at least the
    sum of its parts' bounds: max(aromatic + max(aliphatic, aliphatic_cc + aliphatic_cx),
    carbon) + max(hetero, oxo)."""
    best = dict.fromkeys(PI_CLASSES, 0)
    for name in required:
        bound = groups[name].pi_bonds
        if bound is not None:
            best[bound[1]] = max(best[bound[1]], bound[0])
    aliphatic = max(best["aliphatic"], best["aliphatic_cc"] + best["aliphatic_cx"])
    return max(best["aromatic"] + aliphatic, best["carbon"]) + max(best["hetero"], oxo)


@lru_cache(maxsize=1)
def default_groups() -> GroupTable:
    return load_groups()


@lru_cache(maxsize=256)
def _names_for(groups: tuple[tuple[str, str], ...], formula: Formula) -> tuple[str, ...]:
    """The names of ``groups`` ((name, SMARTS) in table order) :func:`could_hold` leaves in."""
    return tuple(name for name, smarts in groups if could_hold(smarts, formula))


@lru_cache(maxsize=256)
def _search_plan(groups: tuple[tuple[str, str], ...], formula: Formula) -> tuple[tuple[str, Mol, frozenset[str]], ...]:
    """The ``groups`` ((name, SMARTS) in table order) that a molecule of ``formula`` could have
    (:func:`could_hold`) and has the atoms for, in the order :meth:`GroupTable.present` searches
    them, each with its pattern and the groups searched before it that its pattern implies. A
    group comes after the groups it implies (table order otherwise; groups that imply each other
    keep table order and leave each other out)."""
    from .._rdkit import Chem

    smarts_of = dict(groups)
    patterns = {name: compiled_smarts(smarts_of[name]) for name in _names_for(groups, formula)}
    names = list(patterns)
    implies = {a: {b for b in names if b != a and pattern_implies(patterns[a], patterns[b])} for a in names}
    order: list[str] = []
    while len(order) < len(names):
        left = [n for n in names if n not in order]
        ready = [n for n in left if implies[n] <= set(order)]
        order.append(ready[0] if ready else left[0])
    present = {Chem.GetPeriodicTable().GetAtomicNumber(s): n for s, n in formula.counts if n}
    plan = []
    for position, name in enumerate(order):
        needs = pattern_needs(patterns[name])
        if any(present.get(z, 0) < k for z, k in needs.elements):
            continue  # more atoms of an element than the formula has: never found
        plan.append((name, patterns[name], frozenset(implies[name] & set(order[:position]))))
    return tuple(plan)


@dataclass(frozen=True)
class SearchSteps:
    """How :meth:`GroupTable.present` finds a molecule's groups: ``certain`` are found without a
    search; each step is a group's name, its pattern and the groups it implies, searched in
    order and only when the groups it implies were found."""

    certain: frozenset[str]
    steps: tuple[tuple[str, Mol, frozenset[str]], ...]


def found_by(mol: Mol, steps: SearchSteps) -> frozenset[str]:
    """The groups ``mol`` has, found by ``steps``."""
    found = set(steps.certain)
    for name, pattern, implied in steps.steps:
        if implied <= found and mol.HasSubstructMatch(pattern):
            found.add(name)
    return frozenset(found)


@lru_cache(maxsize=256)
def _search_steps(
    groups: tuple[tuple[str, str], ...],
    formula: Formula,
    having: frozenset[str],
    lacking: frozenset[str],
    features: tuple[bool, bool, int, bool] | None,
) -> SearchSteps:
    """:meth:`GroupTable.search_steps`, with ``features`` as (double, triple, rings,
    aromatic)."""
    from .._rdkit import Chem

    plan = _search_plan(groups, formula)
    known = _implied_closure(plan, having) if having else having
    smarts_of = dict(groups)
    taking = [compiled_smarts(smarts_of[name]) for name in sorted(having) if name in smarts_of]
    atoms = {Chem.GetPeriodicTable().GetAtomicNumber(s): n for s, n in formula.counts if n}
    has = None
    if features is not None:
        double, triple, rings, aromatic = features
        has = Features(atoms, double, triple, rings, aromatic)
    steps = []
    for name, pattern, implied in plan:
        if name in known or name in lacking:
            continue
        if has is not None and not has.allows(pattern_needs(pattern)):
            continue  # every match needs a multiple bond, ring or aromatic atom it lacks
        if any(excluded_by(theirs, pattern, atoms) for theirs in taking):
            continue
        steps.append((name, pattern, implied))
    return SearchSteps(frozenset(name for name, _, _ in plan if name in known), tuple(steps))


@lru_cache(maxsize=64)
def _implied_closure(plan: tuple[tuple[str, Mol, frozenset[str]], ...], having: frozenset[str]) -> frozenset[str]:
    """``having`` and every group of the plan that a group in it implies (a group's implied
    groups come before it in the plan: its own implications are already among them)."""
    known = set(having)
    for name, _, implied in reversed(plan):
        if name in known:
            known |= implied
    return frozenset(known)


_BRACKET = re.compile(r"\[([^\]]*)\]")
_ELEMENT_TOKEN = re.compile(r"#(\d+)|([A-Z][a-z]?)|([cnops])")


def could_hold(smarts: str, formula: Formula) -> bool:
    """False when some bracket atom of the SMARTS names only elements the formula lacks (e.g. the
    halogen of ``[CX4][F,Cl,Br,I]`` in a hydrocarbon). Permissive: a token it cannot read (a
    recursive or negated primitive) never makes a group impossible."""
    from .._rdkit import Chem
    from ..elements import default_elements

    periodic = Chem.GetPeriodicTable()
    known = set(default_elements().symbols)
    present = {s for s, n in formula.counts if n}
    for atom in _BRACKET.findall(smarts):
        if "$" in atom or "!" in atom:
            continue
        named = set()
        for number, symbol, aromatic in _ELEMENT_TOKEN.findall(atom.split(";")[0]):
            if number:
                named.add(periodic.GetElementSymbol(int(number)))
            elif symbol in known:
                named.add(symbol)
            elif aromatic:
                named.add(aromatic.upper())
        named.discard("H")  # an H count primitive, not an atom
        if named and not named & present:
            return False
    return True
