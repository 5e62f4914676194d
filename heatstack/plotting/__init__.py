"""Figures of a run and of a layout: histories, temperature fields, sensor offset, r-z layout.

Every function draws one figure with matplotlib's object API (a :class:`~matplotlib.figure.Figure`
on the Agg canvas; pyplot and its global state are never touched), writes it atomically to a
PNG or SVG file chosen by the file suffix, and returns the written path. Temperatures are shown
in degC by default (``unit="degC"``, ``"degF"`` or ``"K"``), times in minutes, lengths in mm.

Every figure carries a caption saying that it is not certified data.
"""

from __future__ import annotations

from .common import CAPTION, SERIES_STYLES, Threshold
from .fields import plot_field, plot_layout, snapshot_index
from .histories import plot_histories, plot_sensor_offset, plot_why_the_gauge_lags

__all__ = [
    "CAPTION",
    "SERIES_STYLES",
    "Threshold",
    "snapshot_index",
    "plot_histories",
    "plot_field",
    "plot_sensor_offset",
    "plot_layout",
    "plot_why_the_gauge_lags",
]
