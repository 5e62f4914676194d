"""Answers read from a finished run: peaks, delays, sensor offsets, threshold crossings, margins.

Everything here reads a :class:`~heatstack.result.Result` and never re-runs the solver.
A recorded history is taken as piecewise linear between its record times, the same
assumption the instrument model makes; times between records are found by linear
interpolation. A peak is the largest *recorded* value: the true maximum of the smooth
history lies between the neighbouring records, which every :class:`Peak` states as its
``bracket``.

Names: a probe name reads the probe's *reading* (after its instrument lag; equal to
the local temperature for a probe without a time constant); a global series is read by
its name (``"heat_sink_mean"``, ``"wheel_max"``, ``"surface:tyre cavity"``, ...).

Limits given by a user accept a number in [K] or a string with a unit (``"177 degC"``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN
from ..result import Result, peak_time
from ..units import quantity

__all__ = [
    "Peak",
    "SensorLag",
    "Margin",
    "CoolingTime",
    "peak",
    "sensor_lag",
    "threshold_crossings",
    "level_crossings",
    "margins",
    "cooling_time_in_result",
]

#: Default band [K] within which the sensor reading counts as showing the heat-sink mean.
DEFAULT_BAND = 10.0


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


@dataclass(frozen=True, eq=False)
class SensorLag:
    """How far, and for how long, a brake temperature sensor trails the heat sink.

    Attributes
    ----------
    sensor : str
        Probe name.
    time_constant : float
        Instrument time constant of the probe [s].
    end_of_braking : float
        End of braking of the run [s] (end of the reference stop).
    reading_peak : float
        Peak of the reading [K].
    time_of_peak : float
        Record time of the reading's peak [s].
    delay : float
        Delay of the reading's peak after the end of braking [s].
    local_peak : float
        Peak of the local temperature at the sensor point [K].
    local_time_of_peak : float
        [s]
    conduction_delay : float
        Delay of the local peak after the end of braking [s]: the conduction path from
        the heat sink to the sensor point.
    instrument_delay : float
        ``delay - conduction_delay`` [s]: the instrument's own lag. Each peak time is
        known to its record bracket, so this split is only as fine as the record
        spacing near the peaks (see the brackets).
    peak_bracket, local_peak_bracket : (float, float)
        Record times either side of the reading's and of the local peak [s].
    times : ndarray
        Record times [s].
    offset_to_mean : ndarray
        Reading minus ``heat_sink_mean`` [K] at each record time.
    offset_to_max : ndarray
        Reading minus ``heat_sink_max`` [K] at each record time.
    offset_to_mean_at_peak, offset_to_max_at_peak : float
        The two offsets at the reading's peak [K].
    band : float
        Half-width of the band [K] used for ``within_band_time``.
    within_band_time : float or None
        First time at or after the end of braking at which the reading is within
        ``band`` of the heat-sink mean [s]; None if it never is within the record.
    """

    sensor: str
    time_constant: float
    end_of_braking: float
    reading_peak: float
    time_of_peak: float
    delay: float
    local_peak: float
    local_time_of_peak: float
    conduction_delay: float
    instrument_delay: float
    peak_bracket: tuple[float, float]
    local_peak_bracket: tuple[float, float]
    times: np.ndarray
    offset_to_mean: np.ndarray
    offset_to_max: np.ndarray
    offset_to_mean_at_peak: float
    offset_to_max_at_peak: float
    band: float
    within_band_time: float | None


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


# --------------------------------------------------------------------------- shared helpers
# Public because fuse_plugs.py and tyre.py use them too; every check raises InputError.


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


def _history(result: Result, name: str) -> np.ndarray:
    """A probe's reading or a global series, by name; an error lists the known names."""
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


def _peak_of(name: str, times: np.ndarray, values: np.ndarray, end_of_braking: float, corners=()) -> Peak:
    k = int(np.argmax(values))
    bracket = (float(times[max(k - 1, 0)]), float(times[min(k + 1, times.size - 1)]))
    when = peak_time(times, values, k, corners)
    return Peak(name, float(values[k]), when, when - end_of_braking, bracket)


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


def _from(times: np.ndarray, values: np.ndarray, start: float) -> tuple[np.ndarray, np.ndarray]:
    """The history from ``start`` on, with the interpolated value at ``start`` first."""
    keep = times > start
    return (
        np.concatenate(([start], times[keep])),
        np.concatenate(([np.interp(start, times, values)], values[keep])),
    )


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
    values = _history(result, name)
    return _peak_of(name, record_times(result), values, float(result.end_of_braking), result.corner_times())


def sensor_lag(result: Result, sensor: str = "sensor", band: Any = DEFAULT_BAND) -> SensorLag:
    """Delay and offset of a brake temperature sensor against the heat sink.

    The delay of the reading's peak after the end of braking is split into the
    conduction path (delay of the local temperature's peak at the sensor point) and the
    instrument's own lag (the rest). The offsets compare the reading with the
    heat-sink mean (the "true" heat-sink temperature) and the hottest heat-sink cell.

    Parameters
    ----------
    result : Result
        Must hold the series ``heat_sink_mean`` and ``heat_sink_max``.
    sensor : str
        Probe name.
    band : float or str
        Half-width [K] (a temperature difference) of the band around the heat-sink mean
        for ``within_band_time``.

    Returns
    -------
    SensorLag

    Raises
    ------
    InputError
        Unknown sensor, missing heat-sink series, bad band, too few records.
    """
    times = record_times(result)
    band_k = quantity(band, "temperature_difference", "band", minimum=0.0)
    reading = _history(result, sensor)
    local = local_temperature(result, sensor, "sensor")
    for series in (HEAT_SINK_MEAN, HEAT_SINK_MAX):
        if series not in result.series:
            raise InputError(
                f"sensor_lag needs the series {series!r}, absent from this result "
                f"(no heat-sink parts?); known series: {sorted(result.series)}"
            )
    mean = checked_history(result, HEAT_SINK_MEAN, result.series[HEAT_SINK_MEAN])
    hottest = checked_history(result, HEAT_SINK_MAX, result.series[HEAT_SINK_MAX])
    end = float(result.end_of_braking)
    read_peak = _peak_of(sensor, times, reading, end, result.corner_times())
    local_peak = _peak_of(sensor, times, local, end, result.corner_times())
    to_mean, to_max = reading - mean, reading - hottest
    k = int(np.argmax(reading))
    return SensorLag(
        sensor=sensor,
        time_constant=float(result.probe_time_constants.get(sensor, 0.0)),
        end_of_braking=end,
        reading_peak=read_peak.temperature,
        time_of_peak=read_peak.time,
        delay=read_peak.delay_after_braking,
        local_peak=local_peak.temperature,
        local_time_of_peak=local_peak.time,
        conduction_delay=local_peak.delay_after_braking,
        instrument_delay=read_peak.time - local_peak.time,
        peak_bracket=read_peak.bracket,
        local_peak_bracket=local_peak.bracket,
        times=frozen_copy(times),
        offset_to_mean=frozen_copy(to_mean),
        offset_to_max=frozen_copy(to_max),
        offset_to_mean_at_peak=float(to_mean[k]),
        offset_to_max_at_peak=float(to_max[k]),
        band=band_k,
        within_band_time=_first_within(times, to_mean, band_k, min(max(end, times[0]), times[-1])),
    )


def _first_within(times: np.ndarray, offset: np.ndarray, band: float, start: float) -> float | None:
    """First time >= ``start`` with ``|offset| <= band`` (offset piecewise linear); None if never."""
    t, d = _from(times, offset, start)
    if abs(d[0]) <= band:
        return float(t[0])
    for k in range(t.size - 1):
        # |d[k]| > band here (else the previous interval returned); enter through an edge
        d0, d1 = d[k], d[k + 1]
        if d0 > band >= d1:
            return float(t[k] + (band - d0) / (d1 - d0) * (t[k + 1] - t[k]))
        if d0 < -band <= d1:
            return float(t[k] + (-band - d0) / (d1 - d0) * (t[k + 1] - t[k]))
    return None


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
    return level_crossings(record_times(result), _history(result, name), level)


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
        values = _history(result, name)
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
    values = _history(result, name)
    level = quantity(below, "temperature", "below", minimum=0.0, exclusive_minimum=True)
    if after is None:
        start = min(max(float(result.end_of_braking), times[0]), times[-1])
    elif isinstance(after, str) and after == "peak":
        start = float(times[int(np.argmax(values))])
    else:
        start = _time(result, after, "after")
    t, v = _from(times, values, start)
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
