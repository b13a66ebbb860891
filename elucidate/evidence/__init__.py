"""Evidence techniques: each module implements :class:`~elucidate.evidence.base.Technique`
(hard constraints where it declares any, a score 0-1, reasons, its report column and detail)
with its own knowledge table. A new technique is one module, one table and one test file, and
one entry in :data:`TECHNIQUES`."""

from __future__ import annotations

from .base import (
    Assessment,
    Bounded,
    Estimated,
    Foreseen,
    ForeseenFloor,
    Partial,
    Reading,
    Staged,
    Subject,
    Technique,
    make_subject,
)
from .carbon13 import Carbon13, carbon_classes
from .fragments import Fragments, predict_ions
from .infrared import Infrared, read_bands
from .isotope_fit import IsotopeFit
from .nmr import Nmr
from .nmr_predict import predict_c13, predict_h1
from .strain import Strain, strain_energy
from .uv import UvVis, predict_lambda_max

#: the techniques the solver runs, in report order; each is built with no arguments
TECHNIQUES: tuple[type[Technique], ...] = (IsotopeFit, Infrared, UvVis, Fragments, Carbon13, Nmr, Strain)

__all__ = [
    "TECHNIQUES",
    "Assessment",
    "Bounded",
    "Carbon13",
    "Estimated",
    "Foreseen",
    "ForeseenFloor",
    "Fragments",
    "Infrared",
    "IsotopeFit",
    "Nmr",
    "Partial",
    "Reading",
    "Staged",
    "Strain",
    "Subject",
    "Technique",
    "UvVis",
    "carbon_classes",
    "make_subject",
    "predict_c13",
    "predict_h1",
    "predict_ions",
    "predict_lambda_max",
    "read_bands",
    "strain_energy",
]
