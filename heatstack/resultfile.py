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
    /phases/names              text, shape (n_phases,)
    /phases/start              [s], shape (n_phases,)
    /phases/end                [s], shape (n_phases,)

Probe and series names are free text (they may hold spaces, colons or slashes), so
they are kept in a ``name`` attribute and the HDF5 names are zero-padded indices.

Writing is atomic: the file is written to a temporary file in the target folder,
flushed to disk, then moved over the target in one step, so a failed write never
leaves a half-written file or damages a file that was already there.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import json
import os
import secrets
import stat
from collections.abc import Iterator, Mapping
from pathlib import Path
from typing import Any

import h5py
import numpy as np

from .errors import ResultFileError
from .result import EnergyLedger, Result, State

__all__ = [
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "check_writable",
    "read_case_text",
    "read_resolved_inputs",
    "read_result",
    "write_result",
]

FORMAT_NAME = "heatstack-result"
"""Value of the root ``format`` attribute of every heatstack results file."""

FORMAT_VERSION = 1
"""Layout version written by this module; files of a newer version are refused."""

_COMPRESSIONS = ("gzip", "lzf", "none")
_GZIP_LEVEL = 4
_TEXT = h5py.string_dtype("utf-8")
_LEDGER_ACCOUNTS = ("heat_in", "convected", "radiated", "stored")
_DESCRIPTION = (
    "heatstack results: transient axisymmetric heat conduction in a wheel and brake. "
    "SI units; each dataset states its unit in its 'unit' attribute."
)


# --------------------------------------------------------------------------- paths


def _as_path(path: Any) -> Path:
    """``path`` as a :class:`Path`, or a ResultFileError for anything that is not a path."""
    if isinstance(path, str | os.PathLike):
        text = os.fspath(path)
        if isinstance(text, str) and text:
            return Path(text)
    raise ResultFileError(f"a results file path must be a non-empty str or Path, got {path!r}")


def _target(path: Path) -> Path:
    """The file a write to ``path`` replaces: symbolic links are followed to their target."""
    if path.is_symlink():
        return Path(os.path.realpath(path))
    return path


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc) or type(exc).__name__


def _new_temp(folder: Path, stem: str) -> tuple[Path, int]:
    """Create a new, empty, uniquely named hidden file in ``folder``; return it and its descriptor.

    The file is created with mode 0o666 filtered by the umask, as an ordinary new file.
    """
    flags = os.O_RDWR | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    for _ in range(100):
        candidate = folder / f".{stem}.{secrets.token_hex(6)}.tmp"
        try:
            return candidate, os.open(candidate, flags, 0o666)
        except FileExistsError:
            continue
    raise FileExistsError(f"could not find a free temporary file name in {folder}")


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
    given = _as_path(path)
    target = _target(given)
    if target.is_dir():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: it is a folder")
    folder = target.parent
    if not folder.exists():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: folder {str(folder)!r} does not exist")
    if not folder.is_dir():
        raise ResultFileError(f"results file {str(given)!r} cannot be written: {str(folder)!r} is not a folder")
    try:
        probe, fd = _new_temp(folder, target.name or "result")
    except OSError as exc:
        raise ResultFileError(
            f"results file {str(given)!r} cannot be written: folder {str(folder)!r} does not accept "
            f"new files ({_reason(exc)})"
        ) from None
    try:
        os.write(fd, b"0")
    except OSError as exc:
        raise ResultFileError(
            f"results file {str(given)!r} cannot be written: writing in folder {str(folder)!r} failed ({_reason(exc)})"
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
    for account in _LEDGER_ACCOUNTS:
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

    phases = h5.create_group("phases")
    _put_text(phases, "names", _texts((p[0] for p in result.phases), "phase names"))
    _put(phases, "start", np.array([float(p[1]) for p in result.phases], dtype=np.float64), "s")
    _put(phases, "end", np.array([float(p[2]) for p in result.phases], dtype=np.float64), "s")


def _fsync_folder(folder: Path) -> None:
    """Make a rename in ``folder`` durable where the platform allows it (best effort)."""
    if not hasattr(os, "O_DIRECTORY"):
        return
    try:
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


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

    try:
        temp, fd = _new_temp(target.parent, target.name)
    except OSError as exc:
        raise ResultFileError(f"results file {str(path)!r} could not be written ({_reason(exc)})") from None
    try:
        os.close(fd)
        with h5py.File(temp, "w") as h5:
            _write_content(h5, result, case_text, inputs_json, metadata_json, compression)
            h5.flush()
        fd = os.open(temp, os.O_RDWR | getattr(os, "O_BINARY", 0))
        try:
            os.fsync(fd)
        finally:
            os.close(fd)
        with contextlib.suppress(OSError):
            if target.exists():
                os.chmod(temp, stat.S_IMODE(target.stat().st_mode))
        os.replace(temp, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            temp.unlink()
        if isinstance(exc, ResultFileError):
            raise
        if isinstance(exc, OSError | ValueError | TypeError):
            detail = _reason(exc) if isinstance(exc, OSError) else str(exc)
            raise ResultFileError(
                f"results file {str(path)!r} could not be written ({detail}); any file already there is unchanged"
            ) from exc
        raise
    _fsync_folder(target.parent)
    return target


# --------------------------------------------------------------------------- reading


class _Reader:
    """Checked access to the parts of an open results file; every failure names the file."""

    def __init__(self, h5: h5py.File, path: Path) -> None:
        self.h5 = h5
        self.path = path

    def fail(self, what: str) -> ResultFileError:
        return ResultFileError(f"results file {str(self.path)!r}: {what}")

    def group(self, name: str, parent: h5py.Group | None = None) -> h5py.Group:
        parent = self.h5 if parent is None else parent
        item = parent.get(name)
        full = f"{parent.name.rstrip('/')}/{name}"
        if not isinstance(item, h5py.Group):
            raise self.fail(f"lacks required group {full!r}")
        return item

    def dataset(self, name: str, parent: h5py.Group | None = None) -> h5py.Dataset:
        parent = self.h5 if parent is None else parent
        item = parent.get(name)
        full = f"{parent.name.rstrip('/')}/{name}"
        if not isinstance(item, h5py.Dataset):
            raise self.fail(f"lacks required dataset {full!r}")
        return item

    def array(
        self, name: str, unit: str, ndim: int | None, parent: h5py.Group | None = None, kind: str = "f"
    ) -> np.ndarray:
        dataset = self.dataset(name, parent)
        stored = _attr_text(dataset.attrs.get("unit"))
        if stored != unit:
            raise self.fail(f"dataset {dataset.name!r} has unit {stored!r}, expected {unit!r}")
        if dataset.dtype.kind not in kind:
            raise self.fail(f"dataset {dataset.name!r} has type {dataset.dtype}, expected numbers")
        data = np.asarray(dataset[()])
        if ndim is not None and data.ndim != ndim:
            raise self.fail(f"dataset {dataset.name!r} has shape {data.shape}, expected {ndim} dimension(s)")
        return data

    def scalar(self, name: str, unit: str, parent: h5py.Group | None = None) -> float:
        return float(self.array(name, unit, 0, parent, kind="biuf"))

    def text(self, name: str, parent: h5py.Group | None = None) -> str:
        dataset = self.dataset(name, parent)
        if dataset.shape != () or dataset.dtype.kind not in "OSU":
            raise self.fail(f"dataset {dataset.name!r} is not a text")
        return _attr_text(dataset[()])

    def texts(self, name: str, parent: h5py.Group | None = None) -> tuple[str, ...]:
        dataset = self.dataset(name, parent)
        if len(dataset.shape) != 1 or dataset.dtype.kind not in "OSU":
            raise self.fail(f"dataset {dataset.name!r} is not a list of texts")
        return tuple(_attr_text(item) for item in dataset[()])

    def json(self, name: str, parent: h5py.Group | None = None) -> dict:
        full = self.dataset(name, parent).name
        raw = self.text(name, parent)
        try:
            value = json.loads(raw)
        except ValueError as exc:
            raise self.fail(f"dataset {full!r} is not valid JSON ({exc})") from None
        if not isinstance(value, dict):
            raise self.fail(f"dataset {full!r} does not hold a JSON object")
        return value

    def name_of(self, item: h5py.HLObject) -> str:
        name = item.attrs.get("name")
        if name is None:
            raise self.fail(f"{item.name!r} lacks its 'name' attribute")
        return _attr_text(name)

    def number_attr(self, item: h5py.HLObject, key: str) -> float:
        if key not in item.attrs:
            raise self.fail(f"{item.name!r} lacks its {key!r} attribute")
        try:
            return float(item.attrs[key])
        except (TypeError, ValueError):
            raise self.fail(f"attribute {key!r} of {item.name!r} is not a number") from None


def _attr_text(value: Any) -> str:
    if isinstance(value, bytes):
        return value.decode("utf-8", errors="replace")
    if isinstance(value, np.ndarray) and value.shape == ():
        return _attr_text(value[()])
    return "" if value is None else str(value)


def _ordered(group: h5py.Group) -> list[str]:
    """Member names of an index-named group, in index order."""
    return sorted(group, key=lambda key: (0, int(key)) if key.isdigit() else (1, key))


@contextlib.contextmanager
def _open(path: str | Path) -> Iterator[_Reader]:
    """Open a results file for reading, check its format and version, and wrap every failure."""
    given = _as_path(path)
    if not given.exists():
        raise ResultFileError(f"results file {str(given)!r} does not exist")
    if given.is_dir():
        raise ResultFileError(f"results file {str(given)!r} is a folder, not a file")
    try:
        hdf5 = h5py.is_hdf5(given)
    except OSError as exc:
        raise ResultFileError(f"results file {str(given)!r} cannot be read ({_reason(exc)})") from None
    if not hdf5:
        raise ResultFileError(f"results file {str(given)!r} is not an HDF5 file")
    try:
        h5 = h5py.File(given, "r")
    except OSError as exc:
        raise ResultFileError(
            f"results file {str(given)!r} cannot be opened; it may be truncated or damaged ({exc})"
        ) from None
    try:
        with h5:
            reader = _Reader(h5, given)
            _check_format(reader)
            yield reader
    except ResultFileError:
        raise
    except (OSError, KeyError, ValueError, TypeError, RuntimeError) as exc:
        raise ResultFileError(
            f"results file {str(given)!r} is damaged or incomplete ({type(exc).__name__}: {exc})"
        ) from None


def _check_format(reader: _Reader) -> None:
    attrs = reader.h5.attrs
    if "format" not in attrs:
        raise reader.fail(f"not a heatstack results file (no 'format' attribute; expected {FORMAT_NAME!r})")
    name = _attr_text(attrs["format"])
    if name != FORMAT_NAME:
        raise reader.fail(f"holds format {name!r}, not a heatstack results file ({FORMAT_NAME!r})")
    raw = attrs.get("format_version")
    try:
        version = int(raw)
        if version != raw:
            raise ValueError
    except (TypeError, ValueError):
        raise reader.fail(f"format_version {raw!r} is not a whole number") from None
    if version > FORMAT_VERSION:
        raise reader.fail(
            f"format_version {version} is newer than this heatstack reads ({FORMAT_VERSION}); "
            "upgrade heatstack to read it"
        )
    if version < 1:
        raise reader.fail(f"format_version {version} is not valid")


def read_result(path: str | Path) -> Result:
    """Load a results file back into the :class:`~heatstack.result.Result` it was written from.

    Parameters
    ----------
    path : str or Path
        A file written by :func:`write_result`.

    Returns
    -------
    Result
        Arrays in SI units [K, s, J, m] with the dtypes they were written with; names,
        their order and the metadata mapping as stored. Metadata is plain JSON: tuples
        written into it come back as lists.

    Raises
    ------
    ResultFileError
        If the file is missing, not HDF5, truncated, of another format or of a newer
        format version, or lacks a required dataset; the message names the file and
        what is wrong.
    """
    with _open(path) as rd:
        times = rd.array("times", "s", 1)
        end_of_heating = rd.scalar("end_of_heating", "s")
        metadata = rd.json("metadata")
        rd.json("resolved_inputs", rd.group("case"))
        rd.text("text", rd.group("case"))

        grid = rd.group("grid")
        r_edges = rd.array("r_edges", "m", 1, grid)
        z_edges = rd.array("z_edges", "m", 1, grid)
        part_map = rd.array("part_map", "1", 2, grid, kind="iu")
        part_names = rd.texts("part_names", grid)
        part_roles = rd.texts("part_roles", grid)
        cells = (z_edges.size - 1, r_edges.size - 1)
        if part_map.shape != cells:
            raise rd.fail(f"grid/part_map has shape {part_map.shape}, but the edges give {cells}")
        if len(part_names) != len(part_roles):
            raise rd.fail("grid/part_names and grid/part_roles differ in length")

        probes: dict[str, np.ndarray] = {}
        readings: dict[str, np.ndarray] = {}
        positions: dict[str, tuple[float, float]] = {}
        time_constants: dict[str, float] = {}
        probe_group = rd.group("probes")
        for key in _ordered(probe_group):
            member = rd.group(key, probe_group)
            name = rd.name_of(member)
            if "r" in member.attrs or "z" in member.attrs:
                positions[name] = (rd.number_attr(member, "r"), rd.number_attr(member, "z"))
            if "time_constant" in member.attrs:
                time_constants[name] = rd.number_attr(member, "time_constant")
            if "local" in member:
                probes[name] = rd.array("local", "K", 1, member)
            if "reading" in member:
                readings[name] = rd.array("reading", "K", 1, member)

        series: dict[str, np.ndarray] = {}
        series_group = rd.group("series")
        for key in _ordered(series_group):
            dataset = rd.dataset(key, series_group)
            series[rd.name_of(dataset)] = rd.array(key, "K", 1, series_group)

        lg = rd.group("ledger")
        accounts = {account: rd.array(account, "J", 1, lg) for account in _LEDGER_ACCOUNTS}
        labels = rd.texts("friction_labels", lg)
        split = rd.array("friction_split", "J", 2, lg)
        if split.shape[0] != len(labels):
            raise rd.fail("ledger/friction_split and ledger/friction_labels differ in length")
        ledger = EnergyLedger(**accounts, friction_labels=labels, friction_split=split)

        snaps = rd.group("snapshots")
        snapshot_times = rd.array("times", "s", 1, snaps)
        snapshots = rd.array("temperature", "K", 3, snaps)
        if snapshots.shape[0] != snapshot_times.size:
            raise rd.fail("snapshots/temperature and snapshots/times differ in length")
        if snapshots.shape[1:] != cells:
            raise rd.fail(f"snapshots/temperature holds fields of shape {snapshots.shape[1:]}, not {cells}")

        final = rd.group("final_state")
        final_readings = {}
        if "readings" in final:
            names = rd.texts("reading_names", final)
            values = rd.array("readings", "K", 1, final)
            if len(names) != values.size:
                raise rd.fail("final_state/reading_names and final_state/readings differ in length")
            final_readings = {name: float(v) for name, v in zip(names, values, strict=True)}
        final_state = State(
            time=rd.scalar("time", "s", final),
            temperature=rd.array("temperature", "K", 1, final),
            readings=final_readings,
        )

        ph = rd.group("phases")
        phase_names = rd.texts("names", ph)
        starts = rd.array("start", "s", 1, ph)
        ends = rd.array("end", "s", 1, ph)
        if not len(phase_names) == starts.size == ends.size:
            raise rd.fail("phases/names, phases/start and phases/end differ in length")
        phases = tuple(
            (name, float(start), float(end)) for name, start, end in zip(phase_names, starts, ends, strict=True)
        )

    return Result(
        times=times,
        probes=probes,
        readings=readings,
        series=series,
        ledger=ledger,
        snapshot_times=snapshot_times,
        snapshots=snapshots,
        r_edges=r_edges,
        z_edges=z_edges,
        part_map=part_map,
        part_names=part_names,
        part_roles=part_roles,
        final_state=final_state,
        phases=phases,
        end_of_heating=end_of_heating,
        probe_positions=positions,
        probe_time_constants=time_constants,
        metadata=metadata,
    )


def read_case_text(path: str | Path) -> str:
    """The case text stored in a results file.

    Parameters
    ----------
    path : str or Path
        A file written by :func:`write_result`.

    Returns
    -------
    str
        The case text exactly as written ("" if none was given).

    Raises
    ------
    ResultFileError
        If the file is not a readable heatstack results file.
    """
    with _open(path) as rd:
        return rd.text("text", rd.group("case"))


def read_resolved_inputs(path: str | Path) -> dict:
    """The resolved inputs stored in a results file.

    Parameters
    ----------
    path : str or Path
        A file written by :func:`write_result`.

    Returns
    -------
    dict
        The mapping as written, in plain JSON types [SI] (``{}`` if none was given).

    Raises
    ------
    ResultFileError
        If the file is not a readable heatstack results file.
    """
    with _open(path) as rd:
        return rd.json("resolved_inputs", rd.group("case"))
