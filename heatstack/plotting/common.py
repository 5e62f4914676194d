"""Shared pieces of every figure: temperature units, output path and atomic save, the figure frame.

Every figure is drawn on a :class:`~matplotlib.figure.Figure` with an Agg canvas and its caption
strip (:data:`CAPTION`), then written through a temporary file beside the target.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from ..atomic import write_file_atomically
from ..errors import InputError, ResultFileError
from ..own_files import FIGURE_SOFTWARE
from ..result import Result
from ..units import from_si

__all__ = [
    "CAPTION",
    "OKABE_ITO",
    "SeriesStyle",
    "SERIES_STYLES",
    "series_kind",
    "style_for",
    "Threshold",
    "check_unit",
    "to_temperature_unit",
    "to_difference_unit",
    "figure_target",
    "save_figure",
    "check_result",
    "minutes_text",
    "new_figure",
    "add_foot_legend",
]

#: The caption line printed at the foot of every figure.
CAPTION = "Not certified data. Computed by heatstack; defer to the manufacturer's maintenance data."

#: The eight colours of the Okabe-Ito palette, distinguishable with the common colour-vision
#: deficiencies: M. Okabe and K. Ito (2008), "Color Universal Design (CUD): how to make figures and
#: presentations that are friendly to colorblind people", https://jfly.uni-koeln.de/color/.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}


@dataclass(frozen=True)
class SeriesStyle:
    """How one kind of series is drawn in every figure.

    Parameters
    ----------
    colour : str
        Line colour (an Okabe-Ito colour).
    dashes : tuple of tuple
        Line styles, the first for the first series of this kind, the next for the second, ...
        so that two fuse plugs differ in a grey print too.
    width : float
        Line width [points].
    label : str
        What the kind is, for legends of thresholds and keys.
    """

    colour: str
    dashes: tuple
    width: float
    label: str


_SOLID, _DASHED, _DOTTED = (0, ()), (0, (5.0, 2.0)), (0, (1.0, 1.6))
_DASH_DOT, _LONG_DASH = (0, (6.0, 2.0, 1.2, 2.0)), (0, (9.0, 2.5))
_DASH_DOT_DOT = (0, (6.0, 1.8, 1.2, 1.8, 1.2, 1.8))

#: The one table of series kind -> colour and line styles, used by every figure of a run and of a
#: study, so a series keeps its colour between figures and between runs.
SERIES_STYLES = {
    "heat_sink_mean": SeriesStyle(OKABE_ITO["vermillion"], (_DASHED,), 1.7, "heat-sink mean"),
    "heat_sink_max": SeriesStyle(OKABE_ITO["orange"], (_DASH_DOT,), 1.3, "heat sink, hottest cell"),
    "wheel_max": SeriesStyle(OKABE_ITO["bluish green"], (_DASH_DOT_DOT,), 1.3, "wheel, hottest cell"),
    "sensor_reading": SeriesStyle(OKABE_ITO["blue"], (_SOLID,), 2.0, "sensor reading"),
    "sensor_local": SeriesStyle(OKABE_ITO["blue"], (_DOTTED,), 1.4, "temperature at the sensor"),
    "fuse_plug": SeriesStyle(OKABE_ITO["reddish purple"], (_SOLID, _LONG_DASH, _DASH_DOT), 1.5, "fuse plug"),
    "bead_seat": SeriesStyle(OKABE_ITO["sky blue"], (_SOLID, _LONG_DASH, _DASH_DOT), 1.5, "bead seat"),
    "probe": SeriesStyle(OKABE_ITO["black"], (_SOLID, _LONG_DASH, _DASH_DOT, _DASH_DOT_DOT), 1.2, "probe"),
    "surface": SeriesStyle("#555555", (_DOTTED, _DASHED, _DASH_DOT), 1.1, "surface mean"),
    "offset": SeriesStyle(OKABE_ITO["black"], (_SOLID,), 1.3, "sensor offset"),
    "study": SeriesStyle("#7f8c99", (_SOLID,), 1.0, "study cases"),
    "release": SeriesStyle(OKABE_ITO["vermillion"], (_SOLID,), 1.4, "release / limit"),
}


def series_kind(name: str, sensor: str = "sensor") -> str:
    """The :data:`SERIES_STYLES` kind of a probe or series name (``"fuse plug 2"`` -> ``"fuse_plug"``).

    Parameters
    ----------
    name : str
        Probe or series name.
    sensor : str, optional
        Name of the probe whose reading is the sensor's.

    Returns
    -------
    str
        The kind: a heat-sink or wheel series name itself, ``"sensor_reading"``,
        ``"surface"``, ``"fuse_plug"``, ``"bead_seat"`` or ``"probe"``.
    """
    if name in ("heat_sink_mean", "heat_sink_max", "wheel_max"):
        return name
    if name == sensor:
        return "sensor_reading"
    if name.startswith("surface:"):
        return "surface"
    lowered = name.lower()
    if "fuse plug" in lowered:
        return "fuse_plug"
    if "bead seat" in lowered:
        return "bead_seat"
    return "probe"


def style_for(name: str, sensor: str = "sensor", variant: int | None = None) -> tuple[str, tuple, float]:
    """Colour, line style and width [points] of the series ``name``, the same in every figure.

    Series of one kind share the colour and differ by line style: the variant is the number at the
    end of the name (``"fuse plug 2"`` -> the second style), ``"outboard"`` names take the second
    style, else the first; ``variant`` overrides.

    Parameters
    ----------
    name : str
        Probe or series name.
    sensor : str, optional
        Name of the probe whose reading is the sensor's.
    variant : int, optional
        Line-style index, overriding the one read from the name.

    Returns
    -------
    colour : str
        Matplotlib colour.
    dashes : tuple
        Matplotlib line style.
    width : float
        Line width [points].
    """
    style = SERIES_STYLES[series_kind(name, sensor)]
    if variant is None:
        number = re.search(r"(\d+)\s*$", name)
        variant = int(number.group(1)) - 1 if number else (1 if "outboard" in name.lower() else 0)
    return style.colour, style.dashes[max(variant, 0) % len(style.dashes)], style.width


@dataclass(frozen=True)
class Threshold:
    """A temperature drawn as a horizontal line in the history figures.

    Parameters
    ----------
    series : str
        The probe or series the threshold belongs to (its colour is used).
    temperature : float
        The threshold [K].
    kind : str
        ``"release"`` (a fuse plug's release temperature) or ``"limit"`` (a temperature limit).
    """

    series: str
    temperature: float
    kind: str = "limit"

    def __post_init__(self) -> None:
        if self.kind not in ("release", "limit"):
            raise InputError(f"threshold of {self.series!r}: kind must be 'release' or 'limit', got {self.kind!r}")
        if not np.isfinite(self.temperature) or self.temperature <= 0.0:
            raise InputError(f"threshold of {self.series!r}: temperature must be > 0 K, got {self.temperature!r}")


_UNIT_LABELS = {"degC": "°C", "degF": "°F", "K": "K"}
_DELTA_UNITS = {"degC": "delta_degC", "degF": "delta_degF", "K": "K"}
_FORMATS = {".png": "png", ".svg": "svg"}
_PNG_DPI = 150


# --------------------------------------------------------------------------- units, names, files
def check_unit(unit: str) -> str:
    """The axis label of a temperature unit (``"degC"``, ``"degF"`` or ``"K"``).

    Parameters
    ----------
    unit : str
        The unit.

    Returns
    -------
    str
        Its axis label.

    Raises
    ------
    InputError
        For any other unit.
    """
    if unit not in _UNIT_LABELS:
        raise InputError(f"temperature unit {unit!r} is not one of {sorted(_UNIT_LABELS)}")
    return _UNIT_LABELS[unit]


def to_temperature_unit(values: np.ndarray, unit: str) -> np.ndarray:
    """Temperatures converted to ``unit`` for plotting.

    Parameters
    ----------
    values : ndarray
        Temperatures [K].
    unit : str
        ``"degC"``, ``"degF"`` or ``"K"``.

    Returns
    -------
    ndarray
        Temperatures in ``unit``.
    """
    return np.asarray(from_si(values, "temperature", unit), dtype=float)


def to_difference_unit(values: np.ndarray, unit: str) -> np.ndarray:
    """Temperature differences converted to the difference unit matching ``unit``.

    Parameters
    ----------
    values : ndarray
        Temperature differences [K].
    unit : str
        ``"degC"``, ``"degF"`` or ``"K"``.

    Returns
    -------
    ndarray
        Differences in the matching difference unit (delta_degC, delta_degF or K).
    """
    return np.asarray(from_si(values, "temperature_difference", _DELTA_UNITS[unit]), dtype=float)


def figure_target(path: str | os.PathLike) -> tuple[Path, str]:
    """Check the output path before any drawing: known suffix, existing folder.

    Parameters
    ----------
    path : str or os.PathLike
        Figure file, ``.png`` or ``.svg``.

    Returns
    -------
    target : Path
        The file.
    fmt : str
        ``"png"`` or ``"svg"``.

    Raises
    ------
    InputError
        If the suffix is not ``.png`` or ``.svg``.
    ResultFileError
        If the folder does not exist.
    """
    target = Path(path)
    fmt = _FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"figure file {str(target)!r}: the suffix must be .png or .svg, got {target.suffix!r}")
    folder = target.parent
    if not folder.is_dir():
        raise ResultFileError(f"figure file {str(target)!r}: folder {str(folder)!r} does not exist")
    return target, fmt


def save_figure(fig: Figure, target: Path, fmt: str) -> Path:
    """Write ``fig`` to a temporary file beside ``target``, then move it into place.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    target : Path
        The file (checked by :func:`figure_target`).
    fmt : str
        ``"png"`` or ``"svg"`` (an SVG without a date, for reproducible files).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    ResultFileError
        If the file cannot be written.
    """

    def write(temp: Path) -> None:
        if fmt == "svg":
            fig.savefig(temp, format="svg", metadata={"Date": None, "Creator": FIGURE_SOFTWARE})
        else:
            fig.savefig(temp, format="png", dpi=_PNG_DPI, metadata={"Software": FIGURE_SOFTWARE})

    return write_file_atomically(target, write, "figure file")


def check_result(result: Result) -> None:
    """Raise InputError unless ``result`` is a heatstack :class:`~heatstack.result.Result`.

    Parameters
    ----------
    result : object
        What was passed as a result.

    Raises
    ------
    InputError
        If it is not a Result.
    """
    if not isinstance(result, Result):
        raise InputError(f"expected a heatstack Result, got {type(result).__name__}")


def minutes_text(seconds: float) -> str:
    """A time as minutes, with fewer decimals the longer it is (``"2.5 min"``).

    Parameters
    ----------
    seconds : float
        The time [s].

    Returns
    -------
    str
        The text, e.g. ``"0.50 min"``, ``"2.5 min"`` or ``"120 min"``.
    """
    minutes = seconds / 60.0
    if abs(minutes) < 1.0:
        return f"{minutes:.2f} min"
    if abs(minutes) < 100.0:
        return f"{minutes:.1f} min"
    return f"{minutes:.0f} min"


# --------------------------------------------------------------------------- figure frame
_CAPTION_STRIP = 0.24  # [in] kept free for the caption at the foot of every figure
_LEGEND_ROW = 0.2  # [in] height of one legend row under the axes


def new_figure(width: float, height: float) -> Figure:
    """A constrained-layout figure on an Agg canvas with the caption strip at its foot.

    Parameters
    ----------
    width, height : float
        Figure size [inches].

    Returns
    -------
    matplotlib.figure.Figure
        The figure, with the caption drawn.
    """
    fig = Figure(figsize=(width, height), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    strip = _CAPTION_STRIP / height  # [figure fraction]
    fig.get_layout_engine().set(rect=(0.0, strip, 1.0, 1.0 - strip))
    fig.text(0.008, 0.3 * strip, CAPTION, fontsize=7, color="0.3", ha="left", va="bottom")
    return fig


def add_foot_legend(fig: Figure, handles: list, labels: list[str], columns: int = 4) -> None:
    """A legend in rows under the axes, above the caption, the layout shrunk to leave it room.

    At most ``columns`` columns, fewer when the longest label would not fit the figure's width.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    handles : list
        Legend handles (nothing is drawn for none).
    labels : list of str
        Their labels.
    columns : int, optional
        Most entries per row.
    """
    if not handles:
        return
    column_width = 40.0 + 4.4 * max(len(label) for label in labels)  # [points] at font size 8
    columns = max(1, min(columns, len(handles), int(fig.get_figwidth() * 72.0 // column_width)))
    rows = -(-len(handles) // columns)
    height = fig.get_figheight()
    strip = _CAPTION_STRIP / height
    room = (rows * _LEGEND_ROW + 0.08) / height
    fig.get_layout_engine().set(rect=(0.0, strip + room, 1.0, 1.0 - strip - room))
    legend = fig.legend(
        handles,
        labels,
        loc="lower center",
        bbox_to_anchor=(0.5, strip),
        ncols=columns,
        fontsize=8,
        frameon=False,
        borderaxespad=0.0,
        handlelength=3.0,
    )
    legend.set_in_layout(False)
