"""A duty cycle of trade phases becomes a schedule and runs through the engine."""

from __future__ import annotations

import numpy as np
import pytest

from heatstack import Model
from heatstack.builders import build_wheel_brake
from heatstack.errors import ScheduleError, UnitError
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.environment import MixedConvection, NaturalConvection, WheelWell
from heatstack.operations.heat_input import stop_from_aircraft, stop_from_energy, taxi_snubs


def landing_cycle() -> DutyCycle:
    """An invented landing, taxi-in, turnaround and parked cooling."""
    landing = stop_from_aircraft(
        mass="60 t", brake_on_speed="115 kt", braked_wheels=4, brake_share=0.6, stop_time="30 s"
    )
    snubs = taxi_snubs(
        mass="60 t",
        braked_wheels=4,
        brake_share=1.0,
        speed_high="20 kt",
        speed_low="8 kt",
        snub_duration="4 s",
        interval="60 s",
        count=3,
        start="20 s",
    )
    return DutyCycle(
        [
            DutyPhase("landing roll", "30 s", Environment(ground_speed="55 kt"), [landing]),
            DutyPhase("taxi-in", "4 min", Environment(ground_speed="15 kt"), [snubs]),
            DutyPhase("turnaround", "40 min", Environment(ambient_temperature="25 degC")),
            DutyPhase("parked cooling", "2 h", Environment(ambient_temperature="25 degC"), clamped=True),
        ]
    )


def test_schedule_phases_follow_each_other_without_gaps():
    built = build_wheel_brake()
    schedule = landing_cycle().schedule(built.assembly.surfaces)
    starts = [p.start for p in schedule.phases]
    ends = [p.end for p in schedule.phases]
    assert starts[0] == 0.0 and np.allclose(starts[1:], ends[:-1])
    assert ends[-1] == pytest.approx(30 + 240 + 2400 + 7200)
    assert [p.clamped for p in schedule.phases] == [True, True, False, True]


def test_schedule_power_delivers_the_events_energy():
    cycle = landing_cycle()
    total = sum(row["energy_per_brake"] for row in cycle.energy_summary())
    schedule = cycle.schedule(build_wheel_brake().assembly.surfaces)
    assert schedule.power.total_energy == pytest.approx(total, rel=1e-12)


def test_rolling_wheel_gets_mixed_convection_and_parked_wheel_natural():
    scales = build_wheel_brake().assembly.surfaces
    rolling = Environment(ground_speed=20.0).laws(scales, 0.5)
    parked = Environment().laws(scales, 0.5)
    assert isinstance(rolling["stack outer diameter"], MixedConvection)
    assert isinstance(parked["stack outer diameter"], NaturalConvection)
    assert isinstance(Environment(wheel_well=(300.0, 310.0)).laws(scales, 0.5)["rim bore"], WheelWell)


def test_landing_turnaround_and_parking_run_with_a_closing_ledger():
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.006)
    cycle = landing_cycle()
    result = model.run(cycle.schedule(built.assembly.surfaces), 298.15)
    ledger = result.ledger
    assert ledger.heat_in[-1] == pytest.approx(sum(r["energy_per_brake"] for r in cycle.energy_summary()))
    assert ledger.relative_closure_error < 1e-9
    assert ledger.friction_split.sum() == pytest.approx(ledger.heat_in[-1], rel=1e-9)
    sensor_peak, _ = result.peak("sensor")
    sink_peak, _ = result.peak("heat_sink_mean")
    assert 298.15 < sensor_peak < sink_peak


def test_chained_run_starts_from_the_saved_state():
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.008)
    first = DutyCycle([DutyPhase("stop", 20, Environment(), [stop_from_energy("5 MJ", "20 s")])])
    r1 = model.run(first.schedule(built.assembly.surfaces), 293.15)
    second = DutyCycle([DutyPhase("parked", "10 min", Environment())])
    r2 = model.run(second.schedule(built.assembly.surfaces, start=r1.final_state.time), r1.final_state)
    assert r2.times[0] == pytest.approx(20.0)
    assert r2.series["heat_sink_mean"][0] == pytest.approx(r1.series["heat_sink_mean"][-1])


def test_event_that_does_not_fit_its_phase_names_both():
    with pytest.raises(ScheduleError, match="phase 'landing roll'.*event"):
        DutyPhase("landing roll", "10 s", Environment(), [stop_from_energy("5 MJ", "20 s")])


def test_zero_duration_phase_is_rejected():
    with pytest.raises(ScheduleError, match="phase 'taxi-in': duration"):
        DutyPhase("taxi-in", 0.0)


def test_wrong_unit_in_environment_names_the_field():
    with pytest.raises(UnitError, match="ground_speed"):
        Environment(ground_speed="20 kg")


def test_surface_group_without_a_law_is_named():
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.008)
    scales = [s for s in built.assembly.surfaces if s.name != "heat shield"]
    schedule = DutyCycle([DutyPhase("parked", 60, Environment())]).schedule(scales)
    with pytest.raises(ScheduleError, match="surface group 'heat shield'"):
        model.run(schedule, 293.15)
