"""The ``heatstack`` command line.

Verbs: ``run`` a case, ``check`` a case (parts, cells, layout drawing), ``report`` on a
results file, ``plot`` a results file, ``fit`` the braking energy to a recorded sensor
trace, ``calibrate`` a case to measured test traces, run or resume a ``study``, list ``materials``, run the ``demo``.

Exit codes: 0 success, 2 bad input (a heatstack input error), 1 internal error. User
errors print one clear line, never a traceback.
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings
from collections.abc import Callable, Sequence
from importlib import resources
from pathlib import Path

from . import __version__
from .atomic import write_file_atomically
from .errors import HeatstackError, InputError, ResultFileError
from .geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN

__all__ = ["main", "demo_case_path"]


def demo_case_path() -> Path:
    """The invented demonstration case shipped with heatstack."""
    shipped = Path(str(resources.files("heatstack"))) / "_examples" / "demo_rto.toml"
    if shipped.is_file():
        return shipped
    return Path(__file__).resolve().parents[1] / "examples" / "demo_rto.toml"


def _progress(total_time: float, start: float, quiet: bool) -> tuple[Callable[[float], None] | None, Callable]:
    """A tqdm bar over simulated time when stderr is a terminal, else nothing."""
    if quiet or not sys.stderr.isatty():
        return None, lambda: None
    from tqdm import tqdm

    bar = tqdm(total=round(total_time / 60.0, 1), unit="min", desc="simulated", leave=False)

    def update(t: float) -> None:
        bar.n = round((t - start) / 60.0, 1)
        bar.refresh()

    return update, bar.close


def _write_plots(result, folder: Path, unit: str) -> list[Path]:
    from .plotting import plot_field, plot_histories, plot_sensor_offset, plot_why_the_gauge_lags

    written = [plot_histories(result, folder / "histories.png", unit=unit)]
    if "sensor" in result.readings and HEAT_SINK_MEAN in result.series:
        written.append(plot_sensor_offset(result, folder / "sensor-offset.png", unit=unit))
        written.append(plot_why_the_gauge_lags(result, folder / "why-the-gauge-lags.png", unit=unit))
    for t in result.snapshot_times[1:-1]:
        written.append(plot_field(result, folder / f"field-{t / 60.0:06.1f}min.png", float(t), unit=unit))
    return written


def _run_case_file(case_path: Path, out: Path, plots: bool, unit: str | None, quiet: bool) -> int:
    from .case import load_case, run_case
    from .report import build_report, format_report
    from .resultfile import check_writable, write_result

    case = load_case(case_path)
    target = check_writable(out / case.output.file)
    model = case.build_model()
    if not quiet:
        print(f"heatstack: {case.title}: {model.n_cells} cells, {len(case.duty.phases)} phases", file=sys.stderr)
    update, close = _progress(case.duty.duration, 0.0, quiet)
    try:
        result = run_case(case, model, update)
    finally:
        close()
    settings = case.report_settings()
    if unit:
        settings = type(settings)(**{**settings.__dict__, "unit": unit})
    write_result(
        result,
        target,
        case_text=case.text,
        resolved_inputs={"case": case.resolved(), "report": settings.to_mapping()},
    )
    written = _write_plots(result, out, settings.unit) if plots and case.output.plots else []
    print(format_report(build_report(result, settings), "text"))
    print(f"results: {target}")
    for path in written:
        print(f"plot:    {path}")
    return 0


def _cmd_run(args: argparse.Namespace) -> int:
    case = Path(args.case)
    out = Path(args.out) if args.out else case.resolve().parent
    return _run_case_file(case, out, not args.no_plots, args.unit, args.quiet)


def _cmd_demo(args: argparse.Namespace) -> int:
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    print(
        "heatstack demo: an INVENTED rejected take-off on an invented wheel and brake, then parked cooling.",
        file=sys.stderr,
    )
    return _run_case_file(demo_case_path(), out, True, args.unit, args.quiet)


def _cmd_check(args: argparse.Namespace) -> int:
    from .case import load_case
    from .plotting import plot_layout

    case = load_case(args.case)
    model = case.build_model()
    print(f"{case.title}")
    print(f"{'part':20s} {'role':15s} {'material':30s} r [mm]          z [mm]")
    for part in case.assembly.parts:
        print(
            f"{part.name:20s} {part.role:15s} {part.material:30s} "
            f"{part.r_inner * 1e3:6.1f}-{part.r_outer * 1e3:6.1f}  {part.z_min * 1e3:6.1f}-{part.z_max * 1e3:6.1f}"
        )
    print(f"probes: {', '.join(p.name for p in case.assembly.probes)}")
    print(
        f"cells: {model.n_cells} active of {model.grid.shape[0] * model.grid.shape[1]} "
        f"({model.grid.shape[1]} radial x {model.grid.shape[0]} axial)"
    )
    print(
        f"rubbing interfaces: {len(model.network.friction_labels)}; surface groups: {', '.join(model.network.groups)}"
    )
    missing = sorted(set(model.network.groups) - {s.name for s in case.assembly.surfaces})
    if missing:
        raise InputError(f"surface groups without a length scale (no cooling law): {', '.join(missing)}")
    energy = sum(row["energy_per_brake"] for row in case.duty.energy_summary())
    print(
        f"duty: {len(case.duty.phases)} phases over {case.duty.duration / 3600.0:.2f} h, "
        f"{energy / 1e6:.2f} MJ per brake"
    )
    layout = Path(args.layout) if args.layout else Path(args.case).with_suffix(".layout.png")
    print(f"layout: {plot_layout(case.assembly, layout, model.grid)}")
    return 0


def _settings_from_file(path: Path, unit: str | None):
    from .report import ReportSettings
    from .resultread import read_resolved_inputs

    stored = read_resolved_inputs(path).get("report")
    settings = ReportSettings.from_mapping(stored) if stored else ReportSettings()
    if unit:
        settings = ReportSettings(**{**settings.__dict__, "unit": unit})
    return settings


def _cmd_report(args: argparse.Namespace) -> int:
    from .report import build_report, format_report
    from .resultread import read_result

    path = Path(args.results)
    result = read_result(path)
    settings = _settings_from_file(path, args.unit)
    print(format_report(build_report(result, settings), args.format), end="")
    return 0


def _cmd_plot(args: argparse.Namespace) -> int:
    from .plotting import plot_field
    from .resultread import read_result

    path = Path(args.results)
    result = read_result(path)
    out = Path(args.out) if args.out else path.resolve().parent
    if not out.is_dir():
        raise ResultFileError(f"plot folder {str(out)!r} does not exist")
    unit = args.unit or _settings_from_file(path, None).unit
    written = _write_plots(result, out, unit)
    for minutes in args.time or ():
        written.append(plot_field(result, out / f"field-{minutes:06.1f}min.png", minutes * 60.0, unit=unit))
    for p in written:
        print(p)
    return 0


def _cmd_fit(args: argparse.Namespace) -> int:
    from .case import load_case
    from .questions.sensor_trace import read_sensor_trace

    case = load_case(args.case)
    t, T = read_sensor_trace(args.trace)
    if args.sensor_time_constant_sd is not None or args.contact_conductance_sd is not None:
        return _fit_with_inputs(args, case, t, T)
    from .questions.inverse import estimate_energy

    model = case.build_model()
    estimate = estimate_energy(
        model,
        case.duty,
        case.assembly.surfaces,
        t,
        T,
        case.initial_temperature,
        sensor=args.sensor,
        raise_on_failure=False,
    )
    state = "converged" if estimate.converged else "NOT converged"
    print(
        f"energy per brake: {estimate.energy / 1e6:.3f} MJ +/- {estimate.standard_error / 1e6:.3f} MJ "
        f"(1 standard error; {state}; {estimate.n_runs} runs; residual rms {estimate.residual_rms:.2f} K)"
    )
    _print_fit_details(estimate, case)
    return 0 if estimate.converged else 1


def _print_fit_details(estimate, case) -> None:
    if estimate.message:
        print(estimate.message)
    predicted = estimate.predicted
    for name in (HEAT_SINK_MEAN, HEAT_SINK_MAX, *[p.name for p in case.fuse_plugs]):
        if name in predicted.readings or name in predicted.series:
            value, when = predicted.peak(name)
            print(f"  predicted {name:16s} peak {value - 273.15:7.1f} degC at {when / 60.0:6.1f} min")


def _fit_with_inputs(args: argparse.Namespace, case, t, T) -> int:
    from .questions.honest_energy import energy_with_input_uncertainty
    from .units import to_si

    tau_sd = None
    if args.sensor_time_constant_sd is not None:
        tau_sd = to_si(args.sensor_time_constant_sd, None, "time", "--sensor-time-constant-sd")
    honest = energy_with_input_uncertainty(case, t, T, args.sensor, tau_sd, args.contact_conductance_sd)
    estimate = honest.estimate
    state = "converged" if estimate.converged else "NOT converged"
    print(
        f"energy per brake: {estimate.energy / 1e6:.3f} MJ +/- {honest.standard_deviation / 1e6:.3f} MJ "
        f"(1 standard deviation, trace scatter and uncertain inputs; {state})"
    )
    print(f"  from the trace scatter: +/- {estimate.standard_error / 1e6:.3f} MJ")
    for part in honest.contributions:
        print(
            f"  from the {part.name}: +/- {part.standard_deviation / 1e6:.3f} MJ "
            f"(refits {part.energy_low / 1e6:.3f} and {part.energy_high / 1e6:.3f} MJ)"
        )
    _print_fit_details(estimate, case)
    return 0 if estimate.converged else 1


def _cmd_calibrate(args: argparse.Namespace) -> int:
    from .questions.calibrate import calibrate, fit_summary, write_calibration_outputs
    from .questions.calibration_file import load_calibration

    calibration = load_calibration(args.calibration)
    out = Path(args.out) if args.out else Path(args.calibration).with_suffix(".calibrated")
    if out.exists() and not out.is_dir():
        raise InputError(f"--out: {str(out)!r} is not a folder")
    if not args.quiet:
        print(
            f"heatstack: {calibration.title}: {len(calibration.runs)} runs, {len(calibration.parameters)} parameters, "
            f"{calibration.n_points} readings",
            file=sys.stderr,
        )
    run = calibrate(calibration)
    print(run.fit.message)
    print(fit_summary(run.fit, run.identifiability))
    print(run.identifiability.statement)
    for path in write_calibration_outputs(run, out):
        print(f"wrote: {path}")
    return 0 if run.fit.converged else 1


def _cmd_study(args: argparse.Namespace) -> int:
    from .studies import LocalExecutor, load_study, run_study, sensitivity, study_report
    from .studies.plots import plot_margin_histogram, plot_tornado

    study = load_study(args.study)
    store = Path(args.store) if args.store else Path(args.study).with_suffix(".store")
    executor = args.scheduler or LocalExecutor(workers=args.workers)
    try:
        run = run_study(
            study,
            store,
            executor,
            progress=None if not args.quiet else False,
            retry_failed=args.retry_failed,
            timeout=args.timeout,
        )
    finally:
        if not isinstance(executor, str):
            executor.close()
    print(
        f"study: {run.cases_run} cases run, {run.cases_skipped} already in the store, "
        f"{run.cases_failed} failed, {run.seconds:.1f} s"
    )
    report = study_report(run.table, temperature_unit=args.unit)
    print(report)
    if args.report:
        text = report
        write_file_atomically(args.report, lambda temp: temp.write_text(text, encoding="utf-8"), "report file")
    plots = Path(args.plots) if args.plots else store
    if "plug_margin_min" in run.table.columns:
        print(f"plot: {plot_margin_histogram(run.table, plots / 'margin-histogram.png')}")
        try:
            ranking = sensitivity(run.table)
        except InputError as exc:  # too few finished cases for a ranking: say so, keep the rest
            print(f"no sensitivity tornado: {exc}")
        else:
            print(f"plot: {plot_tornado(ranking, plots / 'sensitivity-tornado.png')}")
    return 0


def _cmd_materials(args: argparse.Namespace) -> int:
    from .material_files import available_materials, load_material

    for name in available_materials():
        material = load_material(name)
        low, high = material.specific_heat.temperature_range
        kind = "anisotropic" if material.anisotropic else "isotropic"
        print(f"{name:32s} {material.density:7.0f} kg/m^3  {low:5.0f}-{high:5.0f} K  {kind}")
    return 0


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="heatstack",
        description="Transient heat conduction in an aircraft wheel and brake after a braking duty. "
        "Not certified data: defer to the manufacturer's maintenance data.",
    )
    parser.add_argument("--version", action="version", version=f"heatstack {__version__}")
    verbs = parser.add_subparsers(dest="verb", required=True, metavar="VERB")
    units = ("degC", "degF", "K")

    run = verbs.add_parser("run", help="run a case file, write the results file and plots, print the report")
    run.add_argument("case", help="case file (TOML)")
    run.add_argument("--out", help="folder for results and plots (default: the case file's folder)")
    run.add_argument("--no-plots", action="store_true", help="write no plots")
    run.add_argument("--unit", choices=units, help="temperature unit of the report and plots")
    run.add_argument("--quiet", action="store_true", help="no progress output")
    run.set_defaults(func=_cmd_run)

    demo = verbs.add_parser("demo", help="run the invented demonstration case")
    demo.add_argument("--out", default="heatstack-demo", help="folder for results and plots (default: %(default)s)")
    demo.add_argument("--unit", choices=units, help="temperature unit of the report and plots")
    demo.add_argument("--quiet", action="store_true", help="no progress output")
    demo.set_defaults(func=_cmd_demo)

    check = verbs.add_parser("check", help="validate a case, list its parts and cells, draw its layout")
    check.add_argument("case")
    check.add_argument("--layout", help="PNG or SVG file for the r-z layout (default: CASE.layout.png)")
    check.set_defaults(func=_cmd_check)

    report = verbs.add_parser("report", help="report on a results file")
    report.add_argument("results", help="results file (.h5)")
    report.add_argument("--format", choices=("text", "markdown", "json"), default="text")
    report.add_argument("--unit", choices=units)
    report.set_defaults(func=_cmd_report)

    plot = verbs.add_parser("plot", help="plot a results file")
    plot.add_argument("results")
    plot.add_argument("--out", help="folder for the plots (default: the results file's folder)")
    plot.add_argument("--time", type=float, action="append", help="also map the field at this time [min]")
    plot.add_argument("--unit", choices=units)
    plot.set_defaults(func=_cmd_plot)

    fit = verbs.add_parser("fit", help="estimate the braking energy from a recorded sensor trace")
    fit.add_argument("case", help="case file whose duty the trace followed")
    fit.add_argument("trace", help="CSV: time_<unit>,temperature_<unit>")
    fit.add_argument("--sensor", default="sensor", help="probe the trace was read from (default: %(default)s)")
    fit.add_argument("--sensor-time-constant-sd", help="treat the sensor time constant as uncertain, e.g. '5 s' (1 sd)")
    fit.add_argument(
        "--contact-conductance-sd",
        type=float,
        help="treat every contact conductance as uncertain by this relative 1 sd, e.g. 0.3",
    )
    fit.set_defaults(func=_cmd_fit)

    calibrate = verbs.add_parser("calibrate", help="fit a case's uncertain parameters to measured test traces")
    calibrate.add_argument("calibration", help="calibration file (TOML: base case, runs with traces, parameters)")
    calibrate.add_argument(
        "--out", help="folder for the calibrated case, reports and figure (default: FILE.calibrated)"
    )
    calibrate.add_argument("--quiet", action="store_true")
    calibrate.set_defaults(func=_cmd_calibrate)

    study = verbs.add_parser("study", help="run or resume a sweep or Monte Carlo study")
    study.add_argument("study", help="study file (TOML with a [study] table and its base_case)")
    study.add_argument("--store", help="store folder (default: STUDY.store); a rerun resumes it")
    place = study.add_mutually_exclusive_group()
    place.add_argument("--workers", type=int, default=None, help="local worker processes (default: all cores)")
    place.add_argument("--scheduler", help="address of a Dask scheduler, e.g. tcp://10.0.0.5:8786")
    study.add_argument("--timeout", type=float, default=10.0, help="seconds to reach the scheduler")
    study.add_argument("--retry-failed", action="store_true", help="run again the cases recorded as failed")
    study.add_argument("--report", help="also write the study report (Markdown) to this file")
    study.add_argument("--plots", help="folder for the margin histogram and tornado (default: the store)")
    study.add_argument("--unit", choices=units, default="degC")
    study.add_argument("--quiet", action="store_true")
    study.set_defaults(func=_cmd_study)

    materials = verbs.add_parser("materials", help="list the shipped materials")
    materials.set_defaults(func=_cmd_materials)
    return parser


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Soft problems as one line each, without source lines."""
    print(f"heatstack: warning: {message}", file=sys.stderr)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    args = _parser().parse_args(argv)
    warnings.showwarning = _show_warning
    try:
        return int(args.func(args))
    except (InputError, ResultFileError) as exc:
        print(f"heatstack: error: {exc}", file=sys.stderr)
        return 2
    except HeatstackError as exc:
        print(f"heatstack: failed: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("heatstack: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped (e.g. head)
        sys.stdout = open(os.devnull, "w")  # noqa: SIM115 - keep Python's exit flush quiet
        return 0


if __name__ == "__main__":
    sys.exit(main())
