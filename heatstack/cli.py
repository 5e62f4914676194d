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
import sys
import warnings
from collections.abc import Callable, Sequence

from . import __version__
from .cli_errors import catch_termination, exit_code_and_line
from .cli_fitting import cmd_calibrate, cmd_fit
from .cli_results import cmd_export, cmd_plot, cmd_report
from .cli_run import cmd_check, cmd_demo, cmd_run
from .cli_shipped import EXAMPLES, cmd_example, cmd_materials
from .cli_study import cmd_study
from .cli_turnaround import add_turnaround_verbs

__all__ = ["main"]


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
    "example": "example: heatstack example study my-study/   (names: demo, study, api, day, calibration)",
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
    run.set_defaults(func=cmd_run)

    demo = verb("demo", "run the invented demonstration case")
    demo.add_argument("--out", default="heatstack-demo", help="folder for results and plots (default: %(default)s)")
    demo.add_argument("--unit", choices=units, help="temperature unit of the report and plots")
    demo.add_argument("--force", action="store_true", help=_FORCE_HELP)
    demo.set_defaults(func=cmd_demo)

    check = verb("check", "validate a case, list its parts and cells, draw its layout")
    check.add_argument("case")
    check.add_argument("--layout", help="PNG or SVG file for the r-z layout (default: CASE.layout.png in --out)")
    check.add_argument("--out", help="folder for the layout figure (default: the case file's folder)")
    check.add_argument("--force", action="store_true", help=_FORCE_HELP)
    check.set_defaults(func=cmd_check)


def _add_result_verbs(verb: Callable[[str, str], argparse.ArgumentParser], units: tuple[str, ...]) -> None:
    """The verbs that read a results file: report, plot, export."""
    report = verb("report", "report on a results file")
    report.add_argument("results", help="results file (.h5)")
    report.add_argument("--format", choices=("text", "markdown", "json"), default="text")
    report.add_argument("--unit", choices=units)
    report.set_defaults(func=cmd_report)

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
    plot.set_defaults(func=cmd_plot)

    export = verb("export", "write the histories and the energy ledger of a results file as CSV (units in the header)")
    export.add_argument("results", help="results file (.h5)")
    export.add_argument("--csv", required=True, metavar="DIR", help="folder for the CSV files (created if missing)")
    export.add_argument("--unit", choices=units, help="temperature unit of the CSV (default: the report's)")
    export.set_defaults(func=cmd_export)


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
    materials.set_defaults(func=cmd_materials)

    example = verb(
        "example", "copy a shipped example (demo, study, api, day, calibration) into a folder, never overwriting"
    )
    example.add_argument("name", help=f"one of: {', '.join(EXAMPLES)}")
    example.add_argument("dir", nargs="?", default=".", help="folder to copy into (default: the current folder)")
    example.set_defaults(func=cmd_example)


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
