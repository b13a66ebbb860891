"""Hard structural constraints on generated isomers: required / forbidden groups and SMARTS,
largest ring size, and a plausibility profile. Each constraint is a yes/no test on the finished
molecule (aromaticity perceived), so applying it during generation equals generating everything
and filtering.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, TypeAlias

from ..errors import ElucidateError
from ..smarts import compiled_smarts
from .counts import CountTest
from .groups import GroupTable, default_groups
from .implication import Features, PatternNeeds, first_implied, pattern_needs
from .plausibility import Rule, default_profiles

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = ["CompiledSelection", "MolTest", "Selection", "SkeletonPatterns"]

#: (shape, labelled, kekule) conditions of required groups on a skeleton: on the bare graph,
#: with element labels, and (or None) on the labelled multigraph in Kekulé form
SkeletonPatterns: TypeAlias = "tuple[tuple[Mol, Mol, Mol | None], ...]"
#: a yes/no test on a finished molecule
MolTest: TypeAlias = "Callable[[Mol], bool]"


@dataclass(frozen=True)
class Selection:
    require: tuple[str, ...] = ()  # group names from constraints/groups.yaml
    forbid: tuple[str, ...] = ()
    require_smarts: tuple[str, ...] = ()
    forbid_smarts: tuple[str, ...] = ()
    max_ring_size: int | None = None
    profile: str | None = None  # a plausibility profile from constraints/plausibility.yaml
    counts: CountTest | None = None  # declared NMR counts, pushed into generation (.counts)

    @property
    def empty(self) -> bool:
        return (
            not (self.require or self.forbid or self.require_smarts or self.forbid_smarts)
            and self.max_ring_size is None
            and self.profile is None
            and (self.counts is None or self.counts.empty)
        )

    @property
    def count_test(self) -> CountTest | None:
        """The declared counts, or None when there are none."""
        return None if self.counts is None or self.counts.empty else self.counts

    def pushed(self, groups: GroupTable | None = None) -> tuple[str, ...]:
        """Required groups that also prune during generation: by their skeleton and Kekulé
        conditions, or by the ring bound their π bonds imply (see groups.yaml)."""
        g = groups or default_groups()
        return tuple(name for name in self.require if g[name].skeleton is not None or g[name].pi_bonds is not None)

    def skeleton_patterns(self, groups: GroupTable | None = None) -> SkeletonPatterns:
        """(shape, labelled, kekule) patterns of the pushed groups: conditions on the bare
        skeleton, on the skeleton with element labels, and (or None) on the labelled multigraph
        in its Kekulé form."""
        g = groups or default_groups()
        patterns = []
        for name in self.pushed(g):
            group = g[name]
            if group.skeleton is None:
                continue
            shape, labelled = group.shape_pattern, group.skeleton_pattern
            assert shape is not None and labelled is not None  # a group with a skeleton has both
            patterns.append((shape, labelled, group.kekule_pattern))
        return tuple(patterns)

    def compile(self, groups: GroupTable | None = None, *, pushed_counts: bool = False) -> CompiledSelection:
        """The yes/no tests on a finished molecule. ``pushed_counts``: leave out the declared
        counts, because generation already applies them exactly (:mod:`.counts`)."""
        g = groups or default_groups()
        both = sorted(set(self.require) & set(self.forbid))
        if both:
            raise ElucidateError(f"group {both[0]!r} is both required and forbidden")
        needed = [(f"group {n}", g[n].pattern) for n in self.require]
        needed += [(f"SMARTS {t}", compiled_smarts(t)) for t in self.require_smarts]
        banned = [(f"group {n}", g[n].pattern) for n in self.forbid]
        banned += [(f"SMARTS {t}", compiled_smarts(t)) for t in self.forbid_smarts]
        pair = first_implied([m for _, m in needed], [m for _, m in banned])
        if pair is not None:
            need, ban = needed[pair[0]][0], banned[pair[1]][0]
            raise ElucidateError(
                f"every structure with the required {need} matches the forbidden {ban}: nothing could survive"
            )
        tests: list[tuple[str, MolTest]] = []  # (label, passes)
        # per test: what a match needs and whether the test passes when no match is possible
        shortcuts: list[tuple[PatternNeeds, bool] | None] = []
        reasons: dict[str, Callable[[Mol], str]] = {}  # label -> what a structure breaking it has or lacks
        for name in self.require:
            tests.append((f"require {name}", _has(g[name].pattern)))
            shortcuts.append((pattern_needs(g[name].pattern), False))
            reasons[f"require {name}"] = _absent(f"no {name} group")
        for name in self.forbid:
            tests.append((f"forbid {name}", _lacks(g[name].pattern)))
            shortcuts.append((pattern_needs(g[name].pattern), True))
            reasons[f"forbid {name}"] = _present(f"a {name} group", g[name].pattern)
        for text in self.require_smarts:
            tests.append((f"require SMARTS {text}", _has(compiled_smarts(text))))
            shortcuts.append((pattern_needs(compiled_smarts(text)), False))
            reasons[f"require SMARTS {text}"] = _absent("no match anywhere in it")
        for text in self.forbid_smarts:
            tests.append((f"forbid SMARTS {text}", _lacks(compiled_smarts(text))))
            shortcuts.append((pattern_needs(compiled_smarts(text)), True))
            reasons[f"forbid SMARTS {text}"] = _present("a match", compiled_smarts(text))
        if self.max_ring_size is not None:
            if self.max_ring_size < 3:
                raise ElucidateError(f"largest ring size must be 3 or more, got {self.max_ring_size}")
            limit = self.max_ring_size
            tests.append(
                (f"largest ring {limit}", lambda mol: all(len(r) <= limit for r in mol.GetRingInfo().AtomRings()))
            )
            shortcuts.append(None)
            reasons[f"largest ring {limit}"] = _largest_ring
        test = self.count_test
        if test is not None and not pushed_counts:
            tests.append((test.label, test.mol_ok))
            shortcuts.append(None)
            reasons[test.label] = _absent("its carbon and hydrogen counts differ from the declared ones")
        rules = default_profiles()[self.profile] if self.profile is not None else ()
        for rule in rules:
            tests.append((f"implausible {rule.name}", _not(rule.matcher())))
            shortcuts.append((rule.needs, True))
            reasons[f"implausible {rule.name}"] = _absent(rule.reason)
        return CompiledSelection(tuple(tests), reasons, tuple(shortcuts), tuple(rules))


def _largest_ring(mol: Mol) -> str:
    return f"it has a ring of {max(len(r) for r in mol.GetRingInfo().AtomRings())} atoms"


def _absent(words: str) -> Callable[[Mol], str]:
    return lambda mol: words


def _present(what: str, pattern: Mol) -> Callable[[Mol], str]:
    def where(mol: Mol) -> str:
        atoms = mol.GetSubstructMatch(pattern)
        named = ", ".join(f"{mol.GetAtomWithIdx(i).GetSymbol()}{i + 1}" for i in atoms)
        return f"{what} at atoms {named} (numbered from 1 in the order of its SMILES)" if atoms else f"{what} in it"

    return where


def _has(pattern: Mol) -> MolTest:
    return lambda mol: bool(mol.HasSubstructMatch(pattern))


def _lacks(pattern: Mol) -> MolTest:
    return lambda mol: not mol.HasSubstructMatch(pattern)


def _not(test: MolTest) -> MolTest:
    return lambda mol: not test(mol)


@dataclass(frozen=True)
class CompiledSelection:
    tests: tuple[tuple[str, MolTest], ...]
    #: label -> why a structure breaks it, in the structure's terms (what it has or lacks)
    reasons: Mapping[str, Callable[[Mol], str]] = field(default_factory=dict)
    #: per test (or empty): what any match of its pattern needs and the test's outcome when a
    #: structure lacks it (no match possible), or None for a test without a pattern
    shortcuts: tuple[tuple[PatternNeeds, bool] | None, ...] = ()
    #: the plausibility profile's rules (their tests are among ``tests``, labelled
    #: "implausible <name>")
    rules: tuple[Rule, ...] = ()
    #: per kind of structure (its features): the tests to run in order, a test None where the
    #: shortcut decides that the structure breaks it (found once per kind, :meth:`_steps`)
    _by_features: dict[tuple[object, ...], tuple[tuple[str, MolTest | None], ...]] = field(
        default_factory=dict, compare=False, repr=False
    )

    def reason(self, label: str, mol: Mol) -> str:
        """Why ``mol``, which breaks the constraint ``label``, breaks it: what it lacks, or
        where it holds what is forbidden (atoms numbered from 1 in the order of the SMILES as
        given), words the label itself does not repeat."""
        explain = self.reasons.get(label)
        return explain(mol) if explain is not None else "it breaks this constraint"

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(label for label, _ in self.tests)

    def without(self, labels: frozenset[str]) -> CompiledSelection:
        """These tests with those ``labels`` left out (decided elsewhere)."""
        kept = [k for k, (label, _) in enumerate(self.tests) if label not in labels]
        return CompiledSelection(
            tuple(self.tests[k] for k in kept),
            self.reasons,
            tuple(self.shortcuts[k] for k in kept) if self.shortcuts else (),
            self.rules,
        )

    def first_failure(self, mol: Mol, features: Features | None = None) -> str | None:
        """The label of the first constraint ``mol`` (aromaticity perceived) breaks, or None.
        ``features``: what the structure has; a pattern test whose match needs something it
        lacks is decided without a search (the same outcome: no match is possible)."""
        steps = self._steps(features) if features is not None and self.shortcuts else self.tests
        for label, passes in steps:
            if passes is None or not passes(mol):
                return label
        return None

    def _steps(self, features: Features) -> tuple[tuple[str, MolTest | None], ...]:
        """The tests a structure with these ``features`` runs, in order: a test its shortcut
        passes is left out, and the list ends at a test its shortcut fails (given as None).
        Structures of one task share a few kinds of features, so this is found once per kind."""
        key = (*features.kind, tuple(features.elements.items()))
        steps = self._by_features.get(key)
        if steps is None:
            out: list[tuple[str, MolTest | None]] = []
            for (label, passes), shortcut in zip(self.tests, self.shortcuts, strict=True):
                if shortcut is not None and not features.allows(shortcut[0]):
                    if shortcut[1]:
                        continue
                    out.append((label, None))
                    break
                out.append((label, passes))
            steps = self._by_features[key] = tuple(out)
        return steps
