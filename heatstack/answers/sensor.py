"""Why the gauge lags: a brake temperature sensor's reading against the true heat-sink temperature.

:func:`sensor_lag` splits the delay of the reading's peak after the end of braking into the
conduction path to the sensor point and the instrument's own lag, and gives the reading's offsets
to the heat-sink mean and the hottest heat-sink cell. Reads a Result only.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN
from ..result import Result
from ..units import quantity
from .analysis import peak_of
from .histories import checked_history, frozen_copy, history, history_from, local_temperature, record_times

__all__ = ["SensorLag", "sensor_lag"]

#: Default band [K] within which the sensor reading counts as showing the heat-sink mean.
DEFAULT_BAND = 10.0


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
    reading = history(result, sensor)
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
    read_peak = peak_of(sensor, times, reading, end, result.corner_times())
    local_peak = peak_of(sensor, times, local, end, result.corner_times())
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
    t, d = history_from(times, offset, start)
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
