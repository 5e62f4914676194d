"""The ground roll: equation of motion, energy accounts, stops as braking events, bad input."""

from __future__ import annotations

import math

import pytest
from roll_case import DRY, aircraft

from heatstack.operations import atmosphere as atm
from heatstack.operations.ground_roll import ground_roll_from_speed_trace, integrate_ground_roll
from heatstack.operations.roll_inputs import Aircraft, Conditions, Runway, brake_on_ground_speed
from heatstack.operations.stops import rejected_takeoff, speed_trace_roll


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
        roll = integrate_ground_roll(aircraft(), DRY, conditions, 72.0, braking)
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
    by_reversers = [_brake_energy(aircraft(reversers=n), still) for n in (0, 1, 2)]
    tailwind = _brake_energy(aircraft(), Conditions(headwind="-10 kt"))
    high = _brake_energy(aircraft(), Conditions(pressure_altitude="5000 ft"))
    hot = _brake_energy(aircraft(), Conditions(air_temperature="40 degC"))
    base = by_reversers[2]
    assert by_reversers[0] > by_reversers[1] > by_reversers[2]
    assert tailwind > base and high > base and hot > base
    with capsys.disabled():
        print(
            f"\nbrake energy, all brakes: 0/1/2 reversers {by_reversers[0] / 1e6:.1f}/{by_reversers[1] / 1e6:.1f}/"
            f"{base / 1e6:.1f} MJ; 10 kt tailwind {100 * (tailwind / base - 1):+.1f} %; "
            f"5000 ft {100 * (high / base - 1):+.1f} %; 40 degC {100 * (hot / base - 1):+.1f} %"
        )


def _demo_with(tmp_path, old: str, new: str):
    from heatstack.cli_shipped import demo_case_path

    text = demo_case_path().read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "case.toml"
    path.write_text(text.replace(old, new), encoding="utf-8")
    return path


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
    roll = integrate_ground_roll(aircraft(), DRY, conditions, 70.0, "medium")
    rows = list(zip(roll.times, roll.speeds, strict=True))
    back = ground_roll_from_speed_trace(aircraft(), DRY, conditions, rows)
    acc = back.accounts
    assert abs(acc.closure) < 1e-11 * acc.kinetic_energy_removed
    assert acc.brakes == pytest.approx(roll.accounts.brakes, rel=2e-3)
    assert acc.reverse_thrust == pytest.approx(roll.accounts.reverse_thrust, rel=2e-2)
    event = speed_trace_roll(aircraft(), DRY, rows, conditions, start="3 s")
    assert event.start == 3.0 and event.energy_per_brake == pytest.approx(acc.brakes / 4, rel=1e-9)
