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

import io

import numpy as np
import pytest
from scipy.optimize import least_squares

from heatstack import FixedConvection, Model
from heatstack.builders import build_wheel_brake
from heatstack.errors import InputError, UnitError
from heatstack.numerics.schedule import BoundaryLaw
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.heat_input import stop_from_energy
from heatstack.questions.convection_scaling import ScaledConvection, scale_convection
from heatstack.questions.inverse import EnergyEstimate, FitError, estimate_energy, predict_from_estimate
from heatstack.questions.sensor_trace import read_sensor_trace

E_TRUE = 20e6  # [J], per brake
T_AMBIENT = 288.15
TRACE_T = np.arange(0.0, 3601.0, 30.0)  # every 30 s over 1 h
NOISE = 1.0  # [K]


def stop_and_park(energy: float, parked: str = "1 h") -> DutyCycle:
    """An invented 30 s stop at the given energy, then parked with the brake set."""
    return DutyCycle(
        [
            DutyPhase("stop", "30 s", Environment(ground_speed="40 kt"), [stop_from_energy(energy, "30 s")]),
            DutyPhase("parked", parked, Environment(), clamped=True),
        ]
    )


@pytest.fixture(scope="module")
def built():
    return build_wheel_brake()


@pytest.fixture(scope="module")
def truth_model(built):
    return Model.build(built.assembly, cell_size=0.006)


@pytest.fixture(scope="module")
def fit_model(built):
    return Model.build(built.assembly, cell_size=0.009)


def synthetic_trace(model, built, energy, seed, initial=T_AMBIENT, multiplier=1.0):
    schedule = stop_and_park(energy).schedule(built.assembly.surfaces, extra_breakpoints=TRACE_T)
    result = model.run(scale_convection(schedule, multiplier), initial)
    clean = np.interp(TRACE_T, result.times, result.readings["sensor"])
    return clean + np.random.default_rng(seed).normal(0.0, NOISE, TRACE_T.size)


@pytest.fixture(scope="module")
def trace(truth_model, built):
    return synthetic_trace(truth_model, built, E_TRUE, seed=20240611)


@pytest.fixture(scope="module")
def estimate(fit_model, built, trace):
    # the duty's own energy (15 MJ) is only the first guess
    return estimate_energy(fit_model, stop_and_park(15e6), built.assembly.surfaces, TRACE_T, trace, T_AMBIENT)


# ---------------------------------------------------------------------------- recovery


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


def test_estimate_carries_the_full_run_with_heat_sink_and_fuse_plugs(estimate, trace):
    predicted = estimate.predicted
    assert predicted.ledger.heat_in[-1] == pytest.approx(estimate.energy, rel=1e-9)
    sensor = np.interp(TRACE_T, predicted.times, predicted.readings["sensor"])
    assert np.allclose(sensor - trace, estimate.residuals)
    assert "heat_sink_mean" in predicted.series and "fuse plug 1" in predicted.probes


def test_a_function_making_the_duty_gives_the_same_energy(fit_model, built, trace, estimate):
    other = estimate_energy(
        fit_model, stop_and_park, built.assembly.surfaces, TRACE_T, trace, T_AMBIENT, energy_guess="26 MJ"
    )
    assert other.converged
    assert other.energy == pytest.approx(estimate.energy, abs=0.2 * estimate.standard_error)


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


def test_a_fit_that_runs_out_of_runs_says_so_with_its_best_estimate(fit_model, built, trace):
    with pytest.raises(FitError, match="not converged") as caught:
        estimate_energy(
            fit_model,
            stop_and_park(4e6),
            built.assembly.surfaces,
            TRACE_T,
            trace,
            T_AMBIENT,
            max_runs=4,
        )
    best = caught.value.estimate
    assert isinstance(best, EnergyEstimate) and not best.converged
    assert "Best estimate" in str(caught.value) and best.energy > 4e6


# ---------------------------------------------------------------------------- bad input


def test_too_few_points_is_an_input_error(fit_model, built):
    with pytest.raises(InputError, match="too few"):
        estimate_energy(fit_model, stop_and_park(15e6), built.assembly.surfaces, [0.0, 30.0], [300.0, 310.0], T_AMBIENT)


def test_non_increasing_time_names_the_row(fit_model, built):
    t = np.array([0.0, 30.0, 60.0, 60.0, 90.0])
    with pytest.raises(InputError, match="row 4"):
        estimate_energy(fit_model, stop_and_park(15e6), built.assembly.surfaces, t, np.full(5, 320.0), T_AMBIENT)


def test_trace_below_ambient_everywhere_is_an_input_error(fit_model, built):
    with pytest.raises(InputError, match="ambient"):
        estimate_energy(
            fit_model,
            stop_and_park(15e6),
            built.assembly.surfaces,
            TRACE_T,
            np.full(TRACE_T.size, 280.0),
            T_AMBIENT,
        )


def test_unknown_sensor_name_is_an_input_error(fit_model, built, trace):
    with pytest.raises(InputError, match="no probe or series named 'brake sensor'"):
        estimate_energy(
            fit_model,
            stop_and_park(15e6),
            built.assembly.surfaces,
            TRACE_T,
            trace,
            T_AMBIENT,
            sensor="brake sensor",
        )


def test_trace_outside_the_duty_and_non_uniform_start_are_input_errors(fit_model, built, trace):
    late = TRACE_T + 600.0  # ends after the 3630 s duty
    with pytest.raises(InputError, match="outside the duty"):
        estimate_energy(fit_model, stop_and_park(15e6), built.assembly.surfaces, late, trace, T_AMBIENT)
    with pytest.raises(InputError, match="uniform"):
        estimate_energy(
            fit_model,
            stop_and_park(15e6),
            built.assembly.surfaces,
            TRACE_T,
            trace,
            {"*": T_AMBIENT},
            fit_initial_temperature=True,
        )


# ---------------------------------------------------------------------------- convection multiplier


def test_scaled_convection_multiplies_h_and_keeps_radiation():
    law = FixedConvection(10.0, 300.0, surroundings_temperature=290.0, radiation=True)
    scaled = ScaledConvection(law, 1.5)
    assert isinstance(scaled, BoundaryLaw)
    assert np.allclose(scaled.convection_coefficient(np.array([400.0, 500.0]), 0.0), 15.0)
    assert (scaled.ambient_temperature, scaled.surroundings_temperature, scaled.radiation) == (
        300.0,
        290.0,
        True,
    )
    with pytest.raises(InputError):
        ScaledConvection(law, -1.0)


# ---------------------------------------------------------------------------- CSV


def test_csv_with_units_and_comments(tmp_path):
    path = tmp_path / "trace.csv"
    path.write_text("# sensor, invented\ntime_min,temperature_degC\n0,15\n\n# a gap\n0.5,50\n1,100\n")
    t, temperature = read_sensor_trace(path)
    assert np.allclose(t, [0.0, 30.0, 60.0])
    assert np.allclose(temperature, [288.15, 323.15, 373.15])


def test_csv_in_fahrenheit_and_without_header():
    t, temperature = read_sensor_trace(io.StringIO("time_s,temperature_degF\n0,32\n10,212\n"))
    assert np.allclose(temperature, [273.15, 373.15]) and np.allclose(t, [0.0, 10.0])
    t, temperature = read_sensor_trace(io.StringIO("0,300\n5,310\n"))
    assert np.allclose(temperature, [300.0, 310.0]) and np.allclose(t, [0.0, 5.0])
    t, temperature = read_sensor_trace([(0.0, 300.0), (1.0, 301.0)])
    assert np.allclose(temperature, [300.0, 301.0])


def test_csv_errors_name_the_file_line(tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("# comment\ntime_s,temperature_K\n0,300\n30,310\n# another\n20,305\n")
    with pytest.raises(InputError, match=r"bad\.csv, line 6: time 20 does not increase"):
        read_sensor_trace(path)
    path.write_text("time_s,temperature_K\n0,300\n30,hot\n")
    with pytest.raises(InputError, match="line 3: cannot read"):
        read_sensor_trace(path)
    path.write_text("time_s,temperature_furlong\n0,300\n30,310\n")
    with pytest.raises(UnitError, match="line 1"):
        read_sensor_trace(path)
    path.write_text("time_s,temperature_K\n0,300\n")
    with pytest.raises(InputError, match="at least two"):
        read_sensor_trace(path)
    path.write_text("time_s,temperature_K\n0,300\n30,-5\n")
    with pytest.raises(InputError, match="line 3: temperature -5 is at or below absolute zero"):
        read_sensor_trace(path)
    with pytest.raises(InputError, match="cannot read the file"):
        read_sensor_trace(tmp_path / "missing.csv")
