"""The ground roll: equation of motion, energy accounts, stops as braking events, bad input."""

from __future__ import annotations

import math

import numpy as np
import pytest

from heatstack.errors import InputError
from heatstack.operations import atmosphere as atm
from heatstack.operations.duty import DutyCycle, DutyPhase
from heatstack.operations.ground_roll import ground_roll_from_speed_trace, integrate_ground_roll
from heatstack.operations.roll_inputs import Aircraft, Conditions, Runway, brake_on_ground_speed
from heatstack.operations.stops import landing_roll, rejected_takeoff, speed_trace_roll, taxi_stop

KT = 1852.0 / 3600.0  # [m/s], exact

# An INVENTED twin-engine aircraft and runway for these tests only.
REVERSE_TABLE = [["0 kt", "15 kN"], ["60 kt", "25 kN"], ["160 kt", "40 kN"]]


def _aircraft(**changes) -> Aircraft:
    values = dict(
        mass="70 t",
        drag_area="5 m^2",
        lift_area="80 m^2",
        lift_area_dumped="8 m^2",
        spoiler_time="1.5 s",
        idle_thrust="8 kN",
        takeoff_thrust="220 kN",
        reverse_thrust=REVERSE_TABLE,
        reversers=2,
        reverse_cancel_speed="60 kt",
        braked_wheels=4,
        braked_weight_fraction=0.92,
    )
    values.update(changes)
    return Aircraft(**values)


DRY = Runway(braking_friction=[["0 kt", 0.55], ["160 kt", 0.40]], surface="dry", slope=0.008)


def test_brakes_alone_at_constant_deceleration_take_half_m_v_squared() -> None:
    # Kinematics: with the brakes the only force, E = m V0^2 / 2, s = V0^2/(2a), t = V0/a.
    aircraft = Aircraft(mass="60 t", braked_wheels=4)
    runway = Runway(braking_friction=1.0, rolling_friction=0.0)
    v0, a = 70.0, 2.5
    roll = integrate_ground_roll(aircraft, runway, Conditions(), v0, a)
    kinetic = 0.5 * 60e3 * v0**2
    assert roll.accounts.brakes == pytest.approx(kinetic, rel=1e-10)
    assert roll.stopping_distance == pytest.approx(v0**2 / (2 * a), rel=1e-10)
    assert roll.stopping_time == pytest.approx(v0 / a, rel=1e-10)
    # P = m a V(t) is linear in t, so the power history's trapezoid integral is exact too.
    assert roll.brake_power.total_energy == pytest.approx(kinetic, rel=1e-9)
    assert sum(p.total_energy for p in roll.brake_powers) == pytest.approx(kinetic, rel=1e-9)


def test_constant_force_and_quadratic_drag_match_the_closed_form() -> None:
    # m dV/dt = -(F0 + k V^2), from memory (the ground-roll integral of any flight-mechanics
    # text, e.g. Anderson, Aircraft Performance and Design, 1999, sect. 6.7); derivation:
    #   s: m V dV/ds = -(F0 + k V^2)  ->  s = m/(2k) ln(1 + k V0^2 / F0)
    #   t: dt = -m dV/(F0 + k V^2)     ->  t = m/sqrt(k F0) atan(V0 sqrt(k/F0))
    # (the form sqrt(m/(k F0)) holds for F0 and k per unit mass.)
    m, v0 = 50e3, 60.0
    runway = Runway(braking_friction=0.5, rolling_friction=0.03)
    conditions = Conditions()
    aircraft = Aircraft(mass=m, drag_area=12.0)
    roll = integrate_ground_roll(aircraft, runway, conditions, v0, "none")
    f0 = 0.03 * m * atm.G0
    k = 0.5 * conditions.density * 12.0
    assert roll.stopping_distance == pytest.approx(m / (2 * k) * math.log1p(k * v0**2 / f0), rel=1e-9)
    assert roll.stopping_time == pytest.approx(m / math.sqrt(k * f0) * math.atan(v0 * math.sqrt(k / f0)), rel=1e-9)
    assert roll.accounts.brakes == 0.0
    assert roll.accounts.drag + roll.accounts.rolling_resistance == pytest.approx(0.5 * m * v0**2, rel=1e-10)


def test_energy_accounts_close_with_every_term_active() -> None:
    # First law along the runway: KE removed = brakes + reverse + drag + rolling + PE - forward work.
    conditions = Conditions(headwind="12 kt", pressure_altitude="2000 ft", air_temperature="32 degC")
    for braking in ("maximum", "medium"):
        roll = integrate_ground_roll(_aircraft(), DRY, conditions, 72.0, braking)
        acc = roll.accounts
        for term in (acc.brakes, acc.reverse_thrust, acc.drag, acc.rolling_resistance, acc.potential_energy):
            assert term > 0
        assert acc.forward_thrust > 0
        assert abs(acc.closure) < 1e-9 * acc.kinetic_energy_removed
        assert acc.potential_energy == pytest.approx(
            70e3 * atm.G0 * math.sin(math.atan(0.008)) * roll.stopping_distance, rel=1e-9
        )
        assert roll.brake_power.total_energy == pytest.approx(acc.brakes, rel=1e-7)


def test_calibrated_to_true_airspeed_against_iso_2533_table() -> None:
    # ISO 2533:1975 table at 3000 m (from memory, as in test_atmosphere): p = 70109 Pa,
    # T = 268.65 K. Compressible pitot relations (Anderson, Introduction to Flight, 8th ed.,
    # sect. 4.12): qc from CAS at sea level, M from qc/p, TAS = M sqrt(gamma R T).
    cas, headwind = 80.0, 5.0
    p0, a0, gamma = 101325.0, 340.294, 1.4
    qc = p0 * ((1 + 0.2 * (cas / a0) ** 2) ** 3.5 - 1)
    mach = math.sqrt(5 * ((qc / 70109.0 + 1) ** (1 / 3.5) - 1))
    tas = mach * math.sqrt(gamma * 287.05287 * 268.65)
    conditions = Conditions(headwind=headwind, pressure_altitude="3000 m")
    ground = brake_on_ground_speed(cas, "calibrated", conditions)
    assert ground == pytest.approx(tas - headwind, rel=2e-4)
    assert ground > cas  # TAS exceeds CAS at altitude


def _brake_energy(aircraft: Aircraft, conditions: Conditions, speed: str = "130 kt") -> float:
    return rejected_takeoff(aircraft, DRY, speed, conditions, speed_kind="calibrated").ground_roll.accounts.brakes


def test_trade_fact_reversers_tailwind_altitude_heat(capsys) -> None:
    # Common practice, no source: each serviceable reverser lowers the brake energy; a
    # tailwind, a higher airfield and a hotter day raise it (brake-on at a calibrated speed).
    still = Conditions()
    by_reversers = [_brake_energy(_aircraft(reversers=n), still) for n in (0, 1, 2)]
    tailwind = _brake_energy(_aircraft(), Conditions(headwind="-10 kt"))
    high = _brake_energy(_aircraft(), Conditions(pressure_altitude="5000 ft"))
    hot = _brake_energy(_aircraft(), Conditions(air_temperature="40 degC"))
    base = by_reversers[2]
    assert by_reversers[0] > by_reversers[1] > by_reversers[2]
    assert tailwind > base and high > base and hot > base
    with capsys.disabled():
        print(
            f"\nbrake energy, all brakes: 0/1/2 reversers {by_reversers[0] / 1e6:.1f}/{by_reversers[1] / 1e6:.1f}/"
            f"{base / 1e6:.1f} MJ; 10 kt tailwind {100 * (tailwind / base - 1):+.1f} %; "
            f"5000 ft {100 * (high / base - 1):+.1f} %; 40 degC {100 * (hot / base - 1):+.1f} %"
        )


def test_rejected_takeoff_with_acceleration_starts_braking_later() -> None:
    event = rejected_takeoff(_aircraft(), DRY, "130 kt", accelerate_from_rest=True, start="2 s")
    stop_only = rejected_takeoff(_aircraft(), DRY, "130 kt")
    assert event.start > 2.0 + 10.0  # a 70 t aircraft on 220 kN needs more than 10 s to 130 kt
    assert event.energy_per_brake == pytest.approx(stop_only.energy_per_brake, rel=1e-12)
    assert event.end - event.start == pytest.approx(stop_only.ground_roll.stopping_time, rel=1e-12)


def test_brakes_are_not_equal_inoperative_and_dragging() -> None:
    shares = [0.0, 0.3, 0.3, 0.4]  # one inoperative, one dragging
    aircraft = _aircraft(brake_shares=shares)
    events = [landing_roll(aircraft, DRY, "125 kt", braking="firm", modelled_brake=k) for k in (1, 2, 3, 4)]
    total = events[0].ground_roll.accounts.brakes
    assert events[0].energy_per_brake == 0.0
    for event, share in zip(events[1:], shares[1:], strict=True):
        assert event.energy_per_brake == pytest.approx(share * total, rel=1e-5)
    assert sum(events[0].ground_roll.energy_per_brake) == pytest.approx(total, rel=1e-12)
    with pytest.raises(InputError, match="modelled_brake"):
        landing_roll(aircraft, DRY, "125 kt", modelled_brake=5)
    with pytest.raises(InputError, match="brake_shares"):
        _aircraft(brake_shares=[0.5, 0.5, 0.5, 0.5])


def test_stops_are_duty_cycle_events() -> None:
    taxi = taxi_stop(_aircraft(), DRY, "20 kt", start="5 s")
    slow = taxi_stop(_aircraft(), DRY, "20 kt", end_speed="8 kt", start="30 s")
    assert 0 < slow.energy_per_brake < taxi.energy_per_brake
    assert taxi.ground_roll.accounts.reverse_thrust == 0.0
    cycle = DutyCycle([DutyPhase("taxi", "60 s", events=[taxi, slow])])
    assert cycle.power().total_energy == pytest.approx(taxi.energy_per_brake + slow.energy_per_brake, rel=1e-6)


def test_autobrake_level_sets_the_deceleration() -> None:
    roll = integrate_ground_roll(_aircraft(reversers=0), DRY, Conditions(), 65.0, "gentle")
    # 1.5 m/s^2 held by the brakes all the way (drag and rolling never exceed it here).
    assert roll.stopping_time == pytest.approx(65.0 / 1.5, rel=1e-9)


# ------------------------------------------------------------------------ bad input


def test_negative_mass_is_named() -> None:
    with pytest.raises(InputError, match="aircraft.mass"):
        _aircraft(mass="-5 t")


def test_deceleration_the_friction_cannot_give_names_the_achievable_one() -> None:
    wet = Runway(braking_friction=[["0 kt", 0.3], ["160 kt", 0.12]], surface="wet")
    with pytest.raises(InputError, match=r"braking: .*wet.*achievable throughout the stop is (\d\.\d+) m/s\^2") as info:
        integrate_ground_roll(_aircraft(reversers=0), wet, Conditions(), 70.0, "hard")
    achievable = float(info.value.args[0].split("is ")[-1].split(" m/s")[0])
    assert 1.0 < achievable < 4.0
    integrate_ground_roll(_aircraft(reversers=0), wet, Conditions(), 70.0, 0.95 * achievable)


def test_reverse_table_not_over_increasing_speed() -> None:
    with pytest.raises(InputError, match="aircraft.reverse_thrust: the speeds must increase"):
        _aircraft(reverse_thrust=[["60 kt", "20 kN"], ["30 kt", "25 kN"]])


def test_stop_that_never_ends_names_the_speed() -> None:
    # 8 kN idle thrust against rolling resistance 0.01 * 70 t * g = 6.9 kN with no brakes:
    # balanced where drag makes up the rest, never at rest.
    runway = Runway(braking_friction=0.5, rolling_friction=0.01)
    with pytest.raises(InputError, match=r"aircraft.idle_thrust: the stop never ends.* at (\d+\.?\d*) m/s"):
        integrate_ground_roll(_aircraft(reversers=0, drag_area=0.0), runway, Conditions(), 30.0, "none")


def test_unknown_braking_level() -> None:
    with pytest.raises(InputError, match="braking: unknown level 'strong'"):
        integrate_ground_roll(_aircraft(), DRY, Conditions(), 60.0, "strong")


def test_speed_samples_fall_to_rest() -> None:
    roll = integrate_ground_roll(_aircraft(), DRY, Conditions(), 70.0, "maximum")
    assert roll.speeds[0] == 70.0 and roll.speeds[-1] == 0.0
    assert np.all(np.diff(roll.times) > 0) and np.all(np.diff(roll.distances) >= 0)


# ------------------------------------------------------------------------ case file and command line


def _demo_with(tmp_path, old: str, new: str):
    from heatstack.cli import demo_case_path

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


# ------------------------------------------------------------------------ recorded speed traces


def test_speed_trace_of_brakes_alone_gives_half_m_v_squared() -> None:
    # Kinematics: a linear trace with no other force puts m V0^2 / 2 into the brakes.
    aircraft = Aircraft(mass="60 t", braked_wheels=4)
    runway = Runway(braking_friction=1.0, rolling_friction=0.0)
    roll = ground_roll_from_speed_trace(aircraft, runway, Conditions(), [(0.0, 70.0), (10.0, 45.0), (28.0, 0.0)])
    assert roll.accounts.brakes == pytest.approx(0.5 * 60e3 * 70.0**2, rel=1e-12)
    assert roll.brake_power.total_energy == pytest.approx(roll.accounts.brakes, rel=1e-9)
    assert roll.stopping_distance == pytest.approx(0.5 * 25 * 10 + 45 * 10 + 0.5 * 45 * 18, rel=1e-12)


def test_speed_trace_of_an_integrated_roll_recovers_its_brake_energy() -> None:
    # Consistency: the trace of an integrated stop, read back, gives the same brake energy
    # (to the trace's sampling) and accounts that close to round-off.
    conditions = Conditions(headwind="-6 kt", pressure_altitude="1000 ft")
    roll = integrate_ground_roll(_aircraft(), DRY, conditions, 70.0, "medium")
    rows = list(zip(roll.times, roll.speeds, strict=True))
    back = ground_roll_from_speed_trace(_aircraft(), DRY, conditions, rows)
    acc = back.accounts
    assert abs(acc.closure) < 1e-11 * acc.kinetic_energy_removed
    assert acc.brakes == pytest.approx(roll.accounts.brakes, rel=2e-3)
    assert acc.reverse_thrust == pytest.approx(roll.accounts.reverse_thrust, rel=2e-2)
    event = speed_trace_roll(_aircraft(), DRY, rows, conditions, start="3 s")
    assert event.start == 3.0 and event.energy_per_brake == pytest.approx(acc.brakes / 4, rel=1e-9)


def test_speed_trace_slower_than_the_forces_reports_extra_propulsion() -> None:
    # A trace that coasts at constant speed needs a push against drag and rolling resistance.
    roll = ground_roll_from_speed_trace(
        _aircraft(reversers=0, idle_thrust=0.0), DRY, Conditions(), [(0, 10.0), (5, 10.0)]
    )
    assert roll.accounts.brakes == 0.0 and roll.accounts.extra_propulsion > 0
    assert abs(roll.accounts.closure) < 1e-6


def test_no_reverse_thrust_below_the_cancel_speed() -> None:
    # Brake-on already below the 60 kt cancel speed: the reversers give nothing.
    slow = integrate_ground_roll(_aircraft(), DRY, Conditions(), 50 * KT, "medium")
    assert slow.accounts.reverse_thrust == 0.0
    fast = integrate_ground_roll(_aircraft(), DRY, Conditions(), 70 * KT, "medium")
    assert fast.accounts.reverse_thrust > 0.0
