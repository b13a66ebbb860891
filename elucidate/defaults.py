"""Every default the program applies, each defined once (project choices unless noted).

The case loader, the formula stage, the solver and the command line all read these names, so a
default cannot differ between a case file and the command line.
"""

from __future__ import annotations

__all__ = [
    "ELEMENT_RATIOS",
    "EXACT_MASS_KINDS",
    "EXACT_MASS_OF",
    "FORMULAS_PER_ION",
    "ISOMERS_LIMIT",
    "PPM_TOLERANCE",
    "RATIO_LEVELS",
    "SHORTLIST",
    "SOLVER_LIMIT",
    "WORKERS",
]

#: what a measured exact mass is the mass of: the m/z of M+. ("ion", one electron removed) or
#: the neutral molecule
EXACT_MASS_KINDS = ("ion", "neutral")
#: the default reading of an exact mass: the m/z of M+., as an EI instrument reports it
EXACT_MASS_OF = "ion"
#: exact-mass tolerance in ppm (a usual HRMS acceptance window, common practice)
PPM_TOLERANCE = 5.0
#: levels of the Kind & Fiehn (2007) element-ratio heuristic
RATIO_LEVELS = ("common", "extended", "off")
#: the level applied unless a case or option says otherwise (as published: 99.7 % of formulas)
ELEMENT_RATIOS = "common"
#: largest estimated structure space `elucidate isomers` enumerates without --limit
ISOMERS_LIMIT = 1_000_000
#: largest estimated structure space per formula the solver enumerates without --limit
SOLVER_LIMIT = 200_000
#: places the solver ranks exactly (0: every candidate); the rest are only known to rank lower
SHORTLIST = 10
#: formulas the solver keeps per molecular-ion hypothesis
FORMULAS_PER_ION = 5
#: worker processes
WORKERS = 1
