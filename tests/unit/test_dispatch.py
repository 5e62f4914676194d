"""Turnaround and dispatch: cooling from a state, chaining runs, the shortest safe wait.

References:
- lumped-capacitance convective cooling, Incropera, DeWitt, Bergman & Lavine, Fundamentals
  of Heat and Mass Transfer, 6th ed., eq. 5.6: (T - T_inf)/(T_i - T_inf) = exp(-t/tau);
- lumped radiative cooling to surroundings at T_sur, same book, eq. 5.18:
  t = rho V c / (4 eps A sigma T_sur^3) * [ln|(T_sur + T)/(T_sur - T)| - ln|(T_sur + T_i)/(T_sur - T_i)|
      + 2 (atan(T/T_sur) - atan(T_i/T_sur))];
- common practice, no source: after a heavy stop the brake temperature gauge peaks 10
  minutes or more after the stop.
Every wheel here is the invented reference design on a coarse grid (8 mm cells), for speed.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from heatstack import Assembly, FixedConvection, Model, Part, Probe, SolverOptions, State, SurfaceGroup, simple_material
from heatstack.answers.fuse_plugs import assess_fuse_plugs
from heatstack.builders import build_wheel_brake
from heatstack.errors import HeatstackError, InputError, ResultFileError
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.heat_input import stop_from_aircraft
from heatstack.questions.chaining import read_start, run_from_state, state_for_model
from heatstack.questions.safe_wait import (
    Departure,
    DispatchLimits,
    NoSafeWaitError,
    WaitProblem,
    check_monotone,
    evaluate_wait,
    shortest_safe_wait,
)
from heatstack.questions.whatif import cooling_time_from_state
from heatstack.resultfile import write_result

# The invented design's tyre-rubber tables end at 500 K; the hot turnarounds here pass it at
# the bead seat, where the property is clamped to its end value (a documented soft warning).
pytestmark = pytest.mark.filterwarnings("ignore:material 'tyre-rubber'.*outside the table")

SIGMA = 5.670374419e-8  # Stefan-Boltzmann constant [W/(m^2 K^4)] (CODATA 2018)
RHO, CP, K = 8900.0, 385.0, 400.0  # copper-like [kg/m^3], [J/(kg K)], [W/(m K)]
R_IN, R_OUT, LENGTH = 0.05, 0.07, 0.02  # [m]
TIGHT = SolverOptions(accuracy=0.02)  # BDF2 under a tight error tolerance
# The chaining tests step with backward Euler: a chained BDF2 run restarts its history (and its
# first step after the corner cannot see the rate before it), so it matches the run in one piece
# only to the time-discretisation error; with Euler a chain takes the one piece's steps exactly.
CHAIN = SolverOptions(scheme="euler", target_change=0.5, max_step=20.0)
GROUPS = ("block:inner", "block:outer", "block:bottom", "block:top")


def _lumped(emissivity: float = 0.8) -> tuple[Model, list[SurfaceGroup]]:
    material = simple_material("lumped-copper", RHO, CP, K, emissivity=emissivity)
    assembly = Assembly(
        [Part("block", "lumped-copper", R_IN, R_OUT, 0.0, LENGTH)], probes=[Probe("centre", 0.06, 0.01)]
    )
    model = Model.build(assembly, cell_size=0.008, materials={"lumped-copper": material})
    return model, [SurfaceGroup(group, LENGTH) for group in GROUPS]


def _volume_area() -> tuple[float, float]:
    volume = np.pi * (R_OUT**2 - R_IN**2) * LENGTH
    area = 2.0 * np.pi * (R_IN + R_OUT) * LENGTH + 2.0 * np.pi * (R_OUT**2 - R_IN**2)
    return volume, area


def test_cooling_time_from_a_state_matches_the_exponential_closed_form():
    # Incropera et al., 6th ed., eq. 5.6 (lumped body, convection only)
    h, ambient = 25.0, 300.0
    model, scales = _lumped()
    environment = Environment(overrides={"*": FixedConvection(h, ambient, radiation=False)})
    state = State(600.0, np.full(model.n_cells, 480.0))
    answer = cooling_time_from_state(
        model, state, environment, scales, "centre", below=350.0, horizon="40 min", options=TIGHT
    )
    volume, area = _volume_area()
    tau = RHO * CP * volume / (h * area)
    assert answer.time_needed == pytest.approx(tau * np.log((480.0 - ambient) / (350.0 - ambient)), rel=0.01)


def _radiative_time(t_initial: float, t_final: float, t_sur: float, emissivity: float) -> float:
    volume, area = _volume_area()

    def bracket(t: float) -> float:
        return np.log(abs((t_sur + t) / (t_sur - t))) + 2.0 * np.arctan(t / t_sur)

    return RHO * volume * CP / (4.0 * emissivity * area * SIGMA * t_sur**3) * (bracket(t_final) - bracket(t_initial))


def test_cooling_time_from_a_state_matches_the_radiative_closed_form():
    # Incropera et al., 6th ed., eq. 5.18 (lumped body, radiation only, h = 0)
    t_sur, emissivity = 300.0, 0.8
    model, scales = _lumped(emissivity)
    environment = Environment(overrides={"*": FixedConvection(0.0, t_sur)})
    state = State(0.0, np.full(model.n_cells, 700.0))
    answer = cooling_time_from_state(
        model, state, environment, scales, "centre", below=450.0, horizon="3 h", options=TIGHT
    )
    assert answer.time_needed == pytest.approx(_radiative_time(700.0, 450.0, t_sur, emissivity), rel=0.01)


# ---------------------------------------------------------------------------- wheel and brake

AMBIENT = 298.15
ROLLING = Environment(ambient_temperature=AMBIENT, ground_speed="60 kt")
PARKED = Environment(ambient_temperature=AMBIENT)


def _landing() -> DutyCycle:
    stop = stop_from_aircraft("62 t", "125 kt", 4, 0.85, stop_time="35 s", name="landing stop")
    return DutyCycle(
        [
            DutyPhase("landing", "40 s", ROLLING, [stop], clamped=True),
            DutyPhase("taxi-in", "5 min", Environment(ambient_temperature=AMBIENT, ground_speed="15 kt")),
        ]
    )


@pytest.fixture(scope="module")
def wheel():
    built = build_wheel_brake()
    plugs = tuple(replace(p, time_constant=40.0) for p in built.fuse_plugs)
    model = Model.build(built.assembly, cell_size=0.008)
    surfaces = tuple(built.assembly.surfaces)
    arrival = run_from_state(model, _landing().schedule(surfaces), AMBIENT, plugs)
    return built, plugs, model, surfaces, arrival


def _departure() -> Departure:
    rto = stop_from_aircraft("48 t", "110 kt", 4, 0.9, stop_time="32 s", name="rejected take-off")
    return Departure(rto, PARKED, ROLLING, after=3600.0)


def test_a_chained_run_equals_the_same_duty_in_one_piece(wheel, tmp_path):
    built, plugs, model, surfaces, arrival = wheel
    parked = DutyPhase("parked", "40 min", PARKED)
    fine = CHAIN  # both runs: the test is of the chaining, not the steps
    whole = run_from_state(model, DutyCycle([*_landing().phases, parked]).schedule(surfaces), AMBIENT, plugs, fine)
    first = run_from_state(model, _landing().schedule(surfaces), AMBIENT, plugs, fine)
    path = tmp_path / "arrival.h5"
    write_result(first, path)
    state = state_for_model(model, read_start(path))
    assert state.plug_temperatures and state.readings  # the lags travel through the file
    second = run_from_state(model, DutyCycle([parked]).schedule(surfaces, start=state.time), state, plugs, fine)
    for name in whole.probes:
        expected = np.interp(second.times, whole.times, whole.probes[name])
        assert np.max(np.abs(second.probes[name] - expected)) < 0.01, name
        lagged = np.interp(second.times, whole.times, whole.readings[name])
        assert np.max(np.abs(second.readings[name] - lagged)) < 0.01, name
    for name, value in whole.final_state.plug_temperatures.items():
        assert second.final_state.plug_temperatures[name] == pytest.approx(value, abs=0.01), name


def test_a_state_of_another_grid_is_refused_naming_what_differs(wheel, tmp_path):
    built, plugs, model, surfaces, arrival = wheel
    path = tmp_path / "arrival.h5"
    write_result(arrival, path)
    other = Model.build(built.assembly, cell_size=0.010)
    with pytest.raises(InputError, match="active cells: .* in the file"):
        state_for_model(other, read_start(path))


def test_an_old_results_file_without_a_state_is_a_results_file_error(wheel, tmp_path):
    import h5py

    path = tmp_path / "old.h5"
    write_result(wheel[4], path)
    with h5py.File(path, "a") as h5:
        del h5["final_state"]
    with pytest.raises(ResultFileError, match="final_state"):
        read_start(path)


def test_first_heavy_stop_sensor_peaks_ten_minutes_or_more_after_the_stop(wheel):
    # trade fact (common practice, no source): the gauge reads late after heavy braking
    built, plugs, model, surfaces, arrival = wheel
    cooling = DutyCycle([DutyPhase("parked", "40 min", PARKED)])
    state = arrival.final_state
    after = run_from_state(model, cooling.schedule(surfaces, start=state.time), state, plugs)
    times = np.concatenate([arrival.times, after.times[1:]])
    sensor = np.concatenate([arrival.readings["sensor"], after.readings["sensor"][1:]])
    assert times[int(np.argmax(sensor))] - 35.0 >= 600.0


@pytest.fixture(scope="module")
def wait_problem(wheel):
    built, plugs, model, surfaces, arrival = wheel
    limits = DispatchLimits(plugs, plug_margin=10.0, heat_sink_limit=1100.0)
    return WaitProblem(model, arrival.final_state, _departure(), limits, surfaces)


@pytest.fixture(scope="module")
def wait_answer(wait_problem):
    return shortest_safe_wait(wait_problem, max_wait="3 h", tolerance="60 s")


def test_the_wait_found_equals_a_brute_force_sweep_within_its_step(wait_problem, wait_answer):
    step = 300.0
    sweep = []
    for w in np.arange(0.0, 3 * 3600.0 + 1.0, step):  # each wait continues the last one's
        sweep.append(evaluate_wait(wait_problem, w, base=sweep[-1] if sweep else None))
        if sweep[-1].margin >= 0 and len(sweep) > 3 and sweep[-4].margin >= 0:
            break
    first_safe = next(s.wait for s in sweep if s.margin >= 0)
    assert first_safe - step <= wait_answer.wait <= first_safe
    assert wait_answer.at_wait.margin >= 0 and wait_answer.wait > 0
    assert wait_answer.governing in {s[0] for s in wait_answer.at_wait.margins}
    assert wait_answer.at_wait.sensor_at_departure is not None
    check_monotone(sweep)  # the margin is monotone non-decreasing in the wait on the reference design
    margins = [s.margin for s in sweep]
    assert all(b >= a - 0.05 for a, b in zip(margins, margins[1:], strict=False))


def test_a_limit_broken_even_from_ambient_says_so(wait_problem):
    strict = replace(wait_problem, limits=DispatchLimits(heat_sink_limit=320.0))
    with pytest.raises(NoSafeWaitError, match="even from ambient"):
        shortest_safe_wait(strict, max_wait="1 h", tolerance="60 s")


def test_safe_now_states_the_governing_margin_in_its_own_unit(wait_problem):
    # the governing margin is compared on a common footing (1 K, 0.1 bar), but shown in its own unit
    lenient = replace(wait_problem, limits=DispatchLimits(heat_sink_limit=2000.0))
    answer = shortest_safe_wait(lenient, max_wait="1 h", tolerance="60 s")
    assert answer.wait == 0.0 and answer.message.startswith("safe now")
    name, margin, unit = next(m for m in answer.at_wait.margins if m[0] == answer.governing)
    assert unit == "K" and answer.message.endswith(f", {margin:.1f} K)")


def test_a_falling_margin_is_refused_as_not_monotone(wait_answer):
    samples = list(wait_answer.samples)
    flipped = [replace(s, margin=-s.margin) for s in samples]
    with pytest.raises(HeatstackError, match="not monotone"):
        check_monotone(flipped)


# ---------------------------------------------------------------------------- a day of operations

FLIGHTS_HEADER = (
    "arrival_time,arrival_mass,arrival_speed,taxi_in,turnaround,departure_mass,taxi_out,elevation,temperature,wind"
)
FLIGHTS = [
    "07:00,62 t,125 kt,6 min,40 min,66 t,8 min,100 m,15 degC,3 m/s",
    "08:40,60 t,120 kt,5 min,30 min,64 t,6 min,1500 ft,25 degC,0 m/s",
]


def _write_flights(folder, rows, header=FLIGHTS_HEADER):
    path = folder / "flights.csv"
    path.write_text("\n".join([header, *rows]) + "\n", encoding="utf-8")
    return path


def test_a_chained_day_equals_the_same_day_in_one_piece(wheel, tmp_path):
    from heatstack.dayfile import read_flights
    from heatstack.questions.day import DayPlan, day_duty, run_day

    built, plugs, model, surfaces, arrival = wheel
    # Newton converged tightly: the chain and the one piece then take the same steps
    fine = SolverOptions(scheme="euler", target_change=0.5, max_step=20.0, tolerance=1e-7)  # as CHAIN
    flights = read_flights(_write_flights(tmp_path, FLIGHTS))
    plan = DayPlan(model, surfaces, plugs, AMBIENT, flights, options=fine)
    day = run_day(plan)
    whole = run_from_state(
        model, day_duty(plan).schedule(surfaces, start=flights[0].arrival_time), AMBIENT, plugs, fine
    )
    for answer in day.flights:
        for leg in (answer.arrival, answer.departure):
            # each leg reads the day's power, so it takes the one piece's steps exactly
            span = whole.times[(whole.times >= leg.times[0] - 1e-6) & (whole.times <= leg.times[-1] + 1e-6)]
            assert span.size == leg.times.size and np.allclose(span, leg.times, rtol=0.0, atol=1e-6)
            within = 0.01  # [K], the target for every probe, instruments and plug lags included
            for name in whole.probes:
                assert np.max(np.abs(leg.probes[name] - np.interp(leg.times, whole.times, whole.probes[name]))) < within
                assert (
                    np.max(np.abs(leg.readings[name] - np.interp(leg.times, whole.times, whole.readings[name])))
                    < within
                )
    for name, value in whole.final_state.plug_temperatures.items():  # the plugs' own lag, carried leg to leg
        assert day.flights[-1].departure.final_state.plug_temperatures[name] == pytest.approx(value, abs=0.01)
    first = day.flights[0]
    assert first.peaks["sensor"][0] > first.departure_state.readings["sensor"]
    assert {"heat_sink_mean", "wheel_max", "fuse plug 1", "fuse plug 2"} <= set(first.peaks)
    own = max(assess_fuse_plugs(leg, plugs)[0].peak for leg in (first.arrival, first.departure))
    assert first.peaks["fuse plug 1"][0] == pytest.approx(own)  # the plug once, as its own lagged temperature
    lines = day.summary_lines()
    assert sum(line.startswith("  fuse plug 1 ") for line in lines) == len(day.flights)  # once a flight
    text = "\n".join(lines)
    assert "(plug)" not in text and "heat_sink_mean" not in text and "heat-sink mean" in text


def test_a_flights_table_with_a_missing_column_is_refused(tmp_path):
    from heatstack.dayfile import read_flights

    header = FLIGHTS_HEADER.replace(",wind", "")
    rows = [r.rsplit(",", 1)[0] for r in FLIGHTS]
    with pytest.raises(InputError, match=r"missing column\(s\) \['wind'\]"):
        read_flights(_write_flights(tmp_path, rows, header))


def test_a_flights_table_with_a_non_increasing_time_is_refused(tmp_path):
    from heatstack.dayfile import read_flights

    rows = [FLIGHTS[0], FLIGHTS[1].replace("08:40", "06:50")]
    with pytest.raises(InputError, match="row 3, column arrival_time: times must increase"):
        read_flights(_write_flights(tmp_path, rows))


# ---------------------------------------------------------------------------- command line


@pytest.fixture(scope="module")
def arrival_file(wheel, tmp_path_factory):
    """An arrival run written with its case text, as `heatstack run` writes it."""
    from heatstack.case import load_case, run_case
    from heatstack.cli_shipped import demo_case_path

    text = demo_case_path().read_text(encoding="utf-8").replace('cell_size = "4 mm"', 'cell_size = "8 mm"')
    text = text.replace('duration = "3 h"', 'duration = "10 min"')
    folder = tmp_path_factory.mktemp("cli")
    (folder / "case.toml").write_text(text, encoding="utf-8")
    case = load_case(folder / "case.toml")
    path = folder / "arrival.h5"
    write_result(run_case(case), path, case_text=text)
    return path


def test_cli_cool_prints_the_caution_and_the_answer(arrival_file, capsys):
    from heatstack.cli import main

    assert main(["cool", str(arrival_file), "--below", "150degC", "--fan", "5m/s", "--horizon", "3 h"]) == 0
    out = capsys.readouterr().out
    assert "not certified data" in out and "the heat-sink mean falls below 150 degC after" in out


def test_cli_bad_input_is_a_heatstack_error_with_exit_2(arrival_file, tmp_path, capsys):
    from heatstack.cli import main

    assert main(["cool", str(arrival_file), "--below", "150 m"]) == 2
    assert main(["what-if", str(arrival_file), "--event", "60 t"]) == 2
    assert main(["wait", str(tmp_path / "missing.h5"), "--departure", "50 t, 110 kt"]) == 2
    assert main(["day", str(tmp_path / "missing.toml")]) == 2
    err = capsys.readouterr().err
    assert err.count("heatstack: error:") == 4 and "Traceback" not in err


def _gauge_csv(arrival_file, times):
    """Sensor readings of the stored run at ``times`` [s], as a ramp readings CSV beside it."""
    from heatstack.resultread import read_result

    stored = read_result(arrival_file)
    values = np.interp(times, stored.times, stored.readings["sensor"])
    path = arrival_file.parent / "gauge.csv"
    path.write_text("time_s,temperature_K\n" + "".join(f"{t:g},{v:.4f}\n" for t, v in zip(times, values, strict=True)))
    return path


def test_cli_ramp_finds_the_wait_from_gauge_readings_after_a_known_duty(arrival_file, capsys):
    # the readings are the stored run's own (a self-consistency check, no source): the fit finds its energy
    from heatstack.case import load_case
    from heatstack.cli import main

    case = arrival_file.parent / "case.toml"
    gauge = _gauge_csv(arrival_file, np.array([180.0, 300.0, 480.0, 590.0]))
    argv = ["ramp", str(case), str(gauge), "--departure", "50 t, 110 kt", "--heat-sink-limit", "1500degC"]
    argv += ["--standard-errors", "0", "--max-wait", "3 h", "--tolerance", "600 s", "--after", "10 min"]
    assert main([*argv, "--workers", "1"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("CAUTION") and ("limit governs" in out or "safe now" in out)
    energy = sum(e.energy_per_brake for p in load_case(case).duty.phases for e in p.events)
    fitted = float(out.split("energy per brake ", 1)[1].split(" MJ", 1)[0]) * 1e6
    assert fitted == pytest.approx(energy, rel=0.01)
    assert "sensor reading expected at departure" in out and "heat_sink" not in out


def test_cli_ramp_bad_input_is_a_heatstack_error_with_exit_2(arrival_file, tmp_path, capsys):
    from heatstack.cli import main

    case = arrival_file.parent / "case.toml"
    gauge = _gauge_csv(arrival_file, np.array([180.0, 300.0]))
    late = tmp_path / "late.csv"
    late.write_text("time_min,temperature_degC\n5,200\n900,100\n")
    departure = ["--departure", "50 t, 110 kt"]
    assert main(["ramp", str(case), str(tmp_path / "missing.csv"), *departure]) == 2
    assert main(["ramp", str(case), str(gauge), *departure, "--standard-errors", "-1"]) == 2
    assert main(["ramp", str(case), str(late), *departure]) == 2
    assert main(["ramp", str(case), str(gauge), "--departure", "50 t"]) == 2
    err = capsys.readouterr().err
    assert err.count("heatstack: error:") == 4 and "Traceback" not in err
    assert "--standard-errors" in err and "after the end of the case's duty" in err


@pytest.mark.parametrize("verb", ["cool", "what-if", "wait", "ramp", "day"])
def test_cli_help_gives_one_example(verb, capsys):
    from heatstack.cli import main

    with pytest.raises(SystemExit):
        main([verb, "--help"])
    assert f"example:\n  heatstack {verb} " in capsys.readouterr().out


def test_ramp_readings_rebuild_the_state_at_the_upper_energy_bound(wheel):
    # the readings are made by the model itself at 12 MJ (a self-consistency check, no source)
    from heatstack.operations.heat_input import stop_from_energy
    from heatstack.questions.ramp import state_from_ramp_readings

    built, plugs, model, surfaces, arrival = wheel

    def duty(energy: float) -> DutyCycle:
        stop = stop_from_energy(energy, "35 s", name="landing")
        return DutyCycle([DutyPhase("landing", "40 s", ROLLING, [stop]), DutyPhase("taxi-in", "10 min", PARKED)])

    truth = model.run(duty(12e6).schedule(surfaces), AMBIENT)
    times = np.array([300.0, 420.0, 540.0, 640.0])
    readings = np.interp(times, truth.times, truth.readings["sensor"]) + np.array([0.4, -0.3, 0.2, -0.2])
    ramp = state_from_ramp_readings(model, duty, surfaces, times, readings, AMBIENT, plugs)
    assert ramp.energy == pytest.approx(12e6, rel=0.03)
    assert ramp.energy_used == pytest.approx(ramp.energy + 2.0 * ramp.standard_error)
    assert ramp.standard_error > 0 and ramp.state.time == pytest.approx(640.0)
    mass = model.network.mass()
    assert np.dot(mass, ramp.state.temperature) > np.dot(mass, truth.final_state.temperature) - 1e-6 * mass.sum()
    assert set(ramp.state.plug_temperatures) == {p.name for p in plugs}


# ---------------------------------------------------------------------------- the tyre gas carried on


def _gas(result, **kw):
    from heatstack.answers.tyre import tyre_gas

    # invented tyre: 13.5 bar gauge cold at the ambient, 0.09 m^3, 0.25 m^2 of rim in the cavity
    return tyre_gas(result, "13.5 bar", "0.09 m^3", "0.25 m^2", 15.0, AMBIENT, 4.0, **kw)


def test_a_chained_run_carries_the_tyre_gas_on_as_the_run_in_one_piece(wheel):
    from heatstack.answers.tyre import with_tyre_gas_state

    built, plugs, model, surfaces, arrival = wheel
    parked = DutyPhase("parked", "10 min", PARKED)
    whole = run_from_state(model, DutyCycle([*_landing().phases, parked]).schedule(surfaces), AMBIENT, plugs, CHAIN)
    landed = run_from_state(model, _landing().schedule(surfaces), AMBIENT, plugs, CHAIN)
    first = with_tyre_gas_state(landed, _gas(landed))
    assert first.final_state.tyre_gas_temperature == pytest.approx(float(_gas(landed).temperature[-1]))
    schedule = DutyCycle([parked]).schedule(surfaces, start=first.final_state.time)
    second = run_from_state(model, schedule, first.final_state, plugs, CHAIN)
    assert second.initial_tyre_gas_temperature == first.final_state.tyre_gas_temperature
    chained, one_piece = _gas(second), _gas(whole)
    expected = np.interp(second.times, whole.times, one_piece.temperature)
    assert np.max(np.abs(chained.temperature - expected)) < 0.01  # the 0.01 K for a chained run
    # the gas lags the rim: restarting it at the rim temperature (the old way) would miss by far more
    restarted = _gas(second, initial_temperature=float(second.series["surface:tyre cavity"][0]))
    assert np.max(np.abs(restarted.temperature - expected)) > 1.0


def test_the_results_file_keeps_the_tyre_gas_for_a_chained_run(arrival_file, tmp_path):
    from heatstack.case import parse_case
    from heatstack.report_settings import tyre_gas_for
    from heatstack.resultread import read_case_text, read_result

    stored = read_result(arrival_file)
    case = parse_case(read_case_text(arrival_file), "the stored case")
    gas = tyre_gas_for(stored, case.report_settings())
    start = read_start(arrival_file)
    assert start.state.tyre_gas_temperature == pytest.approx(float(gas.temperature[-1]), abs=1e-9)
    assert stored.final_state.tyre_gas_temperature > AMBIENT + 1.0  # warmed by the rim, not the cold value
    model = case.build_model()
    phase = DutyCycle([DutyPhase("parked", "2 min", PARKED)])
    state = state_for_model(model, start)
    chained = run_from_state(model, phase.schedule(case.assembly.surfaces, start=state.time), state)
    assert chained.initial_tyre_gas_temperature == start.state.tyre_gas_temperature
    copy = tmp_path / "chained.h5"
    write_result(chained, copy)
    assert read_result(copy).initial_tyre_gas_temperature == pytest.approx(start.state.tyre_gas_temperature)


def test_a_day_summary_flags_a_plug_peak_above_its_release_temperature():
    from types import SimpleNamespace

    from heatstack.questions.day import DayAnswer
    from heatstack.wheel_design import FusePlugSpec

    plugs = (FusePlugSpec("fuse plug 1", 0.3, release_temperature="177 degC"),)
    flight = SimpleNamespace(number=1, arrival_time=7 * 3600.0, arrival_mass=62e3)
    hot = SimpleNamespace(
        flight=flight,
        peaks={"fuse plug 1": (273.15 + 191.6, 7.5 * 3600.0), "sensor": (273.15 + 350.0, 7.2 * 3600.0)},
        departure_state=SimpleNamespace(readings={}),
        departure_margin=None,
    )
    cool = SimpleNamespace(**{**vars(hot), "peaks": {"fuse plug 1": (273.15 + 150.0, 7.5 * 3600.0)}})
    assert "RELEASES (release 177.0 degC)" in "\n".join(DayAnswer("d", (hot,), plugs).summary_lines())
    assert "RELEASES" not in "\n".join(DayAnswer("d", (cool,), plugs).summary_lines())
