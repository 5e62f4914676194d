"""The ground roll's behaviour: acceleration before a reject, unequal brakes, braking levels, stops as duty events,
the check output and bad input (the closed-form and trade-fact checks are in tests/validation/test_ground_roll.py)."""

from __future__ import annotations

import numpy as np
import pytest
from roll_case import DRY, KT, aircraft

from heatstack.errors import InputError
from heatstack.operations.duty import DutyCycle, DutyPhase
from heatstack.operations.ground_roll import ground_roll_from_speed_trace, integrate_ground_roll
from heatstack.operations.roll_inputs import Aircraft, Conditions, Runway
from heatstack.operations.stops import landing_roll, rejected_takeoff, taxi_stop


def _brake_energy(aircraft: Aircraft, conditions: Conditions, speed: str = "130 kt") -> float:
    return rejected_takeoff(aircraft, DRY, speed, conditions, speed_kind="calibrated").ground_roll.accounts.brakes


def test_rejected_takeoff_with_acceleration_starts_braking_later() -> None:
    event = rejected_takeoff(aircraft(), DRY, "130 kt", accelerate_from_rest=True, start="2 s")
    stop_only = rejected_takeoff(aircraft(), DRY, "130 kt")
    assert event.start > 2.0 + 10.0  # a 70 t aircraft on 220 kN needs more than 10 s to 130 kt
    assert event.energy_per_brake == pytest.approx(stop_only.energy_per_brake, rel=1e-12)
    assert event.end - event.start == pytest.approx(stop_only.ground_roll.stopping_time, rel=1e-12)


def test_brakes_are_not_equal_inoperative_and_dragging() -> None:
    shares = [0.0, 0.3, 0.3, 0.4]  # one inoperative, one dragging
    plane = aircraft(brake_shares=shares)
    events = [landing_roll(plane, DRY, "125 kt", braking="firm", modelled_brake=k) for k in (1, 2, 3, 4)]
    total = events[0].ground_roll.accounts.brakes
    assert events[0].energy_per_brake == 0.0
    for event, share in zip(events[1:], shares[1:], strict=True):
        assert event.energy_per_brake == pytest.approx(share * total, rel=1e-5)
    assert sum(events[0].ground_roll.energy_per_brake) == pytest.approx(total, rel=1e-12)
    with pytest.raises(InputError, match="modelled_brake"):
        landing_roll(plane, DRY, "125 kt", modelled_brake=5)
    with pytest.raises(InputError, match="brake_shares"):
        aircraft(brake_shares=[0.5, 0.5, 0.5, 0.5])


def test_stops_are_duty_cycle_events() -> None:
    taxi = taxi_stop(aircraft(), DRY, "20 kt", start="5 s")
    slow = taxi_stop(aircraft(), DRY, "20 kt", end_speed="8 kt", start="30 s")
    assert 0 < slow.energy_per_brake < taxi.energy_per_brake
    assert taxi.ground_roll.accounts.reverse_thrust == 0.0
    cycle = DutyCycle([DutyPhase("taxi", "60 s", events=[taxi, slow])])
    assert cycle.power().total_energy == pytest.approx(taxi.energy_per_brake + slow.energy_per_brake, rel=1e-6)


def test_autobrake_level_sets_the_deceleration() -> None:
    roll = integrate_ground_roll(aircraft(reversers=0), DRY, Conditions(), 65.0, "gentle")
    # 1.5 m/s^2 held by the brakes all the way (drag and rolling never exceed it here).
    assert roll.stopping_time == pytest.approx(65.0 / 1.5, rel=1e-9)


def test_negative_mass_is_named() -> None:
    with pytest.raises(InputError, match="aircraft: mass"):
        aircraft(mass="-5 t")


def test_deceleration_the_friction_cannot_give_names_the_achievable_one() -> None:
    wet = Runway(braking_friction=[["0 kt", 0.3], ["160 kt", 0.12]], surface="wet")
    with pytest.raises(InputError, match=r"braking: .*wet.*achievable throughout the stop is (\d\.\d+) m/s\^2") as info:
        integrate_ground_roll(aircraft(reversers=0), wet, Conditions(), 70.0, "hard")
    achievable = float(info.value.args[0].split("is ")[-1].split(" m/s")[0])
    assert 1.0 < achievable < 4.0
    integrate_ground_roll(aircraft(reversers=0), wet, Conditions(), 70.0, 0.95 * achievable)


def test_reverse_table_not_over_increasing_speed() -> None:
    with pytest.raises(InputError, match="aircraft.reverse_thrust: the speeds must increase"):
        aircraft(reverse_thrust=[["60 kt", "20 kN"], ["30 kt", "25 kN"]])


def test_stop_that_never_ends_names_the_speed() -> None:
    # 8 kN idle thrust against rolling resistance 0.01 * 70 t * g = 6.9 kN with no brakes:
    # balanced where drag makes up the rest, never at rest.
    runway = Runway(braking_friction=0.5, rolling_friction=0.01)
    with pytest.raises(InputError, match=r"aircraft.idle_thrust: the stop never ends.* at (\d+\.?\d*) m/s"):
        integrate_ground_roll(aircraft(reversers=0, drag_area=0.0), runway, Conditions(), 30.0, "none")


def test_unknown_braking_level() -> None:
    with pytest.raises(InputError, match="braking: unknown level 'strong'"):
        integrate_ground_roll(aircraft(), DRY, Conditions(), 60.0, "strong")


def test_speed_samples_fall_to_rest() -> None:
    roll = integrate_ground_roll(aircraft(), DRY, Conditions(), 70.0, "maximum")
    assert roll.speeds[0] == 70.0 and roll.speeds[-1] == 0.0
    assert np.all(np.diff(roll.times) > 0) and np.all(np.diff(roll.distances) >= 0)


def _demo_with(tmp_path, old: str, new: str):
    from heatstack.cli_shipped import demo_case_path

    text = demo_case_path().read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "case.toml"
    path.write_text(text.replace(old, new), encoding="utf-8")
    return path


def test_check_prints_the_stop_accounts_and_heat_sink_mass(tmp_path, capsys) -> None:
    from heatstack.cli import main

    path = _demo_with(tmp_path, 'cell_size = "4 mm"', 'cell_size = "12 mm"')
    assert main(["check", str(path), "--layout", str(tmp_path / "layout.png")]) == 0
    out = capsys.readouterr().out
    for text in ("kinetic energy removed", "reverse thrust", "rolling resistance", "closure", "energy per brake"):
        assert text in out
    assert "heat-sink mass:" in out and " m in " in out


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ('mass = "70 t"', 'mass = "-70 t"', "aircraft.mass"),
        ('["60 kt", "22 kN"]', '["0 kt", "22 kN"]', "aircraft.reverse_thrust"),
        ('braking = "maximum"', 'braking = "4.5 m/s^2"', "achievable"),
        ('idle_thrust = "9 kN"', 'idle_thrust = "900 kN"', "never ends"),
        ("rotors = 4", 'rotors = 4\nwear_per_face = "9.5 mm"', "wear_per_face"),
        ("slope = -0.005", "slop = -0.005", "did you mean 'slope'"),
    ],
)
def test_bad_ground_roll_case_exits_2_naming_the_key(tmp_path, capsys, old, new, key) -> None:
    from heatstack.cli import main

    path = _demo_with(tmp_path, old, new)
    assert main(["check", str(path), "--layout", str(tmp_path / "layout.png")]) == 2
    err = capsys.readouterr().err
    assert key in err and "Traceback" not in err


def test_speed_trace_slower_than_the_forces_reports_extra_propulsion() -> None:
    # A trace that coasts at constant speed needs a push against drag and rolling resistance.
    roll = ground_roll_from_speed_trace(
        aircraft(reversers=0, idle_thrust=0.0), DRY, Conditions(), [(0, 10.0), (5, 10.0)]
    )
    assert roll.accounts.brakes == 0.0 and roll.accounts.extra_propulsion > 0
    assert abs(roll.accounts.closure) < 1e-6


def test_no_reverse_thrust_below_the_cancel_speed() -> None:
    # Brake-on already below the 60 kt cancel speed: the reversers give nothing.
    slow = integrate_ground_roll(aircraft(), DRY, Conditions(), 50 * KT, "medium")
    assert slow.accounts.reverse_thrust == 0.0
    fast = integrate_ground_roll(aircraft(), DRY, Conditions(), 70 * KT, "medium")
    assert fast.accounts.reverse_thrust > 0.0


def test_reverse_cancel_on_a_power_history_knot() -> None:
    # At a constant 2 m/s^2 from 125 kt the 60 kt cancel falls on knot 52 of the 100 uniform
    # intervals (to rounding): the power history keeps one sample there and its energy.
    roll = integrate_ground_roll(aircraft(), DRY, Conditions(), 125 * KT, "medium")
    steps = np.diff(roll.brake_power.times)
    assert np.all(steps > 1e-9 * roll.stopping_time)
    assert roll.brake_power.total_energy == pytest.approx(roll.accounts.brakes, rel=1e-9)
