"""A probe between the last cell centre and a cooled face reads towards the face's own temperature.

Plane wall of half-thickness L = 40 mm (adiabatic symmetry plane at z = 0, convection at
z = L, Bi = h L / k = 4) cooling from 600 K in 300 K air, on the default 4 mm grid (ten
cells across). Reference: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and
Mass Transfer, 6th ed., eqs. 5.39a-c (series solution of the plane wall with convection;
from memory), evaluated with 200 terms in tests/validation/analytic.py.

Two probes: one on the cooled face and one 1 mm inside it (halfway between the face and
the centre of the outermost cell, 2 mm deep). Either must lie within the error of linear
interpolation of the exact field between the face and that cell centre (evaluated here
from the exact field), plus the 0.5 K the plane-wall checks allow the discretisation. A
reading that holds the outermost cell-centre value flat up to the face misses by the
gradient times the distance: 5-20 K here.
"""

from __future__ import annotations

import numpy as np
import pytest
from analytic import plane_wall_theta
from settings import at_both_settings, solver_options

from heatstack import Assembly, FixedConvection, Model, Part, Phase, PowerHistory, Probe, Schedule, simple_material

WALL = {"k": 20.0, "rho": 8000.0, "cp": 500.0, "L": 0.04, "h": 2000.0, "Ti": 600.0, "T_inf": 300.0}
DT = 0.05  # s, the fixed step; the checks are at Fo = 0.125 and 0.5
TIMES = (40.0, 160.0)
DEPTHS = {"on face": 0.0, "1 mm inside": 0.001}
DISCRETISATION_K = 0.5


def _exact(z, t):
    p = WALL
    alpha = p["k"] / (p["rho"] * p["cp"])
    theta = plane_wall_theta(np.atleast_1d(z) / p["L"], alpha * t / p["L"] ** 2, p["h"] * p["L"] / p["k"])
    return p["T_inf"] + (p["Ti"] - p["T_inf"]) * theta


@pytest.fixture(scope="module")
def wall_run(setting):
    p = WALL
    material = simple_material("wall", density=p["rho"], specific_heat=p["cp"], conductivity=p["k"])
    probes = [Probe(name, 0.505, p["L"] - depth) for name, depth in DEPTHS.items()]
    model = Model.build(
        Assembly(parts=[Part("slab", "wall", 0.50, 0.51, 0.0, p["L"])], probes=probes), materials={"wall": material}
    )
    laws = {
        "*": FixedConvection(0.0, 300.0, radiation=False),
        "slab:top": FixedConvection(p["h"], p["T_inf"], radiation=False),
    }
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, TIMES[-1], laws)])
    result = model.run(schedule, p["Ti"], solver_options(setting, DT, snapshot_times=TIMES))
    return model, result


def _misses(wall_run):
    """(miss, allowed) [K] of each probe at each check time."""
    model, result = wall_run
    assert np.allclose(np.diff(model.grid.z_edges), 0.004)  # the default grid
    z_centre = model.grid.z_centres[-1]
    face = WALL["L"]
    out = []
    for t in TIMES:
        i = int(np.argmin(np.abs(result.times - t)))
        assert result.times[i] == pytest.approx(t)
        for name, depth in DEPTHS.items():
            z = face - depth
            w = (z - z_centre) / (face - z_centre)
            interpolated = (1.0 - w) * _exact(z_centre, t)[0] + w * _exact(face, t)[0]
            interpolation_error = abs(_exact(z, t)[0] - interpolated)
            out.append((name, t, abs(result.probes[name][i] - _exact(z, t)[0]), interpolation_error + DISCRETISATION_K))
    return out


@at_both_settings()
def test_probe_next_to_cooled_face_is_within_interpolation_error(wall_run):
    for name, t, miss, allowed in _misses(wall_run):
        assert miss <= allowed, f"{name} at t = {t} s: {miss:.3f} K off, {allowed:.3f} K allowed"
