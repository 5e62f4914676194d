"""Turnaround questions from a saved state: cooling time and "what if this braking started now".

References: the lumped-capacitance cooling curve, Incropera, DeWitt, Bergman & Lavine,
Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.6 (from memory)::

    (T - T_inf) / (T_i - T_inf) = exp(-t h A / (rho V c))

for a small copper-like ring (Biot number ~3e-4) cooled by a fixed h without radiation;
and, for the wheel and brake, properties that must hold whatever the numbers: more heat
at the start never lowers a peak, and no added energy is just the continued cooling.
"""

from __future__ import annotations

import numpy as np
import pytest

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Probe,
    SolverOptions,
    State,
    SurfaceGroup,
    simple_material,
)
from heatstack.builders import build_wheel_brake
from heatstack.errors import InputError, UnitError
from heatstack.numerics.schedule import PowerHistory
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.events import BrakingEvent
from heatstack.operations.heat_input import stop_from_energy
from heatstack.questions.whatif import CoolingAnswer, WhatIfAnswer, cooling_time_from_state, history_names, what_if

RHO, CP, K = 8900.0, 385.0, 400.0  # copper-like [kg/m^3], [J/(kg K)], [W/(m K)]
H, T_INF = 25.0, 300.0  # [W/(m^2 K)], [K]
R_IN, R_OUT, LENGTH = 0.05, 0.07, 0.02  # [m]
TIGHT = SolverOptions(accuracy=0.02)  # BDF2 under a tight error tolerance, for a 1 % check


@pytest.fixture(scope="module")
def lumped():
    material = simple_material("lumped-copper", RHO, CP, K)
    assembly = Assembly(
        [Part("block", "lumped-copper", R_IN, R_OUT, 0.0, LENGTH)], probes=[Probe("centre", 0.06, 0.01)]
    )
    model = Model.build(assembly, cell_size=0.008, materials={"lumped-copper": material})
    environment = Environment(overrides={"*": FixedConvection(H, T_INF, radiation=False)})
    scales = [SurfaceGroup(group, LENGTH) for group in ("block:inner", "block:outer", "block:bottom", "block:top")]
    # the saved state: 5 min of cooling from 500 K
    warm = model.run(DutyCycle([DutyPhase("cool", "5 min", environment)]).schedule(scales), 500.0, TIGHT)
    return model, environment, scales, warm.final_state


def closed_form_time(state_temperature: float, threshold: float) -> float:
    volume = np.pi * (R_OUT**2 - R_IN**2) * LENGTH
    area = 2.0 * np.pi * (R_IN + R_OUT) * LENGTH + 2.0 * np.pi * (R_OUT**2 - R_IN**2)
    tau = RHO * CP * volume / (H * area)
    return tau * np.log((state_temperature - T_INF) / (threshold - T_INF))


def test_cooling_time_of_a_lumped_body_matches_the_exponential(lumped):
    model, environment, scales, state = lumped
    assert state.time == pytest.approx(300.0)
    mass = model.network.mass()
    start = float(np.dot(mass, state.temperature) / mass.sum())
    answer = cooling_time_from_state(
        model, state, environment, scales, "centre", below=350.0, horizon="40 min", options=TIGHT
    )
    assert isinstance(answer, CoolingAnswer) and answer.reached
    assert answer.time_needed == pytest.approx(closed_form_time(start, 350.0), rel=0.01)
    assert answer.result.times[0] == pytest.approx(state.time)  # the run keeps the model's clock
    assert answer.final_value < 350.0 < answer.start_value


def test_threshold_with_units_gives_the_same_answer(lumped):
    model, environment, scales, state = lumped
    kelvin = cooling_time_from_state(model, state, environment, scales, "centre", below=350.0, horizon="40 min")
    celsius = cooling_time_from_state(model, state, environment, scales, "centre", below="76.85 degC", horizon="40 min")
    assert celsius.threshold == pytest.approx(350.0)
    assert celsius.time_needed == pytest.approx(kelvin.time_needed, rel=1e-9)
    with pytest.raises(UnitError):
        cooling_time_from_state(model, state, environment, scales, "centre", below="76.85 m", horizon="40 min")


def test_horizon_too_short_is_not_reached_and_says_so(lumped):
    model, environment, scales, state = lumped
    answer = cooling_time_from_state(model, state, environment, scales, "centre", below=350.0, horizon="5 min")
    assert not answer.reached and answer.time_needed is None
    assert "not reached" in answer.message and answer.final_value > 350.0
    already = cooling_time_from_state(model, state, environment, scales, "centre", below=600.0, horizon="1 min")
    assert already.reached and already.time_needed == 0.0


def test_bad_names_states_and_scales_are_input_errors(lumped):
    model, environment, scales, state = lumped
    with pytest.raises(InputError, match="no probe or series named 'heat_sink_mean'"):
        cooling_time_from_state(model, state, environment, scales, below=350.0)  # no heat sink in this model
    with pytest.raises(InputError, match="this model has"):
        cooling_time_from_state(model, State(0.0, np.full(3, 400.0)), environment, scales, "centre", below=350.0)
    with pytest.raises(InputError, match="block:top"):
        cooling_time_from_state(model, state, environment, [SurfaceGroup("block:inner", 0.02)], "centre", below=350.0)
    with pytest.raises(InputError, match="horizon"):
        cooling_time_from_state(model, state, environment, scales, "centre", below=350.0, horizon=0.0)


# ---------------------------------------------------------------------------- wheel and brake


@pytest.fixture(scope="module")
def wheel():
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.012)
    landing = DutyCycle(
        [
            DutyPhase("landing", "30 s", Environment(ground_speed="50 kt"), [stop_from_energy("15 MJ", "30 s")]),
            DutyPhase("turnaround", "20 min", Environment()),
        ]
    )
    hot = model.run(landing.schedule(built.assembly.surfaces), 288.15).final_state
    return built, model, hot


def test_what_if_from_a_hot_state_peaks_higher_than_from_a_cold_one(wheel):
    built, model, hot = wheel
    cold = State(hot.time, np.full(model.n_cells, 288.15))
    rto = stop_from_energy("25 MJ", "40 s", name="rejected take-off")
    rolling = Environment(ground_speed="60 kt")
    answers = [
        what_if(model, state, rto, Environment(), built.assembly.surfaces, "3 h", braking_environment=rolling)
        for state in (hot, cold)
    ]
    hot_answer, cold_answer = answers
    assert isinstance(hot_answer, WhatIfAnswer) and hot_answer.energy == pytest.approx(25e6)
    assert set(hot_answer.peaks) >= {"sensor", "fuse plug 1", "fuse plug 2", "heat_sink_mean", "wheel_max"}
    for name, (peak, _) in hot_answer.peaks.items():
        assert peak > cold_answer.peaks[name][0], name
    # the heat-sink peak comes at the end of the stop; the fuse plugs' long after
    assert hot_answer.peak("heat_sink_mean")[1] <= 60.0
    assert hot_answer.peak("fuse plug 1")[1] > 300.0
    assert hot_answer.result.ledger.heat_in[-1] == pytest.approx(25e6, rel=1e-9)


def test_what_if_with_no_added_energy_is_the_continued_cooling(wheel):
    built, model, hot = wheel
    nothing = BrakingEvent("no braking", PowerHistory(np.array([0.0, 30.0]), np.zeros(2)), 0.0, 0.0, 0.0)
    answer = what_if(model, hot, nothing, Environment(), built.assembly.surfaces, after="2 h")
    cooling = cooling_time_from_state(
        model, hot, Environment(), built.assembly.surfaces, "heat_sink_mean", below="100 degC", horizon=7230.0
    )
    reference = cooling.result
    for name in history_names(model):
        if name.startswith("surface:"):
            continue
        ours = np.interp(reference.times, answer.result.times, answer.result.history(name))
        assert np.max(np.abs(ours - reference.history(name))) < 0.3, name
        assert answer.peaks[name][0] == pytest.approx(reference.peak(name)[0], abs=0.3)
    assert answer.energy == 0.0
    none = what_if(model, hot, None, Environment(), built.assembly.surfaces, after="2 h", probes=["fuse plug 1"])
    assert set(none.peaks) == {"fuse plug 1"}
    assert none.peaks["fuse plug 1"][0] == pytest.approx(answer.peaks["fuse plug 1"][0], abs=0.3)


def test_heat_soak_cooling_time_counts_the_fall_after_the_rise(wheel):
    built, model, hot = wheel
    start = cooling_time_from_state(
        model, hot, Environment(), built.assembly.surfaces, "fuse plug 1", below=600.0, horizon="10 min"
    )
    threshold = 0.5 * (start.start_value + start.peak_value)  # crossed going up, then going down
    answer = cooling_time_from_state(
        model, hot, Environment(), built.assembly.surfaces, "fuse plug 1", below=threshold, horizon="4 h"
    )
    assert answer.peak_value > threshold > answer.start_value
    _, peak_time = answer.result.peak("fuse plug 1")
    assert answer.reached and answer.time_needed > peak_time - hot.time


def test_what_if_unknown_probe_and_early_event_are_input_errors(wheel):
    built, model, hot = wheel
    rto = stop_from_energy("25 MJ", "40 s")
    with pytest.raises(InputError, match="no probe or series named 'fuse plug 9'"):
        what_if(model, hot, rto, Environment(), built.assembly.surfaces, probes=["fuse plug 9"])
    with pytest.raises(InputError, match="after"):
        what_if(model, hot, rto, Environment(), built.assembly.surfaces, after="0 s")
