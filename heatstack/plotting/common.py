"""Shared pieces of every figure: temperature units, output path and atomic save, the figure frame.

Every figure is drawn on a :class:`~matplotlib.figure.Figure` with an Agg canvas and its caption
strip (:data:`CAPTION`), then written through a temporary file beside the target.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from ..atomic import write_file_atomically
from ..errors import InputError, ResultFileError
from ..result import Result
from ..units import from_si

__all__ = [
    "CAPTION",
    "check_unit",
    "to_temperature_unit",
    "to_difference_unit",
    "figure_target",
    "save_figure",
    "check_result",
    "minutes_text",
    "new_figure",
]

#: The caption line printed at the foot of every figure.
CAPTION = "Not certified data. Computed by heatstack; defer to the manufacturer's maintenance data."

_UNIT_LABELS = {"degC": "°C", "degF": "°F", "K": "K"}
_DELTA_UNITS = {"degC": "delta_degC", "degF": "delta_degF", "K": "K"}
_FORMATS = {".png": "png", ".svg": "svg"}
_PNG_DPI = 150


# --------------------------------------------------------------------------- units, names, files
def check_unit(unit: str) -> str:
    """The axis label of a temperature unit (``"degC"``, ``"degF"`` or ``"K"``); InputError for any other."""
    if unit not in _UNIT_LABELS:
        raise InputError(f"temperature unit {unit!r} is not one of {sorted(_UNIT_LABELS)}")
    return _UNIT_LABELS[unit]


def to_temperature_unit(values: np.ndarray, unit: str) -> np.ndarray:
    """Temperatures [K] converted to ``unit`` for plotting."""
    return np.asarray(from_si(values, "temperature", unit), dtype=float)


def to_difference_unit(values: np.ndarray, unit: str) -> np.ndarray:
    """Temperature differences [K] converted to the difference unit matching ``unit``."""
    return np.asarray(from_si(values, "temperature_difference", _DELTA_UNITS[unit]), dtype=float)


def figure_target(path: str | os.PathLike) -> tuple[Path, str]:
    """Check the output path before any drawing: known suffix, existing folder."""
    target = Path(path)
    fmt = _FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"figure file {str(target)!r}: the suffix must be .png or .svg, got {target.suffix!r}")
    folder = target.parent
    if not folder.is_dir():
        raise ResultFileError(f"figure file {str(target)!r}: folder {str(folder)!r} does not exist")
    return target, fmt


def save_figure(fig: Figure, target: Path, fmt: str) -> Path:
    """Write ``fig`` to a temporary file beside ``target``, then move it into place."""

    def write(temp: Path) -> None:
        if fmt == "svg":
            fig.savefig(temp, format="svg", metadata={"Date": None})
        else:
            fig.savefig(temp, format="png", dpi=_PNG_DPI)

    return write_file_atomically(target, write, "figure file")


def check_result(result: Result) -> None:
    """Raise InputError unless ``result`` is a heatstack :class:`~heatstack.result.Result`."""
    if not isinstance(result, Result):
        raise InputError(f"expected a heatstack Result, got {type(result).__name__}")


def minutes_text(seconds: float) -> str:
    """A time [s] as minutes, with fewer decimals the longer it is (``"2.5 min"``)."""
    minutes = seconds / 60.0
    if abs(minutes) < 1.0:
        return f"{minutes:.2f} min"
    if abs(minutes) < 100.0:
        return f"{minutes:.1f} min"
    return f"{minutes:.0f} min"


# --------------------------------------------------------------------------- figure frame
def new_figure(width: float, height: float) -> Figure:
    """A constrained-layout figure on an Agg canvas with the caption strip at its foot."""
    fig = Figure(figsize=(width, height), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    strip = 0.24 / height  # [figure fraction] kept free for the caption
    fig.get_layout_engine().set(rect=(0.0, strip, 1.0, 1.0 - strip))
    fig.text(0.008, 0.3 * strip, CAPTION, fontsize=7, color="0.3", ha="left", va="bottom")
    return fig
