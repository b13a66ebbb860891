"""The structure generator: every constitutional isomer of a formula exactly once.

:mod:`.skeletons` grows connected skeletons by canonical augmentation; :mod:`.plans` gives the
heavy atoms their valence states; :mod:`.labelling` places element labels and bond orders up to
the skeleton's automorphisms; :mod:`.smiles` writes RDKit molecules and canonical SMILES;
:mod:`.tasks` cuts the generation tree into ordered tasks for worker processes; :mod:`.estimate`
estimates a space's size before it is walked. Hard constraints on the isomers: the group
vocabulary (:mod:`.groups`), the selection of required / forbidden groups, SMARTS and ring sizes
(:mod:`.selection`) and the plausibility profiles (:mod:`.plausibility`). Entry points are in
:mod:`.isomers`, options in :class:`GeneratorOptions`.
"""

from __future__ import annotations

from .estimate import SpaceEstimate, estimate_space, estimate_structures
from .groups import Group, GroupTable, default_groups, load_groups
from .isomers import count_isomers, isomer_smiles, structures, within_budget
from .labelling import Structure
from .options import GeneratorOptions
from .plausibility import Profiles, default_profiles, load_profiles
from .selection import CompiledSelection, Selection
from .smiles import to_smiles

__all__ = [
    "CompiledSelection",
    "GeneratorOptions",
    "Group",
    "GroupTable",
    "Profiles",
    "Selection",
    "SpaceEstimate",
    "Structure",
    "count_isomers",
    "default_groups",
    "default_profiles",
    "estimate_space",
    "estimate_structures",
    "isomer_smiles",
    "load_groups",
    "load_profiles",
    "structures",
    "to_smiles",
    "within_budget",
]
