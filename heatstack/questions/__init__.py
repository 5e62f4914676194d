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
chaining
    Start a run from a results file's final state (or a snapshot), grid and design
    checked, instruments and fuse plugs lagging on (:func:`chaining.run_from_state`).
safe_wait
    The shortest safe wait before a departure whose take-off may be rejected
    (:func:`safe_wait.shortest_safe_wait`).
ramp
    A wheel state from sensor readings after a known duty, at a bound of the fitted
    energy (:func:`ramp.state_from_ramp_readings`).
day
    A day of operations expanded into a chain of legs (:func:`day.run_day`); its files
    are read by :mod:`heatstack.dayfile`.
calibrate
    The case's uncertain parameters fitted to measured test traces (:func:`calibrate`): the
    records (calibration_records) read from the file (calibration_file), the model runs
    (calibration_runs), the fit (calibration) with the fit model's own error
    (calibration_model_error), what the data tell (identifiability),
    the calibrated case (calibrated_case) and the report (calibration_report). Uses the
    study machinery (:mod:`heatstack.studies`: key paths, executors), which never imports
    this package. It is imported from its module (``heatstack.questions.calibrate``), not from
    here: it sits above the studies, which read case files, which chain runs from this package.
"""

from __future__ import annotations

from .convection_scaling import ScaledConvection, scale_convection
from .inverse import EnergyEstimate, FitError, estimate_energy, predict_from_estimate
from .sensor_trace import read_sensor_trace
from .whatif import CoolingAnswer, WhatIfAnswer, cooling_time_from_state, history_names, what_if

__all__ = [
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
