"""A Result as tables and labelled arrays: a tidy pandas DataFrame, an xarray Dataset, and CSV rows.

pandas and xarray are optional (``pip install "heatstack[data]"``): they are imported only
when :func:`history_frame` or :func:`result_dataset` is called, and their absence is an
:class:`~heatstack.errors.OptionalDependencyError` saying how to install them. The CSV rows
(:func:`history_rows`, :func:`ledger_rows`) need neither.

The result is taken duck-typed (a :class:`heatstack.result.Result`, not imported here,
so that ``Result.to_dataframe`` / ``Result.to_xarray`` can call this module).
"""

from __future__ import annotations

import importlib
from collections.abc import Iterator
from dataclasses import dataclass
from types import ModuleType
from typing import Any

import numpy as np

from .errors import OptionalDependencyError
from .resultformat import LEDGER_ACCOUNTS, OWN_VARIABLE, SURFACE_SERIES, series_place

__all__ = [
    "DATA_EXTRA",
    "LEDGER_HEADER",
    "LOCAL",
    "READING",
    "SERIES",
    "HistoryColumn",
    "history_columns",
    "history_frame",
    "history_rows",
    "ledger_rows",
    "result_dataset",
]

DATA_EXTRA = 'pip install "heatstack[data]"'
"""The command that installs the optional packages of the tables and labelled arrays."""

READING = "reading"
"""Kind of a probe's reading after its instrument lag."""
LOCAL = "local"
"""Kind of the local temperature at a probe."""
SERIES = "series"
"""Kind of a cell-group or surface series."""


def _optional(module: str, what: str) -> ModuleType:
    """Import an optional package, or say how to install it."""
    try:
        return importlib.import_module(module)
    except ImportError:
        raise OptionalDependencyError(
            f"{what} needs the optional package {module!r}, which is not installed: {DATA_EXTRA}"
        ) from None


@dataclass(frozen=True)
class HistoryColumn:
    """One temperature history of a Result, named for a table.

    Parameters
    ----------
    name : str
        The probe or series name.
    kind : str
        ``"reading"`` (a probe's reading after its instrument lag), ``"local"`` (the local
        temperature at a probe) or ``"series"`` (a cell-group or surface series).
    values : ndarray
        Temperature [K], one value per record time.
    """

    name: str
    kind: str
    values: np.ndarray


def history_columns(result: Any) -> tuple[HistoryColumn, ...]:
    """Every temperature history of ``result``: probe readings, local probe values, then the series.

    Parameters
    ----------
    result : Result
        The run.

    Returns
    -------
    tuple of HistoryColumn
        Name, kind and values [K] of each history.
    """
    return (
        *(HistoryColumn(name, READING, np.asarray(v, dtype=float)) for name, v in result.readings.items()),
        *(HistoryColumn(name, LOCAL, np.asarray(v, dtype=float)) for name, v in result.probes.items()),
        *(HistoryColumn(name, SERIES, np.asarray(v, dtype=float)) for name, v in result.series.items()),
    )


def history_frame(result: Any) -> Any:
    """The histories of ``result`` as a tidy pandas DataFrame, one row per (time, history).

    Parameters
    ----------
    result : Result

    Returns
    -------
    pandas.DataFrame
        Columns ``time_s`` (record time [s]), ``name`` (probe or series name), ``kind``
        (``"reading"``, ``"local"`` or ``"series"``) and ``value_K`` (temperature [K]);
        ``frame.attrs["units"]`` maps each column to its unit.

    Raises
    ------
    OptionalDependencyError
        If pandas is not installed.
    """
    pandas = _optional("pandas", "Result.to_dataframe")
    columns = history_columns(result)
    times = np.asarray(result.times, dtype=float)
    frame = pandas.DataFrame(
        {
            "time_s": np.tile(times, len(columns)),
            "name": pandas.Categorical(np.repeat([c.name for c in columns], times.size)),
            "kind": pandas.Categorical(np.repeat([c.kind for c in columns], times.size)),
            "value_K": np.concatenate([c.values for c in columns]) if columns else np.zeros(0),
        }
    )
    frame.attrs["units"] = {"time_s": "s", "name": "", "kind": "", "value_K": "K"}
    return frame


def result_dataset(result: Any) -> Any:
    """The histories and field snapshots of ``result`` as an xarray Dataset.

    The same names, coordinates and attributes as the root of a results file opened with
    ``xarray.open_dataset(path, engine="h5netcdf")``.

    Parameters
    ----------
    result : Result

    Returns
    -------
    xarray.Dataset
        Coordinates ``time`` [s], ``probe``, ``surface`` (when there are surface series),
        ``snapshot_time`` [s], ``r`` and ``z`` [m] (cell centres), ``part``; variables
        ``reading`` and ``local`` (time, probe) [K], one variable per cell-group series
        (``heat_sink_mean``, ...) [K], ``surface_temperature`` (time, surface) [K],
        ``temperature`` (snapshot_time, z, r) [K] and ``part_map`` (z, r); each with
        ``units`` and ``long_name``.

    Raises
    ------
    OptionalDependencyError
        If xarray is not installed.
    """
    xarray = _optional("xarray", "Result.to_xarray")
    times = np.asarray(result.times, dtype=float)
    names = list(dict.fromkeys([*result.readings, *result.probes]))

    def table(histories: dict[str, np.ndarray], labels: list[str]) -> np.ndarray:
        out = np.full((times.size, len(labels)), np.nan)
        for k, label in enumerate(labels):
            if label in histories:
                out[:, k] = histories[label]
        return out

    def attrs(units: str, long_name: str) -> dict[str, str]:
        return {"units": units, "long_name": long_name}

    r_edges = np.asarray(result.r_edges, dtype=float)
    z_edges = np.asarray(result.z_edges, dtype=float)
    coords: dict[str, Any] = {
        "time": ("time", times, attrs("s", "time since the start of the run")),
        "probe": ("probe", names, {"long_name": "probe name", "cf_role": "timeseries_id"}),
        "snapshot_time": (
            "snapshot_time",
            np.asarray(result.snapshot_times, float),
            attrs("s", "time of the field snapshot"),
        ),
        "r": ("r", 0.5 * (r_edges[:-1] + r_edges[1:]), attrs("m", "radius of the cell centre")),
        "z": ("z", 0.5 * (z_edges[:-1] + z_edges[1:]), attrs("m", "axial position of the cell centre")),
        "part": ("part", list(result.part_names), {"long_name": "part name"}),
    }
    data: dict[str, Any] = {
        "reading": (
            ("time", "probe"),
            table(result.readings, names),
            attrs("K", "probe reading after its instrument lag"),
        ),
        "local": (("time", "probe"), table(result.probes, names), attrs("K", "local temperature at the probe")),
    }
    surfaces: dict[str, np.ndarray] = {}
    others: dict[str, np.ndarray] = {}
    for name, values in result.series.items():
        place = series_place(name)
        if place.kind == OWN_VARIABLE:
            data[name] = (
                "time",
                np.asarray(values, dtype=float),
                {**attrs("K", f"temperature series {name}"), "series_name": name},
            )
        else:
            (surfaces if place.kind == SURFACE_SERIES else others)[place.key] = np.asarray(values, dtype=float)
    for dim, variable, columns, long_name, meaning in (
        ("surface", "surface_temperature", surfaces, "exposed-surface group", "area-weighted mean surface temperature"),
        ("series", "temperature_series", others, "temperature series name", "temperature series named in series"),
    ):
        if columns:
            coords[dim] = (dim, list(columns), {"long_name": long_name})
            data[variable] = (("time", dim), table(columns, list(columns)), attrs("K", meaning))
    data["temperature"] = (
        ("snapshot_time", "z", "r"),
        np.asarray(result.snapshots, dtype=float).reshape(len(result.snapshot_times), z_edges.size - 1, -1),
        {**attrs("K", "temperature field"), "comment": "NaN in void cells"},
    )
    data["part_map"] = (
        ("z", "r"),
        np.asarray(result.part_map),
        {**attrs("1", "index into part of the part each cell belongs to"), "comment": "-1 marks a void cell"},
    )
    return xarray.Dataset(data, coords=coords, attrs={"Conventions": "CF-1.11", "source": "heatstack"})


def history_rows(result: Any, temperature: Any = None) -> Iterator[list[float]]:
    """Rows of the wide history table: the record time [s], then every history of :func:`history_columns`.

    Parameters
    ----------
    result : Result
        The run.
    temperature : callable, optional
        Converts an array of kelvin to the output unit; kelvin are kept by default.

    Yields
    ------
    list of float
        One row per record time.
    """
    columns = history_columns(result)
    convert = temperature or (lambda values: values)
    table = np.column_stack([np.asarray(result.times, dtype=float), *(convert(c.values) for c in columns)])
    for row in table:
        yield [float(x) for x in row]


def ledger_rows(result: Any) -> Iterator[list[float]]:
    """Rows of the ledger table: time [s], each cumulative account [J] and the closure error [J].

    Parameters
    ----------
    result : Result
        The run.

    Yields
    ------
    list of float
        One row per record time.
    """
    ledger = result.ledger
    table = np.column_stack(
        [np.asarray(result.times, float), *(getattr(ledger, a) for a in LEDGER_ACCOUNTS), ledger.closure_error]
    )
    for row in table:
        yield [float(x) for x in row]


LEDGER_HEADER = ("time [s]", *(f"{account} [J]" for account in LEDGER_ACCOUNTS), "closure_error [J]")
"""Header of the ledger table of :func:`ledger_rows`."""
