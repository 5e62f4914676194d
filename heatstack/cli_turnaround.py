"""The command-line verbs that start from a results file's final state, and the day of operations.

``cool`` (time to cool below a temperature), ``what-if`` (peaks if a stop started now), ``wait`` (the shortest
safe wait before a departure whose take-off may be rejected), ``ramp`` (the same wait from what is known on the
ramp: sensor readings at known times after a known duty, through the energy fit) and ``day`` (a day of
operations); :func:`add_turnaround_verbs` adds them to the ``heatstack`` parser. Every verb prints the caution
first.
"""

from __future__ import annotations

import argparse

from .errors import InputError, ResultFileError
from .geometry import HEAT_SINK_MEAN, series_label

__all__ = ["add_turnaround_verbs"]


def _caution() -> None:
    from .report import CAUTION

    print(CAUTION)


def _from_results(path: str):
    """(case, model, state) of a results file: its stored case, rebuilt, and its final state."""
    from .case import parse_case
    from .questions.chaining import read_start, state_for_model
    from .resultread import read_case_text

    text = read_case_text(path)
    if not text:
        raise ResultFileError(f"{path!r} keeps no case text: the model cannot be rebuilt from it")
    case = parse_case(text, f"the case stored in {path}")
    model = case.build_model()
    return case, model, state_for_model(model, read_start(path))


def _environment(args: argparse.Namespace, ground_speed: str | float = 0.0):
    from .operations.duty import Environment

    return Environment(ambient_temperature=args.ambient, fan_speed=args.fan or 0.0, ground_speed=ground_speed)


def _stop(text: str, args: argparse.Namespace, name: str):
    """A stop from "MASS, SPEED" (e.g. "60 t, 120 kt") and the stop options."""
    from .operations.heat_input import stop_from_aircraft

    parts = [p.strip() for p in text.split(",")]
    if len(parts) != 2 or not all(parts):
        raise InputError(f'{name}: expected "MASS, BRAKE-ON SPEED" such as "60 t, 120 kt", got {text!r}')
    return stop_from_aircraft(
        parts[0], parts[1], args.braked_wheels, args.brake_share, stop_time=args.stop_time, name=name
    )


def _print_peaks(peaks, now=None, plugs=()) -> None:
    """Peaks [K] and their times [s]; a fuse plug's probe is the rim at its seat, and is named so."""
    seats = {plug.name for plug in plugs}
    for name, (value, when) in peaks.items():
        start = f"  (now {now[name] - 273.15:6.1f} degC)" if now else ""
        label = f"rim at the seat of {name}" if name in seats else series_label(name)
        print(f"  {label:30s} peak {value - 273.15:7.1f} degC at {when / 60.0:6.1f} min{start}")


def _cmd_cool(args: argparse.Namespace) -> int:
    from .questions.whatif import cooling_time_from_state

    _caution()
    case, model, state = _from_results(args.results)
    answer = cooling_time_from_state(
        model, state, _environment(args), case.assembly.surfaces, args.series, below=args.below, horizon=args.horizon
    )
    name, below = series_label(answer.series), f"{answer.threshold - 273.15:.0f} degC"
    if not answer.reached:
        print(
            f"the {name} is still {answer.final_value - 273.15:.0f} degC after {answer.horizon / 60.0:.0f} min, "
            f"above {below}: not reached; extend --horizon or improve the cooling (--fan)"
        )
    elif answer.time_needed == 0.0:
        print(f"the {name} stays below {below} throughout (now {answer.start_value - 273.15:.0f} degC)")
    else:
        print(
            f"the {name} falls below {below} after {answer.time_needed / 60.0:.1f} min "
            f"(now {answer.start_value - 273.15:.0f} degC, peak {answer.peak_value - 273.15:.0f} degC)"
        )
    return 0


def _cmd_what_if(args: argparse.Namespace) -> int:
    from .questions.whatif import what_if

    _caution()
    case, model, state = _from_results(args.results)
    event = _stop(args.event, args, "event")
    answer = what_if(
        model,
        state,
        event,
        _environment(args),
        case.assembly.surfaces,
        args.after,
        braking_environment=_environment(args, "60 kt"),
    )
    print(f"if a stop of {answer.energy / 1e6:.2f} MJ per brake started now ({state.time / 60.0:.1f} min):")
    _print_peaks(answer.peaks, answer.now, case.fuse_plugs)
    if case.fuse_plugs:  # each plug's own lagged temperature, from where the state left it
        from dataclasses import replace

        from .answers.fuse_plugs import assess_fuse_plugs

        run = replace(answer.result, initial_plug_temperatures=dict(state.plug_temperatures))
        for plug in assess_fuse_plugs(run, case.fuse_plugs):
            released = "releases" if plug.releases else "does not release"
            print(
                f"  {plug.name + ' itself':30s} peak {plug.peak - 273.15:7.1f} degC at "
                f"{(plug.time_of_peak - state.time) / 60.0:6.1f} min; {released} "
                f"(release {plug.release_temperature - 273.15:.0f} degC, margin {plug.margin:.1f} K)"
            )
    return 0


def _wait_problem(args: argparse.Namespace, case=None, model=None, state=None):
    """The wait question of ``args``: from a results file's final state, or from the given case, model and state."""
    from .questions.safe_wait import Departure, DispatchLimits, TyreCheck, WaitProblem
    from .units import to_si

    if case is None:
        case, model, state = _from_results(args.results)
    tyre = None
    if case.tyre is not None and case.tyre.pressure_limit is not None:
        t = case.tyre
        tyre = TyreCheck(
            t.cold_pressure,
            t.pressure_limit,
            t.gas_volume,
            t.cavity_area,
            t.h_cavity,
            t.outer_conductance,
            case.initial_temperature,
        )
    limits = DispatchLimits(
        tuple(case.fuse_plugs),
        to_si(args.plug_margin, None, "temperature_difference", "--plug-margin"),
        to_si(args.heat_sink_limit, None, "temperature", "--heat-sink-limit") if args.heat_sink_limit else None,
        tyre=tyre,
    )
    departure = Departure(
        _stop(args.departure, args, "rejected take-off"),
        _environment(args),
        _environment(args, "60 kt"),
        after=to_si(args.after, None, "time", "--after"),
    )
    return WaitProblem(model, state, departure, limits, tuple(case.assembly.surfaces))


def _cmd_wait(args: argparse.Namespace) -> int:
    _caution()
    return _answer_wait(args, _wait_problem(args))


def _cmd_ramp(args: argparse.Namespace) -> int:
    from .case import load_case
    from .questions.ramp import state_from_ramp_readings
    from .questions.sensor_trace import read_sensor_trace

    _caution()
    if not (args.standard_errors >= 0.0):  # also refuses NaN
        raise InputError(f"--standard-errors: must be >= 0, got {args.standard_errors!r}")
    _check_wait_arguments(args)  # before the fit's runs
    case = load_case(args.case)
    times, readings = read_sensor_trace(args.readings)
    if times[-1] > case.duty.duration:
        raise InputError(
            f"{args.readings}: the last reading at {times[-1] / 60.0:.1f} min is after the end of the case's duty "
            f"({case.duty.duration / 60.0:.1f} min); the duty must run at least to the last reading"
        )
    model = case.build_model()
    ramp = state_from_ramp_readings(
        model,
        case.duty,
        case.assembly.surfaces,
        times,
        readings,
        case.initial_temperature,
        case.fuse_plugs,
        sensor=args.sensor,
        standard_errors=args.standard_errors,
        options=case.solver,
    )
    bound = f"{ramp.standard_errors:g} standard errors up, cautious" if ramp.standard_errors > 0 else "the fit itself"
    print(
        f"from {times.size} reading(s): energy per brake {ramp.energy / 1e6:.2f} MJ +/- "
        f"{ramp.standard_error / 1e6:.2f} MJ (1 standard error); the state is taken at "
        f"{ramp.energy_used / 1e6:.2f} MJ ({bound}), at {ramp.state.time / 60.0:.1f} min, the end of the case's duty"
    )
    return _answer_wait(args, _wait_problem(args, case, model, ramp.state))


def _check_wait_arguments(args: argparse.Namespace) -> None:
    """InputError naming the option for a bad departure, limit or time of the wait question."""
    from .units import to_si

    _stop(args.departure, args, "rejected take-off")
    to_si(args.plug_margin, None, "temperature_difference", "--plug-margin")
    if args.heat_sink_limit:
        to_si(args.heat_sink_limit, None, "temperature", "--heat-sink-limit")
    for option in ("after", "max_wait", "tolerance"):
        to_si(getattr(args, option), None, "time", f"--{option.replace('_', '-')}")


def _answer_wait(args: argparse.Namespace, problem) -> int:
    """Find and print the shortest safe wait of ``problem``; the margin plot with ``--plot``."""
    from .questions.safe_wait import shortest_safe_wait, shown_margin
    from .studies import LocalExecutor

    with LocalExecutor(workers=args.workers) as executor:
        answer = shortest_safe_wait(problem, args.max_wait, args.tolerance, executor)
    print(answer.message)
    at = answer.at_wait
    print("if the take-off after that wait is rejected:")
    for name, margin, unit in at.margins:
        peak = at.peaks.get(name)
        if peak is None:
            top = ""
        else:
            top = f"peak {peak / 1e5:6.2f} bar gauge, " if unit == "Pa" else f"peak {peak - 273.15:6.1f} degC, "
        shown = shown_margin(margin, unit, width=7)
        governs = "   <- governs" if name == answer.governing else ""
        print(f"  {series_label(name):24s} {top}margin {shown}{governs}")
    if at.sensor_at_departure is not None:
        print(f"sensor reading expected at departure: {at.sensor_at_departure - 273.15:.0f} degC")
    if args.plot:
        from .plotting.dispatch import plot_wait_margin

        print(f"plot: {plot_wait_margin(answer, args.plot)}")
    return 0


def _cmd_day(args: argparse.Namespace) -> int:
    from .dayfile import load_operations
    from .questions.day import run_day

    _caution()
    plan = load_operations(args.operations)
    day = run_day(plan)
    for line in day.summary_lines():
        print(line)
    if args.plot:
        from .plotting.dispatch import plot_day

        print(f"plot: {plot_day(day, args.plot)}")
    return 0


def add_turnaround_verbs(verbs, loudness: argparse.ArgumentParser) -> None:
    """The verbs that start from a results file's final state, and the day of operations.

    Parameters
    ----------
    verbs : argparse._SubParsersAction
        The command line's verb sub-parsers, to which ``cool``, ``what-if``, ``wait`` and
        ``day`` are added.
    loudness : argparse.ArgumentParser
        Parent parser of the shared verbosity options.
    """
    raw = argparse.RawDescriptionHelpFormatter
    cool = verbs.add_parser(
        "cool",
        parents=[loudness],
        help="time to cool below a temperature from a results file's final state",
        formatter_class=raw,
        epilog="example:\n  heatstack cool demo-results.h5 --below 150degC --fan 5m/s",
    )
    cool.add_argument("results")
    cool.add_argument("--below", required=True, help="threshold, e.g. 150degC")
    cool.add_argument("--series", default=HEAT_SINK_MEAN, help="probe or series (default: %(default)s)")
    cool.add_argument("--horizon", default="6 h", help="longest time looked at (default: %(default)s)")
    cool.set_defaults(func=_cmd_cool)
    what = verbs.add_parser(
        "what-if",
        parents=[loudness],
        help="peaks if a stop started now, from a results file's final state",
        formatter_class=raw,
        epilog='example:\n  heatstack what-if demo-results.h5 --event "60 t, 120 kt" --stop-time 35s',
    )
    what.add_argument("results")
    what.add_argument("--event", required=True, help='the stop: "MASS, BRAKE-ON SPEED"')
    what.add_argument("--after", default="3 h", help="cooling watched after it (default: %(default)s)")
    what.set_defaults(func=_cmd_what_if)
    wait = verbs.add_parser(
        "wait",
        parents=[loudness],
        help="shortest safe wait before a departure whose take-off may be rejected",
        formatter_class=raw,
        epilog='example:\n  heatstack wait demo-results.h5 --departure "50 t, 110 kt" --heat-sink-limit 900degC',
    )
    wait.add_argument("results")
    wait.set_defaults(func=_cmd_wait)
    ramp = verbs.add_parser(
        "ramp",
        parents=[loudness],
        help="shortest safe wait from ramp readings: sensor readings at known times after a known duty",
        formatter_class=raw,
        description="The case's duty is what the wheel did (e.g. the landing and taxi-in); the readings CSV "
        "(time_min,temperature_degC) are the sensor's at known times from the start of that duty. The braking "
        "energy is fitted to them, the state is taken at the fitted energy plus --standard-errors standard "
        "errors (cautious) at the end of the duty, and the wait is found from it.",
        epilog='example:\n  heatstack ramp landing.toml gauge.csv --departure "50 t, 110 kt" --heat-sink-limit 900degC',
    )
    ramp.add_argument("case", help="case file whose duty the wheel has done (TOML)")
    ramp.add_argument("readings", help="CSV of sensor readings: time_<unit>,temperature_<unit>")
    ramp.add_argument("--sensor", default="sensor", help="probe the readings are of (default: %(default)s)")
    ramp.add_argument(
        "--standard-errors", type=float, default=2.0, help="energy bound above the fit (default: %(default)s)"
    )
    ramp.set_defaults(func=_cmd_ramp)
    for verb in (wait, ramp):
        verb.add_argument("--departure", required=True, help='the rejected take-off: "MASS, BRAKE-ON SPEED"')
        verb.add_argument("--plug-margin", default="10 K", help="fuse plugs below release by (default: %(default)s)")
        verb.add_argument(
            "--heat-sink-limit", help="highest peak of the heat sink's hottest cell allowed, e.g. 900degC"
        )
        verb.add_argument("--after", default="90 min", help="cooling watched after the stop (default: %(default)s)")
        verb.add_argument("--max-wait", default="4 h", help="longest wait looked at (default: %(default)s)")
        verb.add_argument("--tolerance", default="30 s", help="accuracy of the wait (default: %(default)s)")
        verb.add_argument("--workers", type=int, default=2, help="local worker processes (default: %(default)s)")
        verb.add_argument("--plot", help="PNG file: the margin against wait time")
    for verb in (cool, what, wait, ramp):
        verb.add_argument("--ambient", default="15 degC", help="air temperature (default: %(default)s)")
        verb.add_argument("--fan", help="brake cooling fan air speed, e.g. 5m/s")
    for verb in (what, wait, ramp):
        verb.add_argument("--stop-time", default="35 s", help="duration of the stop (default: %(default)s)")
        verb.add_argument("--braked-wheels", type=int, default=4, help="(default: %(default)s)")
        verb.add_argument("--brake-share", type=float, default=0.9, help="share of kinetic energy braked")
    day = verbs.add_parser(
        "day",
        parents=[loudness],
        help="run a day of operations (TOML + CSV of flights), per-flight peaks",
        formatter_class=raw,
        epilog="example:\n  heatstack day operations.toml --plot day.png",
    )
    day.add_argument("operations", help="operations file (TOML)")
    day.add_argument("--plot", help="PNG file: the day's histories and each departure's margin")
    day.set_defaults(func=_cmd_day)
