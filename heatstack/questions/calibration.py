"""Calibration: the case's uncertain parameters fitted to measured test traces by weighted least squares.

Method
------
Each test run is the base case with the run's overrides; a parameter vector sets every
fitted key path. The residual vector stacks, for every trace, ``(model - measured) /
sigma`` at the trace's own sample times (the model's record interpolated there, the data
never resampled), then one row ``(u - u_prior) / s_prior`` per prior.
:func:`scipy.optimize.least_squares` (trust-region reflective, bounded, optional robust
loss) minimises it over ``u``: ``ln(value)`` for a parameter whose lower bound is above
zero, ``value / (upper - lower)`` otherwise. The Jacobian is by forward differences in
``u`` (step :data:`FD_STEP`); its runs, and the runs of every evaluation, are sent together
to a study executor (serial or local pool, :mod:`heatstack.studies.executors`; Dask,
:mod:`heatstack.studies.dask_executor`).

Uncertainty: each reading weighs ``1 / sigma``, ``sigma`` the trace's measurement
uncertainty and its stated model uncertainty in quadrature
(:attr:`~heatstack.questions.calibration_records.MeasuredTrace.sigma`). The linearised
covariance ``(J^T J)^-1`` of the weighted problem, multiplied by the reduced chi-square when
that exceeds one (stated noise too small), plus, with ``[fit] model_error = "estimate"``, the
systematic term of the fit model's estimated discretisation error
(:mod:`heatstack.questions.calibration_model_error`); 95 % intervals ``u +/- 1.96 sd`` mapped
back to the values (asymmetric for log parameters) [1]_, [2]_. What the data determine is in
:mod:`heatstack.questions.identifiability`.

References
----------
.. [1] Seber, G.A.F., Wild, C.J., Nonlinear Regression, Wiley, 1989, sec. 5.1-5.2
   (linearisation: asymptotic covariance and confidence intervals).
.. [2] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
   Wiley, 1988, ch. 2.
"""

from __future__ import annotations

import logging
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from ..studies.executors import StudyExecutor
from .calibration_model_error import ModelErrorEstimate, estimate_model_error
from .calibration_records import Calibration, FitParameter
from .calibration_runs import Evaluator, from_internal, make_executor, to_internal

__all__ = [
    "CalibrationFit",
    "FD_STEP",
    "Z95",
    "fit_calibration",
    "interval_95",
]

log = logging.getLogger(__name__)

#: Forward-difference step of the Jacobian in the fitted coordinate ``u`` [-].
FD_STEP = 0.02
#: Relative step and cost-change tolerances of the fit: finer than the runs' own step-control noise is not sought.
XTOL, FTOL = 1e-4, 1e-6
Z95 = 1.959963984540054  # two-sided 95 % normal quantile


# ---------------------------------------------------------------------------- the answer


@dataclass(frozen=True, eq=False)
class CalibrationFit:
    """The fitted parameters, their uncertainty and the fitted traces.

    Attributes
    ----------
    parameters : tuple of FitParameter
    values : ndarray
        Fitted values [SI].
    lower_95, upper_95 : ndarray
        95 % linearised interval [SI] (inf/-inf where the data do not determine it).
    internal : ndarray
        Fitted coordinates ``u``.
    covariance : ndarray
        Covariance of ``u`` (priors included; the model-error term included when estimated).
    jacobian : ndarray
        Weighted Jacobian of the trace residuals in ``u`` (rows: readings; no prior rows).
    predicted : tuple of ndarray
        The model's reading at each trace's times at the fit [K], in trace order.
    residuals : tuple of ndarray
        ``predicted - measured`` per trace [K].
    trace_names : tuple of str
    reduced_chi_square : float
        Weighted SSR of the traces / (readings - parameters) [-].
    evaluations : int
        Evaluations of the model (each runs every run once).
    model_runs : int
    converged : bool
    message : str
    model_error : ModelErrorEstimate or None
        The fit model's estimated error and its shift of ``u`` (None unless
        ``model_error = "estimate"``); its ``covariance()`` is part of ``covariance``.
    """

    parameters: tuple[FitParameter, ...]
    values: np.ndarray
    lower_95: np.ndarray
    upper_95: np.ndarray
    internal: np.ndarray
    covariance: np.ndarray
    jacobian: np.ndarray
    predicted: tuple[np.ndarray, ...]
    residuals: tuple[np.ndarray, ...]
    trace_names: tuple[str, ...]
    reduced_chi_square: float
    evaluations: int
    model_runs: int
    converged: bool
    message: str
    model_error: ModelErrorEstimate | None = None

    def standard_errors(self) -> np.ndarray:
        """Standard deviation of each fitted coordinate ``u`` [-].

        Returns
        -------
        ndarray
            Square roots of the covariance diagonal (negative entries clipped to 0).
        """
        return np.sqrt(np.clip(np.diag(self.covariance), 0.0, np.inf))


# ---------------------------------------------------------------------------- the fit


class _Problem:
    """The weighted residual and its finite-difference Jacobian, sharing the runs at the current point."""

    def __init__(self, evaluator: Evaluator):
        self.ev = evaluator
        self.cache: dict[bytes, list[Any]] = {}
        self.best: tuple[float, np.ndarray] | None = None
        self.last_jacobian: tuple[bytes, np.ndarray] | None = None

    def base(self, u: np.ndarray) -> list[Any]:
        key = np.asarray(u, dtype=float).tobytes()
        if key not in self.cache:
            all_runs = tuple(range(len(self.ev.calibration.runs)))
            self.cache = {key: self.ev.readings([np.array(u, dtype=float)], [all_runs])[0]}
            self.ev.evaluations += 1
        return self.cache[key]

    def residual(self, u: np.ndarray) -> np.ndarray:
        data = (self.ev.stack(self.base(u)) - self.ev.measured) / self.ev.sigmas
        prior, _ = self.ev.prior_rows(u)
        out = np.concatenate([data, prior])
        cost = float(out @ out)
        if self.best is None or cost < self.best[0]:
            self.best = (cost, np.array(u, dtype=float))
        return out

    def data_jacobian(self, u: np.ndarray) -> np.ndarray:
        key = np.asarray(u, dtype=float).tobytes()
        if self.last_jacobian is not None and self.last_jacobian[0] == key:
            return self.last_jacobian[1]
        base = self.base(u)
        points, runs_of, steps = [], [], []
        for j in range(len(u)):
            p = self.ev.parameters[j]
            step = FD_STEP if to_internal(p, p.upper) - u[j] > FD_STEP else -FD_STEP
            moved = np.array(u, dtype=float)
            moved[j] += step
            points.append(moved)
            runs_of.append(self.ev.runs_using(j))
            steps.append(step)
        table = self.ev.readings(points, runs_of)
        y0 = self.ev.stack(base)
        columns = []
        for j, row in enumerate(table):
            merged = [row[r] if row[r] is not None else base[r] for r in range(len(base))]
            columns.append((self.ev.stack(merged) - y0) / steps[j])
        jacobian = np.column_stack(columns) / self.ev.sigmas[:, None]
        self.last_jacobian = (key, jacobian)
        return jacobian

    def jacobian(self, u: np.ndarray) -> np.ndarray:
        _, prior_jac = self.ev.prior_rows(u)
        return np.vstack([self.data_jacobian(u), prior_jac])


def _covariance(jacobian: np.ndarray, scale: float) -> np.ndarray:
    """``scale (J^T J)^-1`` by the pseudo-inverse; inf on directions the Jacobian does not see."""
    _, singular, vt = np.linalg.svd(jacobian, full_matrices=False)
    if singular.size == 0 or singular[0] <= 0:
        return np.full((jacobian.shape[1],) * 2, np.inf)
    keep = singular > singular[0] * 1e-8
    covariance = (vt[keep].T / singular[keep] ** 2) @ vt[keep]
    if not np.all(keep):
        blind = vt[~keep]
        weights = np.sum(blind**2, axis=0) > 1e-6
        covariance[weights, :] = np.inf
        covariance[:, weights] = np.inf
    return covariance * scale


def _message(result: Any, evaluations: int, limit: int) -> tuple[bool, str]:
    if result.status > 0:
        return True, f"converged after {evaluations} evaluations: {result.message.rstrip('.')}"
    if result.status == 0:
        return False, (
            f"did not converge: the evaluation limit ({limit}) was reached; the best estimate so far is "
            "returned (raise fit.max_evaluations, or fit fewer parameters)"
        )
    return False, f"did not converge: {result.message.rstrip('.')}"


def fit_calibration(
    calibration: Calibration,
    executor: StudyExecutor | None = None,
    *,
    start: Sequence[float] | None = None,
    fixed: Mapping[int, float] | None = None,
    model_error: bool | None = None,
) -> CalibrationFit:
    """Fit the calibration's parameters to its traces.

    Parameters
    ----------
    calibration : Calibration
    executor : StudyExecutor, optional
        Where the runs go; by default the one ``calibration.settings`` names (closed
        afterwards). A given executor is left open.
    start : sequence of float, optional
        First guess [SI] instead of the file's ``start`` values.
    fixed : mapping of int to float, optional
        Parameters (by index) held at a value [SI] (a profile).
    model_error : bool, optional
        Estimate the fit model's discretisation error and add it to the covariance (one
        refined re-run of every test run); by default as ``calibration.settings.model_error``
        says (``"estimate"``).

    Returns
    -------
    CalibrationFit
        ``converged`` False with the reason in ``message`` (and the best estimate) when
        the fit stops early.

    Raises
    ------
    CalibrationFitError
        A run failed (its error text and the parameter values that made it fail).
    InputError
        An unreachable Dask scheduler, before any run.
    """
    settings = calibration.settings
    owned = executor is None
    runner = make_executor(settings.executor, settings.workers, settings.timeout) if owned else executor
    try:
        runner.start()
        estimate = settings.model_error == "estimate" if model_error is None else model_error
        return _fit(calibration, runner, start, dict(fixed or {}), estimate)
    finally:
        if owned:
            runner.close()


def _fit(
    calibration: Calibration, runner: StudyExecutor, start, fixed: dict[int, float], model_error: bool
) -> CalibrationFit:
    params = calibration.parameters
    ev = Evaluator(calibration, runner)
    problem = _Problem(ev)
    u0 = np.array([to_internal(p, v) for p, v in zip(params, start or [p.start for p in params], strict=True)])
    free = [j for j in range(len(params)) if j not in fixed]
    for j, value in fixed.items():
        u0[j] = to_internal(params[j], value)
    lower = np.array([to_internal(params[j], params[j].lower) for j in free])
    upper = np.array([to_internal(params[j], params[j].upper) for j in free])
    span = upper - lower
    x0 = np.clip(u0[free], lower + 1e-9 * span, upper - 1e-9 * span)

    def full(x: np.ndarray) -> np.ndarray:
        u = u0.copy()
        u[free] = x
        return u

    settings = calibration.settings
    result = least_squares(
        lambda x: problem.residual(full(x)),
        x0,
        jac=lambda x: problem.jacobian(full(x))[:, free],
        bounds=(lower, upper),
        method="trf",
        loss=settings.loss,
        f_scale=settings.loss_scale,
        max_nfev=settings.max_evaluations,
        x_scale="jac",
        xtol=XTOL,
        ftol=FTOL,
    )
    converged, message = _message(result, ev.evaluations, settings.max_evaluations)
    u = full(result.x) if converged or problem.best is None else problem.best[1]
    return _summarise_fit(calibration, problem, u, free, (converged, message), model_error)


def _summarise_fit(
    calibration: Calibration, problem: _Problem, u: np.ndarray, free: list[int], status: tuple[bool, str],
    model_error: bool,
) -> CalibrationFit:  # fmt: skip
    ev, params = problem.ev, calibration.parameters
    readings = problem.base(u)
    jacobian = problem.data_jacobian(u)
    _, prior_jac = ev.prior_rows(u)
    data_residual = (ev.stack(readings) - ev.measured) / ev.sigmas
    dof = max(1, data_residual.size - len(free))
    chi2 = float(data_residual @ data_residual) / dof
    covariance = np.zeros((len(params), len(params)))
    full_jac = np.vstack([jacobian, prior_jac])[:, free]
    covariance[np.ix_(free, free)] = _covariance(full_jac, max(1.0, chi2))
    estimate = None
    if model_error:
        estimate = estimate_model_error(ev, u, ev.stack(readings), full_jac, free)
        covariance = covariance + estimate.covariance()
    low, high = interval_95(params, u, covariance)
    values = np.array([from_internal(p, x) for p, x in zip(params, u, strict=True)])
    predicted = tuple(r for run_readings in readings for r in run_readings)
    traces = [t for run in calibration.runs for t in run.traces]
    residuals = tuple(p - t.temperatures for p, t in zip(predicted, traces, strict=True))
    return CalibrationFit(
        params, values, low, high, u, covariance, jacobian, predicted, residuals,
        tuple(t.name for t in traces), chi2, ev.evaluations, ev.model_runs, *status, estimate,
    )  # fmt: skip


def interval_95(
    parameters: Sequence[FitParameter], u: np.ndarray, covariance: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """95 % linearised intervals ``u +/- 1.96 sd`` mapped back to the values.

    Parameters
    ----------
    parameters : sequence of FitParameter
        The parameters (log or linear).
    u : ndarray
        Fitted coordinates [-].
    covariance : ndarray
        Covariance of ``u`` [-].

    Returns
    -------
    lower, upper : ndarray
        The interval's ends [SI]; -inf and inf where the standard deviation is not finite.
    """
    sd = np.sqrt(np.clip(np.diag(covariance), 0.0, np.inf))
    low, high = np.full(len(parameters), -np.inf), np.full(len(parameters), np.inf)
    with np.errstate(over="ignore", invalid="ignore"):
        for k, (p, x, s) in enumerate(zip(parameters, u, sd, strict=True)):
            if np.isfinite(s):
                low[k], high[k] = from_internal(p, x - Z95 * s), from_internal(p, x + Z95 * s)
    return low, high
