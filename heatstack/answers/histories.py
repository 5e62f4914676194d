"""Reading a Result's histories for the answers: checked record times, a history by name,
and the crossings of a piecewise-linear history.

A recorded history is taken as piecewise linear between its record times, the same assumption
the instrument model makes; times between records are found by linear interpolation. A probe
name reads the probe's *reading* (after its instrument lag); a global series is read by its
name. Every check raises InputError. Shared by every answer module (analysis, sensor, fuse
plugs, tyre).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..errors import InputError
from ..result import Result

__all__ = [
    "frozen_copy",
    "record_times",
    "checked_history",
    "history",
    "local_temperature",
    "level_crossings",
    "first_reach",
    "history_from",
    "name_tuple",
]


def frozen_copy(values: np.ndarray) -> np.ndarray:
    """A read-only float copy of ``values`` (answers are values, not views of a Result).

    Parameters
    ----------
    values : ndarray
        Any values (the unit is kept).

    Returns
    -------
    ndarray
        A float copy that cannot be written.
    """
    out = np.array(values, dtype=float, copy=True)
    out.setflags(write=False)
    return out


def record_times(result: Result) -> np.ndarray:
    """The record times, checked: at least two, finite, strictly increasing.

    Parameters
    ----------
    result : Result
        The run.

    Returns
    -------
    ndarray
        Record times [s].

    Raises
    ------
    InputError
        If there are fewer than two, or they are not finite and strictly increasing.
    """
    times = np.asarray(result.times, dtype=float)
    if times.ndim != 1 or times.size < 2:
        raise InputError(f"result: too few record points ({times.size}); at least 2 are needed")
    if not np.all(np.isfinite(times)) or np.any(np.diff(times) <= 0):
        raise InputError("result: record times must be finite and strictly increasing")
    return times


def checked_history(result: Result, name: str, values: np.ndarray) -> np.ndarray:
    """``values`` of the history ``name``, checked: one finite value per record time.

    Parameters
    ----------
    result : Result
        The run the history belongs to.
    name : str
        History name, for the message.
    values : ndarray
        The history [K].

    Returns
    -------
    ndarray
        The values as floats [K].

    Raises
    ------
    InputError
        If the count differs from the record times or a value is not finite.
    """
    values = np.asarray(values, dtype=float)
    if values.shape != np.shape(result.times):
        raise InputError(f"{name!r}: {values.size} values for {np.size(result.times)} record times")
    if not np.all(np.isfinite(values)):
        raise InputError(f"{name!r}: the recorded history holds non-finite values")
    return values


def _known(result: Result) -> str:
    return f"known probes: {sorted(result.readings)}; known series: {sorted(result.series)}"


def history(result: Result, name: str) -> np.ndarray:
    """A probe's reading or a global series, by name.

    Parameters
    ----------
    result : Result
        The run.
    name : str
        Probe name (its reading) or series name.

    Returns
    -------
    ndarray
        The history at every record time [K].

    Raises
    ------
    InputError
        If there is no such probe or series (the message lists the known names), or the
        records are too few or not finite.
    """
    record_times(result)
    if name in result.readings:
        return checked_history(result, name, result.readings[name])
    if name in result.series:
        return checked_history(result, name, result.series[name])
    raise InputError(f"no probe or series named {name!r}; {_known(result)}")


def local_temperature(result: Result, name: str, field: str = "probe") -> np.ndarray:
    """The local temperature at a probe point, by name.

    Parameters
    ----------
    result : Result
        The run.
    name : str
        Probe name.
    field : str, optional
        Field name used in error messages.

    Returns
    -------
    ndarray
        The probe's temperature at every record time [K].

    Raises
    ------
    InputError
        If there is no such probe, or the records are too few or not finite.
    """
    record_times(result)
    if name not in result.probes:
        raise InputError(f"{field}: no probe named {name!r}; known probes: {sorted(result.probes)}")
    return checked_history(result, name, result.probes[name])


def level_crossings(times: np.ndarray, values: np.ndarray, level: float) -> list[tuple[float, str]]:
    """Times where a piecewise-linear history reaches (>=) or leaves ``level``, with the direction.

    Parameters
    ----------
    times : ndarray
        Record times [s].
    values : ndarray
        The history, in any unit.
    level : float
        The level, in the unit of ``values``.

    Returns
    -------
    list of (float, str)
        Each crossing's time [s] (linear interpolation) and ``"up"`` or ``"down"``.
    """
    above = values >= level
    out = []
    for k in np.flatnonzero(above[1:] != above[:-1]):
        v0, v1 = values[k], values[k + 1]
        t = times[k] + (level - v0) / (v1 - v0) * (times[k + 1] - times[k])
        out.append((float(t), "up" if above[k + 1] else "down"))
    return out


def first_reach(times: np.ndarray, values: np.ndarray, level: float) -> float | None:
    """First time a piecewise-linear history is at or above ``level``; None if never.

    Parameters
    ----------
    times : ndarray
        Record times [s].
    values : ndarray
        The history, in any unit.
    level : float
        The level, in the unit of ``values``.

    Returns
    -------
    float or None
        The time [s].
    """
    if values[0] >= level:
        return float(times[0])
    ups = [t for t, direction in level_crossings(times, values, level) if direction == "up"]
    return ups[0] if ups else None


def history_from(times: np.ndarray, values: np.ndarray, start: float) -> tuple[np.ndarray, np.ndarray]:
    """The history from ``start`` on, with the interpolated value at ``start`` first.

    Parameters
    ----------
    times : ndarray
        Record times [s].
    values : ndarray
        The history, in any unit.
    start : float
        Time to start from [s], within the record.

    Returns
    -------
    (ndarray, ndarray)
        The times [s] from ``start`` on and the values there, ``start`` and its interpolated
        value first.
    """
    keep = times > start
    return (
        np.concatenate(([start], times[keep])),
        np.concatenate(([np.interp(start, times, values)], values[keep])),
    )


def name_tuple(names: Sequence[str], field: str) -> tuple[str, ...]:
    """One name or several as a non-empty tuple; InputError naming ``field`` if empty.

    Parameters
    ----------
    names : str or sequence of str
        One name, or several.
    field : str
        Field name used in the error message.

    Returns
    -------
    tuple of str
        The names.

    Raises
    ------
    InputError
        If no name is given.
    """
    if isinstance(names, str):
        return (names,)
    out = tuple(names)
    if not out:
        raise InputError(f"{field}: give at least one name")
    return out
