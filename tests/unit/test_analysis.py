"""Answers read from a Result: peaks, sensor lag, threshold crossings, margins, cooling times.

Each check is against a closed form worked out beside it (source named), never against
heatstack output. Most Results here are built by hand from synthetic histories; the
lumped-body cooling time is the one check that runs the solver.
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
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)
from heatstack.answers.analysis import cooling_time_in_result, margins, peak, threshold_crossings
from heatstack.answers.sensor import sensor_lag
from heatstack.errors import InputError, UnitError
from heatstack.numerics.instrument import first_order_lag
from heatstack.result import EnergyLedger, Result, State


def make_result(times, probes=None, readings=None, series=None, end_of_heating=0.0, time_constants=None):
    """A Result holding only the given histories (no field snapshots)."""
    times = np.asarray(times, dtype=float)
    probes = {k: np.asarray(v, dtype=float) for k, v in (probes or {}).items()}
    readings = {**probes, **{k: np.asarray(v, dtype=float) for k, v in (readings or {}).items()}}
    zeros = np.zeros(times.size)
    return Result(
        times=times,
        probes=probes,
        readings=readings,
        series={k: np.asarray(v, dtype=float) for k, v in (series or {}).items()},
        ledger=EnergyLedger(zeros, zeros, zeros, zeros),
        snapshot_times=np.zeros(0),
        snapshots=np.zeros((0, 1, 1)),
        r_edges=np.array([0.0, 1.0]),
        z_edges=np.array([0.0, 1.0]),
        part_map=np.zeros((1, 1), dtype=int),
        part_names=("block",),
        part_roles=("other",),
        final_state=State(float(times[-1]), np.zeros(1)),
        end_of_heating=end_of_heating,
        probe_time_constants={name: (time_constants or {}).get(name, 0.0) for name in probes},
    )


def triangle(t, t_peak, base=300.0, a=1.0, b=1.0):
    """Rises at a [K/s] from ``base`` until ``t_peak``, then falls at b [K/s]."""
    return np.where(t <= t_peak, base + a * t, base + a * t_peak - b * (t - t_peak))


# --------------------------------------------------------------------------- the instrument lag


def test_ramp_response_lags_by_exactly_the_time_constant():
    # Ogata, Modern Control Engineering, 5th ed., sec. 5-2, unit-ramp response of a
    # first-order system (from memory): y = a (t - tau + tau exp(-t / tau)); after the
    # transient the reading is the input tau seconds earlier. Coarse 7 s records: the
    # integration is exact for a piecewise-linear input, so 1e-9 K holds.
    tau, a = 15.0, 2.0
    t = np.arange(0.0, 1001.0, 7.0)
    y = first_order_lag(t, 300.0 + a * t, tau)
    late = t > 40 * tau  # exp(-40) ~ 4e-18
    assert np.max(np.abs(y[late] - (300.0 + a * (t[late] - tau)))) < 1e-9


def test_step_response_follows_one_minus_exp():
    # Ogata, Modern Control Engineering, 5th ed., sec. 5-2, unit-step response (from memory):
    # y = 1 - exp(-t / tau). The step is a ramp over 1e-6 s (a piecewise-linear input
    # cannot jump); that shifts the response by 5e-7 s, a 3e-8 error.
    tau = 15.0
    t = np.concatenate(([0.0, 1e-6], np.linspace(1.0, 5 * tau, 300)))
    y = first_order_lag(t, np.where(t > 0, 1.0, 0.0), tau)
    for check in (tau, 2 * tau, 3 * tau):
        k = int(np.argmin(np.abs(t - check)))
        assert y[k] == pytest.approx(1.0 - np.exp(-t[k] / tau), abs=1e-6)


# --------------------------------------------------------------------------- peaks and sensor lag


def test_peak_time_and_delay_after_braking():
    # Hand: a triangle peaking at 600 s (900 K) with braking ending at 100 s -> delay 500 s.
    t = np.linspace(0.0, 1200.0, 1201)
    result = make_result(t, probes={"rim": triangle(t, 600.0)}, end_of_heating=100.0)
    answer = peak(result, "rim")
    assert (answer.temperature, answer.time, answer.delay_after_braking) == pytest.approx((900.0, 600.0, 500.0))


def test_sensor_lag_splits_delay_into_conduction_and_instrument():
    # Derived by hand from the ramp response (Ogata, Modern Control Engineering, 5th ed.,
    # sec. 5-2, from memory): local temperature rising at a, then falling at b from t_p.
    # Long after the start the reading trails by a*tau at t_p; on the falling branch
    # y = x + b tau - (a + b) tau exp(-(t - t_p) / tau), and y peaks where y = x, at
    # t_p + tau ln((a + b) / b) = t_p + tau ln 2 for a = b. Records every 0.01 s.
    tau, t_p, end = 15.0, 600.0, 100.0
    t = np.linspace(0.0, 1200.0, 120001)
    x = triangle(t, t_p)
    y_rise = x - tau * (1.0 - np.exp(-t / tau))
    y_p = 300.0 + t_p - tau * (1.0 - np.exp(-t_p / tau))
    y_fall = x + tau + (y_p - (300.0 + t_p) - tau) * np.exp(-(t - t_p) / tau)
    y = np.where(t <= t_p, y_rise, y_fall)
    flat = np.full(t.size, 700.0)
    result = make_result(
        t,
        probes={"sensor": x},
        readings={"sensor": y},
        series={"heat_sink_mean": flat, "heat_sink_max": flat},
        end_of_heating=end,
        time_constants={"sensor": tau},
    )
    lag = sensor_lag(result)
    assert (lag.conduction_delay, lag.instrument_delay, lag.delay) == pytest.approx(
        (t_p - end, tau * np.log(2.0), t_p - end + tau * np.log(2.0)), abs=0.011
    )


def _offset_case(reading, mean, end_of_heating=0.0, t=None):
    t = np.linspace(0.0, 400.0, 401) if t is None else t
    return make_result(
        t,
        probes={"sensor": reading(t)},
        series={"heat_sink_mean": mean(t), "heat_sink_max": 900.0 - 0.5 * t},
        end_of_heating=end_of_heating,
    )


def test_sensor_offsets_at_the_reading_peak():
    # Hand: the reading peaks at 200 s (500 K); there the mean 700 - 0.25*200 = 650 K and
    # the hottest cell 900 - 0.5*200 = 800 K: offsets -150 K and -300 K.
    result = _offset_case(lambda t: triangle(t, 200.0, base=300.0), lambda t: 700.0 - 0.25 * t)
    lag = sensor_lag(result)
    assert (lag.offset_to_mean_at_peak, lag.offset_to_max_at_peak) == pytest.approx((-150.0, -300.0))


def test_sensor_comes_within_band_of_heat_sink_mean():
    # Hand: reading 300 + t [K] against a mean of 400 K; within 10 K when 300 + t = 390,
    # at t = 90 s.
    result = _offset_case(lambda t: np.minimum(300.0 + t, 400.0), lambda t: np.full(t.size, 400.0))
    assert sensor_lag(result, band="10 K").within_band_time == pytest.approx(90.0)


def test_band_is_searched_from_the_end_of_braking():
    # Hand: both start at 300 K (cold start); braking to 50 s lifts the mean to 400 K at
    # 50 s while the reading creeps up at 0.5 K/s: 300 + 0.5 t = 390 at t = 180 s, not 0 s.
    result = _offset_case(
        lambda t: np.minimum(300.0 + 0.5 * t, 400.0),
        lambda t: np.minimum(300.0 + 2.0 * t, 400.0),
        end_of_heating=50.0,
    )
    assert sensor_lag(result, band=10.0).within_band_time == pytest.approx(180.0)


def test_band_time_is_none_when_never_within():
    # Hand: the reading stays 100 K below the mean throughout.
    result = _offset_case(lambda t: np.full(t.size, 300.0), lambda t: np.full(t.size, 400.0))
    assert sensor_lag(result, band=10.0).within_band_time is None


# --------------------------------------------------------------------------- crossings and margins


def test_threshold_crossings_of_a_sine():
    # Closed form: 300 + 50 sin(2 pi t / P) = 325 K where sin = 1/2, i.e. at P/12 and
    # 5P/12 of each period (arcsin 1/2 = pi/6). P = 600 s: up at 50, 650 s, down at 250,
    # 850 s. Chord error on 0.6 s records ~ 5e-4 s.
    period = 600.0
    t = np.arange(0.0, 900.0 + 1e-9, 0.6)
    result = make_result(t, probes={"rim": 300.0 + 50.0 * np.sin(2 * np.pi * t / period)})
    crossings = threshold_crossings(result, "rim", 325.0)
    assert [d for _, d in crossings] == ["up", "down", "up", "down"]
    assert [c for c, _ in crossings] == pytest.approx([50.0, 250.0, 650.0, 850.0], abs=0.01)


def test_margin_is_limit_minus_peak_with_limit_in_celsius():
    # Hand: 100 degC = 373.15 K (SI Brochure, 9th ed., sec. 2.3.1: t/degC = T/K - 273.15);
    # the peak is 360 K -> margin 13.15 K.
    t = np.linspace(0.0, 100.0, 101)
    result = make_result(t, probes={"bead": triangle(t, 60.0, base=300.0)})
    (answer,) = margins(result, {"bead": "100 degC"})
    assert (answer.limit, answer.peak, answer.margin) == pytest.approx((373.15, 360.0, 13.15))


def test_margin_flags_a_limit_exceeded():
    # Hand: peak 360 K above a 350 K limit -> exceeded, margin -10 K.
    t = np.linspace(0.0, 100.0, 101)
    result = make_result(t, probes={"bead": triangle(t, 60.0, base=300.0)})
    (answer,) = margins(result, {"bead": 350.0})
    assert answer.exceeded and answer.margin == pytest.approx(-10.0)


# --------------------------------------------------------------------------- cooling time


def test_cooling_time_of_a_lumped_body():
    # Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed.,
    # eqs. 5.5-5.6 (from memory): t = (rho c V / h A) ln((T0 - Tinf) / (T - Tinf)).
    # A copper-like cylinder R = 10 mm, H = 20 mm, all faces cooled at h = 20 W/(m^2 K):
    # Bi = h (V/A) / k ~ 2e-4. 600 K -> 375 K in 300 K air: t = tau ln 4. Fixed step tau/200
    # (backward Euler shifts the time by about dt/2 = 0.25 %). Within 1 %.
    rho, c, k, radius, height, h = 8933.0, 385.0, 400.0, 0.01, 0.02, 20.0
    material = simple_material("lumped-copper", density=rho, specific_heat=c, conductivity=k)
    assembly = Assembly(
        parts=[Part("body", "lumped-copper", 0.0, radius, 0.0, height)],
        probes=[Probe("centre", 0.004, 0.01)],
    )
    model = Model.build(assembly, cell_size=0.01, min_cells=3, materials={"lumped-copper": material})
    volume = np.pi * radius**2 * height
    area = 2 * np.pi * radius * height + 2 * np.pi * radius**2
    tau = rho * c * volume / (h * area)
    expected = tau * np.log((600.0 - 300.0) / (375.0 - 300.0))
    law = FixedConvection(h, 300.0, radiation=False)
    schedule = Schedule(PowerHistory.none(), [Phase("cool", 0.0, 2.0 * expected, {"*": law})])
    result = model.run(schedule, 600.0, SolverOptions(fixed_step=tau / 200.0))
    answer = cooling_time_in_result(result, "centre", below=375.0, after=0.0)
    assert answer.reached and answer.duration == pytest.approx(expected, rel=0.01)


def test_cooling_time_counts_the_last_fall_below():
    # Hand: falls below 400 K at 100 s, rises back above, and falls below for good where
    # 500 - (t - 200) = 400, at t = 300 s; counted from the end of braking at 20 s: 280 s.
    t = np.array([0.0, 50.0, 150.0, 200.0, 400.0])
    result = make_result(t, probes={"rim": [500.0, 450.0, 350.0, 500.0, 300.0]}, end_of_heating=20.0)
    answer = cooling_time_in_result(result, "rim", below=400.0)
    assert (answer.time_below, answer.duration) == pytest.approx((300.0, 280.0))


def test_cooling_time_from_the_peak():
    # Hand: triangle from 300 K peaking at 600 K at 300 s, falling at 1 K/s: below 400 K at
    # 500 s, 200 s after the peak.
    t = np.linspace(0.0, 800.0, 801)
    result = make_result(t, probes={"rim": triangle(t, 300.0)})
    assert cooling_time_in_result(result, "rim", below=400.0, after="peak").duration == pytest.approx(200.0)


def test_cooling_time_not_within_the_record_says_so():
    # Hand: the record ends at 500 K, above 400 K: not reached, no time given.
    t = np.linspace(0.0, 100.0, 11)
    result = make_result(t, probes={"rim": 600.0 - t}, end_of_heating=0.0)
    answer = cooling_time_in_result(result, "rim", below=400.0)
    assert (answer.reached, answer.time_below, answer.duration) == (False, None, None)


# --------------------------------------------------------------------------- bad input


def test_unknown_probe_name_lists_the_known_ones():
    t = np.linspace(0.0, 10.0, 11)
    result = make_result(t, probes={"rim": 300.0 + t}, series={"wheel_max": 300.0 + t})
    with pytest.raises(InputError, match=r"'rum'.*'rim'.*'wheel_max'"):
        peak(result, "rum")


def test_limit_with_a_wrong_unit_is_refused():
    t = np.linspace(0.0, 10.0, 11)
    result = make_result(t, probes={"rim": 300.0 + t})
    with pytest.raises(UnitError, match="limit"):
        threshold_crossings(result, "rim", "150 bar")


def test_margin_limit_with_a_wrong_unit_names_the_probe():
    t = np.linspace(0.0, 10.0, 11)
    result = make_result(t, probes={"rim": 300.0 + t})
    with pytest.raises(UnitError, match=r"limits\['rim'\]"):
        margins(result, {"rim": "3 m"})


def test_too_few_points_is_refused():
    result = make_result([0.0], probes={"rim": [300.0]})
    with pytest.raises(InputError, match="too few record points"):
        peak(result, "rim")
