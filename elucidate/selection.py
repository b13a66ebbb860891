"""Hard structural constraints on generated isomers: required / forbidden groups and SMARTS,
largest ring size. Each constraint is a yes/no test on the finished molecule (aromaticity
perceived), so applying it during generation equals generating everything and filtering.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from .errors import ElucidateError
from .groups import GroupTable, default_groups

__all__ = ["Selection", "CompiledSelection"]


@dataclass(frozen=True)
class Selection:
    require: tuple[str, ...] = ()  # group names from constraints/groups.yaml
    forbid: tuple[str, ...] = ()
    require_smarts: tuple[str, ...] = ()
    forbid_smarts: tuple[str, ...] = ()
    max_ring_size: int | None = None

    @property
    def empty(self) -> bool:
        return not (self.require or self.forbid or self.require_smarts or self.forbid_smarts) and self.max_ring_size is None

    def compile(self, groups: GroupTable | None = None) -> "CompiledSelection":
        from ._rdkit import mol_from_smarts

        g = groups or default_groups()
        both = sorted(set(self.require) & set(self.forbid))
        if both:
            raise ElucidateError(f"group {both[0]!r} is both required and forbidden")
        tests: list[tuple[str, Any, bool]] = []
        for name in self.require:
            tests.append((f"require {name}", g[name].pattern, True))
        for name in self.forbid:
            tests.append((f"forbid {name}", g[name].pattern, False))
        for text in self.require_smarts:
            pattern = mol_from_smarts(text)
            if pattern is None:
                raise ElucidateError(f"RDKit cannot read the SMARTS {text!r}")
            tests.append((f"require SMARTS {text}", pattern, True))
        for text in self.forbid_smarts:
            pattern = mol_from_smarts(text)
            if pattern is None:
                raise ElucidateError(f"RDKit cannot read the SMARTS {text!r}")
            tests.append((f"forbid SMARTS {text}", pattern, False))
        if self.max_ring_size is not None and self.max_ring_size < 3:
            raise ElucidateError(f"largest ring size must be 3 or more, got {self.max_ring_size}")
        return CompiledSelection(tuple(tests), self.max_ring_size)


@dataclass(frozen=True)
class CompiledSelection:
    tests: tuple[tuple[str, Any, bool], ...]
    max_ring_size: int | None = None
    labels: tuple[str, ...] = field(init=False)

    def __post_init__(self) -> None:
        extra = (f"largest ring {self.max_ring_size}",) if self.max_ring_size is not None else ()
        object.__setattr__(self, "labels", tuple(t[0] for t in self.tests) + extra)

    def first_failure(self, mol: Any) -> str | None:
        """The label of the first constraint ``mol`` (aromaticity perceived) breaks, or None."""
        for label, pattern, wanted in self.tests:
            if mol.HasSubstructMatch(pattern) != wanted:
                return label
        if self.max_ring_size is not None:
            rings: Sequence[Sequence[int]] = mol.GetRingInfo().AtomRings()
            if any(len(r) > self.max_ring_size for r in rings):
                return self.labels[-1]
        return None
