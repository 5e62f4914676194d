"""The calibration report: measured against predicted, residuals, parameters, what the data tell, answers.

:func:`format_calibration_report` writes text or markdown; :func:`plot_calibration` draws
every trace measured and predicted with its residuals over time; :func:`runs_test` is the
Wald–Wolfowitz runs test of a residual sequence's signs (are the residuals white?).

References
----------
.. [1] Wald, A., Wolfowitz, J., On a test whether two samples are from the same
   population, Ann. Math. Statist. 11 (1940) 147-162 (the runs statistic; its normal
   approximation with mean ``2 n+ n- / n + 1``).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..atomic import write_file_atomically
from ..report import CAUTION
from ..units import SI_UNITS
from .calibration import CalibrationFit
from .calibration_model_error import REFINEMENT_FACTOR
from .calibration_records import Calibration, FitParameter
from .identifiability import Identifiability, Profile

__all__ = ["CalibrationAnswers", "RunsTest", "runs_test", "answer_intervals", "format_calibration_report",
           "plot_calibration", "plot_run", "parameter_table", "trace_table", "answer_table", "correlation_table",
           "uncertainty_statement", "CALIBRATION_NOTE", "WHITE_LEVEL"]  # fmt: skip

#: What a calibration adds to the house caution (:data:`heatstack.report.CAUTION`).
CALIBRATION_NOTE = "A model calibrated to test traces is still not certified data."
#: Two-sided significance level of the runs test below which a trace's residuals are called not white [-].
WHITE_LEVEL = 0.01
_ANSWER_PREFIXES = ("peak:", "peak_delay:", "plug_peak:", "plug_margin:", "limit_margin:", "cooling_time")


@dataclass(frozen=True, eq=False)
class CalibrationAnswers:
    """The base case's answers at the fit, with intervals from parameter draws.

    Attributes
    ----------
    names : tuple of str
    at_fit : ndarray
        [SI]
    lower_95, upper_95 : ndarray
        2.5 and 97.5 percentiles of the draws [SI] (NaN without draws).
    samples : int
        Draws that gave every answer.
    """

    names: tuple[str, ...]
    at_fit: np.ndarray
    lower_95: np.ndarray
    upper_95: np.ndarray
    samples: int


@dataclass(frozen=True)
class RunsTest:
    """Wald–Wolfowitz runs test of residual signs.

    Attributes
    ----------
    runs : int
    expected : float
    z : float
        Standardised runs count (negative: fewer runs than white noise, i.e. correlated).
    p_value : float
        Two-sided, normal approximation.
    """

    runs: int
    expected: float
    z: float
    p_value: float


def runs_test(residuals: np.ndarray) -> RunsTest:
    """The Wald–Wolfowitz runs test of the signs of ``residuals`` (zeros dropped).

    Parameters
    ----------
    residuals : ndarray
        Residuals [K]; only their signs count.

    Returns
    -------
    RunsTest
        Runs counted, runs expected of white noise, z and two-sided p-value (for residuals
        of one sign: z is minus infinity and p 0).
    """
    signs = np.sign(np.asarray(residuals, dtype=float))
    signs = signs[signs != 0]
    positive, negative = int(np.sum(signs > 0)), int(np.sum(signs < 0))
    n = positive + negative
    runs = 1 + int(np.count_nonzero(np.diff(signs))) if n else 0
    if positive == 0 or negative == 0:
        return RunsTest(runs, float(runs), -math.inf, 0.0)
    mean = 2.0 * positive * negative / n + 1.0
    variance = (mean - 1.0) * (mean - 2.0) / (n - 1.0)
    z = (runs - mean) / math.sqrt(variance) if variance > 0 else 0.0
    return RunsTest(runs, mean, z, math.erfc(abs(z) / math.sqrt(2.0)))


def answer_intervals(names: tuple[str, ...], at_fit: np.ndarray, draws: np.ndarray) -> CalibrationAnswers:
    """The engineer's answers (peaks, delays, plug peaks and margins, cooling time) with percentile intervals.

    Parameters
    ----------
    names : tuple of str
        Answer names of the runs.
    at_fit : ndarray
        Answer values at the fit [SI].
    draws : ndarray, shape (samples, len(names))
        Answer values of every parameter draw [SI] (NaN where missing).

    Returns
    -------
    CalibrationAnswers
        The kept answers (heat-sink peaks last), their values at the fit, 2.5 and 97.5
        percentiles of the complete draws [SI] (NaN with fewer than two) and the draw count.
    """
    keep = [k for k, n in enumerate(names) if n.startswith(_ANSWER_PREFIXES) and not n.startswith("peak:heat_sink")]
    keep += [k for k, n in enumerate(names) if n.startswith("peak:heat_sink")]
    rows = draws[:, keep] if draws.size else np.zeros((0, len(keep)))
    good = rows[np.all(~np.isnan(rows), axis=1)] if rows.size else rows  # inf: a cooling time not reached
    if good.shape[0] >= 2:  # empirical quantiles (no interpolation across a value not reached)
        low, high = np.percentile(good, [2.5, 97.5], axis=0, method="inverted_cdf")
    else:
        low = high = np.full(len(keep), np.nan)
    return CalibrationAnswers(tuple(names[k] for k in keep), at_fit[keep], low, high, int(good.shape[0]))


def _answer_unit(name: str) -> tuple[str, float, float]:
    """Display unit, scale and offset of an answer (temperatures in degC, times in s)."""
    if name.startswith(("peak_delay:", "cooling_time")):
        return "s", 1.0, 0.0
    if name.startswith(("plug_margin:", "limit_margin:")):
        return "K", 1.0, 0.0
    return "degC", 1.0, -273.15


def _table(header: Sequence[str], rows: list[Sequence[str]], markdown: bool) -> list[str]:
    if markdown:
        out = ["| " + " | ".join(header) + " |", "|" + "---|" * len(header)]
        return out + ["| " + " | ".join(row) + " |" for row in rows]
    widths = [max(len(h), *(len(r[k]) for r in rows)) if rows else len(h) for k, h in enumerate(header)]
    fmt = "  ".join(f"{{:<{w}}}" for w in widths)
    return [fmt.format(*header), *(fmt.format(*row) for row in rows)]


def _prior_text(parameter: FitParameter, unit: str) -> str:
    prior = parameter.prior
    if prior is None:
        return "none"
    if prior.kind == "lognormal":
        return f"lognormal, median {prior.center:.4g} {unit}, sigma(ln) {prior.spread:.3g}"
    return f"normal, mean {prior.center:.4g} {unit}, sd {prior.spread:.4g} {unit}"


def parameter_table(fit: CalibrationFit, ident: Identifiability) -> tuple[list[str], list[list[str]]]:
    """Header and rows of the parameter table: bounds, prior, estimate, interval, uncertainty, verdict.

    Parameters
    ----------
    fit : CalibrationFit
        The fit.
    ident : Identifiability
        What the traces determine (relative standard deviations and verdicts).

    Returns
    -------
    header : list of str
        Column titles.
    rows : list of list of str
        One row of text cells per fitted parameter.
    """
    header = ["parameter", "unit", "start", "lower", "upper", "prior", "fitted", "95 % interval",
              "rel. sd (traces)", "verdict", "runs"]  # fmt: skip
    rows = []
    for k, p in enumerate(fit.parameters):
        unit = SI_UNITS.get(p.dimension, "")
        low, high = fit.lower_95[k], fit.upper_95[k]
        interval = f"{low:.4g} to {high:.4g}" if math.isfinite(low) and math.isfinite(high) else "not determined"
        spread = ident.relative_sd[k]
        rows.append([p.name, unit, f"{p.start:.4g}", f"{p.lower:.4g}", f"{p.upper:.4g}", _prior_text(p, unit),
                     f"{fit.values[k]:.4g}", interval, f"{spread:.1%}" if math.isfinite(spread) else "inf",
                     ident.verdicts[k], p.run or "all"])  # fmt: skip
    return header, rows


def trace_table(calibration: Calibration, fit: CalibrationFit) -> tuple[list[str], list[list[str]]]:
    """Header and rows of the trace table: points, peaks, rms residual, sigma and the runs test.

    Parameters
    ----------
    calibration : Calibration
        The calibration, whose runs hold the measured traces.
    fit : CalibrationFit
        The fit, with each trace's prediction and residuals [K].

    Returns
    -------
    header : list of str
        Column titles.
    rows : list of list of str
        One row of text cells per measured trace.
    """
    header = ["trace", "points", "measured peak degC", "predicted peak degC", "rms residual K",
              "measurement sigma K", "stated model K", "sigma used K", "estimated model error rms K",
              "runs-test z", "runs-test p", "white at 1 %"]  # fmt: skip
    traces = [t for run in calibration.runs for t in run.traces]
    estimated = fit.model_error.trace_rms if fit.model_error is not None else [None] * len(traces)
    rows = []
    for trace, predicted, residual, model in zip(traces, fit.predicted, fit.residuals, estimated, strict=True):
        white = runs_test(residual)
        rows.append([
            trace.name, str(trace.times.size), f"{np.max(trace.temperatures) - 273.15:.2f}",
            f"{np.max(predicted) - 273.15:.2f}", f"{float(np.sqrt(np.mean(residual**2))):.3g}",
            f"{trace.uncertainty:.3g}", f"{trace.model_uncertainty:.3g}", f"{trace.sigma:.3g}",
            "not estimated" if model is None else f"{model:.3g}", f"{white.z:+.2f}", f"{white.p_value:.3f}",
            "yes" if white.p_value > WHITE_LEVEL else "NO",
        ])  # fmt: skip
    return header, rows


def uncertainty_statement(fit: CalibrationFit) -> list[str]:
    """What uncertainty the intervals carry, in sentences: the weights, the chi-square scaling, the model error.

    Parameters
    ----------
    fit : CalibrationFit
        The fit (its reduced chi-square and model-error estimate).

    Returns
    -------
    list of str
        One sentence a line.
    """
    scaled = fit.reduced_chi_square > 1.0
    lines = [
        "Uncertainty used: each reading is weighed by sigma, its trace's measurement uncertainty and stated "
        "model uncertainty in quadrature (trace table).",
        f"The noise covariance is {'multiplied by' if scaled else 'not scaled by'} the reduced chi-square "
        f"({fit.reduced_chi_square:.3g}{'' if scaled else ', at most 1'}).",
    ]
    estimate = fit.model_error
    if estimate is None:
        lines.append('Model error: not estimated ([fit] model_error = "none"); the intervals leave the fit '
                     "model's own discretisation error out.")  # fmt: skip
        return lines
    lines += [
        "Model error: estimated by re-running every test run once at the fit on a refined model "
        f"({estimate.description}); "
        f"{REFINEMENT_FACTOR:g} x the difference (Richardson extrapolation, an error falling at least twofold), "
        f"RMS {np.min(estimate.trace_rms):.3g} to {np.max(estimate.trace_rms):.3g} K over the traces, largest "
        f"{np.max(estimate.trace_max):.3g} K.",
        "Its first-order shift of the fitted parameters is added to their covariance as a systematic term "
        "(an uncorrected systematic effect, JCGM 100:2008 F.2.4.5): the intervals include it.",
    ]
    return lines


def _answer_value(value: float, scale: float, offset: float) -> str:
    return "not reached in the run" if value == np.inf else f"{value * scale + offset:.4g}"


def answer_table(answers: CalibrationAnswers) -> tuple[list[str], list[list[str]]]:
    """Header and rows of the predicted answers with their 95 % intervals.

    Parameters
    ----------
    answers : CalibrationAnswers
        The answers at the fit and their 95 % bounds (SI).

    Returns
    -------
    header : list of str
        Column titles.
    rows : list of list of str
        One row of text cells per answer.
    """
    rows = []
    for name, value, low, high in zip(answers.names, answers.at_fit, answers.lower_95, answers.upper_95, strict=True):
        unit, scale, offset = _answer_unit(name)
        interval = "-"
        if np.isinf(low) and np.isinf(high):  # e.g. a cooling time no draw reaches
            interval = "not reached in any draw"
        elif not np.isnan(low):
            interval = f"{_answer_value(low, scale, offset)} to {_answer_value(high, scale, offset)}"
        rows.append([name, _answer_value(value, scale, offset), interval, unit])
    return ["answer", "at fit", "95 % interval", "unit"], rows


def correlation_table(ident: Identifiability) -> tuple[list[str], list[list[str]]]:
    """The parameter correlation matrix as a table (``nan`` where a variance is infinite).

    Parameters
    ----------
    ident : Identifiability
        Holds the parameter names and their correlation matrix [-].

    Returns
    -------
    header : list of str
        Column titles.
    rows : list of list of str
        One row of text cells per parameter.
    """
    rows = [[name, *(f"{x:+.2f}" if np.isfinite(x) else "nan" for x in row)]
            for name, row in zip(ident.names, ident.correlation, strict=True)]  # fmt: skip
    return ["", *ident.names], rows


def format_calibration_report(
    calibration: Calibration,
    fit: CalibrationFit,
    ident: Identifiability,
    answers: CalibrationAnswers | None = None,
    profile: Profile | None = None,
    markdown: bool = False,
) -> str:
    """The calibration report as plain text or markdown.

    Parameters
    ----------
    calibration : Calibration
        The calibration.
    fit : CalibrationFit
        Its fit.
    ident : Identifiability
        What the traces determine.
    answers : CalibrationAnswers, optional
        Predicted answers with intervals.
    profile : Profile, optional
        A parameter's profile.
    markdown : bool, optional
        Markdown headings and tables instead of plain text.

    Returns
    -------
    str
        The report (temperatures in degC, residuals in K).
    """
    head = (lambda s: f"## {s}") if markdown else (lambda s: f"{s}\n{'-' * len(s)}")
    lines = [f"# {calibration.title}" if markdown else calibration.title, "", CAUTION, CALIBRATION_NOTE, ""]
    lines += [f"Base case {calibration.base_origin}; {len(calibration.runs)} runs, "
              f"{calibration.n_points} readings; {fit.message}.",
              f"Reduced chi-square {fit.reduced_chi_square:.3g}; {fit.model_runs} model runs.", "",
              *uncertainty_statement(fit), ""]  # fmt: skip
    if not fit.converged:
        lines += ["WARNING: the fit did not converge; the values below are its best estimate.", ""]
    lines += [head("Measured and predicted"), ""]
    lines += _table(*trace_table(calibration, fit), markdown)
    lines += ["", f"Runs test: Wald-Wolfowitz, two-sided; a trace is white when p > {WHITE_LEVEL:g}.", ""]
    lines += [head("Parameters (95 % linearised intervals)"), ""]
    lines += _table(*parameter_table(fit, ident), markdown)
    lines += ["", head("What the traces determine"), "", *ident.statement.splitlines(), ""]
    lines.append("Scaled singular values: " + ", ".join(f"{s:.3g}" for s in ident.singular_values))
    lines += ["", "Correlation matrix:", ""]
    lines += _table(*correlation_table(ident), markdown)
    if profile is not None:
        lines += ["", head(f"Profile of {profile.name}"), ""]
        lines += [f"  {v:.5g}: chi-square {c:.4g}" for v, c in zip(profile.values, profile.chi_square, strict=True)]
        lines.append(f"  likelihood-ratio 95 % interval: {profile.lower_95:.4g} to {profile.upper_95:.4g}")
    if answers is not None:
        lines += ["", head(f"Predicted answers for the base case ({answers.samples} parameter draws)"), ""]
        lines += _table(*answer_table(answers), markdown)
    lines.append("")
    return "\n".join(lines)


def plot_calibration(calibration: Calibration, fit: CalibrationFit, path: str | Path) -> Path:
    """Every trace measured and predicted (top) and its residuals over time (bottom), as one figure.

    Parameters
    ----------
    calibration : Calibration
        The calibration and its traces.
    fit : CalibrationFit
        The fit's predictions and residuals.
    path : str or Path
        PNG file to write.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    ResultFileError
        If the file cannot be written.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    traces = [t for run in calibration.runs for t in run.traces]
    figure, (top, bottom) = plt.subplots(2, 1, figsize=(9, 7), sharex=True)
    for trace, predicted, residual in zip(traces, fit.predicted, fit.residuals, strict=True):
        line = top.plot(trace.times / 60.0, trace.temperatures - 273.15, ".", ms=3, label=f"{trace.name} measured")
        top.plot(trace.times / 60.0, predicted - 273.15, "-", color=line[0].get_color(), lw=1)
        bottom.plot(trace.times / 60.0, residual, ".-", ms=3, lw=0.5, color=line[0].get_color())
    top.set_ylabel("temperature [degC]")
    top.legend(fontsize=7)
    top.set_title(f"{calibration.title}\nmeasured (dots), calibrated model (lines)", fontsize=9)
    bottom.axhline(0.0, color="k", lw=0.5)
    bottom.set_ylabel("predicted - measured [K]")
    bottom.set_xlabel("time [min]")
    figure.tight_layout()
    try:
        return write_file_atomically(path, lambda temp: figure.savefig(temp, format="png", dpi=110), "figure file")
    finally:
        plt.close(figure)


def plot_run(calibration: Calibration, fit: CalibrationFit, run: int, path: str | Path) -> Path:
    """One test run's traces measured and fitted (top) and their residuals with the +/- 2 sigma band (bottom).

    Parameters
    ----------
    calibration : Calibration
        The calibration holding the run's measured traces.
    fit : CalibrationFit
        The fit, with each trace's prediction and residuals [K].
    run : int
        Index of the test run in ``calibration.runs``.
    path : str or Path
        The figure file to write (PNG or SVG).

    Returns
    -------
    Path
        The file written.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    first = sum(len(r.traces) for r in calibration.runs[:run])
    test = calibration.runs[run]
    figure, (top, bottom) = plt.subplots(2, 1, figsize=(8, 6), sharex=True, height_ratios=(2, 1))
    for k, trace in enumerate(test.traces):
        predicted, residual = fit.predicted[first + k], fit.residuals[first + k]
        minutes = trace.times / 60.0
        line = top.plot(minutes, trace.temperatures - 273.15, ".", ms=3, label=f"{trace.probe} measured")
        colour = line[0].get_color()
        top.plot(minutes, predicted - 273.15, "-", color=colour, lw=1, label=f"{trace.probe} fitted")
        bottom.plot(minutes, residual, ".-", ms=3, lw=0.5, color=colour, label=trace.probe)
        bottom.axhspan(-2 * trace.sigma, 2 * trace.sigma, color=colour, alpha=0.08)
    top.set_ylabel("temperature [degC]")
    top.legend(fontsize=7)
    top.set_title(f"{calibration.title}: {test.name}\nmeasured (dots), calibrated model (lines)", fontsize=9)
    bottom.axhline(0.0, color="k", lw=0.5)
    bottom.set_ylabel("fitted - measured [K]\n(band: +/- 2 sigma)", fontsize=8)
    bottom.set_xlabel("time [min]")
    figure.tight_layout()
    try:
        return write_file_atomically(path, lambda temp: figure.savefig(temp, format="png", dpi=100), "figure file")
    finally:
        plt.close(figure)
