"""Time-history figures of a run: histories, sensor offset, why the gauge lags.

Time runs horizontally in minutes with the duty phases shaded; temperatures are in the
requested unit and the peaks of the curves are labelled.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
from matplotlib.figure import Figure

from ..answers.fuse_plugs import FusePlug, as_fuse_plug, plug_temperature
from ..errors import InputError
from ..geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN, RUBBING_FACE_MAX, WHEEL_MAX
from ..result import Result
from .common import (
    SERIES_STYLES,
    Threshold,
    add_foot_legend,
    check_result,
    check_unit,
    figure_target,
    minutes_text,
    new_figure,
    save_figure,
    series_kind,
    style_for,
    to_difference_unit,
    to_temperature_unit,
)
from .labels import LabelPlacer
from .timeaxis import PHASE_FILLS, Curve, Panel, draw_curves, panel_at, shade_phases, time_panels

if TYPE_CHECKING:
    from ..wheel_design import FusePlugSpec

__all__ = ["plot_histories", "plot_sensor_offset", "plot_why_the_gauge_lags"]

_SERIES_LABELS = {
    HEAT_SINK_MEAN: "heat-sink mean (mass-weighted)",
    HEAT_SINK_MAX: "heat sink, hottest cell",
    RUBBING_FACE_MAX: "heat sink, hottest rubbing surface",
    WHEEL_MAX: "wheel, hottest cell",
}


# --------------------------------------------------------------------------- shared pieces
def _history_label(result: Result, name: str, sensor: str = "sensor") -> str:
    if name in result.readings:
        if series_kind(name, sensor) == "fuse_plug":  # a plug's probe reads the rim at the plug's seat
            return f"rim at the seat of {name}"
        tau = result.probe_time_constants.get(name, 0.0)
        return f"{name} (reading, lag {tau:.0f} s)" if tau > 0 else name
    if name.startswith("surface:"):
        return f"{name[len('surface:') :]} surface (mean)"
    return _SERIES_LABELS.get(name, name)


def _plug_label(plug: FusePlug) -> str:
    if plug.time_constant > 0:
        return f"{plug.name} itself (lag {plug.time_constant:.0f} s)"
    return f"{plug.name} itself (follows the rim)"


def _history_curve(
    result: Result, name: str, unit: str, sensor: str = "sensor", plugs: dict[str, FusePlug] | None = None
) -> Curve:
    """The curve of a probe reading or series; a fuse plug's probe draws the plug's own lagged temperature."""
    colour, dashes, width = style_for(name, sensor)
    plug = (plugs or {}).get(name)
    if plug is not None:
        values = to_temperature_unit(plug_temperature(result, plug), unit)
        return Curve(_plug_label(plug), values, colour, dashes, width, "plug ")
    return Curve(
        _history_label(result, name, sensor), to_temperature_unit(result.history(name), unit), colour, dashes, width
    )


def _rim_at_seat_curve(result: Result, plug: FusePlug, unit: str, sensor: str) -> Curve:
    """The rim temperature at a plug's seat: thin, dotted, in the plug's colour, its peak not marked."""
    colour = style_for(plug.name, sensor)[0]
    values = to_temperature_unit(result.probes[plug.name], unit)
    return Curve(f"rim at the seat of {plug.name}", values, colour, (0, (1, 1.5)), 0.9, mark_peak=False)


def _check_plugs(result: Result, plugs) -> dict[str, FusePlug]:
    """The fuse plugs by probe name; InputError for a wrong record or a plug whose probe the result lacks."""
    if plugs is None:
        return {}
    out = {}
    for item in [plugs] if not isinstance(plugs, list | tuple) else plugs:
        plug = as_fuse_plug(item)
        if plug.name not in result.readings:
            known = sorted(result.readings)
            raise InputError(f"plugs: no probe named {plug.name!r} for the fuse plug; known probes: {known}")
        out[plug.name] = plug
    return out


def _title(fig: Figure, text: str, key: str) -> None:
    """Figure title, with the key of numbered phases under it."""
    fig.suptitle(text + (f"\n{key}" if key else ""), fontsize=11 if not key else 10.5)


def _legend(fig: Figure) -> None:
    """The legend in rows under the panels, so the title and the curves keep the full width."""
    handles, labels = [], []
    for ax in fig.axes:
        for handle, label in zip(*ax.get_legend_handles_labels(), strict=True):
            handles.append(handle)
            labels.append(label)
    add_foot_legend(fig, handles, labels)


def _headroom(ax, values: Sequence[np.ndarray], top: float = 0.12, bottom: float = 0.04) -> None:
    finite = np.concatenate([np.asarray(v, dtype=float).ravel() for v in values])
    finite = finite[np.isfinite(finite)]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    span = hi - lo if hi > lo else max(abs(hi), 1.0)
    ax.set_ylim(lo - bottom * span, hi + top * span)


def _peak(times: np.ndarray, values: np.ndarray) -> tuple[float, float]:
    k = int(np.nanargmax(values))
    return float(times[k]), float(values[k])


def _mark_peaks(fig: Figure, panels: Sequence[Panel], result: Result, curves: Sequence[Curve], symbol: str) -> dict:
    """Mark and label each curve's peak in the panel holding it, hottest first; return the placers by axes."""
    peaks = []
    for curve in curves:
        if not curve.mark_peak:
            continue
        t, v = _peak(result.times, curve.values)
        panel = panel_at(panels, t)
        panel.ax.plot([t / 60.0], [v], "o", ms=4, color=curve.colour, mec="white", mew=0.6, zorder=4)
        peaks.append((panel, t, v, f"{curve.peak_prefix}{v:.0f} {symbol} at {minutes_text(t)}", curve.colour))
    placers = {id(p.ax): LabelPlacer(fig, p.ax) for p in panels}
    for panel in panels:  # keep clear of the labels already written (thresholds, end of braking)
        for text in panel.ax.texts:
            if text.get_visible() and text.get_text():
                placers[id(panel.ax)].block_artist(text)
    for panel, t, v, _, _ in peaks:
        placers[id(panel.ax)].block_points(np.array([[t / 60.0, v]]))
    for panel, t, v, text, colour in sorted(peaks, key=lambda p: -p[2]):
        placers[id(panel.ax)].place((t / 60.0, v), text, colour=colour)
    return placers


def _threshold_groups(
    thresholds: Sequence[Threshold], names: Sequence[str], unit: str
) -> list[tuple[float, str, list[Threshold]]]:
    """Thresholds of the drawn series grouped by value [display unit] and kind, lowest first."""
    groups: dict[tuple[float, str], list[Threshold]] = {}
    for threshold in thresholds:
        if threshold.series in names:
            groups.setdefault((round(threshold.temperature, 3), threshold.kind), []).append(threshold)
    return [
        (float(to_temperature_unit(np.array(members[0].temperature), unit)), kind, members)
        for (_, kind), members in sorted(groups.items())
    ]


def _joined_names(names: Sequence[str]) -> str:
    """Names joined with their shared leading or trailing words said once ("fuse plug 1, 2")."""
    words = [name.split() for name in names]
    if len(words) < 2:
        return ", ".join(names)
    head = 0
    while all(len(w) > head + 1 and w[head] == words[0][head] for w in words):
        head += 1
    if head:
        return " ".join(words[0][:head]) + " " + ", ".join(" ".join(w[head:]) for w in words)
    tail = 0
    while all(len(w) > tail + 1 and w[-1 - tail] == words[0][-1 - tail] for w in words):
        tail += 1
    if tail:
        return ", ".join(" ".join(w[: len(w) - tail]) for w in words) + " " + " ".join(words[0][len(words[0]) - tail :])
    return ", ".join(names)


def _draw_thresholds(fig: Figure, panels: Sequence[Panel], groups, symbol: str) -> None:
    """Release temperatures and limits as thin lines in their series' colour, one label per value.

    Call after the temperature axis is scaled; a label too close to the one below goes under its line.
    """
    if not groups:
        return
    fig.draw_without_rendering()
    last_pixel = np.inf
    for value, kind, members in sorted(groups, key=lambda g: -g[0]):
        colour, _, _ = style_for(members[0].series)
        for panel in panels:
            panel.ax.axhline(value, color=colour, lw=0.9, ls=(0, (8, 3, 2, 3)), alpha=0.9, zorder=2)
        word = "release" if kind == "release" else "limit"
        pixel = float(panels[-1].ax.transData.transform((0.0, value))[1])
        above = last_pixel - pixel > 12.0
        last_pixel = pixel if above else -np.inf
        label = panels[-1].ax.annotate(
            f"{_joined_names([m.series for m in members])} {word} {value:.0f} {symbol}",
            xy=(1.0, value),
            xycoords=("axes fraction", "data"),
            xytext=(-3, 2 if above else -2),
            textcoords="offset points",
            ha="right",
            va="bottom" if above else "top",
            fontsize=7,
            color=colour,
            bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.85),
            zorder=6,
        )
        label.set_in_layout(False)


def _check_thresholds(thresholds: Sequence[Threshold] | None) -> tuple[Threshold, ...]:
    if thresholds is None:
        return ()
    out = tuple(thresholds)
    for item in out:
        if not isinstance(item, Threshold):
            raise InputError(f"thresholds: expected heatstack Threshold records, got {type(item).__name__}")
    return out


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
    thresholds: Sequence[Threshold] | None = None,
    plugs: Sequence[FusePlug | FusePlugSpec] | None = None,
) -> Path:
    """Plot probe readings and global series against time, duty phases shaded, peaks marked.

    Each series keeps its colour and line style of :data:`~heatstack.plotting.common.SERIES_STYLES`.
    When braking is short beside the record, the time axis is split: the braking expanded on the
    left, the rest on the right.

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
    thresholds : sequence of Threshold, optional
        Release temperatures and limits [K]; those of drawn series are drawn as lines.
    plugs : sequence of FusePlug or FusePlugSpec, optional
        The design's fuse plugs: each plug's probe is drawn as the plug's own lagged
        temperature (the one its release and peak are judged on, as in the report).
        Without them, a fuse plug's probe is drawn as what it reads, the rim at the seat.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        Unknown name, unit, file suffix, or a plug whose probe the result lacks.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    thresholds = _check_thresholds(thresholds)
    by_name = _check_plugs(result, plugs)
    if names is None:
        names = [*result.readings, *(n for n in (HEAT_SINK_MEAN, HEAT_SINK_MAX) if n in result.series)]
    elif isinstance(names, str):
        names = [names]
    names = list(dict.fromkeys(names))
    if not names:
        raise InputError("plot_histories: no probe or series names to plot")
    curves = [_history_curve(result, name, unit, plugs=by_name) for name in names]

    fig = new_figure(10.0, 5.6)
    panels = time_panels(fig, result)[0]
    draw_curves(panels, result.times / 60.0, curves)
    groups = _threshold_groups(thresholds, names, unit)
    _headroom(panels[0].ax, [c.values for c in curves] + [np.array([g[0] for g in groups])])
    panels[0].ax.set_ylabel(f"Temperature [{symbol}]")
    key = shade_phases(fig, panels, result.phases)
    _title(fig, "Temperature histories (probe readings, global series)", key)
    _legend(fig)
    _draw_thresholds(fig, panels, groups, symbol)
    _mark_peaks(fig, panels, result, curves, symbol)
    return save_figure(fig, target, fmt)


# --------------------------------------------------------------------------- 3. sensor offset
def plot_sensor_offset(result: Result, path: str | os.PathLike, sensor: str = "sensor", unit: str = "degC") -> Path:
    """Plot a sensor's reading against the heat-sink temperature, with the offset in a panel below.

    Drawn: the sensor reading, the local temperature at the sensor, the heat-sink
    mass-mean and (if recorded) the hottest heat-sink cell; below, on its own axis, the
    offset ``reading - heat-sink mean``. Peaks and the largest under-reading are marked.

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
    local = SERIES_STYLES["sensor_local"]
    curves = [
        Curve(f"{sensor} reading", to_temperature_unit(reading_k, unit), *style_for(sensor, sensor)),
        Curve(
            f"{sensor} location, local",
            to_temperature_unit(result.probes[sensor], unit),
            local.colour,
            local.dashes[0],
            local.width,
            mark_peak=False,
        ),
        Curve("heat-sink mean", to_temperature_unit(mean_k, unit), *style_for(HEAT_SINK_MEAN)),
    ]
    if HEAT_SINK_MAX in result.series:
        hottest = to_temperature_unit(result.series[HEAT_SINK_MAX], unit)
        curves.append(Curve("heat sink, hottest cell", hottest, *style_for(HEAT_SINK_MAX), mark_peak=False))
    offset = to_difference_unit(reading_k - mean_k, unit)

    fig = new_figure(10.0, 6.4)
    top, bottom = time_panels(fig, result, height_ratios=(2.6, 1.0))
    minutes = result.times / 60.0
    draw_curves(top, minutes, curves)
    _headroom(top[0].ax, [c.values for c in curves])
    top[0].ax.set_ylabel(f"Temperature [{symbol}]")
    style = SERIES_STYLES["offset"]
    for panel in bottom:
        panel.ax.plot(
            minutes,
            offset,
            color=style.colour,
            lw=style.width,
            label=f"offset: {sensor} reading − heat-sink mean" if panel is bottom[0] else None,
        )
        panel.ax.axhline(0.0, color="0.35", lw=0.7, ls=(0, (1, 2)))
    _headroom(bottom[0].ax, [offset, np.zeros(1)], top=0.15, bottom=0.15)
    bottom[0].ax.set_ylabel(f"Offset [{symbol}]\nreading − mean")
    key = shade_phases(fig, top, result.phases)
    for panel in bottom:
        for k, (_, start, end) in enumerate(result.phases):
            lo, hi = max(start, panel.start), min(end, panel.end)
            if hi > lo:
                panel.ax.axvspan(lo / 60.0, hi / 60.0, color=PHASE_FILLS[k % 2], lw=0, zorder=0)
    _title(fig, f"Sensor offset: {sensor} reading against the heat-sink temperature", key)
    _legend(fig)
    _mark_peaks(fig, top, result, curves, symbol)
    k_low = int(np.argmin(offset))
    if offset[k_low] < 0:
        t_low, v_low = float(result.times[k_low]), float(offset[k_low])
        panel = panel_at(bottom, t_low)
        panel.ax.plot([t_low / 60.0], [v_low], "v", ms=5, color="0.25", zorder=4)
        right = [(8.0, 0.0, "left", "center", False), (8.0, 6.0, "left", "bottom", False)]
        LabelPlacer(fig, panel.ax).place(
            (t_low / 60.0, v_low),
            f"reads {-v_low:.0f} {symbol} low at {minutes_text(t_low)}",
            colour="0.1",
            boxed=True,
            candidates=right,
        )
    return save_figure(fig, target, fmt)


# --------------------------------------------------------------------------- 5. gauge lag
def plot_why_the_gauge_lags(
    result: Result,
    path: str | os.PathLike,
    names: Sequence[str] | None = None,
    sensor: str = "sensor",
    unit: str = "degC",
    thresholds: Sequence[Threshold] | None = None,
    plugs: Sequence[FusePlug | FusePlugSpec] | None = None,
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
    thresholds : sequence of Threshold, optional
        Release temperatures and limits [K]; those of drawn series are drawn as lines.
    plugs : sequence of FusePlug or FusePlugSpec, optional
        The design's fuse plugs: each drawn plug is the plug's own lagged temperature, with
        the rim at its seat as a thin dotted line of the same colour (its peak not marked).
        Without them, a fuse plug's probe is drawn as what it reads, the rim at the seat.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        Unknown sensor or name, missing series, unknown unit or suffix, or a plug whose
        probe the result lacks.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    thresholds = _check_thresholds(thresholds)
    wheel_default = names is None
    curves, extra = _gauge_lag_curves(result, names, sensor, unit, _check_plugs(result, plugs))

    fig = new_figure(10.0, 5.8)
    panels = time_panels(fig, result)[0]
    draw_curves(panels, result.times / 60.0, curves)
    groups = _threshold_groups(thresholds, extra, unit)
    _headroom(panels[0].ax, [c.values for c in curves] + [np.array([g[0] for g in groups])], top=0.3)
    panels[0].ax.set_ylabel(f"Temperature [{symbol}]")
    key = shade_phases(fig, panels, result.phases)
    title = "Why the gauge lags: heat soaks from the heat sink into the sensor"
    _title(fig, title + (" and the wheel" if wheel_default and extra else ""), key)
    _legend(fig)
    _draw_thresholds(fig, panels, groups, symbol)

    t0, t1 = float(result.times[0]), float(result.times[-1])
    t_end = float(result.end_of_braking)
    braked = t0 < t_end <= t1
    if braked:
        for panel in panels:
            panel.ax.axvline(t_end / 60.0, color="0.15", lw=1.0, ls=(0, (4, 2)), zorder=2)
    if braked:
        _end_of_braking_label(panel_at(panels, t_end).ax, t_end)
    placers = _mark_peaks(fig, panels, result, curves, symbol)
    if braked:
        t_read, v_read = _peak(result.times, curves[2].values)
        t_local, _ = _peak(result.times, curves[1].values)
        if t_read > t_end:
            _annotate_sensor_delay(placers[id(panel_at(panels, t_read).ax)], sensor, t_end, t_local, (t_read, v_read))
    return save_figure(fig, target, fmt)


def _gauge_lag_curves(
    result: Result, names: Sequence[str] | str | None, sensor: str, unit: str, plugs: dict[str, FusePlug]
) -> tuple[list[Curve], list[str]]:
    """Curves of the gauge-lag figure, and the names of the further histories among them.

    First the heat-sink mean, the local temperature at the sensor and its reading; then ``names`` (by
    default the hottest wheel cell and the fuse plugs), leaving out the sensor and the heat-sink mean;
    each of ``plugs`` drawn is its own temperature, followed by the rim at its seat.
    """
    reading = _probe_reading(result, sensor)
    mean = _series(result, HEAT_SINK_MEAN)
    if names is None:
        names = [n for n in (WHEEL_MAX,) if n in result.series]
        names += [n for n in result.readings if n in plugs or series_kind(n, sensor) == "fuse_plug"]
    elif isinstance(names, str):
        names = [names]
    extra = [n for n in dict.fromkeys(names) if n not in (sensor, HEAT_SINK_MEAN)]
    local = SERIES_STYLES["sensor_local"]
    curves = [
        Curve("heat-sink mean", to_temperature_unit(mean, unit), *style_for(HEAT_SINK_MEAN)),
        Curve(
            f"{sensor} location, local temperature",
            to_temperature_unit(result.probes[sensor], unit),
            local.colour,
            local.dashes[0],
            local.width,
            peak_prefix="local ",
        ),
        Curve(f"{sensor} reading", to_temperature_unit(reading, unit), *style_for(sensor, sensor), "reading "),
    ]
    for name in extra:
        curves.append(_history_curve(result, name, unit, sensor, plugs))
        if name in plugs:
            curves.append(_rim_at_seat_curve(result, plugs[name], unit, sensor))
    return curves, extra


def _end_of_braking_label(ax, t_end: float):
    """Write "end of braking" up the dashed line at ``t_end`` [s]; later labels keep clear of it."""
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
    return end_label


def _annotate_sensor_delay(
    placer: LabelPlacer, sensor: str, t_end: float, t_local: float, reading_peak: tuple[float, float]
) -> None:
    """A boxed note near the sensor reading's peak: its delay after the end of braking, conduction and lag.

    Times [s]: ``t_end`` end of braking, ``t_local`` peak of the local temperature at the sensor,
    ``reading_peak`` (time, value) of the reading's peak, after ``t_end``.
    """
    t_read, v_read = reading_peak
    text = f"{sensor} reading peaks {minutes_text(t_read - t_end)} after the end of braking"
    if t_local > t_end and t_read >= t_local:
        text += (
            f"\n(conduction: local peak after {minutes_text(t_local - t_end)};"
            f" instrument lag: {minutes_text(t_read - t_local)} more)"
        )
    colour = style_for(sensor, sensor)[0]
    placer.place((t_read / 60.0, v_read), text, colour=colour, boxed=True)
