"""The results file: one run written to, and read back from, a self-describing HDF5 file.

A results file holds everything in a :class:`~heatstack.result.Result` together with
the case text and the resolved inputs of the run, so that answers can be computed
again later without re-running the solver. Every numeric dataset is in SI units and
carries a ``unit`` attribute ("K", "s", "J", "m", or "1" for pure numbers and
indices); text datasets carry ``unit = ""``.

Layout (format version 1)::

    /                          attrs: format = "heatstack-result", format_version,
                                      heatstack_version, created (ISO 8601, UTC), description
    /times                     record times [s], shape (n,)
    /end_of_heating            scalar [s]
    /metadata                  text: JSON object (solver statistics, case title, ...)
    /case/text                 text: the case file as written by the user
    /case/resolved_inputs      text: JSON object of the inputs after defaults and unit conversion
    /grid/r_edges              [m], shape (nr + 1,)
    /grid/z_edges              [m], shape (nz + 1,)
    /grid/part_map             [1] part index per cell, -1 for void, shape (nz, nr)
    /grid/part_names           text, shape (n_parts,)
    /grid/part_roles           text, shape (n_parts,)
    /probes                    attrs: position_unit = "m", time_constant_unit = "s"
    /probes/0000, 0001, ...    one group per probe, in the order of the result;
                               attrs: name, and (when known) r, z, time_constant
    /probes/NNNN/local         local temperature [K], shape (n,)
    /probes/NNNN/reading       reading after the instrument lag [K], shape (n,)
    /series/0000, 0001, ...    one dataset per global series [K], shape (n,); attr name
    /ledger/heat_in            cumulative energies [J], shape (n,)
    /ledger/convected
    /ledger/radiated
    /ledger/stored
    /ledger/friction_labels    text, shape (n_interfaces,)
    /ledger/friction_split     [J], shape (n_interfaces, 2)
    /snapshots/times           [s], shape (s,)
    /snapshots/temperature     [K], shape (s, nz, nr), NaN in void cells; chunked one
                               snapshot per chunk and compressed
    /final_state/time          scalar [s]
    /final_state/temperature   [K] per active cell, shape (n_active,)
    /final_state/reading_names text, shape (n_lagged,): probes whose instrument lags
    /final_state/readings      [K], shape (n_lagged,): their readings at the final time
                               (both absent in files written before heatstack kept them)
    /final_state/plug_names    text, shape (n_plugs,): fuse plugs whose lagged temperature
    /final_state/plug_temperatures [K], shape (n_plugs,): at the final time (absent in
                               older files and empty when the run was not assessed for plugs)
    /final_state/step          scalar [s], optional: the next time step, for a chained run
    /initial_plugs/plug_names, /initial_plugs/plug_temperatures: the same at the first
                               record, for a run chained from a state that carried them
    /phases/names              text, shape (n_phases,)
    /phases/start              [s], shape (n_phases,)
    /phases/end                [s], shape (n_phases,)

Probe and series names are free text (they may hold spaces, colons or slashes), so
they are kept in a ``name`` attribute and the HDF5 names are zero-padded indices.

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
from .result import Result
from .resultformat import FORMAT_NAME, FORMAT_VERSION, LEDGER_ACCOUNTS

__all__ = ["check_writable", "write_result"]

_COMPRESSIONS = ("gzip", "lzf", "none")
_GZIP_LEVEL = 4
_TEXT = h5py.string_dtype("utf-8")
_DESCRIPTION = (
    "heatstack results: transient axisymmetric heat conduction in a wheel and brake. "
    "SI units; each dataset states its unit in its 'unit' attribute."
)


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
    return json.dumps(_plain(value, what), ensure_ascii=False, sort_keys=False)


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


def _put(group: h5py.Group, name: str, data: np.ndarray, unit: str, **options: Any) -> h5py.Dataset:
    dataset = group.create_dataset(name, data=data, **options)
    dataset.attrs["unit"] = unit
    return dataset


def _put_text(group: h5py.Group, name: str, data: str | list[str]) -> h5py.Dataset:
    if isinstance(data, str):
        dataset = group.create_dataset(name, data=data, dtype=_TEXT)
    else:
        dataset = group.create_dataset(name, data=np.array(data, dtype=object), shape=(len(data),), dtype=_TEXT)
    dataset.attrs["unit"] = ""
    return dataset


def _snapshot_options(shape: tuple[int, ...], compression: str) -> dict[str, Any]:
    """Chunk one snapshot per chunk; compress unless ``compression`` is "none"."""
    if len(shape) != 3 or shape[1] == 0 or shape[2] == 0:
        return {}
    options: dict[str, Any] = {"chunks": (1, shape[1], shape[2]), "maxshape": (None, shape[1], shape[2])}
    if compression == "gzip":
        options.update(compression="gzip", compression_opts=_GZIP_LEVEL, shuffle=True)
    elif compression == "lzf":
        options.update(compression="lzf", shuffle=True)
    return options


def _write_content(
    h5: h5py.File, result: Result, case_text: str, inputs_json: str, metadata_json: str, compression: str
) -> None:
    """Write every group, dataset and attribute of a results file into an open, empty file."""
    from . import __version__

    h5.attrs["format"] = FORMAT_NAME
    h5.attrs["format_version"] = np.int64(FORMAT_VERSION)
    h5.attrs["heatstack_version"] = str(__version__)
    h5.attrs["created"] = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
    h5.attrs["description"] = _DESCRIPTION

    _put(h5, "times", _numeric(result.times, "times", 1), "s")
    _put(h5, "end_of_heating", np.float64(result.end_of_heating), "s")
    _put_text(h5, "metadata", metadata_json).attrs["encoding"] = "json"

    case = h5.create_group("case")
    _put_text(case, "text", case_text)
    _put_text(case, "resolved_inputs", inputs_json).attrs["encoding"] = "json"

    grid = h5.create_group("grid")
    _put(grid, "r_edges", _numeric(result.r_edges, "r_edges", 1), "m")
    _put(grid, "z_edges", _numeric(result.z_edges, "z_edges", 1), "m")
    _put(grid, "part_map", _numeric(result.part_map, "part_map", 2, "iu"), "1")
    _put_text(grid, "part_names", _texts(result.part_names, "part_names"))
    _put_text(grid, "part_roles", _texts(result.part_roles, "part_roles"))

    probes = h5.create_group("probes")
    probes.attrs["position_unit"] = "m"
    probes.attrs["time_constant_unit"] = "s"
    names = list(
        dict.fromkeys([*result.probes, *result.readings, *result.probe_positions, *result.probe_time_constants])
    )
    for index, name in enumerate(_texts(names, "probe names")):
        probe = probes.create_group(f"{index:04d}")
        probe.attrs["name"] = name
        if name in result.probe_positions:
            r, z = result.probe_positions[name]
            probe.attrs["r"] = float(r)
            probe.attrs["z"] = float(z)
        if name in result.probe_time_constants:
            probe.attrs["time_constant"] = float(result.probe_time_constants[name])
        if name in result.probes:
            _put(probe, "local", _numeric(result.probes[name], f"probes[{name!r}]", 1), "K")
        if name in result.readings:
            _put(probe, "reading", _numeric(result.readings[name], f"readings[{name!r}]", 1), "K")

    series = h5.create_group("series")
    for index, name in enumerate(_texts(result.series, "series names")):
        dataset = _put(series, f"{index:04d}", _numeric(result.series[name], f"series[{name!r}]", 1), "K")
        dataset.attrs["name"] = name

    ledger = h5.create_group("ledger")
    for account in LEDGER_ACCOUNTS:
        _put(ledger, account, _numeric(getattr(result.ledger, account), f"ledger.{account}", 1), "J")
    _put_text(ledger, "friction_labels", _texts(result.ledger.friction_labels, "ledger.friction_labels"))
    _put(ledger, "friction_split", _numeric(result.ledger.friction_split, "ledger.friction_split", 2), "J")

    snapshots = h5.create_group("snapshots")
    _put(snapshots, "times", _numeric(result.snapshot_times, "snapshot_times", 1), "s")
    fields = np.asarray(result.snapshots)
    if fields.size == 0 and fields.ndim != 3:  # no snapshots at all: keep the field shape
        fields = np.zeros((0, *np.shape(result.part_map)), dtype=np.float64)
    fields = _numeric(fields, "snapshots", 3)
    _put(snapshots, "temperature", fields, "K", **_snapshot_options(fields.shape, compression))

    final = h5.create_group("final_state")
    _put(final, "time", np.float64(result.final_state.time), "s")
    _put(final, "temperature", _numeric(result.final_state.temperature, "final_state.temperature", 1), "K")
    reading_names = tuple(result.final_state.readings)
    _put_text(final, "reading_names", _texts(reading_names, "final_state.readings"))
    readings = np.array([float(result.final_state.readings[name]) for name in reading_names], dtype=np.float64)
    _put(final, "readings", _numeric(readings, "final_state.readings", 1), "K")
    _put_named_temperatures(final, "plug", result.final_state.plug_temperatures, "final_state.plug_temperatures")
    if result.final_state.step is not None:
        _put(final, "step", np.float64(result.final_state.step), "s")
    start = h5.create_group("initial_plugs")
    _put_named_temperatures(start, "plug", result.initial_plug_temperatures, "initial_plug_temperatures")

    phases = h5.create_group("phases")
    _put_text(phases, "names", _texts((p[0] for p in result.phases), "phase names"))
    _put(phases, "start", np.array([float(p[1]) for p in result.phases], dtype=np.float64), "s")
    _put(phases, "end", np.array([float(p[2]) for p in result.phases], dtype=np.float64), "s")


def _put_named_temperatures(group: h5py.Group, stem: str, values: Mapping[str, float], what: str) -> None:
    names = tuple(values)
    _put_text(group, f"{stem}_names", _texts(names, what))
    numbers = np.array([float(values[name]) for name in names], dtype=np.float64)
    _put(group, f"{stem}_temperatures", _numeric(numbers, what, 1), "K")


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
