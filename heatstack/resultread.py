"""Reading a results file back: the whole run, or just its case text or resolved inputs.

The layout, and the checks made on it, are described in :mod:`heatstack.resultfile`, which
writes the file. Files of format version 1 (before the netCDF-4 / CF layout) and version 2
are both read. Every failure is a ResultFileError naming the
file and what is wrong with it.
"""

from __future__ import annotations

import contextlib
import json
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import h5py
import numpy as np

from .atomic import as_path, os_reason
from .errors import ResultFileError
from .result import EnergyLedger, Result, State
from .resultformat import (
    FORMAT_NAME,
    FORMAT_VERSION,
    LEDGER_ACCOUNTS,
    OTHER_SERIES,
    OWN_VARIABLE,
    PROBE_HAS_LOCAL,
    PROBE_HAS_POSITION,
    PROBE_HAS_READING,
    PROBE_HAS_TIME_CONSTANT,
    SURFACE_SERIES,
    series_place,
)

__all__ = [
    "read_case_text",
    "read_resolved_inputs",
    "read_result",
]


#: The most elements one dataset of a results file may declare: far above any run heatstack
#: writes (a 2-million-cell grid with 200 snapshots is 4e8), far below what would exhaust memory
#: by reading a damaged size.
_MAX_ELEMENTS = 500_000_000


def _cut(text: Any, limit: int = 80) -> str:
    """``repr(text)`` cut to about ``limit`` characters, for a message."""
    shown = repr(text)
    return shown if len(shown) <= limit else shown[: limit - 3] + "..."


class _Reader:
    """Checked access to the parts of an open results file; every failure names the file."""

    def __init__(self, h5: h5py.File, path: Path) -> None:
        self.h5 = h5
        self.path = path
        self.version = FORMAT_VERSION
        self.unit_key = "units"

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
        if item.size is not None and item.size > _MAX_ELEMENTS:
            raise self.fail(
                f"dataset {full!r} declares {item.size:.3g} elements, more than a results file holds "
                f"({_MAX_ELEMENTS:.0e}); the file is damaged"
            )
        return item

    def array(
        self, name: str, unit: str, ndim: int | None, parent: h5py.Group | None = None, kind: str = "f"
    ) -> np.ndarray:
        dataset = self.dataset(name, parent)
        stored = _attr_text(dataset.attrs.get(self.unit_key))
        if stored != unit:
            raise self.fail(f"dataset {dataset.name!r} has unit {_cut(stored)}, expected {unit!r}")
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
            raise self.fail(f"dataset {full!r} is not valid JSON ({_cut(str(exc), 120)})") from None
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
    given = as_path(path)
    if not given.exists():
        raise ResultFileError(f"results file {str(given)!r} does not exist")
    if given.is_dir():
        raise ResultFileError(f"results file {str(given)!r} is a folder, not a file")
    try:
        hdf5 = h5py.is_hdf5(given)
    except OSError as exc:
        raise ResultFileError(f"results file {str(given)!r} cannot be read ({os_reason(exc)})") from None
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
            reader.version = _check_format(reader)
            reader.unit_key = "unit" if reader.version == 1 else "units"
            yield reader
    except ResultFileError:
        raise
    except (OSError, KeyError, ValueError, TypeError, RuntimeError, OverflowError, IndexError) as exc:
        raise ResultFileError(
            f"results file {str(given)!r} is damaged or incomplete ({type(exc).__name__}: {_cut(str(exc), 160)})"
        ) from None
    except MemoryError:
        raise ResultFileError(f"results file {str(given)!r} is damaged: a part of it is too large to read") from None


def _check_format(reader: _Reader) -> int:
    """The format version of the open file, checked to be one this heatstack reads."""
    attrs = reader.h5.attrs
    if "format" not in attrs:
        raise reader.fail(f"not a heatstack results file (no 'format' attribute; expected {FORMAT_NAME!r})")
    name = _attr_text(attrs["format"])
    if name != FORMAT_NAME:
        raise reader.fail(f"holds format {_cut(name)}, not a heatstack results file ({FORMAT_NAME!r})")
    raw = attrs.get("format_version")
    try:
        version = int(raw)
        if version != raw:
            raise ValueError
    except (TypeError, ValueError):
        raise reader.fail(f"format_version {_cut(raw)} is not a whole number") from None
    if version > FORMAT_VERSION:
        raise reader.fail(
            f"format_version {version} is newer than this heatstack reads ({FORMAT_VERSION}); "
            "upgrade heatstack to read it"
        )
    if version < 1:
        raise reader.fail(f"format_version {version} is not valid")
    return version


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
        return _read_version_1(rd) if rd.version == 1 else _read_version_2(rd)


def _read_version_1(rd: _Reader) -> Result:
    """A Result from a file of format version 1: index-named groups, ``unit`` attributes."""
    times = rd.array("times", "s", 1)
    end_of_heating = rd.scalar("end_of_heating", "s")
    # version 1 knew no reference stop: the last time with power
    end_of_braking = rd.scalar("end_of_braking", "s") if "end_of_braking" in rd.h5 else end_of_heating
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

    probes, readings, positions, time_constants = _probes_version_1(rd)

    series: dict[str, np.ndarray] = {}
    series_group = rd.group("series")
    for key in _ordered(series_group):
        dataset = rd.dataset(key, series_group)
        series[rd.name_of(dataset)] = rd.array(key, "K", 1, series_group)

    ledger = _ledger_version_1(rd)

    snaps = rd.group("snapshots")
    snapshot_times = rd.array("times", "s", 1, snaps)
    snapshots = rd.array("temperature", "K", 3, snaps)
    if snapshots.shape[0] != snapshot_times.size:
        raise rd.fail("snapshots/temperature and snapshots/times differ in length")
    if snapshots.shape[1:] != cells:
        raise rd.fail(f"snapshots/temperature holds fields of shape {snapshots.shape[1:]}, not {cells}")

    final_state = _final_state_version_1(rd)

    ph = rd.group("phases")
    phase_names = rd.texts("names", ph)
    starts = rd.array("start", "s", 1, ph)
    ends = rd.array("end", "s", 1, ph)
    if not len(phase_names) == starts.size == ends.size:
        raise rd.fail("phases/names, phases/start and phases/end differ in length")
    phases = tuple((name, float(start), float(end)) for name, start, end in zip(phase_names, starts, ends, strict=True))

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
        end_of_braking=end_of_braking,
        probe_positions=positions,
        probe_time_constants=time_constants,
        metadata=metadata,
    )


def _probes_version_1(
    rd: _Reader,
) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray], dict[str, tuple[float, float]], dict[str, float]]:
    """Local temperatures, readings, positions [m] and time constants [s] of the probes, by name."""
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
    return probes, readings, positions, time_constants


def _ledger_version_1(rd: _Reader) -> EnergyLedger:
    """The energy ledger [J] of a version 1 file."""
    lg = rd.group("ledger")
    accounts = {account: rd.array(account, "J", 1, lg) for account in LEDGER_ACCOUNTS}
    labels = rd.texts("friction_labels", lg)
    split = rd.array("friction_split", "J", 2, lg)
    if split.shape[0] != len(labels):
        raise rd.fail("ledger/friction_split and ledger/friction_labels differ in length")
    return EnergyLedger(**accounts, friction_labels=labels, friction_split=split)


def _final_state_version_1(rd: _Reader) -> State:
    """The state at the end of the record in a version 1 file."""
    final = rd.group("final_state")
    final_readings = {}
    if "readings" in final:
        names = rd.texts("reading_names", final)
        values = rd.array("readings", "K", 1, final)
        if len(names) != values.size:
            raise rd.fail("final_state/reading_names and final_state/readings differ in length")
        final_readings = {name: float(v) for name, v in zip(names, values, strict=True)}
    return State(
        time=rd.scalar("time", "s", final),
        temperature=rd.array("temperature", "K", 1, final),
        readings=final_readings,
    )


def _columns_of(rd: _Reader, name: str, n: int, labels: tuple[str, ...]) -> np.ndarray:
    """The (n, k) history table ``name``, checked against ``n`` record times and ``labels``."""
    table = rd.array(name, "K", 2)
    if table.shape != (n, len(labels)):
        raise rd.fail(f"{name!r} has shape {table.shape}, expected {(n, len(labels))}")
    return table


def _series_version_2(rd: _Reader, n: int) -> dict[str, np.ndarray]:
    """Every series, in the order of the root ``series_order`` attribute."""
    if "series_order" not in rd.h5.attrs:
        raise rd.fail("lacks the root attribute 'series_order'")
    order = tuple(_attr_text(name) for name in np.atleast_1d(rd.h5.attrs["series_order"]))
    tables: dict[str, tuple[dict[str, int], np.ndarray]] = {}
    for kind, coordinate, variable in ((SURFACE_SERIES, "surface", "surface_temperature"),
                                       (OTHER_SERIES, "series", "temperature_series")):  # fmt: skip
        if coordinate in rd.h5:
            labels = rd.texts(coordinate)
            tables[kind] = ({label: k for k, label in enumerate(labels)}, _columns_of(rd, variable, n, labels))
    series: dict[str, np.ndarray] = {}
    for name in order:
        place = series_place(name)
        if place.kind == OWN_VARIABLE:
            series[name] = rd.array(place.key, "K", 1)
            continue
        columns, table = tables.get(place.kind, ({}, None))
        if place.key not in columns:
            raise rd.fail(f"lacks the series {name!r} named in 'series_order'")
        series[name] = np.ascontiguousarray(table[:, columns[place.key]])
    return series


def _probes_version_2(
    rd: _Reader, n: int
) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray], dict[str, tuple[float, float]], dict[str, float]]:
    """Local temperatures, readings, positions [m] and time constants [s] of the probes, by name."""
    names = rd.texts("probe")
    content = rd.array("probe_content", "1", 1, kind="iu")
    r = rd.array("probe_r", "m", 1)
    z = rd.array("probe_z", "m", 1)
    constants = rd.array("probe_time_constant", "s", 1)
    local = _columns_of(rd, "local", n, names)
    reading = _columns_of(rd, "reading", n, names)
    if not content.size == r.size == z.size == constants.size == len(names):
        raise rd.fail("the probe variables differ in length from 'probe'")
    probes: dict[str, np.ndarray] = {}
    readings: dict[str, np.ndarray] = {}
    positions: dict[str, tuple[float, float]] = {}
    time_constants: dict[str, float] = {}
    for k, name in enumerate(names):
        flags = int(content[k])
        if flags & PROBE_HAS_LOCAL:
            probes[name] = np.ascontiguousarray(local[:, k])
        if flags & PROBE_HAS_READING:
            readings[name] = np.ascontiguousarray(reading[:, k])
        if flags & PROBE_HAS_POSITION:
            positions[name] = (float(r[k]), float(z[k]))
        if flags & PROBE_HAS_TIME_CONSTANT:
            time_constants[name] = float(constants[k])
    return probes, readings, positions, time_constants


def _ledger_version_2(rd: _Reader, n: int) -> EnergyLedger:
    """The energy ledger [J] of a version 2 file, each account ``n`` record times long."""
    lg = rd.group("ledger")
    accounts = {account: rd.array(account, "J", 1, lg) for account in LEDGER_ACCOUNTS}
    if any(values.size != n for values in accounts.values()):
        raise rd.fail("a ledger account differs in length from 'time'")
    labels = rd.texts("rubbing_interface", lg)
    split = rd.array("friction_split", "J", 2, lg)
    if split.shape[0] != len(labels):
        raise rd.fail("ledger/friction_split and ledger/rubbing_interface differ in length")
    return EnergyLedger(**accounts, friction_labels=labels, friction_split=split)


def _final_state_version_2(rd: _Reader) -> State:
    """The state at the end of the record in a version 2 file."""
    final = rd.group("final_state")
    lagged = rd.texts("lagged_probe", final)
    values = rd.array("reading", "K", 1, final)
    if len(lagged) != values.size:
        raise rd.fail("final_state/lagged_probe and final_state/reading differ in length")
    return State(
        time=rd.scalar("final_time", "s", final),
        temperature=rd.array("temperature", "K", 1, final),
        readings={name: float(v) for name, v in zip(lagged, values, strict=True)},
        plug_temperatures=_plug_temperatures(rd, final),
        step=rd.scalar("step", "s", final) if "step" in final else None,
        tyre_gas_temperature=_tyre_gas(rd, final),
    )


def _read_version_2(rd: _Reader) -> Result:
    """A Result from a file of format version 2: the netCDF-4 / CF layout."""
    times = rd.array("time", "s", 1)
    n = times.size
    probes, readings, positions, time_constants = _probes_version_2(rd, n)
    series = _series_version_2(rd, n)

    r_edges = rd.array("r_edge", "m", 1)
    z_edges = rd.array("z_edge", "m", 1)
    part_map = rd.array("part_map", "1", 2, kind="iu")
    part_names = rd.texts("part")
    part_roles = rd.texts("part_role")
    cells = (z_edges.size - 1, r_edges.size - 1)
    if part_map.shape != cells:
        raise rd.fail(f"part_map has shape {part_map.shape}, but the grid edges give {cells}")
    if len(part_names) != len(part_roles):
        raise rd.fail("part and part_role differ in length")
    snapshot_times = rd.array("snapshot_time", "s", 1)
    snapshots = rd.array("temperature", "K", 3)
    if snapshots.shape != (snapshot_times.size, *cells):
        raise rd.fail(f"temperature has shape {snapshots.shape}, expected {(snapshot_times.size, *cells)}")

    ledger = _ledger_version_2(rd, n)

    final_state = _final_state_version_2(rd)
    initial_plugs = _plug_temperatures(rd, rd.h5["initial_plugs"]) if "initial_plugs" in rd.h5 else {}
    initial_gas = _tyre_gas(rd, rd.h5["initial_plugs"]) if "initial_plugs" in rd.h5 else None

    ph = rd.group("phases")
    phase_names = rd.texts("phase", ph)
    starts = rd.array("start", "s", 1, ph)
    ends = rd.array("end", "s", 1, ph)
    if not len(phase_names) == starts.size == ends.size:
        raise rd.fail("phases/phase, phases/start and phases/end differ in length")
    case = rd.group("case")
    rd.text("text", case)
    rd.json("resolved_inputs", case)
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
        phases=tuple((p, float(s), float(e)) for p, s, e in zip(phase_names, starts, ends, strict=True)),
        end_of_heating=rd.scalar("end_of_heating", "s"),
        end_of_braking=rd.scalar("end_of_braking", "s"),
        probe_positions=positions,
        probe_time_constants=time_constants,
        metadata=rd.json("run_metadata", case),
        initial_plug_temperatures=initial_plugs,
        initial_tyre_gas_temperature=initial_gas,
    )


def _tyre_gas(rd: _Reader, group: h5py.Group) -> float | None:
    """The tyre gas temperature [K] stored in ``group``; None where absent (no tyre, or files before it was kept)."""
    return rd.scalar("tyre_gas_temperature", "K", group) if "tyre_gas_temperature" in group else None


def _plug_temperatures(rd: _Reader, group: h5py.Group) -> dict[str, float]:
    """The fuse plugs' own temperatures [K] stored in ``group``; empty where absent (files before they were kept)."""
    if "plug_temperature" not in group:
        return {}
    names = rd.texts("plug", group)
    values = rd.array("plug_temperature", "K", 1, group)
    if len(names) != values.size:
        raise rd.fail(f"{group.name}/plug and {group.name}/plug_temperature differ in length")
    return {name: float(v) for name, v in zip(names, values, strict=True)}


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
