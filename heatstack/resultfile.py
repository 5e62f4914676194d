"""The results file: one run written to, and read back from, a self-describing HDF5 file.

A results file holds everything in a :class:`~heatstack.result.Result` together with
the case text and the resolved inputs of the run, so that answers can be computed
again later without re-running the solver. Every numeric dataset is in SI units and
carries a ``unit`` attribute ("K", "s", "J", "m", or "1" for pure numbers and
indices); text datasets carry ``unit = ""``.

The layout (format version 2) follows the netCDF-4 / CF conventions where they fit, so that
``xarray.open_dataset(path, engine="h5netcdf")`` (and ``group="ledger"`` and so on) gives
named dimensions with their coordinates: every dimension is an HDF5 dimension scale, every
variable is named for what it is and carries ``units`` (UDUNITS spelling: "K", "s", "J",
"m", "1") and ``long_name`` attributes; text variables carry no ``units``::

    /                         attrs: Conventions = "CF-1.11", format = "heatstack-result",
                                     format_version, heatstack_version, created (ISO 8601, UTC),
                                     title, source, history, series_order (every series name,
                                     in the order of the result)
      time(time)              record times [s]
      probe(probe)            probe names (text; cf_role = "timeseries_id")
      probe_r(probe), probe_z(probe)    probe position [m], NaN where not known
      probe_time_constant(probe)        instrument time constant [s], NaN where not known
      probe_content(probe)    CF flag masks: 1 local recorded, 2 reading recorded,
                              4 position known, 8 time constant known
      local(time, probe)      local temperature at each probe [K]
      reading(time, probe)    probe reading after its instrument lag [K]
      heat_sink_mean(time), heat_sink_max(time), wheel_max(time), ...
                              one variable per cell-group series [K], named as the series
      surface(surface)        exposed-surface group names (text)
      surface_temperature(time, surface)  area-weighted mean surface temperature [K]
                              (the series ``surface:<group>``)
      series(series), temperature_series(time, series)
                              any other series whose name is not a plain identifier [K]
      end_of_heating          scalar [s]
      end_of_braking          scalar [s]: end of the reference stop (the delays count from it)
      snapshot_time(snapshot_time)        snapshot times [s]
      r(r), z(z)              cell-centre radius and axial position [m]
      r_edge(r_edge), z_edge(z_edge)      grid lines [m]
      part(part)              part names (text); part_role(part): their roles (text)
      part_map(z, r)          index into part of each cell, -1 for void [1]
      temperature(snapshot_time, z, r)    field snapshots [K], NaN in void cells; chunked one
                              snapshot per chunk and compressed
    /ledger
      time(time)              the record times again [s], so the group opens alone
      heat_in, convected, radiated, stored (time)   cumulative energies [J]
      rubbing_interface(rubbing_interface)          text; side(side): "first", "second"
      friction_split(rubbing_interface, side)       energy into each side [J]
    /phases
      phase(phase)            phase names (text); start(phase), end(phase) [s]
    /final_state
      final_time              scalar [s]
      cell(cell)              active-cell index [1]; temperature(cell) [K]
      lagged_probe(lagged_probe)  probes whose instrument lags (text); reading(lagged_probe) [K]
      plug(plug)              fuse plugs (text); plug_temperature(plug) [K] through each plug's own lag
      step                    scalar [s], optional: the next time step, for a chained run
      tyre_gas_temperature    scalar [K], optional: the tyre gas, for a chained run's tyre answer
    /initial_plugs
      plug(plug), plug_temperature(plug)  the same at the first record (a run chained from a state)
      tyre_gas_temperature    scalar [K], optional: the tyre gas at the first record
    /case
      text                    the case file as written by the user (text)
      resolved_inputs         JSON object of the inputs after defaults and unit conversion
      run_metadata            JSON object of ``Result.metadata`` (solver statistics, ...)

Names are free text (they may hold spaces, colons or slashes), so they are stored as
text coordinates, never as HDF5 names. Files of format version 1 (index-named groups,
``unit`` attributes, no dimension scales) are still read by :mod:`heatstack.resultread`.

Writing is atomic: the file is written to a temporary file in the target folder,
flushed to disk, then moved over the target in one step, so a failed write never
leaves a half-written file or damages a file that was already there.

The readers live in :mod:`heatstack.resultread`, the format name, version and ledger
accounts shared by both sides in :mod:`heatstack.resultformat`, and the steps of a safe
write in :mod:`heatstack.atomic`.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import json
import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import h5py
import numpy as np

from . import atomic
from .atomic import as_path, os_reason, write_file_atomically, write_target
from .errors import ResultFileError
from .result import Result, first_non_finite
from .resultformat import (
    CONVENTIONS,
    FORMAT_NAME,
    FORMAT_VERSION,
    LEDGER_ACCOUNTS,
    OWN_VARIABLE,
    PROBE_HAS_LOCAL,
    PROBE_HAS_POSITION,
    PROBE_HAS_READING,
    PROBE_HAS_TIME_CONSTANT,
    SURFACE_SERIES,
    series_place,
)

__all__ = ["check_writable", "write_result"]

_COMPRESSIONS = ("gzip", "lzf", "none")
_GZIP_LEVEL = 4
_TEXT = h5py.string_dtype("utf-8")
_TITLE = "heatstack results: transient axisymmetric heat conduction in a wheel and brake"
_DESCRIPTION = "SI units; each variable states its unit in its 'units' attribute. Not certified data."


# --------------------------------------------------------------------------- paths


def check_writable(path: str | Path) -> Path:
    """Check, before a run starts, that a results file can be written at ``path``.

    The folder must exist, be a folder and accept a new file; ``path`` itself must not
    be a folder. A probe file is created in the folder and removed again, so nothing
    permanent is left behind. An existing file at ``path`` is not touched.

    Parameters
    ----------
    path : str or Path
        Where the results file will be written. A symbolic link is followed: the file
        it points to is the one that will be replaced.

    Returns
    -------
    Path
        The absolute path of the file that :func:`write_result` will write.

    Raises
    ------
    ResultFileError
        Naming the path and what is wrong: the folder is missing, is not a folder or
        is not writable, or ``path`` is a folder.
    """
    given = as_path(path)
    target = write_target(given)
    if target.is_dir():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: it is a folder")
    folder = target.parent
    if not folder.exists():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: folder {str(folder)!r} does not exist")
    if not folder.is_dir():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: {str(folder)!r} is not a folder")
    try:
        probe, fd = atomic.new_temp_file(folder, target.name or "result")
    except OSError as exc:
        raise ResultFileError(
            f"results file {str(given)!r} cannot be written: folder {str(folder)!r} does not accept "
            f"new files ({os_reason(exc)})"
        ) from None
    try:
        os.write(fd, b"0")
    except OSError as exc:
        raise ResultFileError(
            f"results file {str(given)!r} cannot be written: "
            f"writing in folder {str(folder)!r} failed ({os_reason(exc)})"
        ) from None
    finally:
        os.close(fd)
        with contextlib.suppress(OSError):
            probe.unlink()
    return target.absolute()


# --------------------------------------------------------------------------- JSON


def _plain(value: Any, where: str) -> Any:
    """A JSON-ready copy of ``value``: dicts with str keys, lists, str, numbers, bool, None.

    NumPy scalars become Python numbers and NumPy arrays and tuples become lists.
    """
    if value is None or isinstance(value, bool | str):
        return value
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        return float(value)
    if isinstance(value, Mapping):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise ResultFileError(f"{where}: key {key!r} is not a string; only string keys can be stored")
            out[key] = _plain(item, f"{where}[{key!r}]")
        return out
    if isinstance(value, np.ndarray):
        return [_plain(item, f"{where}[{k}]") for k, item in enumerate(value.tolist())]
    if isinstance(value, list | tuple):
        return [_plain(item, f"{where}[{k}]") for k, item in enumerate(value)]
    raise ResultFileError(f"{where}: a {type(value).__name__} cannot be stored; use numbers, strings, lists and dicts")


def _to_json(value: Mapping | None, what: str) -> str:
    if value is None:
        return "{}"
    if not isinstance(value, Mapping):
        raise ResultFileError(f"{what} must be a mapping, got {type(value).__name__}")
    plain = _plain(value, what)
    try:
        return json.dumps(plain, ensure_ascii=False, sort_keys=False, allow_nan=False)
    except ValueError:
        raise ResultFileError(f"{what}: holds a NaN or an infinity, which a results file never stores") from None


# --------------------------------------------------------------------------- writing


def _numeric(value: Any, what: str, ndim: int | None = None, kind: str = "biuf") -> np.ndarray:
    """``value`` as a numeric array, checked, or a ResultFileError naming the field."""
    try:
        array = np.asarray(value)
    except (TypeError, ValueError) as exc:
        raise ResultFileError(f"result field {what} is not an array of numbers: {exc}") from None
    if array.dtype.kind not in kind:
        raise ResultFileError(f"result field {what} is not an array of numbers (dtype {array.dtype})")
    if ndim is not None and array.ndim != ndim:
        raise ResultFileError(f"result field {what} must have {ndim} dimension(s), got shape {array.shape}")
    return array


def _texts(values: Any, what: str) -> list[str]:
    values = list(values)
    for item in values:
        if not isinstance(item, str):
            raise ResultFileError(f"result field {what} must hold strings, got {item!r}")
    return values


def _variable(
    group: h5py.Group,
    name: str,
    data: np.ndarray,
    dims: tuple[h5py.Dataset, ...],
    units: str,
    long_name: str,
    **options: Any,
) -> h5py.Dataset:
    """A numeric variable with ``units`` and ``long_name``, its dimensions attached as scales."""
    dataset = group.create_dataset(name, data=data, **options)
    dataset.attrs["units"] = units
    dataset.attrs["long_name"] = long_name
    for axis, scale in enumerate(dims):
        dataset.dims[axis].attach_scale(scale)
    return dataset


def _text_variable(
    group: h5py.Group, name: str, data: str | list[str], long_name: str, dims: tuple[h5py.Dataset, ...] = ()
) -> h5py.Dataset:
    """A UTF-8 text variable (a scalar text, or a list of texts along ``dims``)."""
    if isinstance(data, str):
        dataset = group.create_dataset(name, data=data, dtype=_TEXT)
    else:
        dataset = group.create_dataset(name, data=np.array(data, dtype=object), shape=(len(data),), dtype=_TEXT)
    dataset.attrs["long_name"] = long_name
    for axis, scale in enumerate(dims):
        dataset.dims[axis].attach_scale(scale)
    return dataset


def _write_plug_temperatures(group: h5py.Group, values: Mapping[str, float], when: str) -> None:
    """Fuse plugs (text coordinate ``plug``) and their own lagged temperatures [K] ``when``."""
    names = _texts(tuple(values), f"{group.name} plug names")
    plug = _coordinate(group, "plug", names, None, "fuse plug")
    numbers = np.array([float(values[name]) for name in names], dtype=np.float64)
    _variable(
        group,
        "plug_temperature",
        _numeric(numbers, f"{group.name} plug temperatures", 1),
        (plug,),
        "K",
        f"fuse-plug temperature (through the plug's own lag) {when}",
    )


def _write_tyre_gas(group: h5py.Group, value: float | None, when: str) -> None:
    """The tyre gas temperature [K] ``when``, if known (a scalar ``tyre_gas_temperature``)."""
    if value is None:
        return
    stored = group.create_dataset("tyre_gas_temperature", data=np.float64(value))
    stored.attrs.update(units="K", long_name=f"tyre gas temperature {when}")


def _coordinate(
    group: h5py.Group, name: str, data: np.ndarray | list[str], units: str | None, long_name: str
) -> h5py.Dataset:
    """A dimension named ``name`` with its coordinate values: an HDF5 dimension scale.

    ``units`` None makes a text coordinate (names).
    """
    if units is None:
        dataset = _text_variable(group, name, list(data), long_name)
    else:
        dataset = group.create_dataset(name, data=data)
        dataset.attrs["units"] = units
        dataset.attrs["long_name"] = long_name
    dataset.make_scale(name)
    return dataset


def _snapshot_options(shape: tuple[int, ...], compression: str) -> dict[str, Any]:
    """Chunk one snapshot per chunk; compress unless ``compression`` is "none"."""
    if len(shape) != 3 or 0 in shape:
        return {}
    options: dict[str, Any] = {"chunks": (1, shape[1], shape[2])}
    if compression == "gzip":
        options.update(compression="gzip", compression_opts=_GZIP_LEVEL, shuffle=True)
    elif compression == "lzf":
        options.update(compression="lzf", shuffle=True)
    return options


def _columns(histories: list[np.ndarray], n: int, what: str) -> np.ndarray:
    """Histories of length ``n`` as the columns of an (n, k) array; NaN columns stand for absent ones."""
    table = np.full((n, len(histories)), np.nan, dtype=np.float64)
    for column, history in enumerate(histories):
        if history is None:
            continue
        if history.shape != (n,):
            raise ResultFileError(f"result field {what} has {history.shape[0]} values, but there are {n} record times")
        table[:, column] = history
    return table


def _write_probes(h5: h5py.File, result: Result, time: h5py.Dataset) -> None:
    names = _texts(
        dict.fromkeys([*result.probes, *result.readings, *result.probe_positions, *result.probe_time_constants]),
        "probe names",
    )
    n = time.shape[0]
    probe = _coordinate(h5, "probe", names, None, "probe name")
    probe.attrs["cf_role"] = "timeseries_id"
    positions = np.array([result.probe_positions.get(name, (np.nan, np.nan)) for name in names], dtype=np.float64)
    positions = positions.reshape(len(names), 2)
    _variable(h5, "probe_r", positions[:, 0], (probe,), "m", "radius of the probe")
    _variable(h5, "probe_z", positions[:, 1], (probe,), "m", "axial position of the probe")
    constants = np.array([result.probe_time_constants.get(name, np.nan) for name in names], dtype=np.float64)
    _variable(h5, "probe_time_constant", constants, (probe,), "s", "instrument time constant of the probe")
    content = np.array(
        [
            (PROBE_HAS_LOCAL if name in result.probes else 0)
            | (PROBE_HAS_READING if name in result.readings else 0)
            | (PROBE_HAS_POSITION if name in result.probe_positions else 0)
            | (PROBE_HAS_TIME_CONSTANT if name in result.probe_time_constants else 0)
            for name in names
        ],
        dtype=np.int8,
    )
    flags = _variable(h5, "probe_content", content, (probe,), "1", "what is recorded for the probe")
    flags.attrs["flag_masks"] = np.array(
        [PROBE_HAS_LOCAL, PROBE_HAS_READING, PROBE_HAS_POSITION, PROBE_HAS_TIME_CONSTANT], dtype=np.int8
    )
    flags.attrs["flag_meanings"] = "local_recorded reading_recorded position_known time_constant_known"
    local = [_numeric(result.probes[name], f"probes[{name!r}]", 1) if name in result.probes else None for name in names]
    reading = [
        _numeric(result.readings[name], f"readings[{name!r}]", 1) if name in result.readings else None for name in names
    ]
    dims = (time, probe)
    _variable(h5, "local", _columns(local, n, "probes"), dims, "K", "local temperature at the probe")
    _variable(h5, "reading", _columns(reading, n, "readings"), dims, "K", "probe reading after its instrument lag")


def _write_series(h5: h5py.File, result: Result, time: h5py.Dataset) -> None:
    names = _texts(result.series, "series names")
    h5.attrs["series_order"] = np.array(names, dtype=object) if names else np.array([], dtype=_TEXT)
    n = time.shape[0]
    surfaces: list[tuple[str, np.ndarray]] = []
    others: list[tuple[str, np.ndarray]] = []
    for name in names:
        history = _numeric(result.series[name], f"series[{name!r}]", 1)
        place = series_place(name)
        if place.kind == OWN_VARIABLE:
            if history.shape != (n,):
                raise ResultFileError(f"result field series[{name!r}] has {history.size} values, not {n}")
            dataset = _variable(h5, name, history, (time,), "K", f"temperature series {name}")
            dataset.attrs["series_name"] = name
        elif place.kind == SURFACE_SERIES:
            surfaces.append((place.key, history))
        else:
            others.append((place.key, history))
    if surfaces:
        surface = _coordinate(h5, "surface", [s[0] for s in surfaces], None, "exposed-surface group")
        table = _columns([s[1] for s in surfaces], n, "series")
        _variable(h5, "surface_temperature", table, (time, surface), "K", "area-weighted mean surface temperature")
    if others:
        series = _coordinate(h5, "series", [s[0] for s in others], None, "temperature series name")
        table = _columns([s[1] for s in others], n, "series")
        _variable(h5, "temperature_series", table, (time, series), "K", "temperature series named in series")


def _write_fields(h5: h5py.File, result: Result, compression: str) -> None:
    r_edges = _numeric(result.r_edges, "r_edges", 1)
    z_edges = _numeric(result.z_edges, "z_edges", 1)
    part_map = _numeric(result.part_map, "part_map", 2, "iu")
    if part_map.shape != (z_edges.size - 1, r_edges.size - 1):
        raise ResultFileError(f"result field part_map has shape {part_map.shape}, but the grid edges give "
                              f"{(z_edges.size - 1, r_edges.size - 1)}")  # fmt: skip
    r = _coordinate(h5, "r", 0.5 * (r_edges[:-1] + r_edges[1:]), "m", "radius of the cell centre")
    z = _coordinate(h5, "z", 0.5 * (z_edges[:-1] + z_edges[1:]), "m", "axial position of the cell centre")
    _coordinate(h5, "r_edge", r_edges, "m", "radius of the radial grid lines")
    _coordinate(h5, "z_edge", z_edges, "m", "axial position of the axial grid lines")
    part = _coordinate(h5, "part", _texts(result.part_names, "part_names"), None, "part name")
    roles = _texts(result.part_roles, "part_roles")
    if len(roles) != part.shape[0]:
        raise ResultFileError("result fields part_names and part_roles differ in length")
    _text_variable(h5, "part_role", roles, "role of the part", (part,))
    cells = _variable(h5, "part_map", part_map, (z, r), "1", "index into part of the part each cell belongs to")
    cells.attrs["comment"] = "-1 marks a void cell"

    snapshot_time = _coordinate(
        h5, "snapshot_time", _numeric(result.snapshot_times, "snapshot_times", 1), "s", "time of the field snapshot"
    )
    fields = np.asarray(result.snapshots)
    if fields.size == 0 and fields.ndim != 3:  # no snapshots at all: keep the field shape
        fields = np.zeros((0, *part_map.shape), dtype=np.float64)
    fields = _numeric(fields, "snapshots", 3)
    if fields.shape[0] != snapshot_time.shape[0] or fields.shape[1:] != part_map.shape:
        raise ResultFileError(f"result field snapshots has shape {fields.shape}, not "
                              f"{(snapshot_time.shape[0], *part_map.shape)}")  # fmt: skip
    temperature = _variable(
        h5, "temperature", fields, (snapshot_time, z, r), "K", "temperature field",
        **_snapshot_options(fields.shape, compression),
    )  # fmt: skip
    temperature.attrs["comment"] = "NaN in void cells"


def _write_ledger(group: h5py.Group, result: Result) -> None:
    time = _coordinate(group, "time", _numeric(result.times, "times", 1), "s", "time since the start of the run")
    meanings = {
        "heat_in": "friction energy put into the assembly since the start",
        "convected": "energy lost by convection since the start",
        "radiated": "energy lost by radiation to the surroundings since the start",
        "stored": "change of the stored enthalpy since the start",
    }
    for account in LEDGER_ACCOUNTS:
        history = _numeric(getattr(result.ledger, account), f"ledger.{account}", 1)
        if history.shape != time.shape:
            raise ResultFileError(f"result field ledger.{account} has {history.size} values, not {time.shape[0]}")
        _variable(group, account, history, (time,), "J", meanings[account])
    labels = _texts(result.ledger.friction_labels, "ledger.friction_labels")
    interface = _coordinate(group, "rubbing_interface", labels, None, "rubbing interface")
    side = _coordinate(group, "side", ["first", "second"], None, "side of the rubbing interface")
    split = _numeric(result.ledger.friction_split, "ledger.friction_split", 2)
    if split.shape != (len(labels), 2):
        raise ResultFileError(f"result field ledger.friction_split has shape {split.shape}, not {(len(labels), 2)}")
    _variable(group, "friction_split", split, (interface, side), "J", "friction energy into each side")


def _write_content(
    h5: h5py.File, result: Result, case_text: str, inputs_json: str, metadata_json: str, compression: str
) -> None:
    """Write every group, variable and attribute of a results file into an open, empty file."""
    from . import __version__

    created = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
    h5.attrs["Conventions"] = CONVENTIONS
    h5.attrs["format"] = FORMAT_NAME
    h5.attrs["format_version"] = np.int64(FORMAT_VERSION)
    h5.attrs["heatstack_version"] = str(__version__)
    h5.attrs["created"] = created
    h5.attrs["title"] = _TITLE
    h5.attrs["source"] = f"heatstack {__version__}"
    h5.attrs["history"] = f"{created} written by heatstack {__version__}"
    h5.attrs["comment"] = _DESCRIPTION

    time = _coordinate(h5, "time", _numeric(result.times, "times", 1), "s", "time since the start of the run")
    _write_probes(h5, result, time)
    _write_series(h5, result, time)
    end = h5.create_dataset("end_of_heating", data=np.float64(result.end_of_heating))
    end.attrs.update(units="s", long_name="last time with brake power")
    end = h5.create_dataset("end_of_braking", data=np.float64(result.end_of_braking))
    end.attrs.update(units="s", long_name="end of the stop that loaded the brake (the delays' reference)")
    _write_fields(h5, result, compression)
    _write_ledger(h5.create_group("ledger"), result)

    phases = h5.create_group("phases")
    phase = _coordinate(phases, "phase", _texts((p[0] for p in result.phases), "phase names"), None, "duty phase")
    starts = np.array([float(p[1]) for p in result.phases], dtype=np.float64)
    ends = np.array([float(p[2]) for p in result.phases], dtype=np.float64)
    _variable(phases, "start", starts, (phase,), "s", "start of the phase")
    _variable(phases, "end", ends, (phase,), "s", "end of the phase")

    final = h5.create_group("final_state")
    stamp = final.create_dataset("final_time", data=np.float64(result.final_state.time))
    stamp.attrs.update(units="s", long_name="time of the final state")
    state = _numeric(result.final_state.temperature, "final_state.temperature", 1)
    cell = _coordinate(final, "cell", np.arange(state.size, dtype=np.int64), "1", "active-cell index")
    _variable(final, "temperature", state, (cell,), "K", "temperature of each active cell at the final time")
    reading_names = _texts(tuple(result.final_state.readings), "final_state.readings")
    lagged = _coordinate(final, "lagged_probe", reading_names, None, "probe whose instrument lags")
    readings = np.array([float(result.final_state.readings[name]) for name in reading_names], dtype=np.float64)
    _variable(final, "reading", readings, (lagged,), "K", "reading of the lagged probe at the final time")
    _write_plug_temperatures(final, result.final_state.plug_temperatures, "at the final time")
    if result.final_state.step is not None:
        step = final.create_dataset("step", data=np.float64(result.final_state.step))
        step.attrs.update(units="s", long_name="next time step, for a run chained from this state")
    _write_plug_temperatures(h5.create_group("initial_plugs"), result.initial_plug_temperatures, "at the first record")
    _write_tyre_gas(final, result.final_state.tyre_gas_temperature, "at the final time")
    _write_tyre_gas(h5["initial_plugs"], result.initial_tyre_gas_temperature, "at the first record")

    case = h5.create_group("case")
    _text_variable(case, "text", case_text, "the case file as written")
    _text_variable(case, "resolved_inputs", inputs_json, "inputs after defaults and unit conversion [SI]").attrs[
        "encoding"
    ] = "json"
    _text_variable(case, "run_metadata", metadata_json, "run metadata: solver statistics and notes").attrs[
        "encoding"
    ] = "json"


def write_result(
    result: Result,
    path: str | Path,
    *,
    case_text: str = "",
    resolved_inputs: Mapping | None = None,
    compression: str = "gzip",
) -> Path:
    """Write a run to an HDF5 results file, atomically.

    The file is first written to a temporary file in the same folder, flushed and
    synced to disk, then moved over ``path`` in one step: if anything fails, a file
    already at ``path`` is left exactly as it was and no temporary file remains.

    Parameters
    ----------
    result : Result
        The run to store.
    path : str or Path
        The results file to create or replace (conventionally ``*.h5``).
    case_text : str, optional
        The case file text of the run, stored verbatim.
    resolved_inputs : mapping, optional
        The inputs after defaults and unit conversion [SI]: a mapping with string keys
        of numbers, strings, booleans, None, lists and nested mappings. NumPy scalars
        and arrays are stored as numbers and lists, tuples as lists. None stores ``{}``.
    compression : {"gzip", "lzf", "none"}, optional
        Compression of the field snapshots.

    Returns
    -------
    Path
        The absolute path of the file written.

    Raises
    ------
    ResultFileError
        If the folder is missing or not writable, ``path`` is a folder, an argument is
        of the wrong kind, a field of ``result`` cannot be stored, or writing fails.

    Notes
    -----
    ``result.metadata`` is stored as JSON under the same rules as ``resolved_inputs``.
    """
    if not isinstance(result, Result):
        raise ResultFileError(f"write_result needs a Result, got {type(result).__name__}")
    if compression is None:
        compression = "none"
    if compression not in _COMPRESSIONS:
        raise ResultFileError(f"compression must be one of {list(_COMPRESSIONS)}, got {compression!r}")
    if not isinstance(case_text, str):
        raise ResultFileError(f"case_text must be a str, got {type(case_text).__name__}")
    bad = first_non_finite(result)
    if bad is not None:
        raise ResultFileError(f"results file {str(path)[:80]!r} not written: the {bad} holds a NaN or an infinity")
    inputs_json = _to_json(resolved_inputs, "resolved_inputs")
    metadata_json = _to_json(result.metadata, "result.metadata")
    target = check_writable(path)

    def write(temp: Path) -> None:
        try:
            with h5py.File(temp, "w") as h5:
                _write_content(h5, result, case_text, inputs_json, metadata_json, compression)
                h5.flush()
        except (ValueError, TypeError) as exc:  # h5py refusing a field
            raise ResultFileError(
                f"results file {str(path)!r} could not be written ({exc}); any file already there is unchanged"
            ) from exc

    write_file_atomically(target, write, "results file")
    return target
