"""Greedy placement of annotation labels in one axes, clear of curves, outlines and each other.

Positions are worked out in display pixels of the drawn figure; offsets are given in points.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure

__all__ = ["LabelPlacer", "densify", "box_overlap"]


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
    for radius in (22.0, 36.0, 52.0, 70.0, 95.0, 125.0):
        for degrees in (45, 135, -45, -135, 90, -90, 0, 180, 20, 160, -20, -160, 65, 115, -65, -115):
            a = np.radians(degrees)
            dx, dy = radius * np.cos(a), radius * np.sin(a)
            ha = "left" if dx > 1 else "right" if dx < -1 else "center"
            va = "bottom" if dy > 1 else "top" if dy < -1 else "center"
            out.append((dx, dy, ha, va, True))
    return out


_CANDIDATES = _candidates()


def densify(xy: np.ndarray, step: float = 3.0) -> np.ndarray:
    """Points every ``step`` pixels along a polyline given in pixels.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
        Polyline vertices [pixels]; non-finite vertices are dropped.
    step : float, optional
        Spacing [pixels] (at most 50 000 points).

    Returns
    -------
    ndarray, shape (m, 2)
        The points [pixels] (the finite vertices when fewer than two).
    """
    xy = xy[np.all(np.isfinite(xy), axis=1)]
    if len(xy) < 2:
        return xy
    s = np.concatenate(([0.0], np.cumsum(np.hypot(*np.diff(xy, axis=0).T))))
    n = int(min(max(s[-1] / step, 2), 50_000))
    q = np.linspace(0.0, s[-1], n)
    return np.column_stack((np.interp(q, s, xy[:, 0]), np.interp(q, s, xy[:, 1])))


class LabelPlacer:
    """Greedy placement of annotation labels in one axes.

    Each label takes the candidate offset that stays inside the axes, overlaps no label
    placed before, no marked anchor, and covers the fewest points of the drawn curves.
    The figure layout is computed once here; labels are kept out of the layout so it
    does not change afterwards.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure (drawn once here).
    ax : matplotlib.axes.Axes
        The axes the labels go in.
    obstacle_axes : sequence of Axes, optional
        More axes whose curves labels avoid.
    avoid_lines : bool, optional
        Whether labels avoid the drawn curves.
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
                        points.append(densify(line.get_transform().transform(xy)))
        self.points = np.concatenate(points) if points else np.zeros((0, 2))
        self.soft_points = np.zeros((0, 2))
        self.anchors = np.zeros((0, 2))
        self.leaders: list[tuple[np.ndarray, np.ndarray]] = []

    def add_soft_segments(self, segments: np.ndarray) -> None:
        """Edges labels should rather not cover (weaker than curves), e.g. part outlines.

        Parameters
        ----------
        segments : ndarray
            Polylines in data coordinates.
        """
        pixels = [densify(self.ax.transData.transform(seg), step=4.0) for seg in segments]
        if pixels:
            self.soft_points = np.concatenate([self.soft_points, *pixels])

    def block_points(self, xy_data: np.ndarray, half: float = 4.0) -> None:
        """Keep labels off these anchors, ``half`` pixels around each.

        Parameters
        ----------
        xy_data : ndarray
            Anchor points in data coordinates.
        half : float, optional
            Half-size of the blocked box [pixels].
        """
        pixels = self.ax.transData.transform(np.atleast_2d(xy_data))
        self.anchors = np.concatenate((self.anchors, pixels))
        for x, y in pixels:
            self.boxes.append(np.array([x - half, y - half, x + half, y + half]))

    def block_artist(self, artist) -> None:
        """Keep labels off an artist already drawn (e.g. a label placed by hand).

        Parameters
        ----------
        artist : matplotlib.artist.Artist
            The artist.
        """
        bb = artist.get_window_extent(self.renderer)
        self.boxes.append(np.array([bb.x0, bb.y0, bb.x1, bb.y1]))

    def text_size(self, text: str, fontsize: float, rotation: float = 0.0) -> tuple[float, float]:
        """Width and height of ``text`` drawn at ``fontsize`` and ``rotation``.

        Parameters
        ----------
        text : str
            The text.
        fontsize : float
            Font size [points].
        rotation : float, optional
            Rotation [degrees].

        Returns
        -------
        width, height : float
            Size [pixels].
        """
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
        """Add the label ``text`` for the anchor ``xy`` where it reads best.

        Parameters
        ----------
        xy : (float, float)
            Anchor in data coordinates.
        text : str
            The label.
        colour : str, optional
            Text colour.
        fontsize : float, optional
            Font size [points].
        boxed : bool, optional
            Put a white box behind the text.
        near_only : bool, optional
            Try only the offsets without a leader line.
        candidates : sequence of (float, float, str, str, bool), optional
            Replaces the default offsets: (dx, dy [points], ha, va, leader).

        Returns
        -------
        matplotlib.text.Annotation
            The label, kept out of the layout.
        """
        anchor = self.ax.transData.transform(np.asarray(xy, dtype=float))
        w, h = self.text_size(text, fontsize)
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
            inside = box_overlap(box, self.frame)
            score = 1e5 * (1.0 - inside / area) + 0.3 * index + (4.0 if leader else 0.0)
            score += sum(1e4 * box_overlap(box, other) / area for other in self.boxes)
            score += 15.0 * _count_inside(self.points, box) + 2.0 * _count_inside(self.soft_points, box)
            if leader:
                # a leader line crossing another leader, or running through a placed label, misreads;
                # a long one reads worse than a short one
                end = np.array([ox, oy])
                score += 0.15 * np.hypot(dx, dy)
                score += 3000.0 * sum(_segments_cross(anchor, end, a, b) for a, b in self.leaders)
                score += 20.0 * sum(_segment_hits_box(anchor, end, other) for other in self.boxes)
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
        if leader:
            self.leaders.append((anchor, anchor + np.array([dx, dy]) * self.scale))
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


def _segments_cross(p1: np.ndarray, p2: np.ndarray, q1: np.ndarray, q2: np.ndarray) -> bool:
    """Whether segments p1-p2 and q1-q2 [pixels] cross at a point inside both (orientation test)."""

    def turn(a, b, c) -> float:
        return float((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))

    return turn(p1, p2, q1) * turn(p1, p2, q2) < 0.0 and turn(q1, q2, p1) * turn(q1, q2, p2) < 0.0


def _segment_hits_box(p1: np.ndarray, p2: np.ndarray, box: np.ndarray) -> bool:
    """Whether the segment p1-p2 [pixels] passes through the box (x0, y0, x1, y1), ends excluded."""
    t = np.linspace(0.1, 0.9, 17)[:, None]
    points = p1[None, :] + t * (p2 - p1)[None, :]
    return _count_inside(points, box) > 0


def _distance_to_box(points: np.ndarray, box: np.ndarray) -> np.ndarray:
    dx = np.maximum(np.maximum(box[0] - points[:, 0], points[:, 0] - box[2]), 0.0)
    dy = np.maximum(np.maximum(box[1] - points[:, 1], points[:, 1] - box[3]), 0.0)
    return np.hypot(dx, dy)


def _count_inside(points: np.ndarray, box: np.ndarray) -> int:
    if not points.size:
        return 0
    x, y = points[:, 0], points[:, 1]
    return int(np.count_nonzero((x > box[0]) & (x < box[2]) & (y > box[1]) & (y < box[3])))


def box_overlap(a: np.ndarray, b: np.ndarray) -> float:
    """Overlap area of two boxes given as (x0, y0, x1, y1) in display pixels.

    Parameters
    ----------
    a, b : ndarray, shape (4,)
        The boxes [pixels].

    Returns
    -------
    float
        Overlap area [px^2], 0 when they do not overlap.
    """
    dx = min(a[2], b[2]) - max(a[0], b[0])
    dy = min(a[3], b[3]) - max(a[1], b[1])
    return float(dx * dy) if dx > 0 and dy > 0 else 0.0
