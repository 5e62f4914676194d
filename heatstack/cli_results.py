"""The verbs that read a results file: ``report``, ``plot`` and ``export``.

Each reads the report settings stored in the results file (unit, limits, fuse plugs), so a report or a
figure drawn later says what the run's own report said.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from pathlib import Path

from .cli_run import write_plots
from .errors import InputError, ResultFileError

__all__ = ["cmd_report", "cmd_plot", "cmd_export"]


def _settings_from_file(path: Path, unit: str | None):
    from .report_settings import ReportSettings
    from .resultread import read_resolved_inputs

    stored = read_resolved_inputs(path).get("report")
    settings = ReportSettings.from_mapping(stored) if stored else ReportSettings()
    if unit:
        settings = ReportSettings(**{**settings.__dict__, "unit": unit})
    return settings


def cmd_report(args: argparse.Namespace) -> int:
    """The ``report`` verb: print the report on a results file as text, Markdown or JSON.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (results file, format, unit).

    Returns
    -------
    int
        0 when the report was printed.
    """
    from .report import build_report, format_report
    from .resultread import read_result

    path = Path(args.results)
    result = read_result(path)
    settings = _settings_from_file(path, args.unit)
    print(format_report(build_report(result, settings), args.format), end="")
    return 0


def cmd_plot(args: argparse.Namespace) -> int:
    """The ``plot`` verb: draw the figures of a results file, and the field at each requested time.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (results file, output folder, times [min], unit, force).

    Returns
    -------
    int
        0 when every figure was written.

    Raises
    ------
    ResultFileError
        If the output folder does not exist.
    """
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
        written = write_plots(result, out, path.stem, settings) + fields
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


def cmd_export(args: argparse.Namespace) -> int:
    """The ``export`` verb: write the histories and the energy ledger of a results file as CSV.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (results file, CSV folder, unit).

    Returns
    -------
    int
        0 when the files were written.
    """
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
