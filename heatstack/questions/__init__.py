"""Questions that re-run the model: what if we braked now, how long to cool, what energy was it.

Unlike :mod:`heatstack.answers`, which only reads a finished Result, every question here
runs the solver again, from a saved :class:`~heatstack.result.State` or from scratch.
This package sits above :mod:`heatstack.answers` in the import order: it may import
answers, and answers never import it.

whatif
    Cooling time from a saved state (:func:`cooling_time_from_state`) and the peaks if a
    braking event started now (:func:`what_if`).
inverse
    The braking energy behind a recorded sensor trace (:func:`estimate_energy`), with the
    trace reader (sensor_trace), the convection multiplier (convection_scaling) and the
    fit helpers (fit_tools) in their own modules; honest_energy widens its interval for an
    uncertain sensor time constant and contact conductances.
calibrate
    The case's uncertain parameters fitted to measured test traces (:func:`calibrate`): the
    file (calibration_file), the fit (calibration), what the data tell (identifiability),
    the calibrated case (calibrated_case) and the report (calibration_report). Uses the
    study machinery (:mod:`heatstack.studies`: key paths, executors), which never imports
    this package.
"""

from __future__ import annotations

from .calibrate import CalibrationRun, calibrate, write_calibration_outputs
from .calibration_file import Calibration, load_calibration
from .convection_scaling import ScaledConvection, scale_convection
from .inverse import EnergyEstimate, FitError, estimate_energy, predict_from_estimate
from .sensor_trace import read_sensor_trace
from .whatif import CoolingAnswer, WhatIfAnswer, cooling_time_from_state, history_names, what_if

__all__ = [
    "Calibration",
    "CalibrationRun",
    "calibrate",
    "load_calibration",
    "write_calibration_outputs",
    "CoolingAnswer",
    "EnergyEstimate",
    "FitError",
    "ScaledConvection",
    "WhatIfAnswer",
    "cooling_time_from_state",
    "estimate_energy",
    "history_names",
    "predict_from_estimate",
    "read_sensor_trace",
    "scale_convection",
    "what_if",
]
