"""Order of accuracy by the method of manufactured solutions, in r-z.

Roache, P.J., Code verification by the method of manufactured solutions, J. Fluids Eng.
124 (2002) 4-10; Oberkampf & Roy, Verification and Validation in Scientific Computing,
Cambridge, 2010, ch. 6 (from memory): choose a smooth T(r, z, t), derive the source that
makes it an exact solution of the conduction equation, run on successively refined
grids and measure the observed order p = log2(e_h / e_h/2).

The conduction equation the engine solves, axisymmetric with anisotropic, temperature-
dependent conductivity and temperature-dependent specific heat::

    rho cp(T) dT/dt = (1/r) d/dr(r k_r(T) dT/dr) + d/dz(k_z(T) dT/dz) + S

With linear properties k_r = ar + br T, k_z = az + bz T the divergence expands to::

    k_r (T_rr + T_r / r) + br T_r^2 + k_z T_zz + bz T_z^2

The manufactured solution is T = T0 + A F(r) G(z) phi(t) with F = cos(a (r - r1)),
a = pi / (2 (r2 - r1)) and G = cos(b z), b = pi / (2 H): dT/dr = 0 on the inner face
(adiabatic; on the axis when r1 = 0, where the solution is smooth and even in r), T = T0
on the outer face, dT/dz = 0 on the bottom face (adiabatic) and T = T0 on the top face. The
two T = T0 faces are held by h = 1e9 W/(m^2 K) at an ambient T0; the film then carries
at most ~1e-4 K, far below the discretisation errors measured. The source is derived by
hand (expressions below) and evaluated with numpy.

Material: k_r from 10 to 100 W/(m K), k_z from 40 down to 5 W/(m K) and cp from 300 to
2500 J/(kg K), linear between 50 K and 3000 K; over the 400-800 K of the solution k_r
varies by ~60 %, k_z by ~-20 %, cp by ~50 %.

The order checks run at fixed steps by construction (the discrete source assumes backward
Euler at exactly that step; the time-order check compares fixed steps). The transient
check with the continuous source runs at a fixed step and at the default settings with
the same tolerance (tests/validation/settings.py).
"""

from __future__ import annotations

import numpy as np
import pytest
from settings import at_both_settings, solver_options

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Schedule,
    SolverOptions,
    simple_material,
)

T0, AMPLITUDE = 400.0, 400.0
RHO = 1000.0
K_RADIAL = (10.0, 100.0)  # W/(m K) at 50 K and 3000 K
K_AXIAL = (40.0, 5.0)
CP = (300.0, 2500.0)  # J/(kg K)
MATERIAL = simple_material("mms", density=RHO, specific_heat=CP, conductivity=K_RADIAL, conductivity_axial=K_AXIAL)
HOLD = 1e9  # W/(m^2 K) on the T = T0 faces
GRIDS = (8, 16, 32)


def _linear(ends: tuple[float, float]) -> tuple[float, float]:
    """(intercept, slope) of the straight line through (50 K, ends[0]) and (3000 K, ends[1])."""
    slope = (ends[1] - ends[0]) / (3000.0 - 50.0)
    return ends[0] - 50.0 * slope, slope


AR, BR = _linear(K_RADIAL)
AZ, BZ = _linear(K_AXIAL)
C0, C1 = _linear(CP)


class Manufactured:
    """T = T0 + A cos(a (r - r1)) cos(b z) phi(t) on r1 <= r <= r2, 0 <= z <= H."""

    def __init__(self, r1: float, r2: float, height: float, end: float | None = None):
        self.r1, self.r2, self.height, self.end = r1, r2, height, end
        self.a = np.pi / (2.0 * (r2 - r1))
        self.b = np.pi / (2.0 * height)

    def phi(self, t):
        # steady if no end time is given; else 1 + 0.5 sin(pi t / end)
        return 1.0 if self.end is None else 1.0 + 0.5 * np.sin(np.pi * t / self.end)

    def dphi(self, t):
        return 0.0 if self.end is None else 0.5 * np.pi / self.end * np.cos(np.pi * t / self.end)

    def temperature(self, r, z, t=0.0):
        return T0 + AMPLITUDE * np.cos(self.a * (r - self.r1)) * np.cos(self.b * z) * self.phi(t)

    def divergence(self, r, z, t=0.0):
        """(1/r) d/dr(r k_r dT/dr) + d/dz(k_z dT/dz) [W/m^3], derived by hand."""
        a, b, p = self.a, self.b, self.phi(t)
        f, fp = np.cos(a * (r - self.r1)), -a * np.sin(a * (r - self.r1))
        g, gp = np.cos(b * z), -b * np.sin(b * z)
        t_ = T0 + AMPLITUDE * f * g * p
        t_r = AMPLITUDE * fp * g * p
        t_rr = -AMPLITUDE * a * a * f * g * p
        t_z = AMPLITUDE * f * gp * p
        t_zz = -AMPLITUDE * b * b * f * g * p
        k_r, k_z = AR + BR * t_, AZ + BZ * t_
        return k_r * (t_rr + t_r / r) + BR * t_r**2 + k_z * t_zz + BZ * t_z**2

    def steady_source(self, r, z, t):
        return -self.divergence(r, z)

    def continuous_source(self, r, z, t):
        """rho cp(T) dT/dt - div(k grad T)."""
        temperature = self.temperature(r, z, t)
        dtdt = (temperature - T0) / self.phi(t) * self.dphi(t)
        return RHO * (C0 + C1 * temperature) * dtdt - self.divergence(r, z, t)

    def discrete_source(self, dt: float):
        """The source that makes T the exact solution of backward Euler in time with step dt.

        [H(T(t)) - H(T(t - dt))] / dt - div(k grad T)(t), with the volumetric enthalpy
        H(T) = rho (C0 T + C1 T^2 / 2) of the linear cp (the constant of integration cancels).
        The time error of the scheme then vanishes and only the spatial error remains,
        while the temperature-dependent cp still enters through H.
        """

        def enthalpy(temperature):
            return RHO * (C0 * temperature + 0.5 * C1 * temperature**2)

        def source(r, z, t):
            now, before = self.temperature(r, z, t), self.temperature(r, z, t - dt)
            return (enthalpy(now) - enthalpy(before)) / dt - self.divergence(r, z, t)

        return source


def _model(solution: Manufactured, cells: int) -> Model:
    assembly = Assembly(parts=[Part("block", "mms", solution.r1, solution.r2, 0.0, solution.height)])
    size = ((solution.r2 - solution.r1) / cells, solution.height / cells)
    model = Model.build(assembly, cell_size=size, min_cells=1, materials={"mms": MATERIAL})
    assert model.grid.shape == (cells, cells)
    return model


def _schedule(end: float, source) -> Schedule:
    laws = {
        "*": FixedConvection(0.0, T0, radiation=False),
        "block:outer": FixedConvection(HOLD, T0, radiation=False),
        "block:top": FixedConvection(HOLD, T0, radiation=False),
    }
    return Schedule(PowerHistory.none(), [Phase("mms", 0.0, end, laws)], volumetric_source=source)


def _run(
    solution: Manufactured, cells: int, source, end: float, dt: float, initial, tolerance: float = 1e-8, scheme="bdf2"
):
    model = _model(solution, cells)
    schedule = _schedule(end, source)
    if callable(initial):
        j, i = model.grid.cell_ij[:, 0], model.grid.cell_ij[:, 1]
        initial = initial(model.grid.r_centres[i], model.grid.z_centres[j])
    result = model.run(schedule, initial, SolverOptions(scheme=scheme, fixed_step=dt, tolerance=tolerance))
    r, z = np.meshgrid(model.grid.r_centres, model.grid.z_centres)
    volumes = np.outer(np.diff(model.grid.z_edges), np.pi * np.diff(model.grid.r_edges**2))
    return result, r, z, volumes


def _steady_errors(solution: Manufactured) -> tuple[np.ndarray, np.ndarray]:
    """Max and volume-weighted L2 errors at the cell centres on each grid.

    Steady state by fixed 10 s steps over 2000 s: the slowest time constant is about
    35 s, so the transient is gone by ~25 orders of magnitude.
    """
    maxima, l2 = [], []
    for cells in GRIDS:
        result, r, z, volumes = _run(solution, cells, solution.steady_source, 2000.0, 10.0, T0)
        error = result.snapshots[-1] - solution.temperature(r, z)
        maxima.append(np.max(np.abs(error)))
        l2.append(np.sqrt(np.sum(volumes * error**2) / np.sum(volumes)))
    return np.array(maxima), np.array(l2)


def _orders(errors: np.ndarray) -> np.ndarray:
    return np.log2(errors[:-1] / errors[1:])


@pytest.fixture(scope="module")
def annulus_steady():
    return _steady_errors(Manufactured(r1=0.05, r2=0.10, height=0.05))


@pytest.fixture(scope="module")
def solid_steady():
    return _steady_errors(Manufactured(r1=0.0, r2=0.05, height=0.05))


def test_steady_annulus_max_error_is_second_order(annulus_steady):
    # Roache (2002); Oberkampf & Roy (2010), ch. 6 (from memory): observed order >= 1.9 on
    # 8, 16 and 32 cells per direction, anisotropic k_r(T), k_z(T).
    maxima, _ = annulus_steady
    assert np.all(_orders(maxima) >= 1.9), (maxima, _orders(maxima))
    assert maxima[-1] < 0.5  # and the error itself is small (K)


def test_steady_solid_cylinder_l2_error_is_second_order(solid_steady):
    # Roache (2002); Oberkampf & Roy (2010), ch. 6 (from memory): observed order >= 1.9 of the
    # volume-weighted L2 error on a solid cylinder from the axis.
    _, l2 = solid_steady
    assert np.all(_orders(l2) >= 1.9), (l2, _orders(l2))


@pytest.mark.xfail(
    strict=True,
    reason="known limitation: on a solid cylinder the max error converges at ~1.7 (errors 3.5, 1.08, "
    "0.32 K on 8/16/32 cells; the L2 error is second order). The axis cell uses the disc-mean "
    "half-cell resistance 1/(8 pi k dz), which lowered the max error by 28 %, not its order",
)
def test_steady_solid_cylinder_max_error_is_second_order(solid_steady):
    # Roache (2002); Oberkampf & Roy (2010), ch. 6 (from memory): observed order >= 1.9 of the
    # max error on a solid cylinder from the axis.
    maxima, _ = solid_steady
    assert np.all(_orders(maxima) >= 1.9), (maxima, _orders(maxima))


def test_steady_state_reached_with_large_steps(annulus_steady):
    # Backward Euler is L-stable (Hairer & Wanner, Solving Ordinary Differential Equations II,
    # 2nd ed., sec. IV.3, from memory): steps of 1e5 s, far beyond every time constant (~35 s),
    # must land on the steady state. The same steady manufactured problem on 16 x 16 cells
    # must then give the same max error as the 10 s steps, to 1 %.
    maxima, _ = annulus_steady
    solution = Manufactured(r1=0.05, r2=0.10, height=0.05)
    result, r, z, _ = _run(solution, 16, solution.steady_source, 1e6, 1e5, T0, tolerance=1e-6)
    error = np.max(np.abs(result.snapshots[-1] - solution.temperature(r, z)))
    assert error == pytest.approx(maxima[1], rel=0.01)


def test_transient_annulus_with_temperature_dependent_cp_is_second_order_in_space():
    # Roache (2002) (from memory), with the source made consistent with backward Euler in
    # time (Manufactured.discrete_source) so that only the spatial error is left:
    # T = T0 + A F G (1 + 0.5 sin(pi t / 20 s)), dt = 0.5 s, compared at t = 20 s.
    # cp(T), k_r(T) and k_z(T) all vary. Observed max-error order >= 1.9.
    end, dt = 20.0, 0.5
    solution = Manufactured(r1=0.05, r2=0.10, height=0.05, end=end)
    errors = []
    for cells in GRIDS:
        source = solution.discrete_source(dt)  # consistent with backward Euler: scheme "euler"
        result, r, z, _ = _run(solution, cells, source, end, dt, solution.temperature, scheme="euler")
        assert np.allclose(np.diff(result.times), dt)  # the source assumes exactly this step
        errors.append(np.max(np.abs(result.snapshots[-1] - solution.temperature(r, z, end))))
    errors = np.array(errors)
    assert np.all(_orders(errors) >= 1.9), (errors, _orders(errors))


def _time_order(scheme: str) -> float:
    """Observed order in time of the t = 20 s field at dt = 1, 0.5, 0.25 s (16 x 16 cells)."""
    end = 20.0
    solution = Manufactured(r1=0.05, r2=0.10, height=0.05, end=end)
    fields = []
    for dt in (1.0, 0.5, 0.25):
        result, *_ = _run(solution, 16, solution.continuous_source, end, dt, solution.temperature, scheme=scheme)
        fields.append(result.snapshots[-1])
    coarse = np.max(np.abs(fields[0] - fields[1]))
    fine = np.max(np.abs(fields[1] - fields[2]))
    return float(np.log2(coarse / fine))


def test_time_integration_is_first_order():
    # Backward Euler is first order in time (e.g. Hairer & Wanner, Solving Ordinary
    # Differential Equations II, 2nd ed., sec. IV.3, from memory). With the continuous
    # source rho cp(T) dT/dt - div(k grad T) on a fixed 16 x 16 grid, the differences of
    # the t = 20 s fields at dt = 1, 0.5, 0.25 s shrink by 2^p with 0.9 <= p <= 1.1.
    order = _time_order("euler")
    assert 0.9 <= order <= 1.1, order


TRANSIENT_TIMES = (5.0, 10.0, 15.0, 20.0)


@at_both_settings()
def test_transient_manufactured_solution_is_reproduced(setting):
    # Roache (2002) (from memory): with the continuous source rho cp(T) dT/dt - div(k grad T),
    # T = T0 + A F G (1 + 0.5 sin(pi t / 20 s)) is an exact solution of the conduction equation
    # (cp(T), k_r(T), k_z(T) all vary); it swings by +-200 K at up to 31 K/s. On 32 x 32 cells
    # the spatial error is about 0.2 K; fixed step 0.025 s. Tolerance 0.5 K at 5, 10, 15, 20 s.
    solution = Manufactured(r1=0.05, r2=0.10, height=0.05, end=20.0)
    model = _model(solution, 32)
    j, i = model.grid.cell_ij[:, 0], model.grid.cell_ij[:, 1]
    initial = solution.temperature(model.grid.r_centres[i], model.grid.z_centres[j])
    options = solver_options(setting, 0.025, snapshot_times=TRANSIENT_TIMES)
    result = model.run(_schedule(20.0, solution.continuous_source), initial, options)
    r, z = np.meshgrid(model.grid.r_centres, model.grid.z_centres)
    miss = {t: float(np.max(np.abs(result.snapshot(t) - solution.temperature(r, z, t)))) for t in TRANSIENT_TIMES}
    assert max(miss.values()) <= 0.5, miss


def test_bdf2_time_integration_is_second_order():
    # Variable-step BDF2 is second order (Hairer, Norsett & Wanner, Solving Ordinary
    # Differential Equations I, 2nd ed., sec. III.5, from memory); its first step is backward
    # Euler, whose one O(dt^2) local error keeps the global order 2. Same problem as above,
    # scheme "bdf2" at the fixed steps: 1.8 <= p <= 2.2.
    order = _time_order("bdf2")
    assert 1.8 <= order <= 2.2, order
