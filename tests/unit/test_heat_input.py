"""Braking events: energy bookkeeping, power shapes, unit handling and input errors.

Numbers are invented for these tests. Unit definitions are the exact international
ones: 1 lb = 0.45359237 kg, 1 kt = 1852/3600 m/s (1 NM = 1852 m), 1 lbf = 4.4482216152605 N
so 1 ft lbf = 0.3048 * 4.4482216152605 J = 1.3558179483 J.
"""

from __future__ import annotations

import io
import math

import numpy as np
import pytest

from heatstack.errors import InputError, ScheduleError, UnitError
from heatstack.numerics.schedule import PowerHistory
from heatstack.operations import atmosphere
from heatstack.operations.events import BrakingEvent, combine
from heatstack.operations.heat_input import (
    gear_retraction,
    stop_from_aircraft,
    stop_from_energy,
    stop_from_speed_trace,
    taxi_snubs,
)
from heatstack.operations.speed_trace import read_speed_trace
from heatstack.units import to_si

LB = 0.45359237
KT = 1852.0 / 3600.0
FT_LBF = 1.3558179483


def test_exact_unit_definitions_through_to_si() -> None:
    assert to_si(1.0, "lb", "mass", "mass") == pytest.approx(LB, rel=1e-15)
    assert to_si("1 kt", None, "speed", "speed") == pytest.approx(KT, rel=1e-15)
    assert to_si(1.0, "ft*lbf", "energy", "energy") == pytest.approx(FT_LBF, rel=1e-10)


def test_kinetic_energy_by_hand_with_units() -> None:
    # 1/2 m v^2 with m = 150 000 lb, v = 125 kt, 8 braked wheels, 85 % to the brakes.
    event = stop_from_aircraft("150000 lb", "125 kt", 8, 0.85, stop_time="32 s")
    kinetic = 0.5 * 150000 * LB * (125 * KT) ** 2
    assert event.kinetic_energy == pytest.approx(kinetic, rel=1e-13)
    assert event.energy_per_brake == pytest.approx(0.85 * kinetic / 8, rel=1e-12)
    assert event.brake_share == 0.85
    assert isinstance(event, BrakingEvent) and isinstance(event.power, PowerHistory)


def test_energy_unit_ft_lbf() -> None:
    event = stop_from_energy("2.5e7 ft*lbf", "20 s")
    assert event.energy_per_brake == pytest.approx(2.5e7 * FT_LBF, rel=1e-10)


@pytest.mark.parametrize("start", [0.0, 137.5])
def test_constant_deceleration_stop_energy_and_peak(start: float) -> None:
    energy, duration = 18.0e6, 27.0
    event = stop_from_energy(energy, duration, start=start)
    power = event.power
    assert power.energy(start, start + duration) == pytest.approx(energy, rel=1e-12)
    assert power.total_energy == pytest.approx(energy, rel=1e-12)
    assert power.times[0] == start and power.times[-1] == start + duration
    assert float(power.power(start)) == pytest.approx(2 * energy / duration, rel=1e-14)
    assert float(power.power(start + duration / 2)) == pytest.approx(energy / duration, rel=1e-14)
    assert float(power.power(start + duration)) == 0.0


def test_constant_power_and_table_profiles() -> None:
    flat = stop_from_energy(9.0e6, 30.0, profile="constant_power")
    assert np.allclose(flat.power.powers, 9.0e6 / 30.0, rtol=1e-15)
    assert flat.power.total_energy == pytest.approx(9.0e6, rel=1e-14)
    table = [(0.0, 0.2), (0.1, 1.0), (0.7, 0.8), (1.0, 0.0)]
    shaped = stop_from_energy(9.0e6, 30.0, profile=table, start=5.0)
    assert shaped.power.total_energy == pytest.approx(9.0e6, rel=1e-14)
    assert np.allclose(shaped.power.times, 5.0 + 30.0 * np.array([0.0, 0.1, 0.7, 1.0]))
    ratios = shaped.power.powers / shaped.power.powers[1]
    assert np.allclose(ratios, [0.2, 1.0, 0.8, 0.0], rtol=1e-14)


def test_stop_time_and_mean_deceleration_agree() -> None:
    by_time = stop_from_aircraft(60000.0, 70.0, 4, 0.7, stop_time=35.0)
    by_decel = stop_from_aircraft(60000.0, 70.0, 4, 0.7, mean_deceleration=2.0)
    assert np.allclose(by_time.power.times, by_decel.power.times)
    assert np.allclose(by_time.power.powers, by_decel.power.powers, rtol=1e-14)
    # Peak = 2 E / t_s at brake-on.
    assert by_time.power.powers[0] == pytest.approx(2 * by_time.energy_per_brake / 35.0, rel=1e-13)


def test_speed_dependent_share_integrates_exact_integral() -> None:
    # share(v) = 0.4 + 0.4 v/v0: E/brake = (m/n) int_0^v0 share(v) v dv
    #   = (m/n) (0.4 v0^2/2 + 0.4 v0^2/3) (closed form).
    m, v0, n = 70000.0, 72.0, 4
    exact = m / n * (0.2 * v0**2 + 0.4 * v0**2 / 3)
    function = stop_from_aircraft(m, v0, n, lambda v: 0.4 + 0.4 * v / v0, stop_time=30.0)
    assert function.energy_per_brake == pytest.approx(exact, rel=1e-5)
    table = stop_from_aircraft(m, v0, n, [(0.0, 0.4), (v0, 0.8)], stop_time=30.0)
    assert table.energy_per_brake == pytest.approx(function.energy_per_brake, rel=1e-13)
    knots = stop_from_aircraft(m, v0, n, [(0.0, 0.4), (v0 / KT, 0.8)], stop_time=30.0, share_speed_unit="kt")
    assert knots.energy_per_brake == pytest.approx(table.energy_per_brake, rel=1e-12)
    assert function.brake_share == pytest.approx(exact * n / (0.5 * m * v0**2), rel=1e-5)


def test_calibrated_airspeed_stop_uses_atmosphere_and_wind() -> None:
    cas = 130 * KT
    event = stop_from_aircraft(
        65000.0,
        "130 kt",
        4,
        1.0,
        stop_time=30.0,
        speed_kind="calibrated",
        pressure_altitude="5000 ft",
        temperature_offset=15.0,
        headwind="10 kt",
    )
    tas = float(atmosphere.true_airspeed(cas, 5000 * 0.3048, temperature_offset=15.0))
    ground = tas - 10 * KT
    assert event.kinetic_energy == pytest.approx(0.5 * 65000.0 * ground**2, rel=1e-12)
    # At sea level ISA without wind, calibrated = ground speed.
    sea = stop_from_aircraft(65000.0, cas, 4, stop_time=30.0, speed_kind="calibrated", pressure_altitude=0.0)
    ref = stop_from_aircraft(65000.0, cas, 4, stop_time=30.0)
    assert sea.energy_per_brake == pytest.approx(ref.energy_per_brake, rel=1e-12)


def constant_deceleration_trace(v0: float, ts: float, samples: int) -> list[tuple[float, float]]:
    t = np.linspace(0.0, ts, samples)
    return [(float(a), float(v0 * (1 - a / ts))) for a in t]


def test_speed_trace_of_constant_deceleration_reproduces_stop(tmp_path) -> None:
    m, v0_kt, n, share, ts = 72000.0, 128.0, 4, 0.8, 28.0
    stop = stop_from_aircraft(m, v0_kt * KT, n, share, stop_time=ts)
    rows = constant_deceleration_trace(v0_kt, ts, 15)
    path = tmp_path / "roll.csv"
    text = "# invented landing roll\ntime_s,ground_speed_kt\n" + "\n".join(f"{a!r},{b!r}" for a, b in rows)
    path.write_text(text + "\n")
    trace = stop_from_speed_trace(path, m, n, share)
    assert trace.energy_per_brake == pytest.approx(stop.energy_per_brake, rel=1e-12)
    assert trace.kinetic_energy == pytest.approx(stop.kinetic_energy, rel=1e-12)
    si_rows = [(a, b * KT) for a, b in rows]
    assert stop_from_speed_trace(si_rows, m, n, share).energy_per_brake == pytest.approx(
        stop.energy_per_brake, rel=1e-12
    )
    # Mid-interval power equals share m a v_mid / n on every interval.
    t = np.array([r[0] for r in rows])
    a = v0_kt * KT / ts
    for t0, t1 in zip(t[:-1], t[1:], strict=True):
        v_mid = v0_kt * KT * (1 - 0.5 * (t0 + t1) / ts)
        assert trace.power.energy(t0, t1) == pytest.approx(share * m * a * v_mid / n * (t1 - t0), rel=1e-12)


def test_speed_trace_ignores_acceleration_and_shifts_start() -> None:
    rows = [(0.0, 20.0), (2.0, 24.0), (6.0, 10.0), (7.0, 12.0), (9.0, 0.0)]
    event = stop_from_speed_trace(rows, 50000.0, 2, 1.0, start=100.0)
    assert event.start == 100.0 and event.end == 109.0
    assert event.power.energy(100.0, 102.0) == 0.0
    expected = 50000.0 / 2 * 0.5 * ((24.0**2 - 10.0**2) + 12.0**2)
    assert event.energy_per_brake == pytest.approx(expected, rel=1e-12)
    assert np.all(event.power.powers >= 0)


def test_speed_trace_from_stream_headerless_si() -> None:
    stream = io.StringIO("0,30\n\n# pause\n10,10\n15,0\n")
    t, v = read_speed_trace(stream)
    assert np.array_equal(t, [0.0, 10.0, 15.0]) and np.array_equal(v, [30.0, 10.0, 0.0])


def test_taxi_snubs_energy_and_quiet_gaps() -> None:
    # Energy per snub 1/2 m (v_h^2 - v_l^2) share / n, by hand.
    m, n, share = 68000.0, 4, 0.9
    v_h, v_l = 30 * KT, 10 * KT
    event = taxi_snubs(m, n, share, "30 kt", "10 kt", "4 s", "60 s", 5, start=20.0)
    per_snub = 0.5 * m * (v_h**2 - v_l**2) * share / n
    assert event.energy_per_brake == pytest.approx(5 * per_snub, rel=1e-12)
    for i in range(5):
        s0 = 20.0 + 60.0 * i
        window = (max(s0 - 1.0, event.start), min(s0 + 5.0, event.end))  # inside the table
        assert event.power.energy(*window) == pytest.approx(per_snub, rel=1e-12)
        assert float(event.power.power(s0 + 30.0)) == 0.0
    assert event.kinetic_energy == pytest.approx(5 * 0.5 * m * (v_h**2 - v_l**2), rel=1e-12)


def test_gear_retraction_energy_by_hand() -> None:
    # 1/2 I omega^2, omega = v / r: I = 12 kg m^2, v = 160 kt, r = 0.55 m.
    event = gear_retraction(12.0, "160 kt", "0.55 m", "5 s", start=40.0)
    omega = 160 * KT / 0.55
    assert event.energy_per_brake == pytest.approx(0.5 * 12.0 * omega**2, rel=1e-13)
    assert event.power.powers[0] == pytest.approx(2 * event.energy_per_brake / 5.0, rel=1e-13)
    assert event.start == 40.0


def test_combine_overlapping_adjacent_and_disjoint() -> None:
    a = stop_from_energy(10.0e6, 20.0, "constant_power", start=0.0)
    b = stop_from_energy(4.0e6, 10.0, start=20.0)  # starts where a ends: step up
    c = stop_from_energy(2.0e6, 15.0, start=5.0)  # overlaps a
    d = gear_retraction(10.0, 80.0, 0.5, 4.0, start=300.0)
    total = combine(a, b, c, d)
    expected = 16.0e6 + d.energy_per_brake
    assert total.total_energy == pytest.approx(expected, rel=1e-12)
    assert total.energy(0.0, 10.0) == pytest.approx(5.0e6 + c.power.energy(5.0, 10.0), rel=1e-12)
    # Away from the steps the sum is the plain sum.
    for time in (3.0, 12.0, 25.0, 150.0, 301.0):
        parts = sum(float(e.power.power(time)) for e in (a, b, c, d))
        assert float(total.power(time)) == pytest.approx(parts, rel=1e-12, abs=1e-9)
    single = combine(b.power)
    assert np.array_equal(single.times, b.power.times) and np.array_equal(single.powers, b.power.powers)


@pytest.mark.parametrize("share", [1.2, -0.1, [(0.0, 0.5), (50.0, 1.5)]])
def test_brake_share_outside_unit_interval_raises(share) -> None:
    with pytest.raises(InputError, match="brake_share"):
        stop_from_aircraft(60000.0, 60.0, 4, share, stop_time=30.0)


def test_share_function_out_of_range_raises_on_evaluation() -> None:
    with pytest.raises(InputError, match="brake_share"):
        stop_from_aircraft(60000.0, 60.0, 4, lambda v: 1.0 + v, stop_time=30.0)


@pytest.mark.parametrize("duration", [0.0, -5.0])
def test_non_positive_duration_raises(duration: float) -> None:
    with pytest.raises(InputError, match="duration"):
        stop_from_energy(5.0e6, duration)
    with pytest.raises(InputError, match="stop_time"):
        stop_from_aircraft(60000.0, 60.0, 4, stop_time=duration)
    with pytest.raises(InputError, match="spin_down_time"):
        gear_retraction(10.0, 80.0, 0.5, duration)


def test_cas_without_altitude_raises() -> None:
    with pytest.raises(InputError, match="pressure_altitude"):
        stop_from_aircraft(60000.0, "120 kt", 4, stop_time=30.0, speed_kind="calibrated")


def test_air_data_with_ground_speed_raises() -> None:
    with pytest.raises(InputError, match="headwind"):
        stop_from_aircraft(60000.0, 60.0, 4, stop_time=30.0, headwind=5.0)


def test_non_increasing_trace_time_names_line(tmp_path) -> None:
    path = tmp_path / "bad_time.csv"
    path.write_text("time_s,ground_speed_kt\n0,100\n5,80\n5,60\n9,0\n")
    with pytest.raises(ScheduleError, match="line 4"):
        stop_from_speed_trace(path, 60000.0, 4, 1.0)


def test_non_numeric_trace_row_names_line(tmp_path) -> None:
    path = tmp_path / "bad_row.csv"
    path.write_text("# comment\ntime_s,ground_speed_m/s\n0,50\n4,fast\n8,0\n")
    with pytest.raises(InputError, match="line 4"):
        stop_from_speed_trace(path, 60000.0, 4, 1.0)


def test_unknown_units_raise_unit_error(tmp_path) -> None:
    path = tmp_path / "bad_unit.csv"
    path.write_text("time_s,ground_speed_furlongz\n0,50\n8,0\n")
    with pytest.raises(UnitError, match="line 1"):
        stop_from_speed_trace(path, 60000.0, 4, 1.0)
    with pytest.raises(UnitError, match="mass"):
        stop_from_aircraft("60 blorps", 60.0, 4, stop_time=30.0)
    with pytest.raises(UnitError, match="brake_on_speed"):
        stop_from_aircraft(60000.0, "60 kg", 4, stop_time=30.0)


@pytest.mark.parametrize(
    ("call", "field"),
    [
        (lambda: stop_from_aircraft(60000.0, 60.0, 0, stop_time=30.0), "braked_wheels"),
        (lambda: stop_from_aircraft(60000.0, 60.0, 4), "stop_time"),
        (lambda: stop_from_aircraft(-1.0, 60.0, 4, stop_time=30.0), "mass"),
        (lambda: stop_from_energy(-3.0, 10.0), "energy"),
        (lambda: stop_from_energy(3.0e6, 10.0, profile="sine"), "profile"),
        (lambda: stop_from_energy(3.0e6, 10.0, profile=[(0.0, 1.0), (0.5, 1.0)]), "profile"),
        (lambda: taxi_snubs(6e4, 4, 0.9, 5.0, 8.0, 4.0, 60.0, 3), "speed_low"),
        (lambda: taxi_snubs(6e4, 4, 0.9, 8.0, 5.0, 4.0, 2.0, 3), "interval"),
        (lambda: taxi_snubs(6e4, 4, 0.9, 8.0, 5.0, 4.0, 60.0, 0), "count"),
        (lambda: combine(), "combine"),
    ],
)
def test_other_bad_inputs_name_the_field(call, field: str) -> None:
    with pytest.raises(InputError, match=field):
        call()


def test_constant_deceleration_trace_energy_closed_form() -> None:
    # Telescoping: sum over intervals of (v_i^2 - v_(i+1)^2)/2 = v0^2/2 exactly.
    rows = constant_deceleration_trace(80.0, 40.0, 101)
    event = stop_from_speed_trace(rows, 1000.0, 1, 1.0)
    assert event.energy_per_brake == pytest.approx(0.5 * 1000.0 * 80.0**2, rel=1e-12)
    assert math.isclose(event.kinetic_energy, 0.5 * 1000.0 * 80.0**2, rel_tol=1e-12)
