"""Figures in the r-z plane: the temperature field of a run and the layout of an assembly.

The axle direction z runs horizontally and the radius r vertically, both in mm and to
equal scale: the usual half cross-section of a wheel.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection
from matplotlib.colors import to_rgb
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle
from matplotlib.ticker import MaxNLocator

from ..assembly import Assembly
from ..errors import InputError
from ..geometry import ROLES, Part
from ..numerics.grid import Grid
from ..result import Result
from .common import check_result, check_unit, figure_target, minutes_text, new_figure, save_figure, to_temperature_unit
from .labels import LabelPlacer, box_overlap

__all__ = ["plot_field", "plot_layout", "snapshot_index"]

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


# --------------------------------------------------------------------------- figure frame
def _height_for(r_span: float, z_span: float, axes_width: float) -> float:
    """Figure height [in] that fits an equal-aspect r-z plot ``axes_width`` inches wide."""
    return float(np.clip(axes_width * r_span / z_span + 1.5, 3.5, 11.0))


def _text_colour(fill: str) -> str:
    r, g, b = to_rgb(fill)
    return "black" if 0.299 * r + 0.587 * g + 0.114 * b > 0.5 else "white"


# --------------------------------------------------------------------------- 2. field
def snapshot_index(result: Result, time: float) -> int:
    """Index of the stored snapshot nearest ``time`` [s], the one :func:`plot_field` draws.

    Parameters
    ----------
    result : Result
        The run.
    time : float
        Time [s].

    Returns
    -------
    int
        Index into ``result.snapshot_times``.

    Raises
    ------
    InputError
        ``time`` not a number or outside the record, or the result holds no snapshots.
    """
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
    return int(np.argmin(np.abs(result.snapshot_times - time)))


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
    target, fmt = figure_target(path)
    check_result(result)
    symbol = check_unit(unit)
    k = snapshot_index(result, time)
    time = float(time)
    shown = float(result.snapshot_times[k])
    values = to_temperature_unit(result.snapshots[k], unit)
    z_mm, r_mm = result.z_edges * 1e3, result.r_edges * 1e3

    fig = new_figure(9.0, _height_for(r_mm[-1] - r_mm[0], z_mm[-1] - z_mm[0], 6.6))
    ax = fig.add_subplot()
    vmin, vmax = _record_scale(result, unit)
    masked = np.ma.masked_invalid(values.T)
    mesh = ax.pcolormesh(z_mm, r_mm, masked, cmap=_FIELD_CMAP, vmin=vmin, vmax=vmax, shading="flat")
    isotherm_labels = _isotherms(ax, result, masked, (vmin, vmax))
    outlines = _cell_edges(result.part_map, result.r_edges, result.z_edges) * 1e3
    ax.add_collection(LineCollection(outlines, colors="0.1", linewidths=0.7, zorder=3))
    ax.set_xlim(z_mm[0], z_mm[-1])
    ax.set_ylim(r_mm[0], r_mm[-1])
    ax.set_aspect("equal")
    ax.set_xlabel("Axial position z [mm]")
    ax.set_ylabel("Radius r [mm]")
    bar = fig.colorbar(mesh, ax=ax, shrink=0.85, pad=0.02)
    bar.set_label(f"Temperature [{symbol}]  (one scale for every snapshot of the run)")
    title = f"Temperature field at {minutes_text(shown)}"
    if abs(shown - time) > 0.5:
        title += f" (nearest stored snapshot to {minutes_text(time)})"
    ax.set_title(title, fontsize=11)

    positions = [(name, z * 1e3, r * 1e3) for name, (r, z) in result.probe_positions.items()]
    for _, z, r in positions:
        ax.plot([z], [r], "o", ms=5, mfc="white", mec="black", mew=1.0, zorder=5)
    placer = LabelPlacer(fig, ax, avoid_lines=False)
    placer.add_soft_segments(outlines)
    for label in isotherm_labels:
        placer.block_artist(label)
    placer.block_points(np.array([(z, r) for _, z, r in positions]).reshape(-1, 2), half=5.0)
    for name, z, r in positions:
        placer.place((z, r), name, boxed=True)
    _name_parts(ax, placer, result)
    return save_figure(fig, target, fmt)


def _record_scale(result: Result, unit: str) -> tuple[float, float]:
    """The colour range [display unit] of every stored snapshot, so all field maps of a run compare."""
    values = to_temperature_unit(result.snapshots, unit)
    finite = values[np.isfinite(values)]
    vmin, vmax = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    if vmax - vmin < 1e-6:
        vmin, vmax = vmin - 1.0, vmax + 1.0
    return vmin, vmax


def _isotherms(ax: Axes, result: Result, masked: np.ma.MaskedArray, scale: tuple[float, float]) -> list:
    """Thin labelled isotherms on the cell centres at round steps of the shared scale, part by part.

    Each part is contoured alone, so no isotherm is drawn across a contact, where the temperature jumps.
    Returns the isotherms' value labels, which part names and probe labels keep clear of.
    """
    levels = MaxNLocator(nbins=8).tick_values(*scale)
    z_mid = 0.5 * (result.z_edges[1:] + result.z_edges[:-1]) * 1e3
    r_mid = 0.5 * (result.r_edges[1:] + result.r_edges[:-1]) * 1e3
    labels = []
    for index in range(len(result.part_names)):
        part = np.ma.masked_where(result.part_map.T != index, masked)
        if part.count() < 4:
            continue
        inside = levels[(levels > part.min()) & (levels < part.max())]
        if inside.size == 0:
            continue
        lines = ax.contour(z_mid, r_mid, part, levels=inside, colors="white", linewidths=0.6, alpha=0.85, zorder=2)
        for label in ax.clabel(lines, fmt="%.0f", fontsize=6.5, inline=True, inline_spacing=2):
            label.set_color("white")
            labels.append(label)
    return labels


def _name_parts(ax: Axes, placer: LabelPlacer, result: Result) -> None:
    """Each part's name inside its cells where it fits clear of other labels, else beside it on a leader line."""
    fontsize = 6.5
    for index, name in enumerate(result.part_names):
        j, i = np.nonzero(result.part_map == index)
        if j.size == 0:
            continue
        low = (result.z_edges[j.min()] * 1e3, result.r_edges[i.min()] * 1e3)
        high = (result.z_edges[j.max() + 1] * 1e3, result.r_edges[i.max() + 1] * 1e3)
        if _label_inside(ax, placer, name, (low, high), fontsize, "black", box=True):
            continue
        centre = (0.5 * (low[0] + high[0]), 0.5 * (low[1] + high[1]))
        placer.place(centre, name, boxed=True, colour="black", fontsize=fontsize)


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
    target, fmt = figure_target(path)
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

    fig = new_figure(10.0, _height_for(r_hi - r_lo + 2 * margin, z_hi - z_lo + 2 * margin, 7.3))
    ax = fig.add_subplot()
    _draw_parts(ax, parts, grid)
    ax.set_xlim(z_lo - margin, z_hi + margin)
    ax.set_ylim(r_lo - margin, r_hi + margin)
    ax.set_aspect("equal")
    ax.set_xlabel("Axial position z [mm]")
    ax.set_ylabel("Radius r [mm]")
    ax.set_title(_layout_title(assembly, grid), fontsize=11)
    _add_role_legend(fig, parts)
    probes = [(p.name, p.z * 1e3, p.r * 1e3) for p in assembly.probes]
    for _, z, r in probes:
        ax.plot([z], [r], "o", ms=5, mfc="white", mec="black", mew=1.0, zorder=5)

    placer = LabelPlacer(fig, ax, avoid_lines=False)
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
    fontsize = 7.0
    outside = [
        part
        for part in parts
        if not _label_inside(
            ax,
            placer,
            part.name,
            ((part.z_min * 1e3, part.r_inner * 1e3), (part.z_max * 1e3, part.r_outer * 1e3)),
            fontsize,
            _text_colour(_ROLE_COLOURS[part.role]),
        )
    ]
    for name, z, r in probes:
        placer.place((z, r), name, boxed=True, colour="black")
    for part in outside:
        centre = (0.5 * (part.z_min + part.z_max) * 1e3, 0.5 * (part.r_inner + part.r_outer) * 1e3)
        placer.place(centre, part.name, boxed=True, colour="0.15", fontsize=fontsize)
    return save_figure(fig, target, fmt)


def _draw_parts(ax: Axes, parts: Sequence[Part], grid: Grid | None) -> None:
    """Each part as a rectangle filled by its role's colour [mm], then the grid's cell edges over them."""
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


def _layout_title(assembly: Assembly, grid: Grid | None) -> str:
    """Counts of parts and probes, and of the grid's cells if there is one."""
    n_probes = len(assembly.probes)
    title = f"Layout: {len(assembly.parts)} parts, {n_probes} probe{'' if n_probes == 1 else 's'}"
    if grid is not None:
        nz, nr = grid.shape
        title += f"; grid {nz} × {nr} cells, {grid.n_cells} active"
    return title


def _add_role_legend(fig: Figure, parts: Sequence[Part]) -> None:
    """Legend outside the axes: the fill of each role present, in the order of ROLES, and the probe marker."""
    roles = [role for role in ROLES if any(p.role == role for p in parts)]
    handles = [Patch(facecolor=_ROLE_COLOURS[role], edgecolor="0.15", label=role.replace("_", " ")) for role in roles]
    handles.append(Line2D([], [], ls="none", marker="o", ms=5, mfc="white", mec="black", mew=1.0, label="probe"))
    fig.legend(handles=handles, loc="outside right upper", fontsize=8, frameon=False, title="Role")


def _label_inside(
    ax: Axes,
    placer: LabelPlacer,
    name: str,
    rectangle: tuple[tuple[float, float], tuple[float, float]],
    fontsize: float,
    colour: str,
    box: bool = False,
) -> bool:
    """Write ``name`` inside ``rectangle`` [mm] if it fits clear of other labels; return whether it did.

    Tries the name on one line, then split over two, horizontal before vertical; ``box`` puts a
    light box behind it (over a coloured field).
    """
    corners = ax.transData.transform(np.asarray(rectangle, dtype=float))
    width, height = np.abs(corners[1] - corners[0])
    options = [(name, 0)]
    split = _split_name(name)
    if split:
        options.append((split, 0))
    options.append((name, 90))
    if split:
        options.append((split, 90))
    for text, rotation in options:
        w, h = placer.text_size(text, fontsize, rotation)
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
            if box:
                label.set_bbox(dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.6))
            label.set_in_layout(False)
            placer.block_artist(label)
            return True
    return False


def _free_spot(placer: LabelPlacer, corners: np.ndarray, size: tuple[float, float], along_x: bool) -> np.ndarray | None:
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
        if all(box_overlap(box, other) == 0.0 for other in placer.boxes):
            return centre
    return None
