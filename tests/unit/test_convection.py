"""Nusselt correlations: vectorised shapes (the checks against ht and closed forms are in
tests/validation/test_convection_correlations.py).
"""

from __future__ import annotations

import numpy as np

from heatstack.operations import convection as cv


def test_vectorised_shapes() -> None:
    ra = np.logspace(2, 10, 12).reshape(3, 4)
    assert cv.nu_vertical_plate(ra, 0.7).shape == (3, 4)
    assert cv.nu_horizontal_plate(ra, ra > 1e6).shape == (3, 4)
