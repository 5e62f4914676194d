"""The answers engineers act on, read off a finished Result (the solver is never re-run).

analysis
    Peaks and delays, sensor lag and offsets, threshold crossings, margins, cooling time.
fuse_plugs
    Fuse-plug temperature (with its own lag), release time and margin.
tyre
    Tyre gas node, inflation pressure, bead-seat margins.
inverse
    The braking energy from a recorded sensor trace (this one runs the model).
"""

from __future__ import annotations

from .analysis import CoolingTime, Margin, Peak, SensorLag, cooling_time, margins, peak, sensor_lag, threshold_crossings
from .fuse_plugs import FusePlug, PlugAnswer, assess_fuse_plugs
from .inverse import EnergyEstimate, FitError, estimate_energy, predict_from_estimate, read_sensor_trace
from .tyre import TyreGas, bead_seat_margin, plug_releases_before_limit, tyre_gas, tyre_pressure_margin

__all__ = [
    "CoolingTime",
    "EnergyEstimate",
    "FitError",
    "FusePlug",
    "Margin",
    "Peak",
    "PlugAnswer",
    "SensorLag",
    "TyreGas",
    "assess_fuse_plugs",
    "bead_seat_margin",
    "cooling_time",
    "estimate_energy",
    "margins",
    "peak",
    "plug_releases_before_limit",
    "predict_from_estimate",
    "read_sensor_trace",
    "sensor_lag",
    "threshold_crossings",
    "tyre_gas",
    "tyre_pressure_margin",
]
