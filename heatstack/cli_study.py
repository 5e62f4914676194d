"""The ``heatstack study`` verb: run or resume a study, report it, and fail when no case finished.

A study file with a ``[study.reduced_model]`` or ``[study.rare_event]`` table runs on a
checked reduced model (:func:`heatstack.studies.reduced_study.run_reduced_study`) and its
report adds the gate's verdict, the measured errors and the rare-event estimate.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from .atomic import write_file_atomically
from .errors import InputError

__all__ = ["check_study", "cmd_study", "fail_if_nothing_finished", "write_study_outputs"]


def check_study(study) -> int:
    """``heatstack study --check``: plan ``study`` (its base case read, every path and value checked,
    the sample table drawn), print what would run, run nothing; the exit code.

    Parameters
    ----------
    study : Study
        The study read from its file.

    Returns
    -------
    int
        0 when the study and its base case are valid.

    Raises
    ------
    InputError
        If the base case, a parameter or the sampling is wrong, or the study is too large for the
        memory (from :func:`heatstack.studies.plan_study`).
    """
    from .studies import plan_study

    plan = plan_study(study)
    print(f"{study.title}")
    print(f"study: {plan.n_cases} cases of {study.base_case.name}, {study.sampling.method} sampling; nothing run")
    for name in plan.parameter_names:
        print(f"  parameter: {name}")
    return 0


def cmd_study(args: argparse.Namespace) -> int:
    """Run or resume the study of ``args.study``, print and write its report; the exit code.

    A ``--report`` file heatstack did not write is refused before the study runs, unless
    ``--force``; the outputs are then written with :func:`write_study_outputs`.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed ``heatstack study`` command line: ``study``, ``store``, ``workers``,
        ``scheduler``, ``timeout`` [s], ``retry_failed``, ``report``, ``plots``, ``unit``,
        ``force``, ``check`` and ``quiet``.

    Returns
    -------
    int
        The exit code: 0 (a study without one finished case raises instead).

    Raises
    ------
    InputError
        If the study file cannot be read or is wrong (from :func:`heatstack.studies.load_study`).
    ResultFileError
        If the ``--report`` file is already there and heatstack did not write it (without
        ``--force``), or an output cannot be written.
    StudyError
        If cases failed and none finished (:func:`fail_if_nothing_finished`).
    """
    from .own_files import check_replaceable, replacing_own_files_only
    from .studies import LocalExecutor, load_study, run_study, study_report
    from .studies.reduced_study import reduced_model_lines, run_reduced_study

    study = load_study(args.study)
    if getattr(args, "check", False):
        return check_study(study)
    store = Path(args.store) if args.store else Path(args.study).with_suffix(".store")
    if args.report and not args.force:
        check_replaceable(Path(args.report), "report file")  # before the study, not after it
    executor = args.scheduler or LocalExecutor(workers=args.workers)
    reduced = study.reduced_model is not None or study.rare_event is not None
    try:
        run = (run_reduced_study if reduced else run_study)(
            study,
            store,
            executor=executor,
            progress=None if not args.quiet else False,
            retry_failed=args.retry_failed,
            timeout=args.timeout,
        )
    finally:
        if not isinstance(executor, str):
            executor.close()
    if reduced:
        print(f"study: {run.decision}; {run.total_full_runs} full runs in the store, {run.seconds:.1f} s")
        report = study_report(run.table, temperature_unit=args.unit) + "\n".join(reduced_model_lines(run)) + "\n"
    else:
        print(
            f"study: {run.cases_run} cases run, {run.cases_skipped} already in the store, "
            f"{run.cases_failed} failed, {run.seconds:.1f} s"
        )
        report = study_report(run.table, temperature_unit=args.unit)
    print(report)
    with replacing_own_files_only(args.force):
        write_study_outputs(args, run, report, store)
    fail_if_nothing_finished(run.table)
    return 0


def fail_if_nothing_finished(table, shown: int = 3) -> None:
    """StudyError (exit 1) when cases failed and none finished, with the first reasons.

    Parameters
    ----------
    table : StudyTable
        The study's results, one row per case, with its ``status`` and ``error`` columns.
    shown : int, optional
        The number of failed cases whose first error line the message quotes [-].

    Raises
    ------
    StudyError
        If at least one case failed and no case finished.
    """
    from .errors import StudyError

    counts = table.counts()
    if not counts["failed"] or counts["ok"]:
        return
    failed = [k for k, status in enumerate(table["status"]) if status == "failed"]
    reasons = []
    for index in failed[:shown]:
        text = str(table["error"][index] or "no error text").strip().splitlines() or ["no error text"]
        first = text[0] if len(text[0]) <= 160 else text[0][:157] + "..."
        reasons.append(f"case {index}: {first}")
    raise StudyError(
        f"all {counts['failed']} cases of the study failed, none finished; the first: " + "; ".join(reasons)
    )


def write_study_outputs(args: argparse.Namespace, run, report: str, store: Path) -> None:
    """The study's Markdown report (``--report``) and its margin histogram and tornado.

    The report is written only when ``--report`` is given; the plots go to ``--plots`` (by
    default the store folder) when the table has a ``plug_margin_min`` column, and the
    tornado is left out, with a printed reason, when too few cases finished for a ranking.
    Each plot's path is printed.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed ``heatstack study`` command line (``report`` and ``plots`` are used).
    run : StudyRun
        What the study run did (its ``table`` is used).
    report : str
        The study report, Markdown.
    store : Path
        The study's store folder.

    Raises
    ------
    ResultFileError
        If a file cannot be written, or (inside :func:`heatstack.own_files.replacing_own_files_only`)
        a file heatstack did not write is already at its place.
    """
    from .studies import sensitivity
    from .studies.plots import plot_margin_histogram, plot_tornado

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
