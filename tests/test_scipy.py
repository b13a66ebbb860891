"""The project's SciPy helper (elucidate/_scipy.py) against SciPy's public function.

The Hungarian algorithm is loaded from SciPy's compiled module alone to spare the import of the
whole of scipy.optimize; it must be the very function scipy.optimize exports (SciPy, a
general-purpose library from the package registry, is the reference), and it must solve a
hand-checkable assignment.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from elucidate._scipy import linear_sum_assignment


def test_the_function_loaded_is_scipys_own() -> None:
    from scipy.optimize import linear_sum_assignment as public

    from elucidate._scipy import _solver

    assert _solver() is public


@pytest.mark.parametrize(
    ("cost", "rows", "cols"),
    [
        # by hand: 1 + 2 + 2 = 5 is the least of the six one-to-one totals
        ([[4, 1, 3], [2, 0, 5], [3, 2, 2]], [0, 1, 2], [1, 0, 2]),
        # a wide matrix: each row takes a column, one column is left over
        ([[1, 9, 9], [9, 9, 1]], [0, 1], [0, 2]),
    ],
)
def test_a_hand_checked_assignment(cost, rows, cols) -> None:
    got_rows, got_cols = linear_sum_assignment(np.array(cost, dtype=float))
    assert got_rows.tolist() == rows
    assert got_cols.tolist() == cols


def test_loading_it_does_not_import_scipy_optimize() -> None:
    code = (
        "import sys; from elucidate._scipy import linear_sum_assignment as f; import numpy as np; "
        "f(np.eye(2)); print('scipy.optimize' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
