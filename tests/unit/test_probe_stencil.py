"""Probe stencils: weights over cell and exposed-face temperatures (heatstack.numerics.probe_stencil)."""

from __future__ import annotations

import numpy as np
import pytest

from heatstack.numerics.probe_stencil import SideFaces, probe_stencils

# one part on a 3 x 4 grid (rows z, columns r), 1 cm cells from r = 0.1 m, z = 0
R_EDGES = np.linspace(0.10, 0.14, 5)
Z_EDGES = np.linspace(0.00, 0.03, 4)
RC, ZC = 0.5 * (R_EDGES[1:] + R_EDGES[:-1]), 0.5 * (Z_EDGES[1:] + Z_EDGES[:-1])
CELL_INDEX = np.arange(12).reshape(3, 4)


def _sides(exposed: bool) -> tuple[SideFaces, np.ndarray]:
    """Every outer side of the block exposed (or none), and each face's centre (r, z)."""
    face_of, centres = {}, []
    if exposed:
        for j in range(3):
            for i in range(4):
                for side, keep, where in (
                    ("inner", i == 0, (R_EDGES[i], ZC[j])),
                    ("outer", i == 3, (R_EDGES[i + 1], ZC[j])),
                    ("bottom", j == 0, (RC[i], Z_EDGES[j])),
                    ("top", j == 2, (RC[i], Z_EDGES[j + 1])),
                ):
                    if keep:
                        face_of[(int(CELL_INDEX[j, i]), side)] = len(centres)
                        centres.append(where)
    sides = SideFaces(CELL_INDEX, np.zeros((3, 4), dtype=int), RC, ZC, R_EDGES, Z_EDGES, face_of)
    return sides, np.array(centres).reshape(-1, 2)


def _linear(r, z):
    return 300.0 + 2000.0 * (r - 0.1) - 5000.0 * z


POINTS = [(0.125, 0.015), (0.101, 0.0152), (0.1385, 0.001), (0.14, 0.03), (0.10, 0.0), (0.105, 0.025)]


@pytest.mark.parametrize("point", POINTS)
def test_linear_field_is_read_exactly_with_face_temperatures(point):
    sides, centres = _sides(exposed=True)
    stencil = probe_stencils(sides, [(0, *point)])
    r, z = np.meshgrid(RC, ZC)
    value = stencil.evaluate(_linear(r, z).ravel(), _linear(centres[:, 0], centres[:, 1]))
    assert value[0] == pytest.approx(_linear(*point), abs=1e-9)
    assert stencil.cell_weights.sum() + stencil.face_weights.sum() == pytest.approx(1.0)


def test_without_exposed_faces_the_edge_cell_is_held_flat():
    sides, _ = _sides(exposed=False)
    stencil = probe_stencils(sides, [(0, 0.1395, 0.0295)])  # in the corner cell, beyond its centre
    assert stencil.faces.shape[1] == 0
    T = np.arange(12.0)
    assert stencil.evaluate(T, np.zeros(0))[0] == pytest.approx(T[CELL_INDEX[2, 3]])


def test_probe_at_a_cell_centre_reads_that_cell():
    sides, centres = _sides(exposed=True)
    stencil = probe_stencils(sides, [(0, RC[3], ZC[2])])
    T = np.arange(12.0) + 300.0
    assert stencil.evaluate(T, np.full(len(centres), 1e6))[0] == T[CELL_INDEX[2, 3]]
