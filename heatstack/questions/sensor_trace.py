"""Sensor traces for the energy fit: reading a recorded sensor-trace file and checking trace arrays.

Sensor-trace CSV format
-----------------------
Two comma-separated columns, time then sensor reading, one sample a row. Blank lines and
lines starting with ``#`` are skipped. An optional header names the columns
``time_<unit>,temperature_<unit>`` with any unit pint reads (``time_s,temperature_degC``,
``time_min,temperature_degF``); without a header the numbers are SI (s, K). Times must
increase strictly. Example::

    # sensor after a landing, invented numbers
    time_s,temperature_degC
    0,15.2
    30,48.9
    60,96.0
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import InputError
from ..traces import read_trace

__all__ = ["read_sensor_trace", "check_trace"]


def read_sensor_trace(path_or_rows: Any) -> tuple[np.ndarray, np.ndarray]:
    """Read a sensor trace: times [s] and readings [K].

    Parameters
    ----------
    path_or_rows : str or os.PathLike or text stream or iterable of (float, float)
        A CSV file (``time_<unit>,temperature_<unit>`` header optional; see
        :mod:`heatstack.traces`), an open text stream of it, or rows of
        (time [s], temperature [K]).

    Returns
    -------
    (ndarray, ndarray)
        Times [s] and temperatures [K].

    Raises
    ------
    InputError
        Naming the file line (or row) of a non-numeric, short, non-finite or
        non-increasing entry, a temperature at or below 0 K, a bad header or an
        unknown unit; or for fewer than two data rows.
    """
    times, temperatures, lines = read_trace(path_or_rows, "sensor trace", "temperature", "temperature")
    cold = np.flatnonzero(~(temperatures > 0))
    if cold.size:
        k = int(cold[0])
        raise InputError(
            f"{lines[k]}: temperature {temperatures[k]:g} is at or below absolute zero "
            "(in K; wrong unit in the header?)"
        )
    return times, temperatures


def check_trace(trace_t: Any, trace_T: Any, n_parameters: int) -> tuple[np.ndarray, np.ndarray]:
    """Check a sensor trace before a fit of ``n_parameters`` parameters.

    Parameters
    ----------
    trace_t : array_like
        Sample times [s], strictly increasing.
    trace_T : array_like
        Sensor readings [K], all above absolute zero.
    n_parameters : int
        Number of fitted parameters; the trace needs at least ``n_parameters + 2`` points.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Times [s] and readings [K] as 1-D float arrays.

    Raises
    ------
    InputError
        Naming the row at fault: too few points, non-finite values, times that do not
        increase, or readings not above 0 K.
    """
    t = np.asarray(trace_t, dtype=float)
    y = np.asarray(trace_T, dtype=float)
    if t.ndim != 1 or y.shape != t.shape:
        raise InputError(f"trace: times and temperatures must be 1-D of equal length, got {t.shape}, {y.shape}")
    needed = n_parameters + 2
    if t.size < needed:
        raise InputError(
            f"trace: {t.size} points are too few to fit {n_parameters} parameter(s) with an "
            f"uncertainty; give at least {needed}"
        )
    bad = np.flatnonzero(~(np.isfinite(t) & np.isfinite(y)))
    if bad.size:
        raise InputError(f"trace row {bad[0] + 1}: non-finite value")
    steps = np.diff(t)
    if np.any(steps <= 0):
        k = int(np.flatnonzero(steps <= 0)[0]) + 1
        raise InputError(f"trace row {k + 1}: time {t[k]:g} s does not increase from the previous {t[k - 1]:g} s")
    if np.any(y <= 0):
        k = int(np.flatnonzero(y <= 0)[0])
        raise InputError(f"trace row {k + 1}: temperature {y[k]:g} K is not above absolute zero")
    return t, y
