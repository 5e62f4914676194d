"""The whole calibration: fit, what the data tell, answers with intervals, then the files (all or nothing).

:func:`calibrate` runs every step on one executor and returns a :class:`CalibrationRun`;
:func:`write_calibration_outputs` writes the calibrated case, the text and markdown
reports and the figure, each atomically, only after every step has succeeded.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..atomic import write_file_atomically
from ..errors import InputError
from ..studies.executors import StudyExecutor
from .calibrated_case import calibrated_case_text, write_calibrated_case
from .calibration import CalibrationFit, fit_calibration
from .calibration_html import calibration_html
from .calibration_records import Calibration
from .calibration_report import (
    CalibrationAnswers,
    answer_intervals,
    format_calibration_report,
    plot_calibration,
    plot_run,
)
from .calibration_runs import (
    CalibrationFitError,
    CalibrationJob,
    Evaluator,
    from_internal,
    make_executor,
    parameter_mapping,
    to_internal,
)
from .identifiability import Identifiability, Profile, identifiability, profile_parameter

__all__ = ["CalibrationRun", "calibrate", "write_calibration_outputs", "fit_summary", "sampled_answers"]


@dataclass(frozen=True, eq=False)
class CalibrationRun:
    """Everything a calibration found.

    Attributes
    ----------
    calibration : Calibration
    fit : CalibrationFit
    identifiability : Identifiability
    answers : CalibrationAnswers or None
        None when ``prediction_samples`` is 0.
    profile : Profile or None
    """

    calibration: Calibration
    fit: CalibrationFit
    identifiability: Identifiability
    answers: CalibrationAnswers | None
    profile: Profile | None


def calibrate(calibration: Calibration, executor: StudyExecutor | None = None) -> CalibrationRun:
    """Fit, assess and predict (see :mod:`heatstack.questions.calibration`).

    Parameters
    ----------
    calibration : Calibration
    executor : StudyExecutor, optional
        By default the one the file's ``[fit]`` names, closed afterwards.

    Returns
    -------
    CalibrationRun
        The calibration, its fit, identifiability, predicted answers (None without
        prediction samples) and profile (None unless one is asked for).

    Raises
    ------
    InputError
        An unreachable Dask scheduler (before any run).
    CalibrationFitError
        A run failed.
    """
    settings = calibration.settings
    owned = executor is None
    runner = make_executor(settings.executor, settings.workers, settings.timeout) if owned else executor
    try:
        runner.start()
        fit = fit_calibration(calibration, runner)
        ident = identifiability(fit)
        profile = None
        if settings.profile is not None:
            profile = profile_parameter(calibration, fit, settings.profile, runner)
        answers = None
        if settings.prediction_samples > 0:
            names, at_fit, draws = sampled_answers(calibration, fit, runner, settings.prediction_samples)
            answers = answer_intervals(names, at_fit, draws)
    finally:
        if owned:
            runner.close()
    return CalibrationRun(calibration, fit, ident, answers, profile)


def write_calibration_outputs(run: CalibrationRun, folder: str | os.PathLike) -> tuple[Path, ...]:
    """Write ``calibrated-case.toml``, ``calibration-report.txt``, ``.md``, ``report.html`` and the figures.

    The figures are ``calibration-traces.png`` (every trace) and ``calibration-run-<k>.png``
    (test run ``k``: its traces measured and fitted, and their residuals); ``report.html``
    embeds them and stands alone.

    Parameters
    ----------
    run : CalibrationRun
        A finished calibration.
    folder : str or os.PathLike
        Folder to write into; created if missing.

    Returns
    -------
    tuple of Path
        The files written, in the order above.

    Raises
    ------
    InputError
        If ``folder`` exists and is not a folder.
    ResultFileError
        If a file cannot be written (files already written are complete).
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise InputError(f"--out: {str(folder)!r} is not a folder")
    folder.mkdir(parents=True, exist_ok=True)
    c, fit, ident = run.calibration, run.fit, run.identifiability
    calibrated_case_text(c, fit, ident)  # fails before anything is written if a value cannot be
    text = format_calibration_report(c, fit, ident, run.answers, run.profile)
    markdown = format_calibration_report(c, fit, ident, run.answers, run.profile, markdown=True)
    written = [write_calibrated_case(folder / "calibrated-case.toml", c, fit, ident)]
    for name, body in (("calibration-report.txt", text), ("calibration-report.md", markdown)):
        written.append(write_file_atomically(folder / name, lambda t, b=body: Path(t).write_text(b, encoding="utf-8"),
                                             "report file"))  # fmt: skip
    written.append(plot_calibration(c, fit, folder / "calibration-traces.png"))
    figures = [plot_run(c, fit, k, folder / f"calibration-run-{k + 1}.png") for k in range(len(c.runs))]
    written += figures
    page = calibration_html(c, fit, ident, run.answers, run.profile, figures)
    written.append(write_file_atomically(folder / "report.html", lambda t: Path(t).write_text(page, encoding="utf-8"),
                                         "report file"))  # fmt: skip
    return tuple(written)


def fit_summary(fit: CalibrationFit, ident: Identifiability) -> str:
    """One line per parameter: value, interval, relative standard deviation from the traces, verdict.

    Parameters
    ----------
    fit : CalibrationFit
        The fit.
    ident : Identifiability
        Which parameters the traces determine.

    Returns
    -------
    str
        The lines joined by newlines, values in SI.
    """
    lines = []
    for k, p in enumerate(fit.parameters):
        spread = ident.relative_sd[k]
        spread_text = f"{spread:.1%}" if np.isfinite(spread) else "inf"
        lines.append(
            f"{p.name}: {fit.values[k]:.5g} (95 %: {fit.lower_95[k]:.4g} to {fit.upper_95[k]:.4g}; "
            f"relative sd from the traces {spread_text}): {ident.verdicts[k].upper()}"
        )
    return "\n".join(lines)


def sampled_answers(
    calibration: Calibration,
    fit: CalibrationFit,
    executor: StudyExecutor,
    samples: int,
    seed: int = 0,
) -> tuple[tuple[str, ...], np.ndarray, np.ndarray]:
    """The base case's answers at the fit and at draws of the parameters from their covariance.

    Per-run parameters stay at their base-case values. Directions the data do not
    determine (infinite variance) are drawn uniformly within the bounds.

    Parameters
    ----------
    calibration : Calibration
        The calibration (base case and parameters).
    fit : CalibrationFit
        The fit whose values and covariance are sampled.
    executor : StudyExecutor
        Runs the cases.
    samples : int
        Number of parameter draws.
    seed : int, optional
        Seed of the random generator.

    Returns
    -------
    (names, at_fit, draws)
        Answer names, their values at the fit [SI], and one row per draw (NaN where a
        draw lacks an answer).

    Raises
    ------
    CalibrationFitError
        If the base case at the fitted values fails.
    """
    params = calibration.parameters
    shared = [j for j, p in enumerate(params) if p.run is None]
    rng = np.random.default_rng(seed)
    cov = fit.covariance[np.ix_(shared, shared)]
    finite = np.all(np.isfinite(cov), axis=0)
    points = [fit.internal]
    for _ in range(samples):
        u = fit.internal.copy()
        idx = [shared[k] for k in np.flatnonzero(finite)]
        if idx:
            u[idx] = rng.multivariate_normal(fit.internal[idx], fit.covariance[np.ix_(idx, idx)])
        for k in np.flatnonzero(~finite):
            p = params[shared[k]]
            u[shared[k]] = rng.uniform(to_internal(p, p.lower), to_internal(p, p.upper))
        for j, p in enumerate(params):
            u[j] = np.clip(u[j], to_internal(p, p.lower), to_internal(p, p.upper))
        points.append(u)
    base = calibration.base_mapping
    jobs = []
    for u in points:
        values = [from_internal(p, x) for p, x in zip(params, u, strict=True)]
        mapping = parameter_mapping(base, params, values, None)
        jobs.append(CalibrationJob(mapping, calibration.base_text, calibration.base_origin,
                                   str(calibration.base_dir), summary=True))  # fmt: skip
    outcomes = Evaluator(calibration, executor).run_jobs(jobs)
    if outcomes[0].error:
        raise CalibrationFitError(f"the base case at the fitted values failed: {outcomes[0].error}")
    names = outcomes[0].names
    draws = np.full((samples, len(names)), np.nan)
    for k, outcome in enumerate(outcomes[1:]):
        lookup = dict(zip(outcome.names, outcome.values, strict=True))
        draws[k] = [lookup.get(name, np.nan) for name in names]
    return names, outcomes[0].values, draws
