"""What a calibration is, once read: its parameters and priors, test runs, measured traces and fit settings.

Plain frozen records (SI throughout), made by :mod:`heatstack.questions.calibration_file`
from a calibration file and read by the fit (:mod:`heatstack.questions.calibration`) and
everything after it.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..studies.paths import Token, format_path

__all__ = [
    "Prior",
    "FitParameter",
    "MeasuredTrace",
    "TestRun",
    "FitSettings",
    "Calibration",
    "LOSSES",
    "MODEL_ERRORS",
]

#: Loss functions of :func:`scipy.optimize.least_squares` offered.
LOSSES = ("linear", "soft_l1", "huber", "cauchy")
#: What ``[fit] model_error`` may be.
MODEL_ERRORS = ("none", "estimate")


@dataclass(frozen=True)
class Prior:
    """A prior on one parameter.

    Attributes
    ----------
    kind : {"normal", "lognormal"}
    center : float
        Mean (normal) or median (lognormal) [SI].
    spread : float
        Standard deviation (normal) [SI], or of the natural log (lognormal) [-].
    """

    kind: str
    center: float
    spread: float


@dataclass(frozen=True)
class FitParameter:
    """One parameter to fit.

    Attributes
    ----------
    name : str
    paths : tuple of tuple
        Case key paths (tokens) set to the parameter's value.
    dimension : str
        Physical dimension (a key of ``heatstack.units.SI_UNITS``).
    start, lower, upper : float
        First guess and bounds [SI].
    log : bool
        Fitted as ``ln(value)`` (positive quantities).
    prior : Prior or None
    run : str or None
        The only run the parameter applies to (None: every run).
    """

    name: str
    paths: tuple[tuple[Token, ...], ...]
    dimension: str
    start: float
    lower: float
    upper: float
    log: bool
    prior: Prior | None = None
    run: str | None = None

    @property
    def label(self) -> str:
        """The parameter's name with its first path."""
        return f"{self.name} ({format_path(self.paths[0])})"


@dataclass(frozen=True, eq=False)
class MeasuredTrace:
    """One measured temperature trace.

    Attributes
    ----------
    name : str
        ``<run>/<probe>``.
    probe : str
    times : ndarray
        Sample times [s] on the run's clock.
    temperatures : ndarray
        Readings [K].
    uncertainty : float
        Measurement uncertainty: standard deviation of each reading [K].
    source : str
        File the trace came from.
    model_uncertainty : float
        Stated model uncertainty: standard deviation of the model's reading that the fit
        model cannot remove, independent reading to reading [K] (0 when not given). Added in
        quadrature to ``uncertainty`` (:attr:`sigma`); a systematic model error (the fit
        model's discretisation error, the same in every trial) is better estimated with
        ``[fit] model_error = "estimate"`` (:mod:`heatstack.questions.calibration_model_error`).
    """

    name: str
    probe: str
    times: np.ndarray
    temperatures: np.ndarray
    uncertainty: float
    source: str
    model_uncertainty: float = 0.0

    @property
    def sigma(self) -> float:
        """The weight of each reading: ``sqrt(uncertainty^2 + model_uncertainty^2)`` [K]."""
        return float(np.hypot(self.uncertainty, self.model_uncertainty))


@dataclass(frozen=True, eq=False)
class TestRun:
    """One test run: the base case with its overrides and probes, and its traces.

    Attributes
    ----------
    name : str
    mapping : dict
        The run's case mapping (overrides and declared probes written in), before any
        fitted parameter is set.
    traces : tuple of MeasuredTrace
    duration : float
        Length of the run's duty [s].
    """

    name: str
    mapping: dict
    traces: tuple[MeasuredTrace, ...]
    duration: float


@dataclass(frozen=True)
class FitSettings:
    """How the fit runs (see the module docstring for the keys).

    Attributes
    ----------
    loss : str
        ``"linear"`` or a robust loss (``"soft_l1"``, ``"huber"``, ``"cauchy"``).
    loss_scale : float
        Residual where a robust loss bends, in measurement sigmas [-].
    max_evaluations : int
        Model evaluations allowed (each runs every test run once).
    executor : str
        ``"serial"``, ``"local"`` or a Dask scheduler address.
    workers : int or None
        Process count of a local executor.
    timeout : float
        Time allowed to reach a Dask scheduler [s].
    prediction_samples : int
        Parameter draws for the answers' intervals.
    profile : str or None
        A parameter to profile.
    model_error : {"none", "estimate"}
        ``"estimate"``: after the fit, each test run is re-run once at the fitted values on
        a refined model and the fit model's discretisation error is carried into the
        covariance (:mod:`heatstack.questions.calibration_model_error`).
    """

    loss: str = "linear"
    loss_scale: float = 3.0
    max_evaluations: int = 40
    executor: str = "local"
    workers: int | None = None
    timeout: float = 10.0
    prediction_samples: int = 24
    profile: str | None = None
    model_error: str = "none"


@dataclass(frozen=True, eq=False)
class Calibration:
    """A validated calibration file.

    Attributes
    ----------
    title : str
    base_text : str
        Text of the base case file.
    base_mapping : dict
    base_origin : str
    base_dir : Path
    runs : tuple of TestRun
    parameters : tuple of FitParameter
    settings : FitSettings
    origin : str
        The calibration file's name.
    text : str
        The calibration file's text.
    """

    title: str
    base_text: str
    base_mapping: dict
    base_origin: str
    base_dir: Path
    runs: tuple[TestRun, ...]
    parameters: tuple[FitParameter, ...]
    settings: FitSettings
    origin: str
    text: str = ""

    @property
    def n_points(self) -> int:
        """Number of measured readings in all traces."""
        return sum(trace.times.size for run in self.runs for trace in run.traces)
