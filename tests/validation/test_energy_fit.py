"""The inverse problem: braking energy from a sensor trace, and reading sensor-trace CSV files.

Synthetic traces are made by heatstack itself with a known energy on a FINER grid
(cell_size 0.006) than the fits use (0.009 or 0.012), so the fit never sees the exact
model that made its data, then sampled every 30 s over 1 h with 1 K Gaussian noise from a
fixed seed. References: the known energy; :func:`scipy.optimize.least_squares` run
directly on full model runs (finite-difference Jacobian) as the reference optimiser; the
linearised covariance ``s^2 (J^T J)^-1`` of Bates & Watts, Nonlinear Regression Analysis
and Its Applications, 1988, ch. 2 (from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from energy_fit_case import E_TRUE, NOISE, T_AMBIENT, TRACE_T, stop_and_park, synthetic_trace
from scipy.optimize import least_squares

from heatstack import Model
from heatstack.builders import build_wheel_brake
from heatstack.questions.inverse import EnergyEstimate, estimate_energy, predict_from_estimate


def test_energy_recovered_within_3_percent_and_inside_3_standard_errors(estimate):
    assert isinstance(estimate, EnergyEstimate) and estimate.converged
    error = estimate.energy - E_TRUE
    assert abs(error) <= 0.03 * E_TRUE
    assert estimate.standard_error > 0
    assert abs(error) <= 3.0 * estimate.standard_error
    # with the right model the residual scatter is the noise put in (1 K)
    assert 0.8 * NOISE < estimate.residual_sd < 1.2 * NOISE
    assert estimate.residual_rms == pytest.approx(np.sqrt(np.mean(estimate.residuals**2)))
    assert estimate.n_runs <= 6  # a few runs, not hundreds
    assert estimate.n_points == TRACE_T.size and estimate.parameters == ("energy",)


def test_agrees_with_scipy_least_squares_on_full_runs(truth_model, built):
    """Reference optimiser: scipy least_squares over full runs, Jacobian by finite differences."""
    model = Model.build(build_wheel_brake().assembly, cell_size=0.012)
    y = synthetic_trace(truth_model, built, E_TRUE, seed=7)
    ours = estimate_energy(model, stop_and_park(15e6), built.assembly.surfaces, TRACE_T, y, T_AMBIENT)

    def residual(x):
        run = model.run(
            stop_and_park(x[0] * 1e6).schedule(built.assembly.surfaces, extra_breakpoints=TRACE_T), T_AMBIENT
        )
        return np.interp(TRACE_T, run.times, run.readings["sensor"]) - y

    reference = least_squares(residual, [15.0], diff_step=1e-3, xtol=1e-8)
    jac = reference.jac / 1e6
    s2 = np.sum(reference.fun**2) / (TRACE_T.size - 1)
    se_reference = float(np.sqrt(s2 / (jac.T @ jac))[0, 0])
    assert ours.energy == pytest.approx(reference.x[0] * 1e6, abs=0.05 * ours.standard_error)
    assert ours.standard_error == pytest.approx(se_reference, rel=0.02)
    assert ours.n_runs < reference.nfev  # cheaper than the reference (it also spends Jacobian runs)


def test_initial_temperature_fitted_with_the_energy(truth_model, fit_model, built):
    y = synthetic_trace(truth_model, built, E_TRUE, seed=11, initial=296.0)
    est = estimate_energy(
        fit_model,
        stop_and_park(15e6),
        built.assembly.surfaces,
        TRACE_T,
        y,
        T_AMBIENT,
        fit_initial_temperature=True,
    )
    assert est.converged and est.parameters == ("energy", "initial_temperature")
    assert abs(est.initial_temperature - 296.0) <= max(3.0 * est.initial_temperature_se, 0.3)
    assert abs(est.energy - E_TRUE) <= min(0.03 * E_TRUE, 3.0 * est.standard_error)
    assert est.convection_multiplier == 1.0 and est.convection_multiplier_se is None


def test_convection_multiplier_fitted_with_the_energy(truth_model, fit_model, built):
    y = synthetic_trace(truth_model, built, E_TRUE, seed=13, multiplier=1.4)
    est = estimate_energy(
        fit_model,
        stop_and_park(15e6),
        built.assembly.surfaces,
        TRACE_T,
        y,
        T_AMBIENT,
        fit_convection_multiplier=True,
    )
    assert est.converged
    assert abs(est.convection_multiplier - 1.4) <= 3.0 * est.convection_multiplier_se
    assert abs(est.energy - E_TRUE) <= min(0.03 * E_TRUE, 3.0 * est.standard_error)
    assert est.covariance.shape == (2, 2)


def test_prediction_of_a_longer_duty_matches_the_truth(truth_model, fit_model, built, estimate):
    longer = stop_and_park(15e6, parked="3 h")
    predicted = predict_from_estimate(fit_model, longer, built.assembly.surfaces, estimate)
    truth = truth_model.run(stop_and_park(E_TRUE, parked="3 h").schedule(built.assembly.surfaces), T_AMBIENT)
    assert predicted.ledger.heat_in[-1] == pytest.approx(estimate.energy, rel=1e-9)
    assert predicted.peak("heat_sink_mean")[0] == pytest.approx(truth.peak("heat_sink_mean")[0], rel=0.01)
    for plug in ("fuse plug 1", "fuse plug 2"):
        assert predicted.peak(plug)[0] == pytest.approx(truth.peak(plug)[0], abs=2.0)
