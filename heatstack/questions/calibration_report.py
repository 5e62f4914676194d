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
from ..units import SI_UNITS
from .calibration import CalibrationFit
from .calibration_file import Calibration
from .identifiability import Identifiability, Profile

__all__ = ["CalibrationAnswers", "RunsTest", "runs_test", "answer_intervals", "format_calibration_report",
           "plot_calibration", "CAUTION"]  # fmt: skip

CAUTION = (
    "Caution: a model calibrated to test traces is not certified data; defer to the manufacturer's "
    "maintenance data, local regulations and licensed practice."
)
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
    good = rows[np.all(np.isfinite(rows), axis=1)] if rows.size else rows
    if good.shape[0] >= 2:
        low, high = np.percentile(good, 2.5, axis=0), np.percentile(good, 97.5, axis=0)
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


def _parameter_rows(fit: CalibrationFit, ident: Identifiability) -> list[list[str]]:
    rows = []
    for k, p in enumerate(fit.parameters):
        unit = SI_UNITS.get(p.dimension, "")
        low, high = fit.lower_95[k], fit.upper_95[k]
        interval = f"{low:.4g} to {high:.4g}" if math.isfinite(low) and math.isfinite(high) else "not determined"
        rows.append([p.name, f"{p.start:.4g}", f"{fit.values[k]:.4g}", interval, unit,
                     "yes" if ident.determined[k] else "NO", p.run or "all"])  # fmt: skip
    return rows


def _trace_rows(calibration: Calibration, fit: CalibrationFit) -> list[list[str]]:
    traces = [t for run in calibration.runs for t in run.traces]
    rows = []
    for trace, predicted, residual in zip(traces, fit.predicted, fit.residuals, strict=True):
        white = runs_test(residual)
        rows.append([
            trace.name, str(trace.times.size), f"{np.max(trace.temperatures) - 273.15:.2f}",
            f"{np.max(predicted) - 273.15:.2f}", f"{float(np.sqrt(np.mean(residual**2))):.3g}",
            f"{trace.uncertainty:.3g}", f"{white.z:+.2f}",
        ])  # fmt: skip
    return rows


def _answer_rows(answers: CalibrationAnswers) -> list[list[str]]:
    rows = []
    for name, value, low, high in zip(answers.names, answers.at_fit, answers.lower_95, answers.upper_95, strict=True):
        unit, scale, offset = _answer_unit(name)
        interval = "-" if not np.isfinite(low) else f"{low * scale + offset:.4g} to {high * scale + offset:.4g}"
        rows.append([name, f"{value * scale + offset:.4g}", interval, unit])
    return rows


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
    lines = [f"# {calibration.title}" if markdown else calibration.title, ""]
    lines += [f"Base case {calibration.base_origin}; {len(calibration.runs)} runs, "
              f"{calibration.n_points} readings; {fit.message}.",
              f"Reduced chi-square {fit.reduced_chi_square:.3g}; {fit.model_runs} model runs.", ""]  # fmt: skip
    if not fit.converged:
        lines += ["WARNING: the fit did not converge; the values below are its best estimate.", ""]
    lines += [head("Measured and predicted"), ""]
    lines += _table(["trace", "points", "measured peak degC", "predicted peak degC", "rms residual K",
                     "sigma K", "runs-test z"], _trace_rows(calibration, fit), markdown)  # fmt: skip
    lines += ["", head("Parameters (95 % linearised intervals)"), ""]
    lines += _table(["parameter", "start", "fitted", "95 % interval", "unit", "determined", "runs"],
                    _parameter_rows(fit, ident), markdown)  # fmt: skip
    lines += ["", head("What the traces determine"), "", ident.statement, ""]
    lines.append("Scaled singular values: " + ", ".join(f"{s:.3g}" for s in ident.singular_values))
    lines.append("Correlation matrix:")
    for name, row in zip(ident.names, ident.correlation, strict=True):
        lines.append(f"  {name:>28}: " + " ".join(f"{x:+.2f}" if np.isfinite(x) else "  nan" for x in row))
    if profile is not None:
        lines += ["", head(f"Profile of {profile.name}"), ""]
        lines += [f"  {v:.5g}: chi-square {c:.4g}" for v, c in zip(profile.values, profile.chi_square, strict=True)]
        lines.append(f"  likelihood-ratio 95 % interval: {profile.lower_95:.4g} to {profile.upper_95:.4g}")
    if answers is not None:
        lines += ["", head(f"Predicted answers for the base case ({answers.samples} parameter draws)"), ""]
        lines += _table(["answer", "at fit", "95 % interval", "unit"], _answer_rows(answers), markdown)
    lines += ["", CAUTION, ""]
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
