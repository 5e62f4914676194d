"""Validation of the conduction engine against published closed-form and series solutions.

Every reference value is computed here from the published solution (tests/analytic.py:
error functions, Bessel functions and eigenvalues found with scipy), never from heatstack
output. The source of each check is named beside it; equation numbers marked "from
memory" were quoted without the book at hand.

Every transient check runs twice with the same tolerance (tests/validation/settings.py): at
a fixed step small against the time scale of the check (stated in the test), and at the
default solver settings a user gets (``-k defaults`` selects those).
Cell-centre values are compared with the solution at the cell centre; where a surface
temperature is needed it is reconstructed from the outermost cell with the standard
finite-volume half-cell resistance (stated where used).
"""

from __future__ import annotations

import numpy as np
import pytest
from analytic import (
    annulus_heat_rate,
    annulus_profile,
    cylinder_eigenvalues,
    cylinder_theta,
    invert_time,
    lumped_convection_theta,
    lumped_radiation_time,
    lumped_radiation_time_to_zero_kelvin,
    plane_wall_eigenvalues,
    plane_wall_theta,
    semi_infinite_constant_flux,
    series_wall_heat_rate,
)
from scipy.special import j0, j1
from settings import at_both_settings, solver_options

from heatstack import (
    Assembly,
    Contact,
    FixedConvection,
    FrictionSettings,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)
from heatstack.geometry import RUBBING_FACE_MAX

ADIABATIC = FixedConvection(h=0.0, ambient_temperature=300.0, radiation=False)


def cell_volumes(r_edges: np.ndarray, z_edges: np.ndarray) -> np.ndarray:
    """Full-circumference volume of each (z, r) cell [m^3], from the grid edges."""
    return np.outer(np.diff(z_edges), np.pi * np.diff(r_edges**2))


# --------------------------------------------------------------------------- the references


def test_plane_wall_eigenvalues_reproduce_published_table():
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., Table 5.1 (from memory):
    # plane wall, Bi = 1.0: zeta_1 = 0.8603 rad, C_1 = 1.1191.
    zeta = plane_wall_eigenvalues(1.0, 1)[0]
    c1 = 4.0 * np.sin(zeta) / (2.0 * zeta + np.sin(2.0 * zeta))
    assert zeta == pytest.approx(0.8603, abs=1e-4)
    assert c1 == pytest.approx(1.1191, abs=1e-4)


def test_cylinder_eigenvalues_reproduce_published_table():
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., Table 5.1 (from memory):
    # infinite cylinder, Bi = 1.0: zeta_1 = 1.2558 rad, C_1 = 1.2071.
    zeta = cylinder_eigenvalues(1.0, 1)[0]
    c1 = 2.0 / zeta * j1(zeta) / (j0(zeta) ** 2 + j1(zeta) ** 2)
    assert zeta == pytest.approx(1.2558, abs=1e-4)
    assert c1 == pytest.approx(1.2071, abs=1e-4)


# --------------------------------------------------------------------------- 1. semi-infinite solid

STEEL = simple_material("steel", density=7800.0, specific_heat=500.0, conductivity=50.0)
SEMI = {
    "k": 50.0,
    "alpha": 50.0 / (7800.0 * 500.0),
    "r1": 0.50,
    "r2": 0.52,
    "depth": 0.10,  # each slab; erfc(depth / (2 sqrt(alpha t))) ~ 1e-5 at t = 20 s
    "dz": 1.0e-3,
    "dt": 0.05,  # s, fixed
    "flux": 2.5e5,  # W/m^2 into each side
    "times": (5.0, 10.0, 20.0),
}


@pytest.fixture(scope="module")
def semi_infinite_run(setting):
    """Two identical thick steel slabs rubbing at z = 0 under constant power, adiabatic elsewhere.

    One radial cell and adiabatic radial faces make the problem 1-D; uniform-wear
    spreading makes the flux uniform over the annulus. By symmetry each slab is a
    semi-infinite solid taking half the power.
    """
    p = SEMI
    area = np.pi * (p["r2"] ** 2 - p["r1"] ** 2)
    power = 2.0 * p["flux"] * area
    r_mid = 0.5 * (p["r1"] + p["r2"])
    assembly = Assembly(
        parts=[
            Part("rotor", "steel", p["r1"], p["r2"], -p["depth"], 0.0, "rotor"),
            Part("stator", "steel", p["r1"], p["r2"], 0.0, p["depth"], "stator"),
        ],
        probes=[
            Probe("surface", r_mid, 0.0, part="stator"),
            Probe("far face", r_mid, p["depth"]),
        ],
        friction=FrictionSettings(distribution="uniform_wear"),
    )
    model = Model.build(assembly, cell_size=(p["r2"] - p["r1"], p["dz"]), min_cells=1, materials={"steel": STEEL})
    end = p["times"][-1]
    schedule = Schedule(
        power=PowerHistory(np.array([0.0, end]), np.array([power, power])),
        phases=[Phase("brake", 0.0, end, {"*": ADIABATIC}, clamped=True)],
        extra_breakpoints=p["times"],
    )
    result = model.run(schedule, initial_temperature=300.0, options=solver_options(setting, p["dt"]))
    return model, result, power


@at_both_settings()
def test_semi_infinite_surface_rise_under_constant_flux(semi_infinite_run):
    # Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 2.9 (from memory);
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.59 at x = 0 (from memory):
    # Ts - Ti = 2 q sqrt(alpha t / pi) / k. Tolerance 1 %; dz = 1 mm, dt = 0.05 s.
    model, result, _ = semi_infinite_run
    p = SEMI
    for t in p["times"]:
        i = int(np.argmin(np.abs(result.times - t)))
        assert result.times[i] == pytest.approx(t)
        # surface temperature from the cell next to the interface and the half-cell
        # resistance dz / (2 k) it sees: Ts = T1 + q dz / (2 k)
        rise = result.probes["surface"][i] - 300.0 + p["flux"] * 0.5 * p["dz"] / p["k"]
        exact = 2.0 * p["flux"] * np.sqrt(p["alpha"] * t / np.pi) / p["k"]
        assert rise == pytest.approx(exact, rel=0.01)


@at_both_settings()
def test_semi_infinite_temperature_below_surface(semi_infinite_run):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.59 (from memory);
    # Carslaw & Jaeger, 2nd ed., sec. 2.9 (from memory): the full depth profile at t = 20 s,
    # compared at every cell centre of the heated stator down to where the rise falls
    # below 1 % of the surface rise; tolerance 1 % of the surface rise.
    model, result, _ = semi_infinite_run
    p = SEMI
    t = p["times"][-1]
    field = result.snapshots[-1][:, 0]
    z = model.grid.z_centres
    depth = z[z > 0.0]
    exact = semi_infinite_constant_flux(depth, t, p["flux"], p["k"], p["alpha"])
    surface = 2.0 * p["flux"] * np.sqrt(p["alpha"] * t / np.pi) / p["k"]
    numeric = field[z > 0.0] - 300.0
    keep = exact > 0.01 * surface
    assert keep.sum() > 20
    assert np.max(np.abs(numeric[keep] - exact[keep])) <= 0.01 * surface


@at_both_settings()
def test_semi_infinite_far_face_stays_at_initial_temperature(semi_infinite_run):
    # The premise of the semi-infinite model (Incropera, 6th ed., sec. 5.7, from memory):
    # the far face, 0.1 m deep, must not have warmed by more than 0.1 % of the surface rise.
    _, result, _ = semi_infinite_run
    p = SEMI
    surface = 2.0 * p["flux"] * np.sqrt(p["alpha"] * p["times"][-1] / np.pi) / p["k"]
    assert np.max(result.probes["far face"]) - 300.0 < 1e-3 * surface


@at_both_settings()
def test_identical_slabs_split_friction_heat_in_half(semi_infinite_run):
    # Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 2.9 (from memory): the flux
    # into two semi-infinite solids divides in the ratio of their effusivities sqrt(k rho c);
    # identical solids take half each, and together all of the energy P t.
    _, result, power = semi_infinite_run
    split = result.ledger.friction_split
    total = power * SEMI["times"][-1]
    assert split.shape == (1, 2)
    assert split[0, 0] == pytest.approx(0.5 * total, rel=1e-12)
    assert split[0, 1] == pytest.approx(0.5 * total, rel=1e-12)


DISSIMILAR_DZ = 0.5e-3


@pytest.fixture(scope="module")
def dissimilar_run(setting):
    """As ``semi_infinite_run`` with a bronze-like stator (k = 100, rho = 8800, c = 400) on the steel rotor.

    dz = 0.5 mm: the surface reconstruction from the first cell of each side is the
    dominant error here (about 0.5 % at dz = 1 mm, halving with dz).
    """
    p = SEMI
    bronze = simple_material("bronze", density=8800.0, specific_heat=400.0, conductivity=100.0)
    area = np.pi * (p["r2"] ** 2 - p["r1"] ** 2)
    power = 2.0 * p["flux"] * area
    r_mid = 0.5 * (p["r1"] + p["r2"])
    assembly = Assembly(
        parts=[
            Part("rotor", "steel", p["r1"], p["r2"], -p["depth"], 0.0, "rotor"),
            Part("stator", "bronze", p["r1"], p["r2"], 0.0, p["depth"], "stator"),
        ],
        probes=[
            Probe("rotor side", r_mid, 0.0, part="rotor"),
            Probe("stator side", r_mid, 0.0, part="stator"),
        ],
        friction=FrictionSettings(distribution="uniform_wear"),
    )
    model = Model.build(
        assembly,
        cell_size=(p["r2"] - p["r1"], DISSIMILAR_DZ),
        min_cells=1,
        materials={"steel": STEEL, "bronze": bronze},
    )
    end = p["times"][-1]
    schedule = Schedule(
        power=PowerHistory(np.array([0.0, end]), np.array([power, power])),
        phases=[Phase("brake", 0.0, end, {"*": ADIABATIC}, clamped=True)],
    )
    result = model.run(schedule, initial_temperature=300.0, options=solver_options(setting, p["dt"]))
    effusivity = {"rotor": np.sqrt(50.0 * 7800.0 * 500.0), "stator": np.sqrt(100.0 * 8800.0 * 400.0)}
    return result, power, effusivity


@at_both_settings()
def test_dissimilar_slabs_split_friction_heat_by_effusivity(dissimilar_run):
    # Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 2.9 (from memory): two
    # semi-infinite solids heated at their plane of contact take the flux in the ratio of
    # their effusivities sqrt(k rho c). Constant properties: the ratio holds at all times.
    result, power, e = dissimilar_run
    split = result.ledger.friction_split[0]
    total = power * SEMI["times"][-1]
    assert split.sum() == pytest.approx(total, rel=1e-12)
    assert split[0] / total == pytest.approx(e["rotor"] / (e["rotor"] + e["stator"]), rel=1e-9)


@at_both_settings()
def test_dissimilar_slabs_share_the_interface_temperature(dissimilar_run):
    # Carslaw & Jaeger, 2nd ed., sec. 2.9 (from memory): both solids then have the same surface
    # rise 2 q_total sqrt(t) / (sqrt(pi) (e1 + e2)). Each side's surface temperature from its
    # cell next to the interface plus q_i dz / (2 k_i); tolerance 1 %; dz = 0.5 mm, dt = 0.05 s.
    result, power, e = dissimilar_run
    p = SEMI
    t = p["times"][-1]
    q_total = 2.0 * p["flux"]
    exact = 2.0 * q_total * np.sqrt(t) / (np.sqrt(np.pi) * (e["rotor"] + e["stator"]))
    for probe, k, share in (
        ("rotor side", 50.0, e["rotor"] / (e["rotor"] + e["stator"])),
        ("stator side", 100.0, e["stator"] / (e["rotor"] + e["stator"])),
    ):
        rise = result.probes[probe][-1] - 300.0 + q_total * share * 0.5 * DISSIMILAR_DZ / k
        assert rise == pytest.approx(exact, rel=0.01), probe


@at_both_settings()
def test_rubbing_surface_series_is_the_constant_flux_surface_rise(semi_infinite_run):
    # Carslaw & Jaeger, 2nd ed., sec. 2.9 (from memory); Incropera, 6th ed., eq. 5.59 at x = 0
    # (from memory): Ts - Ti = 2 q sqrt(alpha t / pi) / k. The recorded hottest rubbing surface
    # (heatstack.numerics.rubbing_faces) within 1 %, where the cell next to the face reads
    # about 3 % low at dz = 1 mm; dt = 0.05 s.
    _, result, _ = semi_infinite_run
    p = SEMI
    surface = result.series[RUBBING_FACE_MAX]
    for t in p["times"]:
        i = int(np.argmin(np.abs(result.times - t)))
        exact = 2.0 * p["flux"] * np.sqrt(p["alpha"] * t / np.pi) / p["k"]
        assert surface[i] - 300.0 == pytest.approx(exact, rel=0.01)
        assert result.probes["surface"][i] - 300.0 < 0.98 * exact  # the cell itself reads low


@at_both_settings()
def test_rubbing_surface_series_is_the_shared_interface_temperature(dissimilar_run):
    # Carslaw & Jaeger, 2nd ed., sec. 2.9 (from memory): two semi-infinite solids heated at
    # their plane of contact share the surface rise 2 q_total sqrt(t) / (sqrt(pi) (e1 + e2)).
    # The recorded hottest rubbing surface within 1 % at every step after the first second.
    result, power, e = dissimilar_run
    q_total = 2.0 * SEMI["flux"]
    later = result.times >= 1.0
    exact = 2.0 * q_total * np.sqrt(result.times[later]) / (np.sqrt(np.pi) * (e["rotor"] + e["stator"]))
    np.testing.assert_allclose(result.series[RUBBING_FACE_MAX][later] - 300.0, exact, rtol=0.01)


# --------------------------------------------------------------------------- 2. plane wall

WALL = {
    "k": 20.0,
    "rho": 8000.0,
    "cp": 500.0,
    "L": 0.02,  # half-thickness: adiabatic symmetry plane at z = 0, convection at z = L
    "h": 1000.0,  # Bi = h L / k = 1
    "Ti": 600.0,
    "T_inf": 300.0,
    "cells": 40,
    "dt": 0.1,  # s, fixed; the check times are Fo = 0.1, 0.5, 1, 2
    "times": (8.0, 40.0, 80.0, 160.0),
}


@pytest.fixture(scope="module")
def plane_wall_run(setting):
    p = WALL
    material = simple_material("wall", density=p["rho"], specific_heat=p["cp"], conductivity=p["k"])
    assembly = Assembly(parts=[Part("slab", "wall", 0.50, 0.51, 0.0, p["L"])])
    model = Model.build(assembly, cell_size=(0.01, p["L"] / p["cells"]), min_cells=1, materials={"wall": material})
    laws = {"*": ADIABATIC, "slab:top": FixedConvection(p["h"], p["T_inf"], radiation=False)}
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, p["times"][-1], laws)])
    options = solver_options(setting, p["dt"], snapshot_times=p["times"])
    result = model.run(schedule, initial_temperature=p["Ti"], options=options)
    return model, result


def _wall_exact(x_star, t):
    p = WALL
    alpha = p["k"] / (p["rho"] * p["cp"])
    biot = p["h"] * p["L"] / p["k"]
    return p["T_inf"] + (p["Ti"] - p["T_inf"]) * plane_wall_theta(x_star, alpha * t / p["L"] ** 2, biot)


@at_both_settings()
def test_plane_wall_centre_temperature_matches_series(plane_wall_run):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 5.39a-c (from memory);
    # Carslaw & Jaeger, 2nd ed., sec. 3.11 (from memory). Bi = 1, Fo = 0.1 ... 2;
    # tolerance 0.5 K. The centre is read from the cell next to the symmetry plane.
    _, result = plane_wall_run
    miss = {t: abs(result.snapshot(t)[0, 0] - _wall_exact(0.0, t)[0]) for t in WALL["times"]}
    assert max(miss.values()) <= 0.5, miss


@at_both_settings()
def test_plane_wall_surface_temperature_matches_series(plane_wall_run):
    # Incropera, 6th ed., eqs. 5.39a-c at x* = 1 (from memory). Tolerance 0.5 K.
    # Surface temperature from the top cell and the half-cell resistance dz / (2 k) in
    # series with 1 / h: Ts = (T_N 2k/dz + h T_inf) / (2k/dz + h).
    model, result = plane_wall_run
    p = WALL
    dz = np.diff(model.grid.z_edges)[-1]
    miss = {}
    for t in p["times"]:
        top = result.snapshot(t)[-1, 0]
        surface = (top * 2.0 * p["k"] / dz + p["h"] * p["T_inf"]) / (2.0 * p["k"] / dz + p["h"])
        miss[t] = abs(surface - _wall_exact(1.0, t)[0])
    assert max(miss.values()) <= 0.5, miss


@at_both_settings()
def test_plane_wall_profile_matches_series(plane_wall_run):
    # Incropera, 6th ed., eq. 5.39a at every cell centre (from memory). Tolerance 0.5 K.
    model, result = plane_wall_run
    x_star = model.grid.z_centres / WALL["L"]
    miss = {t: np.max(np.abs(result.snapshot(t)[:, 0] - _wall_exact(x_star, t))) for t in WALL["times"]}
    assert max(miss.values()) <= 0.5, miss


# --------------------------------------------------------------------------- 3. long solid cylinder

ROD = {
    "k": 20.0,
    "rho": 8000.0,
    "cp": 500.0,
    "ro": 0.02,
    "h": 1000.0,  # Bi = h ro / k = 1
    "Ti": 600.0,
    "T_inf": 300.0,
    "cells": 40,
    "dt": 0.1,  # s, fixed; the check times are Fo = 0.1, 0.5, 1, 2
    "times": (8.0, 40.0, 80.0, 160.0),
}


@pytest.fixture(scope="module")
def cylinder_run(setting):
    """A solid cylinder from the axis (r_inner = 0), adiabatic ends: a long cylinder."""
    p = ROD
    material = simple_material("rod", density=p["rho"], specific_heat=p["cp"], conductivity=p["k"])
    assembly = Assembly(parts=[Part("rod", "rod", 0.0, p["ro"], 0.0, 0.01)])
    model = Model.build(assembly, cell_size=(p["ro"] / p["cells"], 0.01), min_cells=1, materials={"rod": material})
    laws = {"*": ADIABATIC, "rod:outer": FixedConvection(p["h"], p["T_inf"], radiation=False)}
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, p["times"][-1], laws)])
    options = solver_options(setting, p["dt"], snapshot_times=p["times"])
    result = model.run(schedule, initial_temperature=p["Ti"], options=options)
    return model, result


def _rod_exact(r_star, t):
    p = ROD
    alpha = p["k"] / (p["rho"] * p["cp"])
    biot = p["h"] * p["ro"] / p["k"]
    return p["T_inf"] + (p["Ti"] - p["T_inf"]) * cylinder_theta(r_star, alpha * t / p["ro"] ** 2, biot)


@at_both_settings()
def test_cylinder_axis_temperature_matches_bessel_series(cylinder_run):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 5.49a-c (from memory);
    # Carslaw & Jaeger, 2nd ed., sec. 7.7 (from memory). Bi = 1; tolerance 0.5 K.
    # The axis value is read from the cell touching the axis.
    _, result = cylinder_run
    miss = {t: abs(result.snapshot(t)[0, 0] - _rod_exact(0.0, t)[0]) for t in ROD["times"]}
    assert max(miss.values()) <= 0.5, miss


@at_both_settings()
def test_cylinder_surface_temperature_matches_bessel_series(cylinder_run):
    # Incropera, 6th ed., eqs. 5.49a-c at r* = 1 (from memory). Tolerance 0.5 K.
    # Surface temperature from the outer cell and its radial half-cell resistance
    # ln(ro / r_N) / (2 pi k) per unit length in series with 1 / (2 pi ro h).
    model, result = cylinder_run
    p = ROD
    r_n = model.grid.r_centres[-1]
    r_half = np.log(p["ro"] / r_n) / (2.0 * np.pi * p["k"])
    r_film = 1.0 / (2.0 * np.pi * p["ro"] * p["h"])
    miss = {}
    for t in p["times"]:
        outer = result.snapshot(t)[0, -1]
        surface = (outer / r_half + p["T_inf"] / r_film) / (1.0 / r_half + 1.0 / r_film)
        miss[t] = abs(surface - _rod_exact(1.0, t)[0])
    assert max(miss.values()) <= 0.5, miss


@at_both_settings()
def test_cylinder_radial_profile_matches_bessel_series(cylinder_run):
    # Incropera, 6th ed., eq. 5.49a at every cell centre (from memory). Tolerance 0.5 K.
    model, result = cylinder_run
    r_star = model.grid.r_centres / ROD["ro"]
    miss = {t: np.max(np.abs(result.snapshot(t)[0, :] - _rod_exact(r_star, t))) for t in ROD["times"]}
    assert max(miss.values()) <= 0.5, miss


# --------------------------------------------------------------------------- 4. steady annulus

ANNULUS = {"k": 50.0, "r1": 0.05, "r2": 0.15, "H": 0.02, "T1": 500.0, "T2": 300.0, "h": 1e7, "cells": 20}


@pytest.fixture(scope="module")
def annulus_run(setting):
    """Inner and outer faces held near T1 and T2 by h = 1e7 W/(m^2 K); ends adiabatic.

    Run to steady state with fixed 500 s steps over 2e4 s (the slowest time constant is
    about 80 s, so the transient has died out by many orders of magnitude).
    """
    p = ANNULUS
    material = simple_material("ring", density=7800.0, specific_heat=500.0, conductivity=p["k"])
    assembly = Assembly(parts=[Part("ring", "ring", p["r1"], p["r2"], 0.0, p["H"])])
    model = Model.build(
        assembly,
        cell_size=((p["r2"] - p["r1"]) / p["cells"], p["H"]),
        min_cells=1,
        materials={"ring": material},
    )
    laws = {
        "*": ADIABATIC,
        "ring:inner": FixedConvection(p["h"], p["T1"], radiation=False),
        "ring:outer": FixedConvection(p["h"], p["T2"], radiation=False),
    }
    schedule = Schedule(PowerHistory.none(), [Phase("hold", 0.0, 2e4, laws)])
    result = model.run(schedule, initial_temperature=400.0, options=solver_options(setting, 500.0))
    return model, result


@at_both_settings()
def test_annulus_steady_heat_rate_matches_log_resistance(annulus_run):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 3.27-3.28 (from memory):
    # q = (T1 - T2) / (ln(r2 / r1) / (2 pi k L)). Tolerance 0.5 %.
    # Heat rate from the temperatures of every pair of neighbouring cell centres with the
    # same log resistance, q = 2 pi k L (T_i - T_i+1) / ln(r_i+1 / r_i): at steady state all
    # must carry the same heat.
    model, result = annulus_run
    p = ANNULUS
    row = result.snapshots[-1][0, :]
    rc = model.grid.r_centres
    q = 2.0 * np.pi * p["k"] * p["H"] * (row[:-1] - row[1:]) / np.log(rc[1:] / rc[:-1])
    exact = annulus_heat_rate(p["T1"], p["T2"], p["r1"], p["r2"], p["k"], p["H"])
    assert np.max(np.abs(q / exact - 1.0)) <= 0.005


@at_both_settings()
def test_annulus_steady_profile_is_logarithmic(annulus_run):
    # Incropera, 6th ed., eq. 3.26 (from memory): T(r) = T1 + (T2 - T1) ln(r / r1) / ln(r2 / r1)
    # at the cell centres. Tolerance 0.05 K (0.025 % of T1 - T2); the films of h = 1e7 alone
    # account for about 0.02 K.
    model, result = annulus_run
    p = ANNULUS
    row = result.snapshots[-1][0, :]
    exact = annulus_profile(model.grid.r_centres, p["T1"], p["T2"], p["r1"], p["r2"])
    assert np.max(np.abs(row - exact)) <= 0.05


# --------------------------------------------------------------------------- 5. lumped capacitance

PELLET = {"k": 400.0, "rho": 8933.0, "cp": 385.0, "R": 0.01, "H": 0.02, "emissivity": 0.8}


def _pellet_model():
    """A small copper-like cylinder, all faces exposed; Bi = h (V / A) / k ~ 2e-4 at h = 20."""
    p = PELLET
    material = simple_material(
        "copper", density=p["rho"], specific_heat=p["cp"], conductivity=p["k"], emissivity=p["emissivity"]
    )
    assembly = Assembly(parts=[Part("pellet", "copper", 0.0, p["R"], 0.0, p["H"])])
    model = Model.build(assembly, cell_size=0.01, min_cells=3, materials={"copper": material})
    volume = np.pi * p["R"] ** 2 * p["H"]
    area = 2.0 * np.pi * p["R"] * p["H"] + 2.0 * np.pi * p["R"] ** 2
    return model, volume, area, p["rho"] * p["cp"] * volume


def _mean_temperature(result, snapshot):
    volumes = cell_volumes(result.r_edges, result.z_edges)
    return float(np.nansum(volumes * snapshot) / np.sum(volumes[~np.isnan(snapshot)]))


@at_both_settings()
def test_lumped_cooling_by_convection_is_exponential(setting):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.6 (from memory):
    # (T - T_inf) / (Ti - T_inf) = exp(-h A t / (rho V c)). Bi ~ 2e-4. Checked at 1, 2 and 3
    # time constants; tolerance 0.5 % of T - T_inf; dt = tau / 1000 (first-order time error
    # about 1.5e-3 * t / tau).
    model, volume, area, capacity = _pellet_model()
    h, t_inf, t_i = 20.0, 300.0, 600.0
    tau = capacity / (h * area)
    times = (tau, 2.0 * tau, 3.0 * tau)
    schedule = Schedule(
        PowerHistory.none(),
        [Phase("cool", 0.0, times[-1], {"*": FixedConvection(h, t_inf, radiation=False)})],
    )
    result = model.run(schedule, t_i, solver_options(setting, tau / 1000.0, snapshot_times=times))
    relative_miss = {}
    for t in times:
        theta = (_mean_temperature(result, result.snapshot(t)) - t_inf) / (t_i - t_inf)
        relative_miss[t] = abs(theta / lumped_convection_theta(t, h, area, capacity) - 1.0)
    assert max(relative_miss.values()) <= 0.005, relative_miss


@at_both_settings()
def test_lumped_cooling_by_radiation_to_surroundings(setting):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.18 (from memory):
    # closed form t(T) for radiation alone to surroundings at Tsur = 300 K, inverted with brentq.
    # 1000 K down to about 400 K over 1500 s; tolerance 0.5 % of T - Tsur; dt = 0.5 s.
    model, volume, area, capacity = _pellet_model()
    t_i, t_sur, eps = 1000.0, 300.0, PELLET["emissivity"]
    times = (250.0, 750.0, 1500.0)
    law = FixedConvection(0.0, 300.0, surroundings_temperature=t_sur, radiation=True)
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, times[-1], {"*": law})])
    result = model.run(schedule, t_i, solver_options(setting, 0.5, snapshot_times=times))
    relative_miss = {}
    for t in times:
        exact = invert_time(lambda x: lumped_radiation_time(x, t_i, t_sur, eps, area, capacity), t, t_sur + 1e-6, t_i)
        relative_miss[t] = abs(_mean_temperature(result, result.snapshot(t)) - exact) / (exact - t_sur)
    assert max(relative_miss.values()) <= 0.005, relative_miss


@at_both_settings()
def test_lumped_cooling_by_radiation_to_cold_space(setting):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.19 (from memory):
    # Tsur = 0: t = rho V c / (3 eps A sigma) (1/T^3 - 1/Ti^3). The engine needs Tsur > 0; at
    # Tsur = 1e-3 K the Tsur^4 term is 1e-24 of T^4. Tolerance 0.5 % of T; dt = 0.5 s.
    model, volume, area, capacity = _pellet_model()
    t_i, eps = 1000.0, PELLET["emissivity"]
    times = (250.0, 750.0, 1500.0)
    law = FixedConvection(0.0, 300.0, surroundings_temperature=1e-3, radiation=True)
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, times[-1], {"*": law})])
    result = model.run(schedule, t_i, solver_options(setting, 0.5, snapshot_times=times))
    for t in times:
        exact = invert_time(lambda x: lumped_radiation_time_to_zero_kelvin(x, t_i, eps, area, capacity), t, 1.0, t_i)
        numeric = _mean_temperature(result, result.snapshot(t))
        assert abs(numeric - exact) <= 0.005 * exact, t
    # the body must have cooled substantially for the check to mean something
    assert exact < 0.5 * t_i


TAIL_TARGETS = (350.0, 310.0, 303.0, 301.0)  # K, with surroundings at 300 K


@at_both_settings()
def test_slow_radiative_tail_to_near_the_surroundings(setting):
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.18 (from memory): a lumped
    # body radiating alone from 800 K to surroundings at 300 K, checked where it has come to 50,
    # 10, 3 and 1 K above them (the times from the closed form t(T)). The tail's time constant
    # rho V c / (4 eps A sigma Tsur^3) is 2340 s, and the last check is at 11,100 s.
    # Tolerance 0.5 % of T - Tsur; fixed step 2 s.
    model, volume, area, capacity = _pellet_model()
    t_i, t_sur, eps = 800.0, 300.0, PELLET["emissivity"]
    times = tuple(float(lumped_radiation_time(x, t_i, t_sur, eps, area, capacity)) for x in TAIL_TARGETS)
    law = FixedConvection(0.0, 300.0, surroundings_temperature=t_sur, radiation=True)
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, times[-1], {"*": law})])
    result = model.run(schedule, t_i, solver_options(setting, 2.0, snapshot_times=times))
    relative_miss = {
        exact: abs(_mean_temperature(result, result.snapshot(t)) - exact) / (exact - t_sur)
        for t, exact in zip(times, TAIL_TARGETS, strict=True)
    }
    assert max(relative_miss.values()) <= 0.005, relative_miss


# --------------------------------------------------------------------------- 6. contact conductance

JOINT = {
    "kA": 20.0,
    "kB": 100.0,
    "L1": 0.02,
    "L2": 0.03,
    "h_hot": 500.0,
    "h_cold": 200.0,
    "T_hot": 600.0,
    "T_cold": 300.0,
    "r1": 0.50,
    "r2": 0.51,
    "dz": 1e-3,
}


def _joint_run(clamped: float, released: float | None, brake_applied: bool, setting: str):
    """Two slabs in series through a contact, convection on the outer ends; steady state.

    Fixed 100 s steps over 1e4 s; the slowest time constant is below 100 s.
    """
    p = JOINT
    materials = {
        "hot": simple_material("hot", density=7800.0, specific_heat=500.0, conductivity=p["kA"]),
        "cold": simple_material("cold", density=2700.0, specific_heat=900.0, conductivity=p["kB"]),
    }
    assembly = Assembly(
        parts=[
            Part("hot", "hot", p["r1"], p["r2"], 0.0, p["L1"]),
            Part("cold", "cold", p["r1"], p["r2"], p["L1"], p["L1"] + p["L2"]),
        ],
        contacts=[Contact(parts=("hot", "cold"), clamped=clamped, released=released)],
    )
    model = Model.build(assembly, cell_size=(p["r2"] - p["r1"], p["dz"]), min_cells=1, materials=materials)
    laws = {
        "*": ADIABATIC,
        "hot:bottom": FixedConvection(p["h_hot"], p["T_hot"], radiation=False),
        "cold:top": FixedConvection(p["h_cold"], p["T_cold"], radiation=False),
    }
    schedule = Schedule(PowerHistory.none(), [Phase("hold", 0.0, 1e4, laws, clamped=brake_applied)])
    result = model.run(schedule, 400.0, solver_options(setting, 100.0))
    return model, result


def _joint_exact(h_c: float) -> float:
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 3.19 with the thermal
    # contact resistance of sec. 3.1.4, eq. 3.20 (from memory):
    # q = (T_hot - T_cold) / (1/(h1 A) + L1/(k1 A) + 1/(h_c A) + L2/(k2 A) + 1/(h2 A))
    p = JOINT
    area = np.pi * (p["r2"] ** 2 - p["r1"] ** 2)
    resistances = [
        1.0 / (p["h_hot"] * area),
        p["L1"] / (p["kA"] * area),
        1.0 / (h_c * area),
        p["L2"] / (p["kB"] * area),
        1.0 / (p["h_cold"] * area),
    ]
    return series_wall_heat_rate(p["T_hot"], p["T_cold"], resistances)


def _joint_heat_rates(model, result) -> np.ndarray:
    """Heat rate [W] between every pair of neighbouring cells inside each slab: q = k A dT / dz."""
    p = JOINT
    area = np.pi * (p["r2"] ** 2 - p["r1"] ** 2)
    column = result.snapshots[-1][:, 0]
    z = model.grid.z_centres
    dz = np.diff(z)
    hot, cold = z < p["L1"], z > p["L1"]
    q_hot = p["kA"] * area * -np.diff(column[hot]) / dz[hot[:-1] & hot[1:]]
    q_cold = p["kB"] * area * -np.diff(column[cold]) / dz[cold[:-1] & cold[1:]]
    return np.concatenate((q_hot, q_cold))


@at_both_settings()
def test_contact_joint_steady_flux_matches_series_resistances(setting):
    # Incropera, 6th ed., eqs. 3.19-3.20 (from memory); h_c = 2000 W/(m^2 K), about 6 % of the
    # total resistance. Tolerance 0.5 %, on every cell pair of both slabs.
    model, result = _joint_run(clamped=2000.0, released=None, brake_applied=False, setting=setting)
    q = _joint_heat_rates(model, result)
    assert np.max(np.abs(q / _joint_exact(2000.0) - 1.0)) <= 0.005


@at_both_settings()
def test_contact_joint_temperature_jump_is_flux_over_conductance(setting):
    # Incropera, 6th ed., eq. 3.20 (from memory): T_A - T_B = q'' / h_c across the joint.
    # Face temperatures from the two cells touching the joint and their half-cell
    # resistances dz / (2 k). Tolerance 0.5 % of the jump.
    p = JOINT
    model, result = _joint_run(clamped=2000.0, released=None, brake_applied=False, setting=setting)
    column = result.snapshots[-1][:, 0]
    z = model.grid.z_centres
    area = np.pi * (p["r2"] ** 2 - p["r1"] ** 2)
    q_flux = _joint_exact(2000.0) / area
    below = int(np.flatnonzero(z < p["L1"])[-1])
    above = below + 1
    t_a = column[below] - q_flux * 0.5 * p["dz"] / p["kA"]
    t_b = column[above] + q_flux * 0.5 * p["dz"] / p["kB"]
    assert t_a - t_b == pytest.approx(q_flux / 2000.0, rel=0.005)


@at_both_settings()
def test_contact_uses_released_conductance_when_brake_is_off(setting):
    # Same reference (Incropera, 6th ed., eqs. 3.19-3.20, from memory) with the released
    # conductance 2000 W/(m^2 K) while the clamped one is 8000: a phase with clamped=False
    # must use the released value. The two heat rates differ by about 4.5 %, far beyond
    # the 0.5 % tolerance.
    model, result = _joint_run(clamped=8000.0, released=2000.0, brake_applied=False, setting=setting)
    q = _joint_heat_rates(model, result)
    assert abs(_joint_exact(8000.0) / _joint_exact(2000.0) - 1.0) > 0.03
    assert np.max(np.abs(q / _joint_exact(2000.0) - 1.0)) <= 0.005


@at_both_settings()
def test_contact_uses_clamped_conductance_when_brake_is_on(setting):
    # As above with the phase clamped: the clamped conductance 8000 W/(m^2 K) applies.
    model, result = _joint_run(clamped=8000.0, released=2000.0, brake_applied=True, setting=setting)
    q = _joint_heat_rates(model, result)
    assert np.max(np.abs(q / _joint_exact(8000.0) - 1.0)) <= 0.005


# --------------------------------------------------------------------------- probes


def test_probe_reads_only_its_own_part():
    # A probe in a thin 2-cell part next to a part 700 K hotter must read its own part's
    # temperature (interpolation between the owning part's cell centres only, held flat
    # up to a face in contact with another part), not a blend across the boundary. The parts are joined by a
    # contact of 1e-6 W/(m^2 K) so they keep their initial temperatures over the 1 s run.
    material = simple_material("plain", density=7800.0, specific_heat=500.0, conductivity=50.0)
    assembly = Assembly(
        parts=[
            Part("thin", "plain", 0.10, 0.20, 0.0, 0.004),
            Part("hot", "plain", 0.10, 0.20, 0.004, 0.05),
        ],
        contacts=[Contact(parts=("thin", "hot"), clamped=1e-6)],
        probes=[
            # between the last thin-part cell centre (z = 3 mm) and the hot part's first (5 mm)
            Probe("in thin", 0.15, 0.0038),
            # on the shared face, declared to belong to the thin part
            Probe("on face", 0.15, 0.004, part="thin"),
            Probe("in hot", 0.15, 0.0042),
        ],
    )
    model = Model.build(assembly, cell_size=0.002, min_cells=2, materials={"plain": material})
    schedule = Schedule(PowerHistory.none(), [Phase("hold", 0.0, 1.0, {"*": ADIABATIC})])
    result = model.run(schedule, {"thin": 300.0, "hot": 1000.0}, SolverOptions(fixed_step=0.5))
    assert result.probes["in thin"][-1] == pytest.approx(300.0, abs=1e-3)
    assert result.probes["on face"][-1] == pytest.approx(300.0, abs=1e-3)
    assert result.probes["in hot"][-1] == pytest.approx(1000.0, abs=1e-3)
