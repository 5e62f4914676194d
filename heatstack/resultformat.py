"""The names every heatstack results file shares: its format name, its layout version and its ledger accounts
(the cumulative accounts [J] under ``/ledger``, named by the solver's step record).

Both the writer (:mod:`heatstack.resultfile`) and the reader (:mod:`heatstack.resultread`)
import these, so the two sides of the file can never disagree: where each series is stored
(:func:`series_place`) and what each bit of a probe's ``probe_content`` flag means.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .numerics.accounts import LEDGER_ACCOUNTS

__all__ = [
    "CONVENTIONS",
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "LEDGER_ACCOUNTS",
    "OTHER_SERIES",
    "OWN_VARIABLE",
    "PROBE_HAS_LOCAL",
    "PROBE_HAS_POSITION",
    "PROBE_HAS_READING",
    "PROBE_HAS_TIME_CONSTANT",
    "ROOT_VARIABLES",
    "SURFACE_PREFIX",
    "SURFACE_SERIES",
    "SeriesPlace",
    "series_place",
]

FORMAT_NAME = "heatstack-result"
"""Value of the root ``format`` attribute of every heatstack results file."""

FORMAT_VERSION = 2
"""Layout version written by :mod:`heatstack.resultfile`; files of a newer version are refused.

Version 1: index-named groups per probe and series, ``unit`` attributes. Version 2: the
netCDF-4 / CF layout with dimension scales, ``units`` and ``long_name`` attributes.
"""

CONVENTIONS = "CF-1.11"
"""Value of the root ``Conventions`` attribute (format version 2 on)."""

PROBE_HAS_LOCAL = 1
"""``probe_content`` bit: the probe's local temperature is recorded."""
PROBE_HAS_READING = 2
"""``probe_content`` bit: the probe's reading is recorded."""
PROBE_HAS_POSITION = 4
"""``probe_content`` bit: the probe's (r, z) position is known."""
PROBE_HAS_TIME_CONSTANT = 8
"""``probe_content`` bit: the probe's instrument time constant is known."""

SURFACE_PREFIX = "surface:"
"""Series named ``surface:<group>`` are the mean temperatures of exposed-surface groups."""

ROOT_VARIABLES = frozenset(
    {
        "time", "probe", "probe_r", "probe_z", "probe_time_constant", "probe_content", "local", "reading",
        "surface", "surface_temperature", "series", "temperature_series", "end_of_heating", "end_of_braking",
        "snapshot_time",
        "r", "z", "r_edge", "z_edge", "part", "part_role", "part_map", "temperature",
    }
)  # fmt: skip
"""Names of the root variables a series may not take."""

OWN_VARIABLE = "own variable"
SURFACE_SERIES = "surface"
OTHER_SERIES = "other"

_IDENTIFIER = re.compile(r"[A-Za-z][A-Za-z0-9_]*")


@dataclass(frozen=True)
class SeriesPlace:
    """Where one series of a Result lives in a results file of format version 2.

    Parameters
    ----------
    kind : str
        :data:`OWN_VARIABLE` (a root variable named ``key``), :data:`SURFACE_SERIES` (the
        column ``key`` of ``surface_temperature``) or :data:`OTHER_SERIES` (the column
        ``key`` of ``temperature_series``).
    key : str
        The variable name or the coordinate label.
    """

    kind: str
    key: str


def series_place(name: str) -> SeriesPlace:
    """Where the series ``name`` is stored: its own variable, a surface column or another column.

    Parameters
    ----------
    name : str
        Series name.

    Returns
    -------
    SeriesPlace
        The kind of place and the variable or column name.
    """
    if name.startswith(SURFACE_PREFIX) and len(name) > len(SURFACE_PREFIX):
        return SeriesPlace(SURFACE_SERIES, name[len(SURFACE_PREFIX) :])
    if _IDENTIFIER.fullmatch(name) and name not in ROOT_VARIABLES:
        return SeriesPlace(OWN_VARIABLE, name)
    return SeriesPlace(OTHER_SERIES, name)
