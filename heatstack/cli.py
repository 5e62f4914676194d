"""The ``heatstack`` command line.

Verbs: ``run`` a case, ``check`` a case (parts, cells, layout drawing), ``report`` on a
results file, ``plot`` a results file, ``export`` a results file as CSV, ``fit`` the braking
energy to a recorded sensor trace, ``calibrate`` a case to measured test traces, run or
resume a ``study``, list ``materials``, run the ``demo``; from a results
file's final state: ``cool`` (time to cool below a temperature), ``what-if`` (peaks if a
stop started now), ``wait`` (the shortest safe wait before a departure); ``ramp`` finds
that wait from gauge readings after a known duty; ``day`` runs a day of operations.

Exit codes: 0 success, 2 bad input (a heatstack input error), 1 internal error. User
errors print one clear line, never a traceback.
"""

from __future__ import annotations

import argparse
import logging
import os
import shutil
import sys
import warnings
from collections.abc import Callable, Sequence
from importlib import resources
from pathlib import Path

from . import __version__
from .cli_errors import catch_termination, exit_code_and_line
from .cli_fitting import cmd_calibrate, cmd_fit
from .cli_runplan import PlannedRun, planned_runs
from .cli_study import cmd_study
from .cli_turnaround import add_turnaround_verbs
from .errors import InputError, ResultFileError
from .geometry import HEAT_SINK_MEAN
from .report import CAUTION

__all__ = ["main", "demo_case_path"]


def _examples_folder() -> Path:
    """The shipped examples: the installed ``heatstack._examples``, else the source tree's ``examples``."""
    shipped = Path(str(resources.files("heatstack"))) / "_examples"
    if (shipped / "demo_rto.toml").is_file():
        return shipped
    return Path(__file__).resolve().parents[1] / "examples"


def demo_case_path() -> Path:
    """The invented demonstration case shipped with heatstack.

    Returns
    -------
    Path
        ``demo_rto.toml`` in the examples folder.
    """
    return _examples_folder() / "demo_rto.toml"


#: ``heatstack example NAME``: the files each shipped example copies (a study needs its base case).
EXAMPLES = {
    "demo": ("demo_rto.toml",),
    "study": ("demo_study.toml", "demo_rto.toml"),
    "api": ("turnaround.py",),
    "day": ("operations.toml", "flights.csv", "demo_rto.toml"),
}


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


def _figure_thresholds(settings) -> list:
    """The report's temperature limits and fuse-plug release temperatures, as lines for the figures."""
    from .plotting import Threshold

    plugs = {plug.name: plug.release_temperature for plug in settings.fuse_plugs}
    lines = [Threshold(name, float(t), "release") for name, t in plugs.items()]
    lines += [Threshold(name, float(t)) for name, t in settings.limits.items() if name not in plugs]
    return lines


def _write_plots(result, folder: Path, name: str, settings) -> list[Path]:
    """Every figure of a run into ``folder``, each file name starting with ``name`` (the case's); the
    report ``settings`` give the unit, the limit lines and the fuse plugs (drawn as their own temperature)."""
    from .plotting import plot_field, plot_histories, plot_sensor_offset, plot_why_the_gauge_lags

    unit, lines, plugs = settings.unit, _figure_thresholds(settings), settings.fuse_plugs
    written = [plot_histories(result, folder / f"{name}-histories.png", unit=unit, thresholds=lines, plugs=plugs)]
    if "sensor" in result.readings and HEAT_SINK_MEAN in result.series:
        written.append(plot_sensor_offset(result, folder / f"{name}-sensor-offset.png", unit=unit))
        target = folder / f"{name}-why-the-gauge-lags.png"
        written.append(plot_why_the_gauge_lags(result, target, unit=unit, thresholds=lines, plugs=plugs))
    for t in result.snapshot_times[1:-1]:
        written.append(plot_field(result, folder / f"{name}-field-{t / 60.0:06.1f}min.png", float(t), unit=unit))
    return written


def _make_folder(folder: Path, what: str) -> Path:
    """Create ``folder`` (and its parents) for ``what``; ResultFileError naming it if that cannot be done."""
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except (FileExistsError, NotADirectoryError) as exc:
        raise ResultFileError(f"{what} {str(folder)!r} is a file, not a folder") from exc
    except OSError as exc:
        raise ResultFileError(f"{what} {str(folder)!r} cannot be created: {exc.strerror}") from exc
    return folder


def _refuse_foreign_outputs(plan: PlannedRun, plots: bool, report_name: str, force: bool) -> None:
    """Before any run: refuse now, not after the solve, a results file reached through a link out of the
    output folder, and (without ``force``) replacing a results file, report or figure heatstack did not write."""
    from .own_files import check_replaceable

    case_path, case, target, out = plan.case_path, plan.case, plan.target, plan.folder
    if target.parent != out.absolute() and Path(os.path.realpath(target.parent)) != Path(os.path.realpath(out)):
        raise InputError(
            f"output.file: {case.output.file!r} is a link to a file outside the output folder {str(out)!r}; "
            "heatstack writes only inside it"
        )
    if force:
        return
    check_replaceable(target, "results file")
    for name in (f"{report_name}.html", f"{report_name}.md"):
        check_replaceable(out / name, "report file")
    if plots and case.output.plots:
        for suffix in ("histories", "sensor-offset", "why-the-gauge-lags"):
            check_replaceable(out / f"{case_path.stem}-{suffix}.png", "figure file")


def _run_case_file(
    plan: PlannedRun, plots: bool, unit: str | None, quiet: bool, report_name: str = "report", force: bool = False
) -> int:
    """Run one planned case: results file, figures, ``report_name``.html and .md, the report printed."""
    from .own_files import replacing_own_files_only

    with replacing_own_files_only(force):
        return _run_and_write(plan, plots, unit, quiet, report_name)


def _run_and_write(plan: PlannedRun, plots: bool, unit: str | None, quiet: bool, report_name: str) -> int:
    from .case import run_case
    from .report import build_report, format_report
    from .report_html import write_report_files
    from .resultfile import write_result

    case_path, case, target, out = plan.case_path, plan.case, plan.target, plan.folder
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
        resolved_inputs={"case": case.resolved(), "report": settings.to_mapping(), "case_file": case_path.name},
    )
    written = []
    if plots and case.output.plots:
        written = _write_plots(result, out, case_path.stem, settings)
    report = build_report(result, settings)
    html_path, md_path = write_report_files(report, out, written, case.text, report_name)
    print(format_report(report, "text"))
    print(f"results: {target}")
    print(f"report:  {html_path}")
    print(f"report:  {md_path}")
    for path in written:
        print(f"plot:    {path}")
    return 0


def _cmd_run(args: argparse.Namespace) -> int:
    out = _make_folder(Path(args.out), "--out folder") if args.out else None
    planned = planned_runs([Path(c) for c in args.case], out)
    folders = [plan.folder.resolve() for plan in planned]
    names = [f"{p.case_path.stem}-report" if folders.count(p.folder.resolve()) > 1 else "report" for p in planned]
    plots = not args.no_plots
    for plan, report_name in zip(planned, names, strict=True):  # several cases in one folder: reports named
        _refuse_foreign_outputs(plan, plots, report_name, args.force)
    for plan, report_name in zip(planned, names, strict=True):
        _run_case_file(plan, plots, args.unit, args.quiet, report_name, args.force)
    return 0


def _cmd_demo(args: argparse.Namespace) -> int:
    out = _make_folder(Path(args.out), "--out folder")
    print(
        "heatstack demo: an INVENTED rejected take-off on an invented wheel and brake, then parked cooling.",
        file=sys.stderr,
    )
    (plan,) = planned_runs([demo_case_path()], out)
    _refuse_foreign_outputs(plan, True, "report", args.force)
    return _run_case_file(plan, True, args.unit, args.quiet, "report", args.force)


def _cmd_check(args: argparse.Namespace) -> int:
    from .case import load_case
    from .case_guards import heat_sink_overload
    from .errors import HeatstackWarning
    from .own_files import check_replaceable, replacing_own_files_only
    from .plotting import plot_layout

    case = load_case(args.case)
    if args.layout:
        layout = Path(args.layout)
    else:
        folder = _make_folder(Path(args.out), "--out folder") if args.out else Path(args.case).resolve().parent
        layout = folder / Path(args.case).with_suffix(".layout.png").name
    if not args.force:
        check_replaceable(layout, "layout figure")
    model = case.build_model()
    print(f"{case.title}")
    print(CAUTION)
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
    for phase in case.duty.phases:
        for event in phase.events:
            print(f"  {phase.name} / {event.name}: {event.energy_per_brake / 1e6:.2f} MJ into the modelled brake")
            if event.ground_roll is not None:
                _print_ground_roll(event.ground_roll)
    if model.heat_sink_mass is not None:
        print(f"heat-sink mass: {model.heat_sink_mass:.2f} kg")
    if isinstance(case.initial_temperature, float) and (
        overload := heat_sink_overload(model.network, case.initial_temperature, energy)
    ):
        warnings.warn(overload, HeatstackWarning, stacklevel=1)
    with replacing_own_files_only(args.force):
        print(f"layout: {plot_layout(case.assembly, layout, model.grid)}")
    return 0


def _print_ground_roll(roll) -> None:
    """The stop's distance, time, energy accounts and energy per brake."""
    acc = roll.accounts
    print(
        f"    stop from {roll.brake_on_speed / 0.514444:.1f} kt ground speed: {roll.stopping_distance:.0f} m in "
        f"{roll.stopping_time:.1f} s"
    )
    rows = (
        ("kinetic energy removed", acc.kinetic_energy_removed),
        ("brakes", acc.brakes),
        ("reverse thrust", acc.reverse_thrust),
        ("aerodynamic drag", acc.drag),
        ("rolling resistance", acc.rolling_resistance),
        ("potential energy gained", acc.potential_energy),
        ("forward thrust work (-)", acc.forward_thrust),
    )
    for label, value in rows:
        print(f"    {label:26s} {value / 1e6:10.3f} MJ")
    print(f"    {'closure':26s} {acc.closure:10.3g} J")
    shares = ", ".join(f"{e / 1e6:.2f}" for e in roll.energy_per_brake)
    print(f"    energy per brake [MJ]: {shares}")


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
    from .own_files import replacing_own_files_only
    from .resultread import read_result

    path = Path(args.results)
    result = read_result(path)
    out = Path(args.out) if args.out else path.resolve().parent
    if not out.is_dir():
        raise ResultFileError(f"plot folder {str(out)!r} does not exist")
    settings = _settings_from_file(path, args.unit)
    with replacing_own_files_only(args.force):
        fields = _plot_field_times(result, out, path.stem, settings.unit, args.time or ())
        written = _write_plots(result, out, path.stem, settings) + fields
    for p in written:
        print(p)
    return 0


def _plot_field_times(result, out: Path, name: str, unit: str, minutes: Sequence[float]) -> list[Path]:
    """Map the field at the snapshot nearest each requested time [min]; the file is named by the snapshot drawn."""
    from .plotting import plot_field, snapshot_index

    written = []
    for requested in minutes:
        try:
            shown = float(result.snapshot_times[snapshot_index(result, requested * 60.0)])
        except InputError as exc:
            raise InputError(f"--time {requested:g}: {exc}") from exc
        target = out / f"{name}-field-{shown / 60.0:06.1f}min.png"
        if abs(shown - requested * 60.0) > 0.5:
            print(
                f"--time {requested:g} min: drawing the nearest stored snapshot, {shown / 60.0:.1f} min",
                file=sys.stderr,
            )
        written.append(plot_field(result, target, requested * 60.0, unit=unit))
    return written


def _cmd_export(args: argparse.Namespace) -> int:
    from .report import CAUTION
    from .resultexport import export_csv
    from .resultread import read_result

    path = Path(args.results)
    result = read_result(path)
    unit = args.unit or _settings_from_file(path, None).unit
    written = export_csv(result, Path(args.csv), source=str(path), temperature_unit=unit, caution=CAUTION)
    print(CAUTION)
    for file in written:
        print(f"csv:     {file}")
    return 0


def _cmd_materials(args: argparse.Namespace) -> int:
    from .material_files import available_materials, load_material

    print(CAUTION)
    if args.name:
        _show_material(load_material(args.name))
        return 0
    for name in available_materials():
        material = load_material(name)
        low, high = material.specific_heat.temperature_range
        kind = "anisotropic" if material.anisotropic else "isotropic"
        print(f"{name:32s} {material.density:7.0f} kg/m^3  {low:5.0f}-{high:5.0f} K  {kind}")
    return 0


def _show_material(material) -> None:
    """Print one material: its description, density and every property table with its source."""
    import tomllib

    print(f"{material.name}  ({material.source_file})")
    if material.description:
        print(material.description.strip())
    density_source = ""
    if material.source_file and Path(material.source_file).is_file():
        with open(material.source_file, "rb") as handle:
            density_source = tomllib.load(handle).get("density", {}).get("source", "")
    print(f"\ndensity: {material.density:.0f} kg/m^3")
    if density_source:
        print(f"  source: {' '.join(density_source.split())}")
    tables = (
        ("specific heat", "J/(kg*K)", material.specific_heat),
        ("conductivity, in plane", "W/(m*K)", material.conductivity_in_plane),
        ("conductivity, through thickness", "W/(m*K)", material.conductivity_through_thickness),
        ("emissivity", "-", material.emissivity),
    )
    for title, unit, table in tables:
        print(f"\n{title} [{unit}], outside the table: {table.extrapolation}")
        print(f"  {'T [K]':>8s}  {'T [degC]':>8s}  {'value':>10s}")
        for temperature, value in zip(table.temperature, table.value, strict=True):
            print(f"  {temperature:8.1f}  {temperature - 273.15:8.1f}  {value:10.4g}")
        print(f"  source: {' '.join(table.source.split()) or '(none given)'}")


def _cmd_example(args: argparse.Namespace) -> int:
    if args.name not in EXAMPLES:
        raise InputError(f"example {args.name!r} is not one of: {', '.join(EXAMPLES)}")
    folder = _make_folder(Path(args.dir), "example folder")
    source = _examples_folder()
    targets = [(source / name, folder / name) for name in EXAMPLES[args.name]]
    existing = [str(target) for _, target in targets if target.exists()]
    if existing:
        raise ResultFileError(f"example {args.name!r}: will not overwrite {', '.join(existing)}")
    for origin, target in targets:
        shutil.copyfile(origin, target)
        print(f"example: {target}")
    return 0


_FORCE_HELP = "replace existing files that heatstack did not write (by default they are left alone)"

_EXAMPLES_HELP = {
    "run": "example: heatstack run my_case.toml --out results/",
    "demo": "example: heatstack demo --out heatstack-demo",
    "check": "example: heatstack check my_case.toml --layout layout.svg",
    "report": "example: heatstack report results/results.h5 --format markdown",
    "plot": "example: heatstack plot results/results.h5 --time 20",
    "fit": "example: heatstack fit my_case.toml recorded_trace.csv --sensor sensor",
    "study": "example: heatstack study demo_study.toml --workers 2 --report study.md",
    "materials": "example: heatstack materials carbon-carbon",
    "example": "example: heatstack example study my-study/   (names: demo, study, api, day)",
    "export": "example: heatstack export results/results.h5 --csv results/csv",
    "calibrate": "example: heatstack calibrate dyno_campaign.toml --out calibrated/",
}


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="heatstack",
        description="Transient heat conduction in an aircraft wheel and brake after a braking duty. "
        "Not certified data: defer to the manufacturer's maintenance data.",
    )
    parser.add_argument("--version", action="version", version=f"heatstack {__version__}")
    verbs = parser.add_subparsers(dest="verb", required=True, metavar="VERB")
    units = ("degC", "degF", "K")
    loudness = argparse.ArgumentParser(add_help=False)
    level = loudness.add_mutually_exclusive_group()
    level.add_argument("-v", "--verbose", action="store_true", help="also log progress detail")
    level.add_argument("-q", "--quiet", action="store_true", help="no progress output, errors only")

    def verb(name: str, summary: str) -> argparse.ArgumentParser:
        return verbs.add_parser(
            name,
            help=summary,
            description=summary,
            epilog=_EXAMPLES_HELP[name],
            parents=[loudness],
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )

    _add_run_verbs(verb, units)
    _add_result_verbs(verb, units)
    _add_study_verbs(verb, units)
    _add_shipped_verbs(verb)
    add_turnaround_verbs(verbs, loudness)
    return parser


def _add_run_verbs(verb: Callable[[str, str], argparse.ArgumentParser], units: tuple[str, ...]) -> None:
    """The verbs that run or check a case: run, demo, check."""
    run = verb("run", "run case files, write their results files and plots, print the reports")
    run.add_argument(
        "case",
        nargs="+",
        help="case file(s) (TOML); several cases into one folder name their reports CASE-report.html",
    )
    run.add_argument("--out", help="folder for results and plots (default: the case file's folder)")
    run.add_argument("--no-plots", action="store_true", help="write no plots")
    run.add_argument("--unit", choices=units, help="temperature unit of the report and plots")
    run.add_argument("--force", action="store_true", help=_FORCE_HELP)
    run.set_defaults(func=_cmd_run)

    demo = verb("demo", "run the invented demonstration case")
    demo.add_argument("--out", default="heatstack-demo", help="folder for results and plots (default: %(default)s)")
    demo.add_argument("--unit", choices=units, help="temperature unit of the report and plots")
    demo.add_argument("--force", action="store_true", help=_FORCE_HELP)
    demo.set_defaults(func=_cmd_demo)

    check = verb("check", "validate a case, list its parts and cells, draw its layout")
    check.add_argument("case")
    check.add_argument("--layout", help="PNG or SVG file for the r-z layout (default: CASE.layout.png in --out)")
    check.add_argument("--out", help="folder for the layout figure (default: the case file's folder)")
    check.add_argument("--force", action="store_true", help=_FORCE_HELP)
    check.set_defaults(func=_cmd_check)


def _add_result_verbs(verb: Callable[[str, str], argparse.ArgumentParser], units: tuple[str, ...]) -> None:
    """The verbs that read a results file: report, plot, export."""
    report = verb("report", "report on a results file")
    report.add_argument("results", help="results file (.h5)")
    report.add_argument("--format", choices=("text", "markdown", "json"), default="text")
    report.add_argument("--unit", choices=units)
    report.set_defaults(func=_cmd_report)

    plot = verb("plot", "plot a results file")
    plot.add_argument("results")
    plot.add_argument("--out", help="folder for the plots (default: the results file's folder)")
    plot.add_argument(
        "--time",
        type=float,
        action="append",
        help="map the field at the stored snapshot nearest this time [min]; the file is named by that snapshot",
    )
    plot.add_argument("--unit", choices=units)
    plot.add_argument("--force", action="store_true", help=_FORCE_HELP)
    plot.set_defaults(func=_cmd_plot)

    export = verb("export", "write the histories and the energy ledger of a results file as CSV (units in the header)")
    export.add_argument("results", help="results file (.h5)")
    export.add_argument("--csv", required=True, metavar="DIR", help="folder for the CSV files (created if missing)")
    export.add_argument("--unit", choices=units, help="temperature unit of the CSV (default: the report's)")
    export.set_defaults(func=_cmd_export)


def _add_study_verbs(verb: Callable[[str, str], argparse.ArgumentParser], units: tuple[str, ...]) -> None:
    """The verbs that run a fit or a study: fit, study."""
    fit = verb("fit", "estimate the braking energy from a recorded sensor trace")
    fit.add_argument("case", help="case file whose duty the trace followed")
    fit.add_argument("trace", help="CSV: time_<unit>,temperature_<unit>")
    fit.add_argument("--sensor", default="sensor", help="probe the trace was read from (default: %(default)s)")
    fit.add_argument("--sensor-time-constant-sd", help="treat the sensor time constant as uncertain, e.g. '5 s' (1 sd)")
    fit.add_argument(
        "--contact-conductance-sd",
        type=float,
        help="treat every contact conductance as uncertain by this relative 1 sd, e.g. 0.3",
    )
    fit.set_defaults(func=cmd_fit)

    calibrate = verb("calibrate", "fit a case's uncertain parameters to measured test traces")
    calibrate.add_argument("calibration", help="calibration file (TOML: base case, runs with traces, parameters)")
    calibrate.add_argument(
        "--out", help="folder for the calibrated case, reports and figure (default: FILE.calibrated)"
    )
    calibrate.set_defaults(func=cmd_calibrate)

    study = verb("study", "run or resume a sweep or Monte Carlo study")
    study.add_argument("study", help="study file (TOML with a [study] table and its base_case)")
    study.add_argument("--store", help="store folder (default: STUDY.store); a rerun resumes it")
    place = study.add_mutually_exclusive_group()
    place.add_argument("--workers", type=int, default=None, help="local worker processes (default: all cores)")
    place.add_argument("--scheduler", help="address of a Dask scheduler, e.g. tcp://10.0.0.5:8786")
    study.add_argument(
        "--timeout",
        type=float,
        default=10.0,
        help="seconds to reach the Dask scheduler; a study stops after this long without a worker or scheduler",
    )
    study.add_argument("--retry-failed", action="store_true", help="run again the cases recorded as failed")
    study.add_argument("--report", help="also write the study report (Markdown) to this file")
    study.add_argument("--plots", help="folder for the margin histogram and tornado (default: the store)")
    study.add_argument("--unit", choices=units, default="degC")
    study.add_argument("--force", action="store_true", help=_FORCE_HELP)
    study.add_argument("--check", action="store_true", help="read and plan the study and its base case, run nothing")
    study.set_defaults(func=cmd_study)


def _add_shipped_verbs(verb: Callable[[str, str], argparse.ArgumentParser]) -> None:
    """The verbs that show or copy shipped data: materials, example."""
    materials = verb("materials", "list the shipped materials")
    materials.add_argument("name", nargs="?", help="show this material's tables and their sources")
    materials.set_defaults(func=_cmd_materials)

    example = verb("example", "copy a shipped example (demo, study, api) into a folder, never overwriting")
    example.add_argument("name", help=f"one of: {', '.join(EXAMPLES)}")
    example.add_argument("dir", nargs="?", default=".", help="folder to copy into (default: the current folder)")
    example.set_defaults(func=_cmd_example)


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Soft problems as one line each, without source lines."""
    print(f"heatstack: warning: {message}", file=sys.stderr)


def _set_logging(verbose: bool, quiet: bool) -> None:
    """Log records of the ``heatstack`` loggers to stderr: INFO with --verbose, ERROR with --quiet, else WARNING."""
    logger = logging.getLogger("heatstack")
    logger.setLevel(logging.INFO if verbose else logging.ERROR if quiet else logging.WARNING)
    if not any(getattr(h, "heatstack_cli", False) for h in logger.handlers):
        handler = logging.StreamHandler(sys.stderr)
        handler.setFormatter(logging.Formatter("heatstack: %(message)s"))
        handler.heatstack_cli = True
        logger.addHandler(handler)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code.

    Every exception ends as one line on stderr and an exit code: 2 for bad input (a
    heatstack input error, a file that cannot be used, an input nested too deeply or a
    number too large), 1 for a failed computation (a heatstack error, memory, the linear
    solver) and for an unexpected internal error, whose traceback is saved to a file
    named in the line; 130 when interrupted.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments without the program name; ``sys.argv[1:]`` by default.

    Returns
    -------
    int
        The verb's exit code: 0 on success (and when the output pipe closed), 2 for bad input,
        1 for a failed computation or an internal error, 130 when interrupted.
    """
    args = _parser().parse_args(argv)
    _set_logging(args.verbose, args.quiet)
    warnings.showwarning = _show_warning
    restore_signals = catch_termination()
    try:
        return int(args.func(args))
    except KeyboardInterrupt:
        print("heatstack: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped (e.g. head)
        sys.stdout = open(os.devnull, "w")  # noqa: SIM115 - keep Python's exit flush quiet
        return 0
    except Exception as exc:  # noqa: BLE001 - the one place every failure becomes a line and a code
        code, line = exit_code_and_line(exc)
        print(line, file=sys.stderr)
        return code
    finally:
        restore_signals()


if __name__ == "__main__":
    sys.exit(main())
