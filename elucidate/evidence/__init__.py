"""Evidence techniques: each module implements :class:`~elucidate.evidence.base.Technique`
(hard constraints where it declares any, a score 0-1, reasons) with its own knowledge table."""

from __future__ import annotations

from .base import Assessment, Subject, Technique, make_subject
from .carbon13 import Carbon13, carbon_classes
from .fragments import Fragments, predict_ions
from .infrared import Infrared, read_bands
from .uv import UvVis, predict_lambda_max

#: the techniques the solver runs, in report order
TECHNIQUES = (Infrared, UvVis, Fragments, Carbon13)

__all__ = [
    "Assessment",
    "Subject",
    "Technique",
    "make_subject",
    "TECHNIQUES",
    "Infrared",
    "read_bands",
    "UvVis",
    "predict_lambda_max",
    "Fragments",
    "predict_ions",
    "Carbon13",
    "carbon_classes",
]
