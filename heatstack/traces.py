"""Recorded traces: two-column CSV files of time and one measured quantity.

Layout (our own): an optional header ``time_<unit>,<column>_<unit>`` (e.g.
``time_s,ground_speed_kt`` or ``time_min,temperature_degC``), ``#`` comment lines and
blank lines skipped, otherwise two numbers a line; without a header the numbers are SI.
Every error names the file line (or the row of an in-memory table).
"""

from __future__ import annotations

import csv
import io
import os
import re
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np

from .errors import InputError, ScheduleError
from .units import to_si, to_si_array

__all__ = ["read_trace"]


def read_trace(path_or_rows: Any, kind: str, column: str, dimension: str) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Read a trace of ``column`` versus time.

    Parameters
    ----------
    path_or_rows : str or os.PathLike or text stream or iterable of (float, float)
        A CSV file, an open text stream of one, or rows of (time [s], value [SI]).
    kind : str
        What the trace is, for messages (e.g. ``"speed trace"``).
    column : str
        Header name of the second column (e.g. ``"ground_speed"``).
    dimension : str
        Dimension of the second column (a key of :data:`heatstack.units.SI_UNITS`).

    Returns
    -------
    (ndarray, ndarray, list of str)
        Times [s], values [SI], and where each value came from (``"speed trace
        run.csv, line 7"``), for the caller's own checks of the values.

    Raises
    ------
    InputError
        Naming the line of a non-numeric, short, non-finite or non-increasing entry, a
        bad header or unit, or for fewer than two data rows (ScheduleError for a time
        that does not increase).
    """
    if isinstance(path_or_rows, (str, os.PathLike)):
        source = os.fspath(path_or_rows)
        try:
            with open(source, newline="", encoding="utf-8") as handle:
                text = handle.read()
        except OSError as exc:
            raise InputError(f"{kind} {source}: cannot read the file ({exc.strerror})") from None
        return _parse_lines(text.splitlines(), f"{kind} {source}", column, dimension)
    if isinstance(path_or_rows, io.TextIOBase):
        return _parse_lines(path_or_rows.read().splitlines(), f"{kind} stream", column, dimension)
    rows = [(str(a), str(b)) for a, b in _pairs(path_or_rows, f"{kind} rows", column)]
    return _parse_rows(list(enumerate(rows, start=1)), f"{kind} rows", "row", (None, None), dimension)


def _pairs(rows: Iterable[Any], source: str, column: str) -> Iterable[tuple[Any, Any]]:
    for number, row in enumerate(rows, start=1):
        if len(row) != 2:
            raise InputError(f"{source}, row {number}: expected (time, {column.replace('_', ' ')})")
        yield row[0], row[1]


def _parse_lines(lines: list[str], source: str, column: str, dimension: str):
    numbered = [
        (number, row)
        for number, row in enumerate(csv.reader(lines), start=1)
        if row and "".join(row).strip() and not row[0].lstrip().startswith("#")
    ]
    if not numbered:
        raise InputError(f"{source}: no data rows")
    units: tuple[str | None, str | None] = (None, None)
    first_line, first = numbered[0]
    if not _is_number(first[0]):
        units = _header_units(first, f"{source}, line {first_line}", column, dimension)
        numbered = numbered[1:]
    return _parse_rows(numbered, source, "line", units, dimension)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _header_units(row: list[str], where: str, column: str, dimension: str) -> tuple[str | None, str | None]:
    pattern = re.compile(rf"^\s*(time|{column})(?:_(.+?))?\s*$", re.IGNORECASE)
    matches = [pattern.match(cell) for cell in row]
    if len(row) != 2 or not all(matches) or [m.group(1).lower() for m in matches] != ["time", column]:
        raise InputError(f"{where}: header must be time_<unit>,{column}_<unit>, got {','.join(row)!r}")
    units = tuple(m.group(2) for m in matches)
    for unit, dim, name in zip(units, ("time", dimension), ("time", column), strict=True):
        if unit is not None:
            to_si(1.0, unit, dim, f"{where}, column {name}")
    return units  # type: ignore[return-value]


def _parse_rows(
    numbered: list[tuple[int, Sequence[str]]],
    source: str,
    kind: str,
    units: tuple[str | None, str | None],
    dimension: str,
):
    values = np.empty((len(numbered), 2))
    for index, (number, row) in enumerate(numbered):
        where = f"{source}, {kind} {number}"
        if len(row) != 2:
            raise InputError(f"{where}: expected 2 values, got {len(row)}")
        try:
            values[index] = [float(cell) for cell in row]
        except ValueError:
            raise InputError(f"{where}: cannot read {','.join(row)!r} as numbers") from None
        if not np.all(np.isfinite(values[index])):
            raise InputError(f"{where}: non-finite value")
        if index and values[index, 0] <= values[index - 1, 0]:
            raise ScheduleError(
                f"{where}: time {values[index, 0]:g} does not increase from the previous "
                f"{kind} ({values[index - 1, 0]:g})"
            )
    if len(numbered) < 2:
        raise InputError(f"{source}: needs at least two data rows, got {len(numbered)}")
    times = to_si_array(values[:, 0], units[0], "time", f"{source}, time")
    measured = to_si_array(values[:, 1], units[1], dimension, f"{source}, {dimension}")
    lines = [f"{source}, {kind} {number}" for number, _ in numbered]
    return np.asarray(times, dtype=float), np.asarray(measured, dtype=float), lines
