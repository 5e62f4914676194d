"""Variable-step BDF2: its coefficients, its error estimate, its order, its options.

References: Hairer, Norsett & Wanner, Solving Ordinary Differential Equations I, 2nd ed.,
Springer, 1993, sec. III.5 (variable-step BDF) and III.7 (predictor-corrector error
estimates), from memory; Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed.,
eq. 5.6 (lumped capacitance: theta / theta_i = exp(-t / tau), tau = rho V c / (h A_s)).
"""

from __future__ import annotations

import numpy as np
import pytest

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
from heatstack.case import parse_case
from heatstack.cli_shipped import demo_case_path
from heatstack.errors import InputError
from heatstack.numerics.accounts import StepAccounts
from heatstack.numerics.multistep import StepHistory, bdf2_coefficients, error_constant, local_error

RATIOS = (0.3, 0.7, 1.0, 1.6, 2.0)


@pytest.mark.parametrize("w", RATIOS)
def test_bdf2_coefficients_are_the_standard_formula_times_its_step_factor(w):
    # Standard variable-step BDF2 (HNW I, III.5): (1+2w)/(1+w) y1 - (1+w) y0 + w^2/(1+w) y_1 = dt f1.
    # Divided by (1+2w)/(1+w): y1 - y0 - b (y0 - y_1) = a dt f1.
    a, b = bdf2_coefficients(w)
    assert 1.0 / a == pytest.approx((1 + 2 * w) / (1 + w), rel=1e-14)
    assert (1.0 + b) / a == pytest.approx(1 + w, rel=1e-14)
    assert b / a == pytest.approx(w * w / (1 + w), rel=1e-14)


@pytest.mark.parametrize("w", RATIOS)
def test_bdf2_is_exact_on_quadratics(w):
    # Second order: a quadratic y = 1 + 2 t + 3 t^2 satisfies the formula exactly.
    h1 = 0.4
    h = w * h1
    t_1, t0, t1 = -h1, 0.0, h
    y = lambda t: 1 + 2 * t + 3 * t * t  # noqa: E731
    a, b = bdf2_coefficients(w)
    assert y(t1) - y(t0) - b * (y(t0) - y(t_1)) == pytest.approx(a * h * (2 + 6 * t1), rel=1e-12)


def _history(h1: float, start: float, end: float, rate: float) -> StepHistory:
    empty = StepAccounts(0.0, 0.0, 0.0, 0.0, np.zeros(0), np.zeros(0))
    return StepHistory(h1, np.array([start]), np.array([end]), np.array([rate]), empty, 0.0)


@pytest.mark.parametrize("w", RATIOS)
def test_bdf2_error_estimate_equals_its_true_error_on_a_cubic(w):
    # y' = 3 g t^2 (non-stiff): from exact history the BDF2 value misses y(t1) = g t1^3 by its
    # local error, which the estimate C |y1 - y_predicted| must give exactly for a cubic.
    g, h1 = 2.5, 0.3
    h = w * h1
    a, b = bdf2_coefficients(w)
    y_1, y0 = g * (-h1) ** 3, 0.0
    y1 = y0 + b * (y0 - y_1) + a * h * 3 * g * h * h
    true_error = abs(g * h**3 - y1)
    last = _history(h1, y_1, y0, 0.0)  # slope 3 g t^2 = 0 at t = 0
    estimate = local_error(np.array([y1]), np.ones(1), h, np.array([y0]), np.array([0.0]), last)[0]
    assert estimate == pytest.approx(true_error, rel=1e-10)
    assert error_constant(1.0) == pytest.approx(0.4)


def test_euler_error_estimate_equals_its_true_error_on_a_quadratic():
    # y' = 2 t: backward Euler from y(0) = 0 gives 2 h^2, missing y(h) = h^2 by h^2 = C |y1 - 0|.
    h = 0.7
    y1 = 2 * h * h
    estimate = local_error(np.array([y1]), np.ones(1), h, np.zeros(1), np.zeros(1))[0]
    assert estimate == pytest.approx(abs(h * h - y1), rel=1e-12)


TAU = 100.0  # s
H_CONV = 50.0  # W/(m^2 K)


def _lumped_errors(scheme: str, steps: tuple[float, ...]) -> np.ndarray:
    # One cell of a very conductive block (Bi ~ 1e-7), convection on every face: lumped
    # capacitance, Incropera 6th ed. eq. 5.6, theta / theta_i = exp(-t / tau) at t = 2 tau.
    r1, r2, height = 0.10, 0.11, 0.01
    volume = np.pi * (r2**2 - r1**2) * height
    area = 2 * np.pi * (r2**2 - r1**2) + 2 * np.pi * (r1 + r2) * height
    rho_c = TAU * H_CONV * area / volume
    material = simple_material("lumped", density=1000.0, specific_heat=rho_c / 1000.0, conductivity=1e7)
    assembly = Assembly(parts=[Part("body", "lumped", r1, r2, 0.0, height)])
    model = Model.build(assembly, cell_size=0.05, min_cells=1, materials={"lumped": material})
    assert model.network.n_cells == 1
    law = FixedConvection(H_CONV, 300.0, radiation=False)
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, 2 * TAU, {"*": law})])
    errors = []
    for dt in steps:
        options = SolverOptions(scheme=scheme, fixed_step=dt, tolerance=1e-10)
        result = model.run(schedule, 400.0, options)
        theta = (result.final_state.temperature[0] - 300.0) / 100.0
        errors.append(abs(theta - np.exp(-2.0)))
    return np.array(errors)


def test_fixed_step_bdf2_is_second_order_on_lumped_cooling():
    errors = _lumped_errors("bdf2", (10.0, 5.0, 2.5))
    orders = np.log2(errors[:-1] / errors[1:])
    assert np.all((orders > 1.85) & (orders < 2.15)), (errors, orders)


def test_fixed_step_euler_is_first_order_on_lumped_cooling():
    errors = _lumped_errors("euler", (10.0, 5.0, 2.5))
    orders = np.log2(errors[:-1] / errors[1:])
    assert np.all((orders > 0.9) & (orders < 1.1)), (errors, orders)


def test_target_change_with_bdf2_is_refused_naming_the_key():
    with pytest.raises(InputError, match="target_change applies to scheme 'euler' only"):
        SolverOptions(target_change=4.0)
    assert SolverOptions(scheme="euler", target_change=4.0).euler_target_change == 4.0
    with pytest.raises(InputError, match="scheme: expected one of 'bdf2', 'euler'"):
        SolverOptions(scheme="rk4")


def test_case_file_solver_keys_are_checked_naming_the_key_path():
    demo = demo_case_path()
    text = demo.read_text(encoding="utf-8")

    def with_solver(lines: str):
        return parse_case(text.replace("[solver]\n", "[solver]\n" + lines), demo.name, demo.parent)

    case = with_solver('accuracy = "300 mK"\n')
    assert case.solver.scheme == "bdf2" and case.solver.accuracy == pytest.approx(0.3)
    with pytest.raises(InputError, match=r"solver\.target_change.*applies to scheme"):
        with_solver('target_change = "4 K"\n')
    with pytest.raises(InputError, match=r"solver\.scheme.*expected one of"):
        with_solver('scheme = "trapezoid"\n')
    assert with_solver('scheme = "euler"\ntarget_change = "4 K"\n').solver.target_change == 4.0
