"""The verbs that run or check a case: ``run``, ``demo`` and ``check``, and the figures a run writes.

A run writes its results file, figures and report (HTML and Markdown) into its output folder and prints
the report; ``check`` validates a case, lists its parts, cells and duty, and draws its layout.
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings
from collections.abc import Callable
from pathlib import Path

from .cli_runplan import PlannedRun, make_folder, planned_runs
from .cli_shipped import demo_case_path
from .errors import InputError
from .geometry import HEAT_SINK_MEAN
from .report import CAUTION

__all__ = ["write_plots", "cmd_run", "cmd_demo", "cmd_check"]


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


def write_plots(result, folder: Path, name: str, settings) -> list[Path]:
    """Every figure of a run into ``folder``, each file name starting with ``name`` (the case's).

    Parameters
    ----------
    result : Result
        The run.
    folder : Path
        Folder the figures go into.
    name : str
        Start of every file name (the case file's stem).
    settings : ReportSettings
        The report settings: the unit, the limit lines [K] and the fuse plugs (drawn as their own
        temperature).

    Returns
    -------
    list of Path
        The figures written: histories, sensor offset and why the gauge lags, then the field at each
        stored snapshot between the first and the last.
    """
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
        written = write_plots(result, out, case_path.stem, settings)
    report = build_report(result, settings)
    html_path, md_path = write_report_files(report, out, written, case.text, report_name)
    print(format_report(report, "text"))
    print(f"results: {target}")
    print(f"report:  {html_path}")
    print(f"report:  {md_path}")
    for path in written:
        print(f"plot:    {path}")
    return 0


def cmd_run(args: argparse.Namespace) -> int:
    """The ``run`` verb: plan every case file, refuse foreign outputs, then run each and write its files.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (case files, output folder, plots, unit, force).

    Returns
    -------
    int
        0 when every case ran.
    """
    out = make_folder(Path(args.out), "--out folder") if args.out else None
    planned = planned_runs([Path(c) for c in args.case], out)
    folders = [plan.folder.resolve() for plan in planned]
    names = [f"{p.case_path.stem}-report" if folders.count(p.folder.resolve()) > 1 else "report" for p in planned]
    plots = not args.no_plots
    for plan, report_name in zip(planned, names, strict=True):  # several cases in one folder: reports named
        _refuse_foreign_outputs(plan, plots, report_name, args.force)
    for plan, report_name in zip(planned, names, strict=True):
        _run_case_file(plan, plots, args.unit, args.quiet, report_name, args.force)
    return 0


def cmd_demo(args: argparse.Namespace) -> int:
    """The ``demo`` verb: run the invented demonstration case into a folder.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (output folder, unit, force).

    Returns
    -------
    int
        0 when the demo ran.
    """
    out = make_folder(Path(args.out), "--out folder")
    print(
        "heatstack demo: an INVENTED rejected take-off on an invented wheel and brake, then parked cooling.",
        file=sys.stderr,
    )
    (plan,) = planned_runs([demo_case_path()], out)
    _refuse_foreign_outputs(plan, True, "report", args.force)
    return _run_case_file(plan, True, args.unit, args.quiet, "report", args.force)


def cmd_check(args: argparse.Namespace) -> int:
    """The ``check`` verb: validate a case, list its parts, cells and duty, and draw its layout.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (case file, layout file or output folder, force).

    Returns
    -------
    int
        0 when the case is valid.

    Raises
    ------
    InputError
        If the case is not valid, or a surface group has no length scale.
    """
    from .case import load_case
    from .case_guards import heat_sink_overload
    from .errors import HeatstackWarning
    from .own_files import check_replaceable, replacing_own_files_only
    from .plotting import plot_layout

    case = load_case(args.case)
    if args.layout:
        layout = Path(args.layout)
    else:
        folder = make_folder(Path(args.out), "--out folder") if args.out else Path(args.case).resolve().parent
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
