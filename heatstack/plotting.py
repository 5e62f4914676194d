"""Figures of a run and of a layout: histories, temperature fields, sensor offset, r-z layout.

Every function draws one figure with matplotlib's object API (a :class:`~matplotlib.figure.Figure`
on the Agg canvas; pyplot and its global state are never touched), writes it atomically to a
PNG or SVG file chosen by the file suffix, and returns the written path. Temperatures are shown
in degC by default (``unit="degC"``, ``"degF"`` or ``"K"``), times in minutes, lengths in mm.

Every figure carries a caption saying that it is not certified data.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.colors import to_rgb
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle

from .errors import InputError, ResultFileError
from .geometry import ROLES, Assembly
from .numerics.grid import Grid
from .result import Result
from .units import from_si

__all__ = [
    "CAPTION",
    "plot_histories",
    "plot_field",
    "plot_sensor_offset",
    "plot_layout",
    "plot_why_the_gauge_lags",
]

#: The caption line printed at the foot of every figure.
CAPTION = "Not certified data. Computed by heatstack; defer to the manufacturer's maintenance data."

_UNIT_LABELS = {"degC": "°C", "degF": "°F", "K": "K"}
_DELTA_UNITS = {"degC": "delta_degC", "degF": "delta_degF", "K": "K"}
_FORMATS = {".png": "png", ".svg": "svg"}
_PNG_DPI = 150

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
#: Fill colour of each part role in the layout figure (our own choice).
_ROLE_COLOURS = {
    "rotor": "#f2a65a",
    "stator": "#8fb3d9",
    "pressure_plate": "#a99fd8",
    "end_plate": "#d9a0c6",
    "torque_tube": "#b8b8b8",
    "heat_shield": "#e8d36a",
    "wheel": "#a3d39c",
    "tyre_bead": "#5c5c5c",
    "other": "#d8c6a4",
}
#: Colour map of the field plot; void cells (NaN) are left transparent.
_FIELD_CMAP = colormaps["plasma"].with_extremes(bad=(1.0, 1.0, 1.0, 0.0))
_PHASE_FILLS = ("#e4e8ee", "#f3f4f6")
_SERIES_LABELS = {
    "heat_sink_mean": "heat-sink mean (mass-weighted)",
    "heat_sink_max": "heat sink, hottest cell",
    "wheel_max": "wheel, hottest cell",
}


# --------------------------------------------------------------------------- units, names, files
def _check_unit(unit: str) -> str:
    if unit not in _UNIT_LABELS:
        raise InputError(f"temperature unit {unit!r} is not one of {sorted(_UNIT_LABELS)}")
    return _UNIT_LABELS[unit]


def _temperature(values: np.ndarray, unit: str) -> np.ndarray:
    return np.asarray(from_si(values, "temperature", unit), dtype=float)


def _difference(values: np.ndarray, unit: str) -> np.ndarray:
    return np.asarray(from_si(values, "temperature_difference", _DELTA_UNITS[unit]), dtype=float)


def _target(path: str | os.PathLike) -> tuple[Path, str]:
    """Check the output path before any drawing: known suffix, existing folder."""
    target = Path(path)
    fmt = _FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"figure file {str(target)!r}: the suffix must be .png or .svg, got {target.suffix!r}")
    folder = target.parent
    if not folder.is_dir():
        raise ResultFileError(f"figure file {str(target)!r}: folder {str(folder)!r} does not exist")
    return target, fmt


def _save(fig: Figure, target: Path, fmt: str) -> Path:
    """Write ``fig`` to a temporary file beside ``target``, then move it into place."""
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    except OSError as exc:
        raise ResultFileError(f"figure file {str(target)!r} cannot be written: {exc}") from exc
    try:
        with os.fdopen(fd, "wb") as handle:
            if fmt == "svg":
                fig.savefig(handle, format="svg", metadata={"Date": None})
            else:
                fig.savefig(handle, format="png", dpi=_PNG_DPI)
        mode = target.stat().st_mode & 0o777 if target.exists() else 0o644
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except OSError as exc:
        _remove_quietly(tmp)
        raise ResultFileError(f"figure file {str(target)!r} cannot be written: {exc}") from exc
    except BaseException:
        _remove_quietly(tmp)
        raise
    return target


def _remove_quietly(name: str) -> None:
    try:
        os.remove(name)
    except OSError:
        pass


def _check_result(result: Result) -> None:
    if not isinstance(result, Result):
        raise InputError(f"expected a heatstack Result, got {type(result).__name__}")


def _history_label(result: Result, name: str) -> str:
    if name in result.readings:
        tau = result.probe_time_constants.get(name, 0.0)
        return f"{name} (reading, lag {tau:.0f} s)" if tau > 0 else name
    if name.startswith("surface:"):
        return f"{name[len('surface:') :]} surface (mean)"
    return _SERIES_LABELS.get(name, name)


def _minutes_text(seconds: float) -> str:
    minutes = seconds / 60.0
    if abs(minutes) < 1.0:
        return f"{minutes:.2f} min"
    if abs(minutes) < 100.0:
        return f"{minutes:.1f} min"
    return f"{minutes:.0f} min"


# --------------------------------------------------------------------------- figure frame
def _figure(width: float, height: float) -> Figure:
    """A constrained-layout figure on an Agg canvas with the caption strip at its foot."""
    fig = Figure(figsize=(width, height), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    strip = 0.24 / height  # [figure fraction] kept free for the caption
    fig.get_layout_engine().set(rect=(0.0, strip, 1.0, 1.0 - strip))
    fig.text(0.008, 0.3 * strip, CAPTION, fontsize=7, color="0.3", ha="left", va="bottom")
    return fig


def _height_for(r_span: float, z_span: float, axes_width: float) -> float:
    """Figure height [in] that fits an equal-aspect r-z plot ``axes_width`` inches wide."""
    return float(np.clip(axes_width * r_span / z_span + 1.5, 3.5, 11.0))


def _text_colour(fill: str) -> str:
    r, g, b = to_rgb(fill)
    return "black" if 0.299 * r + 0.587 * g + 0.114 * b > 0.5 else "white"


# --------------------------------------------------------------------------- label placement
def _candidates() -> list[tuple[float, float, str, str, bool]]:
    """Offsets [points] of a label from its anchor, nearest first; ``True`` = needs a leader."""
    near = [
        (5, 5, "left", "bottom"),
        (-5, 5, "right", "bottom"),
        (5, -5, "left", "top"),
        (-5, -5, "right", "top"),
        (0, 7, "center", "bottom"),
        (0, -7, "center", "top"),
        (7, 0, "left", "center"),
        (-7, 0, "right", "center"),
    ]
    out = [(dx, dy, ha, va, False) for dx, dy, ha, va in near]
    for radius in (22.0, 36.0, 52.0, 70.0):
        for degrees in (45, 135, -45, -135, 90, -90, 0, 180, 20, 160, -20, -160, 65, 115, -65, -115):
            a = np.radians(degrees)
            dx, dy = radius * np.cos(a), radius * np.sin(a)
            ha = "left" if dx > 1 else "right" if dx < -1 else "center"
            va = "bottom" if dy > 1 else "top" if dy < -1 else "center"
            out.append((dx, dy, ha, va, True))
    return out


_CANDIDATES = _candidates()


def _densify(xy: np.ndarray, step: float = 3.0) -> np.ndarray:
    """Points every ``step`` pixels along a polyline given in pixels."""
    xy = xy[np.all(np.isfinite(xy), axis=1)]
    if len(xy) < 2:
        return xy
    s = np.concatenate(([0.0], np.cumsum(np.hypot(*np.diff(xy, axis=0).T))))
    n = int(min(max(s[-1] / step, 2), 50_000))
    q = np.linspace(0.0, s[-1], n)
    return np.column_stack((np.interp(q, s, xy[:, 0]), np.interp(q, s, xy[:, 1])))


class _LabelPlacer:
    """Greedy placement of annotation labels in one axes.

    Each label takes the candidate offset that stays inside the axes, overlaps no label
    placed before, no marked anchor, and covers the fewest points of the drawn curves.
    The figure layout is computed once here; labels are kept out of the layout so it
    does not change afterwards.
    """

    def __init__(self, fig: Figure, ax, obstacle_axes: Sequence = (), avoid_lines: bool = True):
        fig.draw_without_rendering()
        self.renderer = fig.canvas.get_renderer()
        self.fig, self.ax = fig, ax
        self.scale = fig.dpi / 72.0
        frame = ax.get_window_extent(self.renderer)
        self.frame = np.array([frame.x0, frame.y0, frame.x1, frame.y1])
        self.boxes: list[np.ndarray] = []
        points = []
        if avoid_lines:
            for axes in (ax, *obstacle_axes):
                for line in axes.get_lines():
                    if line.get_visible():
                        xy = np.asarray(line.get_xydata(), dtype=float)
                        points.append(_densify(line.get_transform().transform(xy)))
        self.points = np.concatenate(points) if points else np.zeros((0, 2))
        self.soft_points = np.zeros((0, 2))
        self.anchors = np.zeros((0, 2))

    def add_soft_segments(self, segments: np.ndarray) -> None:
        """Edges [data] labels should rather not cover (weaker than curves), e.g. part outlines."""
        pixels = [_densify(self.ax.transData.transform(seg), step=4.0) for seg in segments]
        if pixels:
            self.soft_points = np.concatenate([self.soft_points, *pixels])

    def block_points(self, xy_data: np.ndarray, half: float = 4.0) -> None:
        """Keep labels off these anchors [data], ``half`` pixels around each."""
        pixels = self.ax.transData.transform(np.atleast_2d(xy_data))
        self.anchors = np.concatenate((self.anchors, pixels))
        for x, y in pixels:
            self.boxes.append(np.array([x - half, y - half, x + half, y + half]))

    def block_artist(self, artist) -> None:
        """Keep labels off an artist already drawn (e.g. a label placed by hand)."""
        bb = artist.get_window_extent(self.renderer)
        self.boxes.append(np.array([bb.x0, bb.y0, bb.x1, bb.y1]))

    def _size(self, text: str, fontsize: float, rotation: float = 0.0) -> tuple[float, float]:
        probe = self.ax.text(0, 0, text, fontsize=fontsize, rotation=rotation)
        bb = probe.get_window_extent(self.renderer)
        probe.remove()
        return bb.width, bb.height

    def place(
        self,
        xy: tuple[float, float],
        text: str,
        *,
        colour: str = "0.1",
        fontsize: float = 7.5,
        boxed: bool = False,
        near_only: bool = False,
        candidates: Sequence[tuple[float, float, str, str, bool]] | None = None,
    ):
        """Add the label ``text`` for the anchor ``xy`` [data] where it reads best.

        ``candidates`` replaces the default offsets: (dx, dy [points], ha, va, leader).
        """
        anchor = self.ax.transData.transform(np.asarray(xy, dtype=float))
        w, h = self._size(text, fontsize)
        pad = 2.0
        area = (w + 2 * pad) * (h + 2 * pad)
        best, best_score = None, np.inf
        for index, (dx, dy, ha, va, leader) in enumerate(candidates or _CANDIDATES):
            if near_only and leader:
                break
            ox, oy = anchor[0] + dx * self.scale, anchor[1] + dy * self.scale
            x0 = {"left": ox, "right": ox - w, "center": ox - 0.5 * w}[ha]
            y0 = {"bottom": oy, "top": oy - h, "center": oy - 0.5 * h}[va]
            box = np.array([x0 - pad, y0 - pad, x0 + w + pad, y0 + h + pad])
            inside = _overlap(box, self.frame)
            score = 1e5 * (1.0 - inside / area) + 0.3 * index + (4.0 if leader else 0.0)
            score += sum(1e4 * _overlap(box, other) / area for other in self.boxes)
            score += 15.0 * _count_inside(self.points, box) + 2.0 * _count_inside(self.soft_points, box)
            if self.anchors.size and not leader:
                # a label must sit nearer its own anchor than any other marked anchor
                own = _distance_to_box(anchor[None, :], box)[0]
                others = _distance_to_box(self.anchors, box)
                others = others[np.hypot(*(self.anchors - anchor).T) > 0.5]
                if others.size and others.min() < own + 10.0 * self.scale:
                    score += 300.0
            if score < best_score:
                best, best_score = (dx, dy, ha, va, leader, box), score
        dx, dy, ha, va, leader, box = best
        kwargs = dict(
            xy=xy,
            xycoords="data",
            xytext=(dx, dy),
            textcoords="offset points",
            ha=ha,
            va=va,
            fontsize=fontsize,
            color=colour,
            annotation_clip=False,
            zorder=6,
        )
        if leader:
            kwargs["arrowprops"] = dict(arrowstyle="-", color=colour, lw=0.6, shrinkA=0.5, shrinkB=2.5)
        if boxed or leader:
            kwargs["bbox"] = dict(boxstyle="square,pad=0.12", fc="white", ec="none", alpha=0.92)
        label = self.ax.annotate(text, **kwargs)
        label.set_in_layout(False)
        self.boxes.append(box)
        return label


def _distance_to_box(points: np.ndarray, box: np.ndarray) -> np.ndarray:
    dx = np.maximum(np.maximum(box[0] - points[:, 0], points[:, 0] - box[2]), 0.0)
    dy = np.maximum(np.maximum(box[1] - points[:, 1], points[:, 1] - box[3]), 0.0)
    return np.hypot(dx, dy)


def _count_inside(points: np.ndarray, box: np.ndarray) -> int:
    if not points.size:
        return 0
    x, y = points[:, 0], points[:, 1]
    return int(np.count_nonzero((x > box[0]) & (x < box[2]) & (y > box[1]) & (y < box[3])))


def _overlap(a: np.ndarray, b: np.ndarray) -> float:
    dx = min(a[2], b[2]) - max(a[0], b[0])
    dy = min(a[3], b[3]) - max(a[1], b[1])
    return float(dx * dy) if dx > 0 and dy > 0 else 0.0


# --------------------------------------------------------------------------- shared pieces
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


def _mark_peaks(placer: _LabelPlacer, peaks: Sequence[tuple[float, float, str, str]]) -> None:
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
    target, fmt = _target(path)
    _check_result(result)
    symbol = _check_unit(unit)
    if names is None:
        names = [*result.readings, *(n for n in ("heat_sink_mean", "heat_sink_max") if n in result.series)]
    elif isinstance(names, str):
        names = [names]
    names = list(dict.fromkeys(names))
    if not names:
        raise InputError("plot_histories: no probe or series names to plot")
    curves = [(name, _temperature(result.history(name), unit)) for name in names]

    fig = _figure(10.0, 5.6)
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
        peaks.append((t, v, f"{v:.0f} {symbol} at {_minutes_text(t)}", colour))
    _headroom(ax, [v for _, v in curves])
    ax.set_ylabel(f"Temperature [{symbol}]")
    rows = _shade_phases(fig, ax, result.phases, t0, t1)
    _title(ax, "Temperature histories (probe readings solid, global series dashed)", rows)
    fig.legend(loc="outside right upper", fontsize=8, frameon=False)
    _mark_peaks(_LabelPlacer(fig, ax), peaks)
    return _save(fig, target, fmt)


# --------------------------------------------------------------------------- 2. field
def _cell_edges(part_map: np.ndarray, r_edges: np.ndarray, z_edges: np.ndarray, every: bool = False) -> np.ndarray:
    """Cell edges as segments [m] in (z, r) order, shape (n, 2, 2).

    With ``every=False`` only the edges between cells of different part index (part
    outlines, void included); with ``every=True`` every edge of an active cell.
    """
    padded = np.pad(part_map, 1, constant_values=-1)
    inner_cols = padded[:, 1:-1]  # (nz + 2, nr)
    below, above = inner_cols[:-1], inner_cols[1:]  # across z_edges[j], shape (nz + 1, nr)
    inner_rows = padded[1:-1, :]  # (nz, nr + 2)
    left, right = inner_rows[:, :-1], inner_rows[:, 1:]  # across r_edges[i], shape (nz, nr + 1)
    if every:
        across_z = (below >= 0) | (above >= 0)
        across_r = (left >= 0) | (right >= 0)
    else:
        across_z = below != above
        across_r = left != right
    j, i = np.nonzero(across_z)
    flat = np.stack([np.column_stack((z_edges[j], r_edges[i])), np.column_stack((z_edges[j], r_edges[i + 1]))], axis=1)
    j, i = np.nonzero(across_r)
    upright = np.stack(
        [np.column_stack((z_edges[j], r_edges[i])), np.column_stack((z_edges[j + 1], r_edges[i]))], axis=1
    )
    return np.concatenate((flat, upright))


def plot_field(result: Result, path: str | os.PathLike, time: float, unit: str = "degC") -> Path:
    """Map the r-z temperature field at the stored snapshot nearest ``time``.

    The axle direction z runs horizontally and the radius r vertically, in mm, to equal
    scale: the usual half cross-section of a wheel. Void is left blank; part outlines
    are drawn where neighbouring cells belong to different parts; probes are marked.

    Parameters
    ----------
    result : Result
        The run to plot; it must hold field snapshots.
    path : str or path-like
        Output file, ``.png`` or ``.svg``.
    time : float
        Requested time [s]; must lie within the record.
    unit : {"degC", "degF", "K"}
        Temperature unit of the colour bar.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        ``time`` outside the record, no snapshots, unknown unit or suffix.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = _target(path)
    _check_result(result)
    symbol = _check_unit(unit)
    t_first, t_last = float(result.times[0]), float(result.times[-1])
    try:
        time = float(time)
    except (TypeError, ValueError) as exc:
        raise InputError(f"plot_field: time must be a number of seconds, got {time!r}") from exc
    tol = 1e-9 * max(abs(t_last), 1.0)
    if not np.isfinite(time) or time < t_first - tol or time > t_last + tol:
        raise InputError(f"plot_field: time {time} s is outside the record ({t_first:g} s to {t_last:g} s)")
    if result.snapshot_times.size == 0:
        raise InputError("plot_field: this result holds no field snapshots")
    k = int(np.argmin(np.abs(result.snapshot_times - time)))
    shown = float(result.snapshot_times[k])
    values = _temperature(result.snapshots[k], unit)
    z_mm, r_mm = result.z_edges * 1e3, result.r_edges * 1e3

    fig = _figure(9.0, _height_for(r_mm[-1] - r_mm[0], z_mm[-1] - z_mm[0], 6.6))
    ax = fig.add_subplot()
    finite = values[np.isfinite(values)]
    vmin, vmax = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    if vmax - vmin < 1e-6:
        vmin, vmax = vmin - 1.0, vmax + 1.0
    mesh = ax.pcolormesh(
        z_mm, r_mm, np.ma.masked_invalid(values.T), cmap=_FIELD_CMAP, vmin=vmin, vmax=vmax, shading="flat"
    )
    outlines = _cell_edges(result.part_map, result.r_edges, result.z_edges) * 1e3
    ax.add_collection(LineCollection(outlines, colors="0.1", linewidths=0.7, zorder=3))
    ax.set_xlim(z_mm[0], z_mm[-1])
    ax.set_ylim(r_mm[0], r_mm[-1])
    ax.set_aspect("equal")
    ax.set_xlabel("Axial position z [mm]")
    ax.set_ylabel("Radius r [mm]")
    bar = fig.colorbar(mesh, ax=ax, shrink=0.85, pad=0.02)
    bar.set_label(f"Temperature [{symbol}]")
    title = f"Temperature field at {_minutes_text(shown)}"
    if abs(shown - time) > 0.5:
        title += f" (nearest stored snapshot to {_minutes_text(time)})"
    ax.set_title(title, fontsize=11)

    positions = [(name, z * 1e3, r * 1e3) for name, (r, z) in result.probe_positions.items()]
    for _, z, r in positions:
        ax.plot([z], [r], "o", ms=5, mfc="white", mec="black", mew=1.0, zorder=5)
    placer = _LabelPlacer(fig, ax, avoid_lines=False)
    placer.add_soft_segments(outlines)
    placer.block_points(np.array([(z, r) for _, z, r in positions]).reshape(-1, 2), half=5.0)
    for name, z, r in positions:
        placer.place((z, r), name, boxed=True)
    return _save(fig, target, fmt)


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
    target, fmt = _target(path)
    _check_result(result)
    symbol = _check_unit(unit)
    reading_k = _probe_reading(result, sensor)
    mean_k = _series(result, "heat_sink_mean")
    curves = [
        (f"{sensor} reading", _temperature(reading_k, unit), _COLOURS[0], "-", 1.8),
        (f"{sensor} location, local", _temperature(result.probes[sensor], unit), _COLOURS[0], ":", 1.3),
        ("heat-sink mean", _temperature(mean_k, unit), _COLOURS[1], "--", 1.5),
    ]
    if "heat_sink_max" in result.series:
        hottest = _temperature(result.series["heat_sink_max"], unit)
        curves.append(("heat sink, hottest cell", hottest, _COLOURS[3], "-.", 1.2))
    offset = _difference(reading_k - mean_k, unit)

    fig = _figure(10.0, 5.6)
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
        peaks.append((t, v, f"{v:.0f} {symbol} at {_minutes_text(t)}", colour))
    placer = _LabelPlacer(fig, ax, obstacle_axes=(twin,))
    _mark_peaks(placer, peaks)
    k_low = int(np.argmin(offset))
    if offset[k_low] < 0:
        t_low, v_low = float(result.times[k_low]), float(offset[k_low])
        twin.plot([t_low / 60.0], [v_low], "v", ms=5, color="0.25", zorder=4)
        # place in the twin axes: same pixels, its own data coordinates
        twin_placer = _LabelPlacer(fig, twin, obstacle_axes=(ax,))
        twin_placer.boxes.extend(placer.boxes)
        twin_placer.place(
            (t_low / 60.0, v_low), f"reads {-v_low:.0f} {symbol} low at {_minutes_text(t_low)}", colour="0.2"
        )
    return _save(fig, target, fmt)


# --------------------------------------------------------------------------- 4. layout
def _split_name(name: str) -> str | None:
    words = name.split()
    if len(words) < 2:
        return None
    best = min(range(1, len(words)), key=lambda k: abs(len(" ".join(words[:k])) - len(" ".join(words[k:]))))
    return " ".join(words[:best]) + "\n" + " ".join(words[best:])


def plot_layout(assembly: Assembly, path: str | os.PathLike, grid: Grid | None = None) -> Path:
    """Draw the r-z layout of an assembly before any run: parts by role, probes, optional grid.

    Parameters
    ----------
    assembly : Assembly
        The parts and probes to draw (z horizontal, r vertical, in mm, equal scale).
    path : str or path-like
        Output file, ``.png`` or ``.svg``.
    grid : Grid, optional
        If given, its cell edges are drawn as thin lines over the parts.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    InputError
        ``assembly`` or ``grid`` of the wrong kind, unknown suffix.
    ResultFileError
        The folder does not exist or the file cannot be written.
    """
    target, fmt = _target(path)
    if not isinstance(assembly, Assembly):
        raise InputError(f"plot_layout: expected an Assembly, got {type(assembly).__name__}")
    if grid is not None and not isinstance(grid, Grid):
        raise InputError(f"plot_layout: grid must be a heatstack Grid, got {type(grid).__name__}")
    parts = assembly.parts
    z_lo = min(p.z_min for p in parts) * 1e3
    z_hi = max(p.z_max for p in parts) * 1e3
    r_lo = min(p.r_inner for p in parts) * 1e3
    r_hi = max(p.r_outer for p in parts) * 1e3
    margin = 0.06 * max(z_hi - z_lo, r_hi - r_lo)

    fig = _figure(10.0, _height_for(r_hi - r_lo + 2 * margin, z_hi - z_lo + 2 * margin, 7.3))
    ax = fig.add_subplot()
    for part in parts:
        ax.add_patch(
            Rectangle(
                (part.z_min * 1e3, part.r_inner * 1e3),
                (part.z_max - part.z_min) * 1e3,
                (part.r_outer - part.r_inner) * 1e3,
                facecolor=_ROLE_COLOURS[part.role],
                edgecolor="0.15",
                linewidth=0.7,
                zorder=1,
            )
        )
    if grid is not None:
        lines = _cell_edges(grid.part_map, grid.r_edges, grid.z_edges, every=True) * 1e3
        ax.add_collection(LineCollection(lines, colors="0.25", linewidths=0.25, alpha=0.55, zorder=2))
    ax.set_xlim(z_lo - margin, z_hi + margin)
    ax.set_ylim(r_lo - margin, r_hi + margin)
    ax.set_aspect("equal")
    ax.set_xlabel("Axial position z [mm]")
    ax.set_ylabel("Radius r [mm]")
    n_probes = len(assembly.probes)
    title = f"Layout: {len(parts)} parts, {n_probes} probe{'' if n_probes == 1 else 's'}"
    if grid is not None:
        nz, nr = grid.shape
        title += f"; grid {nz} × {nr} cells, {grid.n_cells} active"
    ax.set_title(title, fontsize=11)
    roles = [role for role in ROLES if any(p.role == role for p in parts)]
    handles = [Patch(facecolor=_ROLE_COLOURS[role], edgecolor="0.15", label=role.replace("_", " ")) for role in roles]
    handles.append(Line2D([], [], ls="none", marker="o", ms=5, mfc="white", mec="black", mew=1.0, label="probe"))
    fig.legend(handles=handles, loc="outside right upper", fontsize=8, frameon=False, title="Role")
    probes = [(p.name, p.z * 1e3, p.r * 1e3) for p in assembly.probes]
    for _, z, r in probes:
        ax.plot([z], [r], "o", ms=5, mfc="white", mec="black", mew=1.0, zorder=5)

    placer = _LabelPlacer(fig, ax, avoid_lines=False)
    edges = [
        [
            (p.z_min, p.r_inner),
            (p.z_max, p.r_inner),
            (p.z_max, p.r_outer),
            (p.z_min, p.r_outer),
            (p.z_min, p.r_inner),
        ]
        for p in parts
    ]
    placer.add_soft_segments(np.asarray(edges) * 1e3)
    placer.block_points(np.array([(z, r) for _, z, r in probes]).reshape(-1, 2), half=5.0)
    outside = []
    fontsize = 7.0
    for part in parts:
        centre = (0.5 * (part.z_min + part.z_max) * 1e3, 0.5 * (part.r_inner + part.r_outer) * 1e3)
        corners = ax.transData.transform(
            [(part.z_min * 1e3, part.r_inner * 1e3), (part.z_max * 1e3, part.r_outer * 1e3)]
        )
        width, height = np.abs(corners[1] - corners[0])
        colour = _text_colour(_ROLE_COLOURS[part.role])
        fitted = False
        options = [(part.name, 0)]
        split = _split_name(part.name)
        if split:
            options.append((split, 0))
        options.append((part.name, 90))
        if split:
            options.append((split, 90))
        for text, rotation in options:
            w, h = placer._size(text, fontsize, rotation)
            if w + 4 <= width and h + 4 <= height:
                spot = _free_spot(placer, corners, (w, h), rotation == 0)
                if spot is None:
                    continue
                label = ax.text(
                    *ax.transData.inverted().transform(spot),
                    text,
                    rotation=rotation,
                    ha="center",
                    va="center",
                    ma="center",
                    fontsize=fontsize,
                    color=colour,
                    zorder=4,
                    rotation_mode="anchor",
                )
                label.set_in_layout(False)
                placer.block_artist(label)
                fitted = True
                break
        if not fitted:
            outside.append((part.name, centre))
    for name, z, r in probes:
        placer.place((z, r), name, boxed=True, colour="black")
    for name, centre in outside:
        placer.place(centre, name, boxed=True, colour="0.15", fontsize=fontsize)
    return _save(fig, target, fmt)


def _free_spot(
    placer: _LabelPlacer, corners: np.ndarray, size: tuple[float, float], along_x: bool
) -> np.ndarray | None:
    """Centre [pixels] for a ``size`` label inside the rectangle ``corners`` clear of other labels.

    Tries the middle first, then shifts along the rectangle's long direction.
    """
    (x0, y0), (x1, y1) = np.sort(corners, axis=0)
    w, h = size
    middle = np.array([0.5 * (x0 + x1), 0.5 * (y0 + y1)])
    room = 0.5 * ((x1 - x0) - w - 4.0) if along_x else 0.5 * ((y1 - y0) - h - 4.0)
    for fraction in (0.0, 0.3, -0.3, 0.6, -0.6, 0.9, -0.9):
        centre = middle + (np.array([fraction * room, 0.0]) if along_x else np.array([0.0, fraction * room]))
        box = np.array([centre[0] - 0.5 * w, centre[1] - 0.5 * h, centre[0] + 0.5 * w, centre[1] + 0.5 * h])
        if all(_overlap(box, other) == 0.0 for other in placer.boxes):
            return centre
    return None


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
    target, fmt = _target(path)
    _check_result(result)
    symbol = _check_unit(unit)
    reading = _probe_reading(result, sensor)
    mean = _series(result, "heat_sink_mean")
    wheel_default = names is None
    if names is None:
        names = [n for n in ("wheel_max",) if n in result.series]
        names += [n for n in result.readings if n.startswith("fuse plug")]
    elif isinstance(names, str):
        names = [names]
    extra = [(n, result.history(n)) for n in dict.fromkeys(names) if n not in (sensor, "heat_sink_mean")]
    curves = [
        ("heat-sink mean", mean, _COLOURS[1], "--", 1.6),
        (f"{sensor} location, local temperature", result.probes[sensor], _COLOURS[0], ":", 1.4),
        (f"{sensor} reading", reading, _COLOURS[0], "-", 1.9),
    ]
    for k, (name, values) in enumerate(extra):
        colour = _COLOURS[(k + 2) % len(_COLOURS)]
        curves.append((_history_label(result, name), values, colour, "-", 1.2))
    curves = [(label, _temperature(v, unit), c, s, w) for label, v, c, s, w in curves]

    fig = _figure(10.0, 5.8)
    ax = fig.add_subplot()
    t0, t1 = _time_axis(ax, result)
    minutes = result.times / 60.0
    peaks = []
    prefixes = {1: "local ", 2: "reading "}
    for k, (label, values, colour, style, width) in enumerate(curves):
        ax.plot(minutes, values, color=colour, ls=style, lw=width, label=label, zorder=3)
        t, v = _peak(result.times, values)
        ax.plot([t / 60.0], [v], "o", ms=4, color=colour, mec="white", mew=0.6, zorder=4)
        peaks.append((t, v, f"{prefixes.get(k, '')}{v:.0f} {symbol} at {_minutes_text(t)}", colour))
    _headroom(ax, [c[1] for c in curves], top=0.3)
    ax.set_ylabel(f"Temperature [{symbol}]")
    rows = _shade_phases(fig, ax, result.phases, t0, t1)
    title = "Why the gauge lags: heat soaks from the heat sink into the sensor"
    _title(ax, title + (" and the wheel" if wheel_default and extra else ""), rows)
    fig.legend(loc="outside right upper", fontsize=8, frameon=False)

    t_end = float(result.end_of_heating)
    braked = t0 < t_end <= t1
    if braked:
        ax.axvline(t_end / 60.0, color="0.15", lw=1.0, ls=(0, (4, 2)), zorder=2)
    placer = _LabelPlacer(fig, ax)
    if braked:
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
        t_read, v_read = _peak(result.times, curves[2][1])
        t_local, _ = _peak(result.times, curves[1][1])
        if t_read > t_end:
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
            text = f"{sensor} reading peaks {_minutes_text(t_read - t_end)} after the end of braking"
            if t_local > t_end and t_read >= t_local:
                text += (
                    f"\n(conduction: local peak after {_minutes_text(t_local - t_end)};"
                    f" instrument lag: {_minutes_text(t_read - t_local)} more)"
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
                    _densify(ax.transData.transform([(t_end / 60.0, y_arrow), (t_read / 60.0, y_arrow)])),
                )
            )
    _mark_peaks(placer, peaks)
    return _save(fig, target, fmt)
