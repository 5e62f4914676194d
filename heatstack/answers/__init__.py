"""The answers engineers act on, read off a finished Result (the solver is never re-run).

Questions that re-run the model (what-if, cooling from a saved state, the energy fit)
live in :mod:`heatstack.questions`, which may import from here; this package never
imports from there.

analysis
    Peaks and delays, threshold crossings, margins, cooling time.
sensor
    Sensor lag and offsets against the true heat-sink temperature.
histories
    The histories of a Result read by name and checked, their crossings (shared by the others).
fuse_plugs
    Fuse-plug temperature (with its own lag), release time and margin.
tyre
    Tyre gas node, inflation pressure, bead-seat margins.
"""

from __future__ import annotations

from .analysis import CoolingTime, Margin, Peak, cooling_time_in_result, margins, peak, threshold_crossings
from .fuse_plugs import FusePlug, PlugAnswer, assess_fuse_plugs
from .sensor import SensorLag, sensor_lag
from .tyre import (
    TyreGas,
    bead_seat_margin,
    plug_releases_before_limit,
    tyre_gas,
    tyre_pressure_margin,
    with_tyre_gas_state,
)

__all__ = [
    "CoolingTime",
    "FusePlug",
    "Margin",
    "Peak",
    "PlugAnswer",
    "SensorLag",
    "TyreGas",
    "assess_fuse_plugs",
    "bead_seat_margin",
    "cooling_time_in_result",
    "margins",
    "peak",
    "plug_releases_before_limit",
    "sensor_lag",
    "threshold_crossings",
    "tyre_gas",
    "tyre_pressure_margin",
    "with_tyre_gas_state",
]
