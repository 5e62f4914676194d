"""Operations files: a TOML day of operations and its CSV table of flights, read into a DayPlan.

The layout is described in :mod:`heatstack.questions.day`, which runs the plan. This
module sits with the case files on top of the package: it reads the wheel-and-brake case
the operations file names.
"""

from __future__ import annotations

import csv
import math
import re
import tomllib
from pathlib import Path
from typing import Any

from .case import load_case
from .errors import InputError
from .numerics.solver import SolverOptions
from .questions.day import COLUMNS, Aircraft, DayPlan, Flight, check_timing
from .questions.safe_wait import DispatchLimits
from .units import to_si
from .wheel_design import FusePlugSpec

__all__ = ["load_operations", "read_flights"]


_CLOCK = re.compile(r"^\s*(\d{1,2}):(\d{2})\s*$")


def _cell(value: str, column: str, row: int) -> float:
    where = f"flights row {row}, column {column}"
    if column == "arrival_time" and _CLOCK.match(value):
        hours, minutes = _CLOCK.match(value).groups()
        return 3600.0 * int(hours) + 60.0 * int(minutes)
    if not value.strip():
        raise InputError(f"{where}: empty")
    try:
        number = float(value)
    except ValueError:
        number = to_si(value, None, COLUMNS[column], where)
    if not math.isfinite(number):
        raise InputError(f"{where}: must be finite, got {value!r}")
    return number


def read_flights(path: str | Path) -> tuple[Flight, ...]:
    """Read and check the flights table (CSV with a header row of :data:`COLUMNS`).

    Parameters
    ----------
    path : str or Path
        The CSV file.

    Returns
    -------
    tuple of Flight
        The flights in SI, numbered from 1.

    Raises
    ------
    InputError
        A missing file or column, an empty or bad cell (naming row and column), a
        non-positive duration or mass, or an ``arrival_time`` that does not increase.
    """
    path = Path(path)
    try:
        with path.open(newline="", encoding="utf-8") as handle:
            rows = list(csv.DictReader(handle))
    except OSError as exc:
        raise InputError(f"flights table {str(path)!r} cannot be read: {exc}") from None
    header = set(rows[0]) if rows else set()
    missing = [c for c in COLUMNS if c not in header]
    if missing:
        raise InputError(f"flights table {path.name}: missing column(s) {missing} (needs {list(COLUMNS)})")
    flights = []
    for i, row in enumerate(rows, start=2):
        values = {c: _cell(row[c] or "", c, i) for c in COLUMNS}
        for c in ("arrival_mass", "arrival_speed", "departure_mass", "temperature"):
            if values[c] <= 0:
                raise InputError(f"flights row {i}, column {c}: must be > 0, got {row[c]!r}")
        for c in ("taxi_in", "turnaround", "taxi_out"):
            if values[c] <= 0:
                raise InputError(f"flights row {i}, column {c}: must be a time > 0, got {row[c]!r}")
        if flights and values["arrival_time"] <= flights[-1].arrival_time:
            raise InputError(f"flights row {i}, column arrival_time: times must increase, got {row['arrival_time']!r}")
        flights.append(Flight(number=i - 1, **values))
    return tuple(flights)


#: Dimension of each key of the ``[aircraft]`` table.
_AIRCRAFT_DIMENSIONS = {
    "brake_share": "dimensionless",
    "landing_stop_time": "time",
    "taxi_speed_high": "speed",
    "taxi_speed_low": "speed",
    "snub_duration": "time",
    "snub_interval": "time",
    "take_off_roll": "time",
    "lift_off_speed": "speed",
    "rejected_take_off_speed": "speed",
    "rejected_take_off_stop_time": "time",
    "wheel_inertia": "moment_of_inertia",
    "tyre_rolling_radius": "length",
    "spin_down_time": "time",
    "wheel_well_temperature": "temperature",
    "after_last_departure": "time",
}


def _aircraft(table: Any) -> Aircraft:
    if not isinstance(table, dict):
        raise InputError("aircraft: expected a table")
    values: dict[str, Any] = {}
    for key, value in table.items():
        if key == "braked_wheels":
            if not isinstance(value, int) or isinstance(value, bool) or value < 1:
                raise InputError(f"aircraft.braked_wheels: must be a whole number >= 1, got {value!r}")
            values[key] = value
        elif key in _AIRCRAFT_DIMENSIONS:
            values[key] = to_si(value, None, _AIRCRAFT_DIMENSIONS[key], f"aircraft.{key}")
        else:
            known = ["braked_wheels", *_AIRCRAFT_DIMENSIONS]
            raise InputError(f"aircraft.{key}: unknown key (keys: {', '.join(known)})")
    return Aircraft(**values)


def _limits(table: Any, plugs: tuple[FusePlugSpec, ...]) -> DispatchLimits | None:
    if table is None:
        return None
    if not isinstance(table, dict) or set(table) - {"plug_margin", "heat_sink_limit"}:
        raise InputError("limits: a table with plug_margin and/or heat_sink_limit only")
    margin = to_si(table.get("plug_margin", 10.0), None, "temperature_difference", "limits.plug_margin")
    limit = table.get("heat_sink_limit")
    sink = None if limit is None else to_si(limit, None, "temperature", "limits.heat_sink_limit")
    return DispatchLimits(plugs, margin, sink)


def load_operations(path: str | Path, options: SolverOptions | None = None) -> DayPlan:
    """Read an operations file (see the module notes) into a :class:`DayPlan`.

    Parameters
    ----------
    path : str or Path
        The operations file (TOML); the case and flights files are found from its folder.
    options : SolverOptions, optional
        Solver options; the case's by default.

    Returns
    -------
    DayPlan
        The validated day.

    Raises
    ------
    InputError
        A missing or bad file, key, column or cell, naming it.
    """
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"operations file {str(path)!r} cannot be read: {exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"operations file {path.name}: not valid TOML: {exc}") from None
    unknown = set(data) - {"operations", "aircraft", "limits"}
    if unknown:
        raise InputError(f"{path.name}: unknown table(s) {sorted(unknown)} (operations, aircraft, limits)")
    head = data.get("operations", {})
    for key in ("case", "flights"):
        if not isinstance(head.get(key), str):
            raise InputError(f"{path.name}: operations.{key}: a file name is required")
    case = load_case(path.parent / head["case"])
    flights = read_flights(path.parent / head["flights"])
    if not flights:
        raise InputError(f"{path.name}: the flights table has no rows")
    plan = DayPlan(
        model=case.build_model(),
        surfaces=tuple(case.assembly.surfaces),
        plugs=tuple(case.fuse_plugs),
        initial_temperature=case.initial_temperature,
        flights=flights,
        aircraft=_aircraft(data.get("aircraft", {})),
        limits=_limits(data.get("limits"), tuple(case.fuse_plugs)),
        options=options or case.solver,
        tyre=case.tyre,
        title=str(head.get("title", case.title)),
    )
    check_timing(plan)
    return plan
