"""Study figures: a histogram of a margin and a tornado of sensitivities.

Drawn with matplotlib's object interface (:class:`matplotlib.figure.Figure`, the Agg
renderer; no pyplot state), in a plain style of our own, each with the caption "Not
certified data", and written atomically (:func:`heatstack.atomic.write_file_atomically`).
The format follows the suffix: ``.png`` or ``.svg``.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from ..errors import InputError
from ..plotting.common import figure_target, save_figure
from .analysis import SensitivityResult, StudyTable, margin_percentiles
from .labels import output_label

__all__ = ["plot_margin_histogram", "plot_tornado", "CAPTION"]

#: Caption on every study figure.
CAPTION = "Not certified data. Defer to the manufacturer's maintenance data."

_INK = "#222222"
_BAR = "#7a8a99"
_ACCENT = "#b0413e"
_MUTED = "#9a9a9a"


def new_figure(width: float, height: float) -> Figure:
    fig = Figure(figsize=(width, height), layout="constrained")
    fig.get_layout_engine().set(h_pad=0.08)
    return fig


def _plain(ax) -> None:
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        ax.spines[side].set_color(_INK)
    ax.tick_params(colors=_INK, labelsize=8)
    ax.xaxis.label.set_color(_INK)
    ax.yaxis.label.set_color(_INK)


def _caption(fig: Figure, text: str) -> None:
    fig.supxlabel(f"{CAPTION} {text}".strip(), fontsize=7, color=_MUTED)


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
    fig = new_figure(6.4, 3.8)
    ax = fig.add_subplot()
    ax.hist(values, bins=bins, color=_BAR, edgecolor="white", linewidth=0.5)
    is_margin = "margin" in column
    if is_margin:
        ax.axvline(0.0, color=_ACCENT, linewidth=1.2)
        ax.annotate(
            "release / limit",
            (0.0, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(3, -3),
            textcoords="offset points",
            va="top",
            fontsize=7,
            color=_ACCENT,
        )
    for q, style in ((5.0, ":"), (50.0, "--"), (95.0, ":")):
        ax.axvline(pct[q], color=_INK, linestyle=style, linewidth=0.9)
        ax.annotate(
            f"P{q:g} {pct[q]:.1f}",
            (pct[q], 0.92 if q != 50.0 else 0.84),
            xycoords=("data", "axes fraction"),
            xytext=(3, 0),
            textcoords="offset points",
            fontsize=7,
            color=_INK,
        )
    label = output_label(column)
    ax.set_xlabel(f"{label} [{unit}]" if unit else label, fontsize=9)
    ax.set_ylabel("cases", fontsize=9)
    negative = int(np.count_nonzero(values < 0)) if is_margin else None
    heading = title or table.title or "study"
    extra = f" ({negative} of {values.size} cases below zero)" if negative is not None else f" ({values.size} cases)"
    ax.set_title(heading + extra, fontsize=10, color=_INK, loc="left")
    _plain(ax)
    _caption(fig, "")
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
    """
    target, fmt = figure_target(path)
    if measure not in ("spearman", "src"):
        raise InputError(f"measure: expected 'spearman' or 'src', got {measure!r}")
    if not isinstance(result, SensitivityResult) or not result.entries:
        raise InputError("plot_tornado: expected a SensitivityResult with at least one parameter")
    entries = sorted(result.entries, key=lambda e: abs(getattr(e, measure)))
    values = np.array([getattr(e, measure) for e in entries])
    labels = [e.parameter for e in entries]
    fig = new_figure(6.4, 1.2 + 0.38 * len(entries))
    ax = fig.add_subplot()
    colours = [_ACCENT if v < 0 else _BAR for v in values]
    ax.barh(np.arange(len(entries)), values, color=colours, height=0.6)
    ax.set_yticks(np.arange(len(entries)), labels, fontsize=8)
    ax.axvline(0.0, color=_INK, linewidth=0.8)
    limit = max(1e-12, float(np.max(np.abs(values))))
    ax.set_xlim(-1.15 * limit, 1.15 * limit)
    for k, v in enumerate(values):
        ax.annotate(
            f"{v:+.2f}",
            (v, k),
            xytext=(4 if v >= 0 else -4, 0),
            textcoords="offset points",
            ha="left" if v >= 0 else "right",
            va="center",
            fontsize=7,
            color=_INK,
        )
    name = "Spearman rank correlation" if measure == "spearman" else "standardised regression coefficient"
    ax.set_xlabel(f"{name} with {output_label(result.output)} [-]", fontsize=9)
    heading = title or f"Sensitivity of {output_label(result.output)}"
    ax.set_title(f"{heading} ({result.cases} cases, R^2 = {result.r_squared:.2f})", fontsize=10, color=_INK, loc="left")
    _plain(ax)
    _caption(fig, "")
    return save_figure(fig, target, fmt)
