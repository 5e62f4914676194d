"""The energy fit's behaviour: its full run, a duty given as a function, running out of runs, bad traces, and
reading sensor-trace CSV files (the recovery checks are in tests/validation/test_energy_fit.py).
"""

from __future__ import annotations

import io

import numpy as np
import pytest
from energy_fit_case import T_AMBIENT, TRACE_T, stop_and_park

from heatstack import FixedConvection
from heatstack.errors import InputError, UnitError
from heatstack.numerics.schedule import BoundaryLaw
from heatstack.questions.convection_scaling import ScaledConvection
from heatstack.questions.inverse import EnergyEstimate, FitError, estimate_energy
from heatstack.questions.sensor_trace import read_sensor_trace


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
