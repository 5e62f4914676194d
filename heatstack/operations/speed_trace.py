"""Reading a speed trace: times [s] and ground speeds [m/s] from a CSV file or rows.

Speed-trace CSV format
----------------------
Two comma-separated columns, time then ground speed, one sample a row. Blank lines
and lines starting with ``#`` are skipped. An optional header row names the columns
``time_<unit>,ground_speed_<unit>`` with any unit pint reads (``time_s,ground_speed_kt``,
``time_min,ground_speed_km/h``); without a header the numbers are SI (s, m/s).
Times must increase strictly. Example::

    # landing roll, invented numbers
    time_s,ground_speed_kt
    0,120
    10,80
    22,0
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import InputError
from ..traces import read_trace

__all__ = ["read_speed_trace"]


def read_speed_trace(path_or_rows: Any) -> tuple[np.ndarray, np.ndarray]:
    """Read a speed trace: times [s] and ground speeds [m/s].

    Parameters
    ----------
    path_or_rows : str or os.PathLike or text stream or iterable of (float, float)
        A CSV file (``time_<unit>,ground_speed_<unit>`` header optional; see
        :mod:`heatstack.traces`), an open text stream of it, or rows of
        (time [s], ground speed [m/s]).

    Returns
    -------
    times : ndarray
        Sample times [s].
    speeds : ndarray
        Ground speeds [m/s].

    Raises
    ------
    InputError
        Naming the line (or row) of a non-numeric, short, negative-speed or
        non-increasing entry, or an unknown header unit.
    """
    times, speeds, lines = read_trace(path_or_rows, "speed trace", "ground_speed", "speed")
    negative = np.flatnonzero(speeds < 0)
    if negative.size:
        k = int(negative[0])
        raise InputError(f"{lines[k]}: negative ground speed {speeds[k]:g} m/s")
    return times, speeds
