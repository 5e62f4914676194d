"""Figures of the dispatch questions: a day of operations on one time axis, and the wait's margin.

:func:`plot_day` draws the day's temperature histories, flight after flight on the day's
clock (hours), the sensor reading against the true heat-sink temperature and the fuse
plugs, with each departure marked and, below, the governing margin if that take-off were
rejected. :func:`plot_wait_margin` draws the governing margin of a shortest-safe-wait
answer against the wait, every run of the search a point, the wait found marked.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from ..answers.fuse_plugs import as_fuse_plug, plug_temperature
from ..errors import InputError
from ..geometry import HEAT_SINK_MEAN, WHEEL_MAX, series_label
from ..questions.day import DayAnswer
from ..questions.safe_wait import WaitAnswer
from .common import (
    OKABE_ITO,
    check_unit,
    figure_target,
    new_figure,
    save_figure,
    series_kind,
    style_for,
    to_temperature_unit,
)

__all__ = ["plot_day", "plot_wait_margin"]

_SHOWN = ("sensor", HEAT_SINK_MEAN, WHEEL_MAX)


def _leg_curves(leg, plugs) -> list[tuple[str, str, np.ndarray]]:
    """(style name, legend label, temperature [K]) of each curve of one leg: the sensor reading, the
    heat-sink mean, the hottest wheel cell, then each fuse plug as its own lagged temperature (or,
    without its plug record, its probe: the rim at the seat)."""
    curves = [(n, "sensor reading" if n == "sensor" else series_label(n), leg.history(n)) for n in _SHOWN
              if n in leg.readings or n in leg.series]  # fmt: skip
    by_name = {as_fuse_plug(p).name: as_fuse_plug(p) for p in plugs}
    for name in (n for n in leg.readings if n in by_name or series_kind(n) == "fuse_plug"):
        plug = by_name.get(name)
        if plug is None:
            curves.append((name, f"rim at the seat of {name}", leg.readings[name]))
        else:
            curves.append((name, f"{name} itself (lag {plug.time_constant:.0f} s)", plug_temperature(leg, plug)))
    return curves


def _day_lines(ax, day: DayAnswer, unit: str) -> None:
    for k, flight in enumerate(day.flights):
        for leg in (flight.arrival, flight.departure):
            hours = leg.times / 3600.0
            for name, text, values in _leg_curves(leg, day.plugs):
                colour, dashes, width = style_for(name)
                label = text if k == 0 and leg is flight.arrival else None
                ax.plot(hours, to_temperature_unit(values, unit), color=colour, ls=dashes, lw=width, label=label)
        ax.axvline(flight.departure_state.time / 3600.0, color="0.4", ls="--", lw=0.8)
        ax.text(
            flight.departure_state.time / 3600.0, 1.0, f" dep. {flight.flight.number}",
            transform=ax.get_xaxis_transform(), fontsize=7, va="top",
        )  # fmt: skip


def _release_lines(ax, day: DayAnswer, unit: str) -> None:
    """Each fuse plug's release temperature as a thin line in the plug's colour, one label per value."""
    values: dict[float, list[str]] = {}
    for plug in day.plugs:
        values.setdefault(round(float(plug.release_temperature), 6), []).append(plug.name)
    for value, names in values.items():
        colour, _, _ = style_for(names[0])
        shown = float(to_temperature_unit(np.array([value]), unit)[0])
        ax.axhline(shown, color=colour, lw=0.9, ls=(0, (8, 3, 2, 3)), alpha=0.9, zorder=2)
        ax.annotate(
            f"{', '.join(names)} release {shown:.0f} {unit}", xy=(0.0, shown), xycoords=("axes fraction", "data"),
            xytext=(4, 2), textcoords="offset points", fontsize=7, color=colour, va="bottom",
        )  # fmt: skip


def plot_day(day: DayAnswer, path: str | os.PathLike, unit: str = "degC") -> Path:
    """The day's histories per flight on one time axis, and each departure's governing margin.

    Parameters
    ----------
    day : DayAnswer
        From :func:`~heatstack.questions.day.run_day`.
    path : str or path-like
        A .png or .svg file.
    unit : str
        Temperature unit shown (``"degC"``, ``"degF"``, ``"K"``).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        If ``day`` is not a DayAnswer, or the unit or file suffix is not known.
    ResultFileError
        If the folder does not exist or the file cannot be written.
    """
    if not isinstance(day, DayAnswer):
        raise InputError(f"day: expected a DayAnswer, got {type(day).__name__}")
    unit = check_unit(unit)
    target, fmt = figure_target(path)
    margins = [(f.departure_state.time / 3600.0, f.departure_margin) for f in day.flights if f.departure_margin]
    fig = new_figure(10.0, 6.5 if margins else 4.5)
    axes = fig.subplots(2 if margins else 1, 1, sharex=True, squeeze=False, height_ratios=[3, 1] if margins else None)
    ax = axes[0, 0]
    _day_lines(ax, day, unit)
    _release_lines(ax, day, unit)
    ax.set_ylabel(f"temperature [{unit}]")
    ax.set_title(day.title, fontsize=10)
    ax.legend(fontsize=7, loc="upper right")
    ax.grid(alpha=0.3)
    if margins:
        low = axes[1, 0]
        x = [m[0] for m in margins]
        y = [m[1].margin for m in margins]
        low.bar(x, y, width=0.08, color=[OKABE_ITO["bluish green"] if v >= 0 else OKABE_ITO["vermillion"] for v in y])
        for xi, (_, m) in zip(x, margins, strict=True):
            where = "bottom" if m.margin >= 0 else "top"
            low.annotate(series_label(m.governing), (xi, m.margin), fontsize=7, ha="center", va=where)
        low.axhline(0.0, color="k", lw=0.8)
        low.margins(y=0.25)  # room for the names under (or over) the bars
        low.set_ylabel("margin if rejected [K]")
        low.grid(alpha=0.3)
        axes[-1, 0].set_xlabel("time of day [h]")
    else:
        ax.set_xlabel("time of day [h]")
    return save_figure(fig, target, fmt)


def plot_wait_margin(answer: WaitAnswer, path: str | os.PathLike) -> Path:
    """The governing margin against the wait before departure, with the wait found.

    Parameters
    ----------
    answer : WaitAnswer
        From :func:`~heatstack.questions.safe_wait.shortest_safe_wait`.
    path : str or path-like
        A .png or .svg file.

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``answer`` is not a WaitAnswer, or the file suffix is not known.
    ResultFileError
        If the folder does not exist or the file cannot be written.
    """
    if not isinstance(answer, WaitAnswer):
        raise InputError(f"answer: expected a WaitAnswer, got {type(answer).__name__}")
    target, fmt = figure_target(path)
    fig = new_figure(7.5, 4.5)
    ax = fig.subplots()
    waits = np.array([s.wait for s in answer.samples]) / 60.0
    margins = np.array([s.margin for s in answer.samples])
    ax.plot(waits, margins, "o-", color="C0", ms=4, label="governing margin (K; 0.1 bar counts as 1)")
    ax.axhline(0.0, color="k", lw=0.8)
    ax.axvline(answer.wait / 60.0, color="C3", ls="--", label=f"shortest safe wait {answer.wait / 60.0:.1f} min")
    ax.set_xlabel("wait before departure [min]")
    ax.set_ylabel("margin if the take-off is rejected")
    ax.set_title(f"governed by the {series_label(answer.governing)} limit", fontsize=10)
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    return save_figure(fig, target, fmt)
