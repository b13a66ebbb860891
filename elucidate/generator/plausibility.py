"""Plausibility profiles (``constraints/plausibility.yaml``): rules that mark a structure as one a
chemist would not expect to isolate, each a SMARTS or a named test, with its reason."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import as_list, as_str, mapping, read_yaml_file
from .implication import PatternNeeds, pattern_needs

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = [
    "TESTS",
    "TEST_NEEDS",
    "Profiles",
    "Rule",
    "aromatic_atom_only_in_small_rings",
    "bridgehead_double_bond",
    "default_profiles",
    "load_profiles",
]


def bridgehead_double_bond(mol: Mol) -> bool:
    """Bredt's rule with Fawcett's S-number: a double or aromatic bond at a bridgehead of a
    bridged ring pair whose bridges hold fewer than seven atoms in all (S = atoms of the bicyclic
    system minus the two bridgeheads; S >= 7, as in bicyclo[3.3.1]non-1-ene, is isolable)."""
    found = mol.GetRingInfo().AtomRings()
    if len(found) < 2:
        return False
    for a, partners in _short_bridgeheads(found):
        for b in partners:
            bond = mol.GetBondBetweenAtoms(a, b)
            # aromatic bonds count too: a benzene ring cannot be a short bridge's end
            if bond is not None and (bond.GetBondTypeAsDouble() == 2.0 or bond.GetIsAromatic()):
                return True
    return False


@lru_cache(maxsize=4096)
def _short_bridgeheads(rings: tuple[tuple[int, ...], ...]) -> tuple[tuple[int, tuple[int, ...]], ...]:
    """The bridgeheads of bridged ring pairs with S < 7, each with its neighbours in its
    bicyclic system, read off the smallest set of rings alone (many structures share one ring
    set). An atom of both rings is a bridgehead when it has a neighbour in each ring's own part;
    two atoms of the system are bonded only by a ring bond (the bond closes a cycle through the
    system), and each ring bond joins two atoms adjacent in some ring of the set (the set spans
    every cycle), so those neighbours can be read off the rings."""
    bonded: dict[int, set[int]] = {}
    for ring in rings:
        for k, x in enumerate(ring):
            y = ring[k - 1]
            bonded.setdefault(x, set()).add(y)
            bonded.setdefault(y, set()).add(x)
    sets = [frozenset(r) for r in rings]
    found: list[tuple[int, tuple[int, ...]]] = []
    for i in range(len(sets)):
        for j in range(i + 1, len(sets)):
            r1, r2 = sets[i], sets[j]
            shared = r1 & r2
            if len(shared) < 3:
                continue  # fused (one shared bond) or separate rings: Bredt does not apply
            system = r1 | r2
            if len(system) - 2 >= 7:
                continue
            only1, only2 = r1 - shared, r2 - shared
            for a in sorted(shared):
                around = bonded[a]
                if around & only1 and around & only2:
                    found.append((a, tuple(sorted(around & system))))
    return tuple(found)


def aromatic_atom_only_in_small_rings(mol: Mol) -> bool:
    """An aromatic atom all of whose rings (smallest set) have fewer than five atoms: a benzene
    ring drawn with a chord across it (Dewar-benzene valence tautomers) that RDKit still
    perceives as aromatic. Fused small rings (benzocyclobutene) keep their six-membered ring."""
    rings = mol.GetRingInfo().AtomRings()
    for i in range(mol.GetNumAtoms()):
        if not mol.GetAtomWithIdx(i).GetIsAromatic():
            continue
        sizes = [len(r) for r in rings if i in r]
        if sizes and max(sizes) < 5:
            return True
    return False


#: named tests for rules SMARTS cannot express
TESTS: Mapping[str, Callable[[Mol], bool]] = {
    "bridgehead_double_bond": bridgehead_double_bond,
    "aromatic_atom_only_in_small_rings": aromatic_atom_only_in_small_rings,
}


#: what any structure a named test can flag has (a bridgehead double bond needs two rings and
#: a double bond in the Kekulé form; a chorded aromatic ring needs an aromatic atom in a ring)
TEST_NEEDS: Mapping[str, PatternNeeds] = {
    "bridgehead_double_bond": PatternNeeds(double=True, rings=2),
    "aromatic_atom_only_in_small_rings": PatternNeeds(rings=1, aromatic=True),
}


@dataclass(frozen=True)
class Rule:
    name: str
    reason: str
    smarts: str | None = None
    test: str | None = None

    def matches(self, mol: Mol) -> bool:
        return self.matcher()(mol)

    def matcher(self) -> Callable[[Mol], bool]:
        """The rule's test with its SMARTS compiled once (for tests run on many molecules)."""
        if self.smarts is not None:
            pattern = compiled_smarts(self.smarts)
            return lambda mol: bool(mol.HasSubstructMatch(pattern))
        assert self.test is not None
        return TESTS[self.test]

    @property
    def needs(self) -> PatternNeeds:
        """What any structure the rule flags has (:func:`~.implication.pattern_needs`)."""
        if self.smarts is not None:
            return pattern_needs(compiled_smarts(self.smarts))
        assert self.test is not None
        return TEST_NEEDS[self.test]


@dataclass(frozen=True, eq=False)
class Profiles:
    profiles: Mapping[str, tuple[Rule, ...]]

    def __getitem__(self, name: str) -> tuple[Rule, ...]:
        try:
            return self.profiles[name]
        except KeyError as exc:
            raise ElucidateError(
                f"unknown plausibility profile {name!r}; profiles: {', '.join(self.profiles)}"
            ) from exc

    def validate(self) -> None:
        for profile, rules in self.profiles.items():
            names = [r.name for r in rules]
            if len(names) != len(set(names)):
                raise ElucidateError("rule names must be unique", key=f"profiles.{profile}")
            for r in rules:
                if (r.smarts is None) == (r.test is None):
                    raise ElucidateError("give exactly one of smarts or test", key=f"profiles.{profile}.{r.name}")
                if r.test is not None and r.test not in TESTS:
                    raise ElucidateError(
                        f"unknown test {r.test!r}; tests: {', '.join(TESTS)}", key=f"profiles.{profile}.{r.name}"
                    )
                if r.smarts is not None:
                    try:
                        compiled_smarts(r.smarts)
                    except ElucidateError as exc:
                        raise ElucidateError(exc.message, key=f"profiles.{profile}.{r.name}") from exc


def load_profiles(path: str | Path | None = None) -> Profiles:
    file = Path(path) if path is not None else table_path("plausibility.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(document, ["source", "profiles"], required=["profiles"])
    body = root["profiles"]
    if not isinstance(body.value, dict) or not body.value:
        raise body.error("expected a mapping of profile names to rule lists")
    profiles = {}
    for name, loc in body.value.items():
        rules = []
        for item in as_list(loc, what="a list of rules"):
            entry = mapping(item, ["name", "smarts", "test", "reason"], required=["name", "reason"])
            rules.append(
                Rule(
                    name=as_str(entry["name"], what="a rule name"),
                    reason=as_str(entry["reason"], what="the chemical reason"),
                    smarts=as_str(entry["smarts"], what="a SMARTS pattern") if "smarts" in entry else None,
                    test=as_str(entry["test"], what="a test name") if "test" in entry else None,
                )
            )
        profiles[str(name)] = tuple(rules)
    return validated(Profiles(profiles), document)


@lru_cache(maxsize=1)
def default_profiles() -> Profiles:
    return load_profiles()
