"""The generator's options, in one frozen record passed to every entry point."""

from __future__ import annotations

from dataclasses import dataclass

from ..defaults import WORKERS
from ..elements import ElementTable
from ..errors import ElucidateError
from .kernel import Engine, check_engine
from .selection import Selection

__all__ = ["GeneratorOptions"]


@dataclass(frozen=True)
class GeneratorOptions:
    """How isomers are generated.

    ``kekule``: every Kekulé multigraph counts and is written separately (graph counting);
    default: the Kekulé forms of one aromatic compound are merged. ``max_rings``: the largest
    ring count (cyclomatic number; 0 = acyclic). ``max_bond_order``: 1 saturated, 2 no triple
    bonds. ``lowest_valence``: every element at its lowest valence only (N 3, P 3, S 2).
    ``selection``: hard constraints the isomers must pass. ``workers``: processes (the output
    does not depend on it). ``table``: the element table (default: the shipped one).
    ``rdkit_smiles``: every isomer written as RDKit's canonical SMILES (a structure that cannot
    be aromatic reaches RDKit as the string written from its skeleton); by default the string
    written from the skeleton (:mod:`.writer`, canonical within elucidate) is used for every
    structure that cannot be aromatic, and RDKit's for the rest. ``engine``: who labels the
    skeletons and writes their SMILES where it can (:data:`.kernel.ENGINES`: the compiled core
    once a process has done enough work for its start-up to pay, always, or never); the output
    is the same.
    """

    kekule: bool = False
    max_rings: int | None = None
    max_bond_order: int = 3
    lowest_valence: bool = False
    selection: Selection | None = None
    workers: int = WORKERS
    table: ElementTable | None = None
    rdkit_smiles: bool = False
    engine: Engine = "auto"

    def __post_init__(self) -> None:
        if self.max_bond_order not in (1, 2, 3):
            raise ElucidateError(f"max_bond_order must be 1, 2 or 3, got {self.max_bond_order}")
        if self.workers < 1:
            raise ElucidateError(f"workers must be 1 or more, got {self.workers}")
        if self.max_rings is not None and self.max_rings < 0:
            raise ElucidateError(f"max_rings must be 0 or more, got {self.max_rings}")
        check_engine(self.engine)
