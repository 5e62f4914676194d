"""Time-history figures of a run: histories, sensor offset, why the gauge lags.

Time runs horizontally in minutes with the duty phases shaded; temperatures are in the
requested unit and the peaks of the curves are labelled.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from ..errors import InputError
from ..geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN, WHEEL_MAX
from ..result import Result
from .common import (
    check_result,
    check_unit,
    figure_target,
    minutes_text,
    new_figure,
    save_figure,
    to_difference_unit,
    to_temperature_unit,
)
from .labels import LabelPlacer, densify

__all__ = ["plot_histories", "plot_sensor_offset", "plot_why_the_gauge_lags"]

#: Line colours: a plain palette of our own, dark enough for coloured label text on white.
_COLOURS = (
    "#1f4e9c",
    "#c0392b",
    "#2e8b57",
    "#d2691e",
    "#7d3c98",
    "#17808a",
    "#8c564b",
    "#222222",
    "#4d5d6e",
    "#8a7300",
)
_PHASE_FILLS = ("#e4e8ee", "#f3f4f6")
_SERIES_LABELS = {
    HEAT_SINK_MEAN: "heat-sink mean (mass-weighted)",
    HEAT_SINK_MAX: "heat sink, hottest cell",
    WHEEL_MAX: "wheel, hottest cell",
}


# --------------------------------------------------------------------------- shared pieces
def _history_label(result: Result, name: str) -> str:
    if name in result.readings:
        tau = result.probe_time_constants.get(name, 0.0)
        return f"{name} (reading, lag {tau:.0f} s)" if tau > 0 else name
    if name.startswith("surface:"):
        return f"{name[len('surface:') :]} surface (mean)"
    return _SERIES_LABELS.get(name, name)


def _shade_phases(fig: Figure, ax, phases: Sequence[tuple[str, float, float]], t0: float, t1: float) -> int:
    """Alternating light bands for the duty phases, their names in rows above the axes.

    Returns the number of label rows used above the axes.
    """
    labels = []
    for k, (name, start, end) in enumerate(phases):
        lo, hi = max(start, t0), min(end, t1)
        if hi <= lo:
            continue
        ax.axvspan(lo / 60.0, hi / 60.0, color=_PHASE_FILLS[k % 2], lw=0, zorder=0)
        label = ax.annotate(
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
        labels.append(label)
    if len(labels) < 2:
        return len(labels)
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    rows: list[list[tuple[float, float]]] = [[], [], []]
    for label in labels:
        bb = label.get_window_extent(renderer)
        span = (bb.x0 - 3.0, bb.x1 + 3.0)

        def clash(row, span=span):
            return sum(max(0.0, min(span[1], b) - max(span[0], a)) for a, b in row)

        row = min(range(len(rows)), key=lambda k: (clash(rows[k]) > 0, clash(rows[k]), k))
        rows[row].append(span)
        label.xyann = (0, 2 + 9 * row)
    return 1 + max(k for k, row in enumerate(rows) if row)


def _title(ax, text: str, rows: int) -> None:
    """Axes title above the phase-name rows."""
    ax.set_title(text, fontsize=11, pad=6 + 9 * rows)


def _time_axis(ax, result: Result) -> tuple[float, float]:
    t0, t1 = float(result.times[0]), float(result.times[-1])
    ax.set_xlim(t0 / 60.0, t1 / 60.0)
    ax.set_xlabel("Time [min]")
    ax.grid(True, color="0.85", lw=0.5, zorder=0.5)
    ax.set_axisbelow(True)
    return t0, t1


def _headroom(ax, values: Sequence[np.ndarray], top: float = 0.12, bottom: float = 0.04) -> None:
    finite = np.concatenate([np.asarray(v, dtype=float).ravel() for v in values])
    finite = finite[np.isfinite(finite)]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    span = hi - lo if hi > lo else max(abs(hi), 1.0)
    ax.set_ylim(lo - bottom * span, hi + top * span)


def _peak(times: np.ndarray, values: np.ndarray) -> tuple[float, float]:
    k = int(np.nanargmax(values))
    return float(times[k]), float(values[k])


def _mark_peaks(placer: LabelPlacer, peaks: Sequence[tuple[float, float, str, str]]) -> None:
    """Label each peak (time [s], value [display unit], text, colour), hottest first."""
    placer.block_points(np.array([(t / 60.0, v) for t, v, _, _ in peaks]).reshape(-1, 2))
    for t, v, text, colour in sorted(peaks, key=lambda p: -p[1]):
        placer.place((t / 60.0, v), text, colour=colour)


def _probe_reading(result: Result, name: str) -> np.ndarray:
    if name not in result.readings:
        raise InputError(f"no probe named {name!r}; known probes: {sorted(result.readings)}")
    return result.readings[name]


def _series(result: Result, name: str) -> np.ndarray:
    if name not in result.series:
        raise InputError(f"this result has no series {name!r}; known series: {sorted(result.series)}")
    return result.series[name]


# --------------------------------------------------------------------------- 1. histories
def plot_histories(
    result: Result,
    path: str | os.PathLike,
    names: Sequence[str] | None = None,
    unit: str = "degC",
) -> Path:
    """Plot probe readings and global series against time, duty phases shaded, peaks marked.

    Parameters
    ----------
    result : Result
        The run to plot.
    path : str or path-like
        Output file; ``.png`` or ``.svg`` chooses the format. Its folder must exist.
    names : sequence of str, optional
        Probe readings or series (``result.history`` names) to draw. Default: every probe
        reading, then ``heat_sink_mean`` and ``heat_sink_max`` (no ``surface:*`` series).
    unit : {"degC", "degF", "K"}
        Temperature unit of the axis.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        Unknown name, unit or file suffix.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    if names is None:
        names = [*result.readings, *(n for n in (HEAT_SINK_MEAN, HEAT_SINK_MAX) if n in result.series)]
    elif isinstance(names, str):
        names = [names]
    names = list(dict.fromkeys(names))
    if not names:
        raise InputError("plot_histories: no probe or series names to plot")
    curves = [(name, to_temperature_unit(result.history(name), unit)) for name in names]

    fig = new_figure(10.0, 5.6)
    ax = fig.add_subplot()
    t0, t1 = _time_axis(ax, result)
    minutes = result.times / 60.0
    peaks = []
    for k, (name, values) in enumerate(curves):
        colour = _COLOURS[k % len(_COLOURS)]
        style = "-" if name in result.readings else "--"
        ax.plot(minutes, values, color=colour, ls=style, lw=1.4, label=_history_label(result, name), zorder=3)
        t, v = _peak(result.times, values)
        ax.plot([t / 60.0], [v], "o", ms=4, color=colour, mec="white", mew=0.6, zorder=4)
        peaks.append((t, v, f"{v:.0f} {symbol} at {minutes_text(t)}", colour))
    _headroom(ax, [v for _, v in curves])
    ax.set_ylabel(f"Temperature [{symbol}]")
    rows = _shade_phases(fig, ax, result.phases, t0, t1)
    _title(ax, "Temperature histories (probe readings solid, global series dashed)", rows)
    fig.legend(loc="outside right upper", fontsize=8, frameon=False)
    _mark_peaks(LabelPlacer(fig, ax), peaks)
    return save_figure(fig, target, fmt)


# --------------------------------------------------------------------------- 3. sensor offset
def plot_sensor_offset(result: Result, path: str | os.PathLike, sensor: str = "sensor", unit: str = "degC") -> Path:
    """Plot a sensor's reading against the heat-sink temperature, with the offset on a second axis.

    Drawn: the sensor reading, the local temperature at the sensor, the heat-sink
    mass-mean and (if recorded) the hottest heat-sink cell; on the right axis the offset
    ``reading - heat-sink mean``. Peaks and the largest under-reading are marked.

    Parameters
    ----------
    result : Result
        The run to plot; it must hold the ``heat_sink_mean`` series.
    path : str or path-like
        Output file, ``.png`` or ``.svg``.
    sensor : str
        Probe name of the sensor.
    unit : {"degC", "degF", "K"}
        Temperature unit of both axes (the offset is a difference in that unit).

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        Unknown sensor, missing series, unknown unit or suffix.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    reading_k = _probe_reading(result, sensor)
    mean_k = _series(result, HEAT_SINK_MEAN)
    curves = [
        (f"{sensor} reading", to_temperature_unit(reading_k, unit), _COLOURS[0], "-", 1.8),
        (f"{sensor} location, local", to_temperature_unit(result.probes[sensor], unit), _COLOURS[0], ":", 1.3),
        ("heat-sink mean", to_temperature_unit(mean_k, unit), _COLOURS[1], "--", 1.5),
    ]
    if HEAT_SINK_MAX in result.series:
        hottest = to_temperature_unit(result.series[HEAT_SINK_MAX], unit)
        curves.append(("heat sink, hottest cell", hottest, _COLOURS[3], "-.", 1.2))
    offset = to_difference_unit(reading_k - mean_k, unit)

    fig = new_figure(10.0, 5.6)
    ax = fig.add_subplot()
    t0, t1 = _time_axis(ax, result)
    minutes = result.times / 60.0
    for label, values, colour, style, width in curves:
        ax.plot(minutes, values, color=colour, ls=style, lw=width, label=label, zorder=3)
    _headroom(ax, [c[1] for c in curves])
    ax.set_ylabel(f"Temperature [{symbol}]")
    twin = ax.twinx()
    twin.plot(minutes, offset, color="0.35", lw=1.2, label=f"offset: {sensor} reading − heat-sink mean")
    twin.axhline(0.0, color="0.35", lw=0.6, ls=(0, (1, 2)))
    _headroom(twin, [offset, np.zeros(1)], top=0.12, bottom=0.12)
    twin.set_ylabel(f"Offset, reading − heat-sink mean [{symbol}]", color="0.3")
    twin.tick_params(axis="y", colors="0.3")
    rows = _shade_phases(fig, ax, result.phases, t0, t1)
    _title(ax, f"Sensor offset: {sensor} reading against the heat-sink temperature", rows)
    handles = ax.get_lines()[: len(curves)] + twin.get_lines()[:1]
    fig.legend(handles=handles, loc="outside right upper", fontsize=8, frameon=False)

    peaks = []
    for k in (0, 2):
        label, values, colour, _, _ = curves[k]
        t, v = _peak(result.times, values)
        ax.plot([t / 60.0], [v], "o", ms=4, color=colour, mec="white", mew=0.6, zorder=4)
        peaks.append((t, v, f"{v:.0f} {symbol} at {minutes_text(t)}", colour))
    placer = LabelPlacer(fig, ax, obstacle_axes=(twin,))
    _mark_peaks(placer, peaks)
    k_low = int(np.argmin(offset))
    if offset[k_low] < 0:
        t_low, v_low = float(result.times[k_low]), float(offset[k_low])
        twin.plot([t_low / 60.0], [v_low], "v", ms=5, color="0.25", zorder=4)
        # place in the twin axes: same pixels, its own data coordinates
        twin_placer = LabelPlacer(fig, twin, obstacle_axes=(ax,))
        twin_placer.boxes.extend(placer.boxes)
        twin_placer.place(
            (t_low / 60.0, v_low), f"reads {-v_low:.0f} {symbol} low at {minutes_text(t_low)}", colour="0.2"
        )
    return save_figure(fig, target, fmt)


# --------------------------------------------------------------------------- 5. gauge lag
def plot_why_the_gauge_lags(
    result: Result,
    path: str | os.PathLike,
    names: Sequence[str] | None = None,
    sensor: str = "sensor",
    unit: str = "degC",
) -> Path:
    """Show on one time axis how heat soaks from the heat sink to the sensor and the wheel.

    Drawn: the heat-sink mass-mean, the local temperature at the sensor location, the
    sensor reading, and the histories ``names`` (by default the hottest wheel cell and
    every probe whose name starts with ``"fuse plug"``). Peaks are marked, the end of
    braking is a vertical line, and the delay of the sensor reading's peak after the end
    of braking is annotated, split into the conduction delay (local peak) and the
    instrument lag (reading peak after local peak).

    Parameters
    ----------
    result : Result
        The run to plot; it must hold the ``heat_sink_mean`` series.
    path : str or path-like
        Output file, ``.png`` or ``.svg``.
    names : sequence of str, optional
        Further probe readings or series to draw.
    sensor : str
        Probe name of the brake temperature sensor.
    unit : {"degC", "degF", "K"}
        Temperature unit of the axis.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        Unknown sensor or name, missing series, unknown unit or suffix.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    wheel_default = names is None
    curves, n_extra = _gauge_lag_curves(result, names, sensor, unit)

    fig = new_figure(10.0, 5.8)
    ax = fig.add_subplot()
    t0, t1 = _time_axis(ax, result)
    minutes = result.times / 60.0
    peaks = []
    prefixes = {1: "local ", 2: "reading "}
    for k, (label, values, colour, style, width) in enumerate(curves):
        ax.plot(minutes, values, color=colour, ls=style, lw=width, label=label, zorder=3)
        t, v = _peak(result.times, values)
        ax.plot([t / 60.0], [v], "o", ms=4, color=colour, mec="white", mew=0.6, zorder=4)
        peaks.append((t, v, f"{prefixes.get(k, '')}{v:.0f} {symbol} at {minutes_text(t)}", colour))
    _headroom(ax, [c[1] for c in curves], top=0.3)
    ax.set_ylabel(f"Temperature [{symbol}]")
    rows = _shade_phases(fig, ax, result.phases, t0, t1)
    title = "Why the gauge lags: heat soaks from the heat sink into the sensor"
    _title(ax, title + (" and the wheel" if wheel_default and n_extra else ""), rows)
    fig.legend(loc="outside right upper", fontsize=8, frameon=False)

    t_end = float(result.end_of_braking)
    braked = t0 < t_end <= t1
    if braked:
        ax.axvline(t_end / 60.0, color="0.15", lw=1.0, ls=(0, (4, 2)), zorder=2)
    placer = LabelPlacer(fig, ax)
    if braked:
        end_label = _end_of_braking_label(ax, placer, t_end)
        t_read, v_read = _peak(result.times, curves[2][1])
        t_local, _ = _peak(result.times, curves[1][1])
        if t_read > t_end:
            _annotate_sensor_delay(ax, placer, end_label, sensor, t_end, t_local, (t_read, v_read))
    _mark_peaks(placer, peaks)
    return save_figure(fig, target, fmt)


def _gauge_lag_curves(
    result: Result, names: Sequence[str] | str | None, sensor: str, unit: str
) -> tuple[list[tuple[str, np.ndarray, str, str, float]], int]:
    """Curves (label, values in ``unit``, colour, line style, width) of the gauge-lag figure, and the number of
    further histories among them.

    First the heat-sink mean, the local temperature at the sensor and its reading; then ``names`` (by
    default the hottest wheel cell and the fuse plugs), leaving out the sensor and the heat-sink mean.
    """
    reading = _probe_reading(result, sensor)
    mean = _series(result, HEAT_SINK_MEAN)
    if names is None:
        names = [n for n in (WHEEL_MAX,) if n in result.series]
        names += [n for n in result.readings if n.startswith("fuse plug")]
    elif isinstance(names, str):
        names = [names]
    extra = [(n, result.history(n)) for n in dict.fromkeys(names) if n not in (sensor, HEAT_SINK_MEAN)]
    curves = [
        ("heat-sink mean", mean, _COLOURS[1], "--", 1.6),
        (f"{sensor} location, local temperature", result.probes[sensor], _COLOURS[0], ":", 1.4),
        (f"{sensor} reading", reading, _COLOURS[0], "-", 1.9),
    ]
    for k, (name, values) in enumerate(extra):
        colour = _COLOURS[(k + 2) % len(_COLOURS)]
        curves.append((_history_label(result, name), values, colour, "-", 1.2))
    return [(label, to_temperature_unit(v, unit), c, s, w) for label, v, c, s, w in curves], len(extra)


def _end_of_braking_label(ax, placer: LabelPlacer, t_end: float):
    """Write "end of braking" up the dashed line at ``t_end`` [s]; the label is kept clear of others."""
    end_label = ax.annotate(
        "end of braking",
        xy=(t_end / 60.0, 0.99),
        xycoords=("data", "axes fraction"),
        xytext=(3, 0),
        textcoords="offset points",
        rotation=90,
        ha="left",
        va="top",
        fontsize=7.5,
        color="0.15",
    )
    end_label.set_in_layout(False)
    placer.block_artist(end_label)
    return end_label


def _annotate_sensor_delay(
    ax,
    placer: LabelPlacer,
    end_label,
    sensor: str,
    t_end: float,
    t_local: float,
    reading_peak: tuple[float, float],
) -> None:
    """Arrow from the end of braking to the sensor reading's peak, with its delay split into conduction and lag.

    Times [s]: ``t_end`` end of braking, ``t_local`` peak of the local temperature at the sensor,
    ``reading_peak`` (time, value) of the reading's peak, after ``t_end``.
    """
    t_read, v_read = reading_peak
    # the delay arrow runs just below the "end of braking" label
    bottom = end_label.get_window_extent(placer.renderer).y0 - 8.0
    y_arrow = float(ax.transData.inverted().transform((0.0, bottom))[1])
    ax.annotate(
        "",
        xy=(t_read / 60.0, y_arrow),
        xytext=(t_end / 60.0, y_arrow),
        arrowprops=dict(arrowstyle="<->", color=_COLOURS[0], lw=1.0, shrinkA=0, shrinkB=0),
        zorder=5,
    ).set_in_layout(False)
    ax.plot([t_read / 60.0] * 2, [v_read, y_arrow], color=_COLOURS[0], lw=0.6, ls=":", zorder=2)
    text = f"{sensor} reading peaks {minutes_text(t_read - t_end)} after the end of braking"
    if t_local > t_end and t_read >= t_local:
        text += (
            f"\n(conduction: local peak after {minutes_text(t_local - t_end)};"
            f" instrument lag: {minutes_text(t_read - t_local)} more)"
        )
    # the delay text goes right of the arrow, or above / below it clear of the end label
    ends = ax.transData.transform([(t_end / 60.0, y_arrow), (t_read / 60.0, y_arrow)])
    length = (ends[1, 0] - ends[0, 0]) / placer.scale  # [points]
    clear = (end_label.get_window_extent(placer.renderer).x1 - ends[0, 0]) / placer.scale + 4.0
    options = [
        (6.0, 0.0, "left", "center", False),
        (clear - length, 4.0, "left", "bottom", False),
        (0.0, 4.0, "right", "bottom", False),
        (clear - length, -4.0, "left", "top", False),
        (0.0, -4.0, "right", "top", False),
        (6.0, 4.0, "left", "bottom", False),
        (6.0, -4.0, "left", "top", False),
    ]
    placer.place(
        (t_read / 60.0, y_arrow),
        text,
        colour=_COLOURS[0],
        boxed=True,
        candidates=options,
    )
    placer.points = np.concatenate(
        (
            placer.points,
            densify(ax.transData.transform([(t_end / 60.0, y_arrow), (t_read / 60.0, y_arrow)])),
        )
    )
