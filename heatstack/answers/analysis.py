"""Answers read from a finished run: peaks and delays, threshold crossings, margins, cooling time.

Everything here reads a :class:`~heatstack.result.Result` and never re-runs the solver; the
histories are read through :mod:`heatstack.answers.histories` (piecewise linear between the
record times) and the sensor against the heat sink is :mod:`heatstack.answers.sensor`. A peak is
the largest *recorded* value: the true maximum of the smooth history lies between the
neighbouring records, which every :class:`Peak` states as its ``bracket``.

Names: a probe name reads the probe's *reading* (after its instrument lag; equal to
the local temperature for a probe without a time constant); a global series is read by
its name (``"heat_sink_mean"``, ``"wheel_max"``, ``"surface:tyre cavity"``, ...).

Limits given by a user accept a number in [K] or a string with a unit (``"177 degC"``).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..result import Result, peak_time
from ..units import quantity
from .histories import history, history_from, level_crossings, record_times

__all__ = [
    "Peak",
    "Margin",
    "CoolingTime",
    "peak",
    "peak_of",
    "threshold_crossings",
    "margins",
    "cooling_time_in_result",
]

# --------------------------------------------------------------------------- answers


@dataclass(frozen=True)
class Peak:
    """The largest recorded value of one history.

    Attributes
    ----------
    name : str
        Probe or series name.
    temperature : float
        Peak temperature [K].
    time : float
        Record time of the peak [s].
    delay_after_braking : float
        ``time - end_of_braking`` [s] (the end of the reference stop); negative if the peak
        came during braking.
    bracket : (float, float)
        Record times either side of the peak [s]: the maximum of the smooth history lies
        between them (the resolution of ``time``).
    """

    name: str
    temperature: float
    time: float
    delay_after_braking: float
    bracket: tuple[float, float]


@dataclass(frozen=True)
class Margin:
    """Distance of a peak from its limit.

    Attributes
    ----------
    name : str
    limit : float
        [K]
    peak : float
        Largest recorded value [K].
    margin : float
        ``limit - peak`` [K]; negative when the limit is exceeded.
    time_of_peak : float
        [s]
    exceeded : bool
        Whether the peak is above the limit (``margin < 0``).
    """

    name: str
    limit: float
    peak: float
    margin: float
    time_of_peak: float
    exceeded: bool


@dataclass(frozen=True)
class CoolingTime:
    """When a history falls below a temperature for good (within the record).

    Attributes
    ----------
    name : str
    below : float
        The temperature [K].
    start : float
        Time the count starts from [s].
    reached : bool
        Whether the history is below ``below`` at the end of the record and has stayed
        below from ``time_below`` on. False means: not within the recorded history (a
        longer run is needed); ``time_below`` and ``duration`` are then None.
    time_below : float or None
        Time [s] after which the history stays below ``below`` to the end of the record.
    duration : float or None
        ``time_below - start`` [s].
    record_end : float
        Last record time [s]: "stays below" is known only up to here.
    value_at_record_end : float
        [K]
    """

    name: str
    below: float
    start: float
    reached: bool
    time_below: float | None
    duration: float | None
    record_end: float
    value_at_record_end: float


def peak_of(name: str, times: np.ndarray, values: np.ndarray, end_of_braking: float, corners=()) -> Peak:
    """The peak of a history already read, its time and its delay after braking.

    Parameters
    ----------
    name : str
        Probe or series name, kept in the answer.
    times : ndarray
        Record times [s].
    values : ndarray
        The history [K].
    end_of_braking : float
        End of braking of the run [s].
    corners : sequence of float, optional
        Times [s] where the history may kink (phase ends, the end of heating): a peak on one
        takes that time (:func:`heatstack.result.peak_time`).

    Returns
    -------
    Peak
        The largest recorded value, its time and the record times either side.
    """
    k = int(np.argmax(values))
    bracket = (float(times[max(k - 1, 0)]), float(times[min(k + 1, times.size - 1)]))
    when = peak_time(times, values, k, corners)
    return Peak(name, float(values[k]), when, when - end_of_braking, bracket)


def _time(result: Result, value: Any, field: str) -> float:
    times = record_times(result)
    t = quantity(value, "time", field)
    if not times[0] <= t <= times[-1]:
        raise InputError(f"{field}: {t} s lies outside the record [{times[0]}, {times[-1]}] s")
    return t


# --------------------------------------------------------------------------- public answers


def peak(result: Result, name: str) -> Peak:
    """The peak of a probe reading or a global series, and its delay after braking.

    Parameters
    ----------
    result : Result
    name : str
        Probe name (its reading) or series name.

    Returns
    -------
    Peak

    Raises
    ------
    InputError
        Unknown name (the message lists the known ones) or fewer than two records.
    """
    values = history(result, name)
    return peak_of(name, record_times(result), values, float(result.end_of_braking), result.corner_times())


def threshold_crossings(result: Result, name: str, limit: Any) -> list[tuple[float, str]]:
    """Times at which a history reaches or leaves a temperature, by linear interpolation.

    A history is "above" where it is at or above ``limit``; ``"up"`` marks the change
    to above, ``"down"`` the change back. A history that only touches ``limit`` at one
    record gives an up and a down at the same time.

    Parameters
    ----------
    result : Result
    name : str
        Probe name (its reading) or series name.
    limit : float or str
        Temperature [K], or a string with a unit (``"177 degC"``).

    Returns
    -------
    list of (float, str)
        ``(time [s], "up" | "down")`` in time order; empty if the history never crosses.

    Raises
    ------
    InputError, UnitError
        Unknown name, a limit that is not a temperature, too few records.
    """
    level = quantity(limit, "temperature", "limit", minimum=0.0, exclusive_minimum=True)
    return level_crossings(record_times(result), history(result, name), level)


def margins(result: Result, limits: Mapping[str, Any]) -> list[Margin]:
    """Margin of each named history to its limit: ``limit - peak``.

    Parameters
    ----------
    result : Result
    limits : mapping of str to float or str
        Probe or series name -> temperature limit [K] (or a string with a unit).

    Returns
    -------
    list of Margin
        In the order of ``limits``.

    Raises
    ------
    InputError, UnitError
        No limits, an unknown name, a limit that is not a temperature.
    """
    if not limits:
        raise InputError("limits: give at least one name -> limit")
    out = []
    times = record_times(result)
    for name, value in limits.items():
        limit = quantity(value, "temperature", f"limits[{name!r}]", minimum=0.0, exclusive_minimum=True)
        values = history(result, name)
        k = int(np.argmax(values))
        top = float(values[k])
        when = peak_time(times, values, k, result.corner_times())
        out.append(Margin(name, limit, top, limit - top, when, bool(top > limit)))
    return out


def cooling_time_in_result(result: Result, name: str, below: Any, after: Any = None) -> CoolingTime:
    """Time until a history falls below a temperature and stays below, from the record.

    Parameters
    ----------
    result : Result
    name : str
        Probe name (its reading) or series name.
    below : float or str
        Temperature [K] (or a string with a unit).
    after : None, "peak", float or str
        Start of the count: the end of braking (None), the history's own peak
        (``"peak"``), or a time [s] within the record.

    Returns
    -------
    CoolingTime
        ``reached`` is False when the history is not below ``below`` at the end of the
        record: the answer is then not within the recorded history.

    Raises
    ------
    InputError, UnitError
        Unknown name, a bad temperature or start time, too few records.
    """
    times = record_times(result)
    values = history(result, name)
    level = quantity(below, "temperature", "below", minimum=0.0, exclusive_minimum=True)
    if after is None:
        start = min(max(float(result.end_of_braking), times[0]), times[-1])
    elif isinstance(after, str) and after == "peak":
        start = float(times[int(np.argmax(values))])
    else:
        start = _time(result, after, "after")
    t, v = history_from(times, values, start)
    end_value = float(v[-1])
    if end_value >= level:
        return CoolingTime(name, level, start, False, None, None, float(t[-1]), end_value)
    at_or_above = np.flatnonzero(v >= level)
    if at_or_above.size == 0:
        when = start
    else:
        k = int(at_or_above[-1])
        when = float(t[k] + (level - v[k]) / (v[k + 1] - v[k]) * (t[k + 1] - t[k]))
    return CoolingTime(name, level, start, True, when, when - start, float(t[-1]), end_value)
