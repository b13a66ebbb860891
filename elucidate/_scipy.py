"""SciPy in one place: the Hungarian algorithm the NMR technique assigns signals with
(``scipy.optimize.linear_sum_assignment``).

Importing ``scipy.optimize`` runs its package's ``__init__``, which imports most of the
subpackage (linear programming, sparse matrices, FFT...): about 0.3 s in every process that
assigns a spectrum, a few per cent of an NMR case. The function is SciPy's compiled module
``scipy.optimize._lsap``; where SciPy keeps it there, that module alone is loaded (about 0.01 s),
and otherwise the public import is used. ``tests/test_scipy.py`` checks that what is loaded is the
very function ``scipy.optimize`` exports.
"""

from __future__ import annotations

import importlib.machinery
import importlib.util
from collections.abc import Callable
from functools import cache
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import numpy as np

__all__ = ["linear_sum_assignment"]

_MODULE = "scipy.optimize._lsap"


@cache
def _solver() -> Callable[[Any], tuple[Any, Any]]:
    """SciPy's ``linear_sum_assignment``: its compiled module loaded alone when found, else
    through ``scipy.optimize``."""
    import scipy

    folder = Path(scipy.__file__).parent / "optimize"
    for suffix in importlib.machinery.EXTENSION_SUFFIXES:
        path = folder / f"_lsap{suffix}"
        if not path.is_file():
            continue
        spec = importlib.util.spec_from_file_location(_MODULE, path)
        if spec is None or spec.loader is None:
            break
        module = importlib.util.module_from_spec(spec)
        try:
            spec.loader.exec_module(module)
        except ImportError:
            break
        solver = getattr(module, "linear_sum_assignment", None)
        if callable(solver):
            return solver
        break
    from scipy.optimize import linear_sum_assignment as public

    return public


def linear_sum_assignment(cost: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Rows and columns of a least-cost one-to-one assignment on the matrix ``cost``
    (SciPy's ``scipy.optimize.linear_sum_assignment``)."""
    return _solver()(cost)
