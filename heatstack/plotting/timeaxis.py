"""The time axis of the history figures: the split time panels and the shaded duty phases.

Time runs horizontally in minutes. When braking takes a small part of the record the axis is
split into an expanded braking panel and the rest; the duty phases are alternating light bands
named above the axes.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from matplotlib.figure import Figure

from ..result import Result

__all__ = ["PHASE_FILLS", "Curve", "Panel", "draw_curves", "panel_at", "shade_phases", "time_panels", "time_spans"]

#: Fill colours of the alternating duty-phase bands.
PHASE_FILLS = ("#e9ecf1", "#f7f7f8")
#: The time axis is split when braking takes less than this fraction of the record.
_SPLIT_BELOW = 0.08
#: The expanded left panel shows at least this long [s] and at least this many braking durations.
_EXPANDED_MIN, _EXPANDED_FACTOR = 120.0, 3.0


@dataclass(frozen=True)
class Curve:
    """One drawn curve: legend label, values [display unit], look, and the text before its peak label.

    Attributes
    ----------
    label : str
        Legend label.
    values : ndarray
        Values at the record times [display unit].
    colour : str
        Matplotlib colour.
    dashes : tuple
        Matplotlib line style.
    width : float
        Line width [points].
    peak_prefix : str
        Text before the peak label.
    mark_peak : bool
        Whether the peak is marked and labelled.
    """

    label: str
    values: np.ndarray
    colour: str
    dashes: tuple
    width: float
    peak_prefix: str = ""
    mark_peak: bool = True


@dataclass(frozen=True)
class Panel:
    """One time panel of a row: its axes and the time span [s] it shows.

    Attributes
    ----------
    ax : matplotlib.axes.Axes
        The axes.
    start, end : float
        Time span shown [s].
    """

    ax: object
    start: float
    end: float


def time_spans(result: Result) -> list[tuple[float, float]]:
    """Time spans [s] of the panels: the whole record, or the braking expanded and the rest.

    The axis is split when braking ends within the first few per cent of the record, so the
    braking minute gets a panel of its own instead of a sliver at the left edge.

    Parameters
    ----------
    result : Result
        The run (record times and end of heating [s]).

    Returns
    -------
    list of (float, float)
        One or two spans (start, end) [s].
    """
    t0, t1 = float(result.times[0]), float(result.times[-1])
    t_end = float(result.end_of_heating)
    if not (t0 < t_end < t1) or (t_end - t0) > _SPLIT_BELOW * (t1 - t0):
        return [(t0, t1)]
    cut = min(t0 + max(_EXPANDED_FACTOR * (t_end - t0), _EXPANDED_MIN), t0 + 0.25 * (t1 - t0))
    return [(t0, cut), (cut, t1)]


def time_panels(fig: Figure, result: Result, height_ratios: Sequence[float] = (1.0,)) -> list[list[Panel]]:
    """Rows of time panels sharing the temperature axis per row and the time axis per column.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure to draw the axes in.
    result : Result
        The run, for the time spans (:func:`time_spans`).
    height_ratios : sequence of float, optional
        Relative height of each row.

    Returns
    -------
    list of list of Panel
        One list of panels per row, the time axes in minutes.
    """
    spans = time_spans(result)
    axes = fig.subplots(
        len(height_ratios),
        len(spans),
        sharex="col",
        sharey="row",
        squeeze=False,
        gridspec_kw={"height_ratios": list(height_ratios), "width_ratios": [1.0, 2.4][: len(spans)]},
    )
    if len(spans) > 1:
        fig.get_layout_engine().set(wspace=0.0, w_pad=0.02)
    rows = []
    for row in axes:
        panels = [Panel(ax, lo, hi) for ax, (lo, hi) in zip(row, spans, strict=True)]
        for k, panel in enumerate(panels):
            panel.ax.set_xlim(panel.start / 60.0, panel.end / 60.0)
            panel.ax.grid(True, color="0.87", lw=0.5, zorder=0.5)
            panel.ax.set_axisbelow(True)
            if k > 0:
                panel.ax.spines["left"].set_linestyle((0, (3, 2)))
                panel.ax.tick_params(axis="y", left=False)
        rows.append(panels)
    bottom = rows[-1]
    if len(bottom) > 1:
        bottom[0].ax.set_xlabel("Time [min]  (braking, expanded)")
        bottom[1].ax.set_xlabel("Time [min]  (scale changes at the dashed edge)")
    else:
        bottom[0].ax.set_xlabel("Time [min]")
    return rows


def panel_at(panels: Sequence[Panel], t: float) -> Panel:
    """The panel whose span holds time ``t``.

    Parameters
    ----------
    panels : sequence of Panel
        One row of panels, in time order.
    t : float
        Time [s].

    Returns
    -------
    Panel
        The first panel ending at or after ``t``, else the last.
    """
    for panel in panels:
        if t <= panel.end:
            return panel
    return panels[-1]


def draw_curves(panels: Sequence[Panel], minutes: np.ndarray, curves: Sequence[Curve], legend: bool = True) -> None:
    """Draw every curve in every panel of a row (legend labels from the first panel only).

    Parameters
    ----------
    panels : sequence of Panel
        One row of panels.
    minutes : ndarray
        Record times [min].
    curves : sequence of Curve
        The curves.
    legend : bool, optional
        Whether the curves get legend labels.
    """
    for panel in panels:
        for curve in curves:
            panel.ax.plot(
                minutes,
                curve.values,
                color=curve.colour,
                ls=curve.dashes,
                lw=curve.width,
                label=curve.label if legend and panel is panels[0] else None,
                zorder=3,
            )


def shade_phases(fig: Figure, panels: Sequence[Panel], phases: Sequence[tuple[str, float, float]]) -> str:
    """Alternating light bands for the duty phases, their names in one row above the axes.

    A name wider than its band is replaced by its number, and the numbered names are returned as
    a key line (``"phases: 1 rejected take-off stop; ..."``) for the title; names never stack.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    panels : sequence of Panel
        One row of panels.
    phases : sequence of (str, float, float)
        Name, start [s] and end [s] of each phase.

    Returns
    -------
    str
        The key line of the numbered names, ``""`` when every name fits.
    """
    labels = []
    for k, (name, start, end) in enumerate(phases):
        best = None
        for panel in panels:
            lo, hi = max(start, panel.start), min(end, panel.end)
            if hi <= lo:
                continue
            panel.ax.axvspan(lo / 60.0, hi / 60.0, color=PHASE_FILLS[k % 2], lw=0, zorder=0)
            x0, x1 = panel.ax.transData.transform([(lo / 60.0, 0.0), (hi / 60.0, 0.0)])[:, 0]
            if best is None or x1 - x0 > best[0]:
                best = (x1 - x0, panel, lo, hi)
        if best is not None:
            labels.append((k + 1, name, *best))
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    keyed = []
    for number, name, width, panel, lo, hi in labels:
        label = panel.ax.annotate(
            name,
            xy=(0.5 * (lo + hi) / 60.0, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(0, 2),
            textcoords="offset points",
            ha="center",
            va="bottom",
            fontsize=7.5,
            color="0.3",
            annotation_clip=False,
        )
        if label.get_window_extent(renderer).width + 6.0 > width and " " in name:
            words = name.split()
            half = max(1, len(words) // 2)
            label.set_text(" ".join(words[:half]) + "\n" + " ".join(words[half:]))
            label.set_multialignment("center")
        if label.get_window_extent(renderer).width + 6.0 > width:
            label.set_text(str(number))
            keyed.append(f"{number} {name}")
            if label.get_window_extent(renderer).width + 2.0 > width:
                label.set_visible(False)
    return ("phases: " + "; ".join(keyed)) if keyed else ""
