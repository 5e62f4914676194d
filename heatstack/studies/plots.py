"""Study figures: a histogram of a margin and a tornado of sensitivities.

Drawn with matplotlib's object interface (:class:`matplotlib.figure.Figure`, the Agg
renderer; no pyplot state) on the frame of the run figures
(:func:`heatstack.plotting.common.new_figure`: the same size, the same "Not certified data"
caption, the colours of :data:`heatstack.plotting.common.SERIES_STYLES`), and written
atomically. The format follows the suffix: ``.png`` or ``.svg``.
"""

from __future__ import annotations

import os
import textwrap
from pathlib import Path

import numpy as np
from matplotlib.ticker import MaxNLocator

from ..errors import InputError
from ..plotting.common import OKABE_ITO, SERIES_STYLES, figure_target, new_figure, save_figure
from .analysis import CASES_PER_PARAMETER, SensitivityResult, margin_percentiles
from .labels import output_label
from .table import StudyTable

__all__ = ["plot_margin_histogram", "plot_tornado"]

_INK = "#222222"
_WIDTH, _HEIGHT = 10.0, 5.6  # [in] the size of the run figures
_TITLE_CHARACTERS = 95  # a title wraps beyond this many characters, so it is never clipped


def _plain(ax) -> None:
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        ax.spines[side].set_color(_INK)
    ax.tick_params(colors=_INK, labelsize=9)
    ax.xaxis.label.set_color(_INK)
    ax.yaxis.label.set_color(_INK)


def _title(fig, text: str) -> None:
    lines = [textwrap.fill(line, _TITLE_CHARACTERS) for line in text.split("\n")]
    fig.suptitle("\n".join(lines), fontsize=11, color=_INK)


def plot_margin_histogram(
    table: StudyTable,
    path: str | os.PathLike,
    column: str = "plug_margin_min",
    bins: int = 30,
    title: str | None = None,
) -> Path:
    """Histogram of a margin over the finished cases, with its 5th, 50th and 95th percentiles.

    Parameters
    ----------
    table : StudyTable
    path : str or path
        ``.png`` or ``.svg`` file.
    column : str
        A margin column [K] (``plug_margin_min``, ``plug_margin:<plug>``,
        ``limit_margin:<probe>``) or any output column.
    bins : int
    title : str, optional

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        If ``bins`` is not a whole number >= 1, or no finished case has a value of ``column``.
    """
    target, fmt = figure_target(path)
    if isinstance(bins, bool) or not isinstance(bins, int) or bins < 1:
        raise InputError(f"bins: expected a whole number >= 1, got {bins!r}")
    values = table[column][table.ok]
    values = values[np.isfinite(values)]
    if values.size == 0:
        raise InputError(f"plot_margin_histogram: no finished case has a value of {column!r}")
    unit = table.units.get(column, "")
    pct = margin_percentiles(table, column)
    fig = new_figure(_WIDTH, _HEIGHT)
    ax = fig.add_subplot()
    ax.hist(values, bins=bins, color=SERIES_STYLES["study"].colour, edgecolor="white", linewidth=0.5)
    ax.yaxis.set_major_locator(MaxNLocator(integer=True))  # counts of cases: no fractions on the axis
    ax.set_ylim(bottom=0)
    is_margin = "margin" in column
    release = SERIES_STYLES["release"].colour
    if is_margin:
        ax.axvline(0.0, color=release, linewidth=1.4)
        ax.annotate(
            "release / limit",
            (0.0, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(3, -3),
            textcoords="offset points",
            va="top",
            fontsize=8,
            color=release,
        )
    for q, style in ((5.0, ":"), (50.0, "--"), (95.0, ":")):
        ax.axvline(pct[q], color=_INK, linestyle=style, linewidth=0.9)
        ax.annotate(
            f"P{q:g} {pct[q]:.1f}",
            (pct[q], 0.92 if q != 50.0 else 0.84),
            xycoords=("data", "axes fraction"),
            xytext=(3, 0),
            textcoords="offset points",
            fontsize=8,
            color=_INK,
        )
    words = output_label(column)
    ax.set_xlabel(f"{words} [{unit}]" if unit else words, fontsize=10)
    ax.set_ylabel("Number of cases", fontsize=10)
    negative = int(np.count_nonzero(values < 0)) if is_margin else None
    heading = title or table.title or "study"
    extra = f"\n{negative} of {values.size} cases below zero" if negative is not None else f"\n{values.size} cases"
    _title(fig, heading + extra)
    _plain(ax)
    return save_figure(fig, target, fmt)


def plot_tornado(
    result: SensitivityResult, path: str | os.PathLike, measure: str = "spearman", title: str | None = None
) -> Path:
    """Tornado chart: one horizontal bar per parameter, largest influence on top.

    Parameters
    ----------
    result : SensitivityResult
        From :func:`heatstack.studies.analysis.sensitivity`.
    path : str or path
        ``.png`` or ``.svg`` file.
    measure : {"spearman", "src"}
        Spearman rank correlation or standardised regression coefficient.
    title : str, optional

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``measure`` is not ``"spearman"`` or ``"src"``, or ``result`` holds no parameter.
    """
    target, fmt = figure_target(path)
    if measure not in ("spearman", "src"):
        raise InputError(f"measure: expected 'spearman' or 'src', got {measure!r}")
    if not isinstance(result, SensitivityResult) or not result.entries:
        raise InputError("plot_tornado: expected a SensitivityResult with at least one parameter")
    entries = sorted(result.entries, key=lambda e: abs(getattr(e, measure)))
    values = np.array([getattr(e, measure) for e in entries])
    labels = [e.parameter if e.distinguishable else f"{e.parameter} (chance?)" for e in entries]
    fig = new_figure(_WIDTH, max(_HEIGHT, 1.6 + 0.45 * len(entries)))
    ax = fig.add_subplot()
    bars = ax.barh(
        np.arange(len(entries)),
        values,
        color=[OKABE_ITO["vermillion"] if v < 0 else OKABE_ITO["blue"] for v in values],
        height=0.6,
        edgecolor="white",
    )
    for bar, v, e in zip(bars, values, entries, strict=True):
        if v < 0:
            bar.set_hatch("///")  # a grey print still tells lowering from raising
        if not e.distinguishable:
            bar.set_alpha(0.35)  # its rank correlation's interval holds zero
    if measure == "spearman":
        low = np.array([e.spearman_interval[0] for e in entries])
        high = np.array([e.spearman_interval[1] for e in entries])
        shown = np.isfinite(low) & np.isfinite(high)
        ax.errorbar(
            values[shown],
            np.arange(len(entries))[shown],
            xerr=np.clip(np.vstack([values[shown] - low[shown], high[shown] - values[shown]]), 0.0, None),
            fmt="none",
            ecolor=_INK,
            elinewidth=0.8,
            capsize=3,
        )
    ax.set_yticks(np.arange(len(entries)), labels, fontsize=9)
    ax.axvline(0.0, color=_INK, linewidth=0.8)
    limit = max(1e-12, float(np.max(np.abs(values))))
    if measure == "spearman":
        limit = 1.0 / 1.35  # the intervals of a rank correlation lie in [-1, 1]
    ax.set_xlim(-1.35 * limit, 1.35 * limit)
    for k, v in enumerate(values):
        ax.annotate(  # above the bar's end, clear of its whisker
            f"{v:+.2f}",
            (v, k + 0.3),
            xytext=(0, 1),
            textcoords="offset points",
            ha="center",
            va="bottom",
            fontsize=8,
            color=_INK,
        )
    name = "Spearman rank correlation" if measure == "spearman" else "standardised regression coefficient"
    output = output_label(result.output)
    ax.set_xlabel(f"{name} [-]", fontsize=10)
    note = "hatched: raising the parameter lowers the output"
    if measure == "spearman":
        note += "; whiskers: 95 % interval; pale: interval holds 0 (chance?)"
    ax.text(
        0.99,
        0.01,
        note,
        transform=ax.transAxes,
        ha="right",
        va="bottom",
        fontsize=8,
        color=_INK,
    )
    heading = title or f"Sensitivity of: {output}"
    stated = f"{heading}\n{result.cases} cases, R² of the linear fit = {result.r_squared:.2f}"
    if result.thin:
        stated += (
            f"\nWARNING: {result.cases_per_parameter:.1f} cases per parameter (fewer than "
            f"{CASES_PER_PARAMETER}): too few to support this ranking or R²"
        )
    _title(fig, stated)
    _plain(ax)
    return save_figure(fig, target, fmt)
