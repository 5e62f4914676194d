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

Uncertainty: the linearised covariance ``(J^T J)^-1`` of the weighted problem, multiplied
by the reduced chi-square when that exceeds one (stated noise too small), and 95 %
intervals ``u +/- 1.96 sd`` mapped back to the values (asymmetric for log parameters)
[1]_, [2]_. What the data determine is in :mod:`heatstack.questions.identifiability`.

References
----------
.. [1] Seber, G.A.F., Wild, C.J., Nonlinear Regression, Wiley, 1989, sec. 5.1-5.2
   (linearisation: asymptotic covariance and confidence intervals).
.. [2] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
   Wiley, 1988, ch. 2.
"""

from __future__ import annotations

import hashlib
import json
import logging
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from ..case import case_from_mapping, run_case
from ..errors import HeatstackError, InputError
from ..studies.dask_executor import DaskExecutor
from ..studies.executors import LocalExecutor, SerialExecutor, StudyExecutor
from ..studies.paths import set_value_at
from ..studies.runner import summarise
from .calibration_file import Calibration, FitParameter, TestRun

__all__ = [
    "CalibrationJob",
    "CalibrationOutcome",
    "CalibrationFit",
    "CalibrationFitError",
    "FD_STEP",
    "Z95",
    "run_calibration_job",
    "make_executor",
    "fit_calibration",
    "to_internal",
    "from_internal",
    "parameter_mapping",
    "Evaluator",
]

log = logging.getLogger(__name__)

#: Forward-difference step of the Jacobian in the fitted coordinate ``u`` [-].
FD_STEP = 0.02
#: Relative step and cost-change tolerances of the fit: finer than the runs' own step-control noise is not sought.
XTOL, FTOL = 1e-4, 1e-6
Z95 = 1.959963984540054  # two-sided 95 % normal quantile

_MODELS: dict[str, Any] = {}


class CalibrationFitError(HeatstackError, RuntimeError):
    """A run the calibration needed failed."""


# ---------------------------------------------------------------------------- the worker


@dataclass(frozen=True)
class CalibrationJob:
    """One run of the model for a calibration (picklable).

    Attributes
    ----------
    mapping : dict
        Case mapping with the run's overrides and parameter values written in.
    text, origin, base_dir : str
        Base case text, file name and folder.
    probes : tuple of str
        Probes read at ``times``.
    times : tuple of ndarray
        Trace sample times [s], one array per probe.
    summary : bool
        Also return the run's answers (:func:`heatstack.studies.runner.summarise`) and
        the cooling time of the case's ``output.cooling_below``.
    """

    mapping: dict
    text: str
    origin: str
    base_dir: str
    probes: tuple[str, ...] = ()
    times: tuple[np.ndarray, ...] = ()
    summary: bool = False

    @property
    def key(self) -> str:
        """A task name for schedulers."""
        digest = hashlib.sha256(json.dumps(self.mapping, sort_keys=True, default=str).encode()).hexdigest()
        return f"heatstack-calibration-{digest[:16]}-{id(self)}"


@dataclass(frozen=True, eq=False)
class CalibrationOutcome:
    """What a worker returns for one :class:`CalibrationJob`.

    Attributes
    ----------
    readings : tuple of ndarray
        The model's reading of each probe at its trace times [K].
    names : tuple of str
        Answer names (with ``summary``); ``cooling_time`` [s] among them when the case
        asks for one (inf when the run ends before it is reached).
    values : ndarray
        Answer values [SI].
    error : str
        Error text of a failed run ("" if it ran).
    """

    readings: tuple[np.ndarray, ...]
    names: tuple[str, ...] = ()
    values: np.ndarray = field(default_factory=lambda: np.zeros(0))
    error: str = ""


def _model(case: Any, mapping: Mapping) -> Any:
    content = {"assembly": mapping.get("assembly", {}), "materials": mapping.get("materials", {})}
    key = hashlib.sha256(json.dumps(content, sort_keys=True, default=str).encode()).hexdigest()
    if key not in _MODELS:
        if len(_MODELS) > 8:
            _MODELS.clear()
        _MODELS[key] = case.build_model()
    return _MODELS[key]


def run_calibration_job(job: CalibrationJob) -> CalibrationOutcome:
    """Build and run one case; read its probes at the trace times (never raises for a failed run).

    Parameters
    ----------
    job : CalibrationJob
        The case mapping, probes and trace times.

    Returns
    -------
    CalibrationOutcome
        Readings [K] and, with ``job.summary``, the run's answers [SI]; for a run that
        raised a heatstack error, no readings and the error text.
    """
    from ..answers.analysis import cooling_time_in_result

    try:
        case = case_from_mapping(job.mapping, job.text, job.origin, Path(job.base_dir))
        result = run_case(case, _model(case, job.mapping))
        readings = tuple(
            np.interp(times, result.times, result.history(probe))
            for probe, times in zip(job.probes, job.times, strict=True)
        )
        pairs: list[tuple[str, float]] = []
        if job.summary:
            pairs = summarise(case, result)
            if case.output.cooling_below is not None:
                cooling = cooling_time_in_result(result, case.output.cooling_series, case.output.cooling_below)
                pairs.append(("cooling_time", float(cooling.duration) if cooling.reached else np.inf))
    except HeatstackError as exc:
        return CalibrationOutcome((), error=f"{type(exc).__name__}: {exc}")
    return CalibrationOutcome(readings, tuple(n for n, _ in pairs), np.array([v for _, v in pairs], dtype=float))


def make_executor(name: str, workers: int | None = None, timeout: float = 10.0) -> StudyExecutor:
    """``"serial"``, ``"local"`` (a process pool of ``workers``) or a Dask scheduler address.

    Parameters
    ----------
    name : str
        ``"serial"``, ``"local"`` or a scheduler address (``host:port`` or a URL).
    workers : int, optional
        Process count of the local pool.
    timeout : float, optional
        Time allowed to reach a Dask scheduler [s].

    Returns
    -------
    StudyExecutor
        The executor, not yet started.

    Raises
    ------
    InputError
        If ``name`` is none of these.
    """
    if name == "serial":
        return SerialExecutor()
    if name == "local":
        return LocalExecutor(workers)
    if "://" not in name and ":" not in name:
        raise InputError(f"fit.executor: expected 'serial', 'local' or a scheduler address, got {name!r}")
    return DaskExecutor(name, timeout=timeout)


# ---------------------------------------------------------------------------- coordinates


def to_internal(parameter: FitParameter, value: float) -> float:
    """The fitted coordinate ``u`` of a value: ``ln(value)`` or ``value / (upper - lower)``.

    Parameters
    ----------
    parameter : FitParameter
        The parameter (log or linear, bounds [SI]).
    value : float
        Its value [SI].

    Returns
    -------
    float
        The coordinate ``u`` [-].
    """
    return float(np.log(value)) if parameter.log else value / (parameter.upper - parameter.lower)


def from_internal(parameter: FitParameter, u: float) -> float:
    """The value of a fitted coordinate ``u`` (inverse of :func:`to_internal`).

    Parameters
    ----------
    parameter : FitParameter
        The parameter (log or linear, bounds [SI]).
    u : float
        The coordinate [-].

    Returns
    -------
    float
        The value [SI].
    """
    return float(np.exp(u)) if parameter.log else u * (parameter.upper - parameter.lower)


def parameter_mapping(base: Mapping, parameters: Sequence[FitParameter], values: Sequence[float], run: str | None):
    """A deep copy of ``base`` with each parameter that applies to ``run`` set (None: shared ones only).

    Parameters
    ----------
    base : mapping
        Case mapping (JSON-compatible).
    parameters : sequence of FitParameter
        The fitted parameters and their key paths.
    values : sequence of float
        One value per parameter [SI].
    run : str or None
        Name of the test run; a parameter of another run is left out.

    Returns
    -------
    dict
        The new mapping.
    """
    data = json.loads(json.dumps(base))
    for parameter, value in zip(parameters, values, strict=True):
        if parameter.run is None or parameter.run == run:
            for path in parameter.paths:
                set_value_at(data, path, float(value))
    return data


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
        Covariance of ``u`` (priors included).
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

    def standard_errors(self) -> np.ndarray:
        """Standard deviation of each fitted coordinate ``u`` [-].

        Returns
        -------
        ndarray
            Square roots of the covariance diagonal (negative entries clipped to 0).
        """
        return np.sqrt(np.clip(np.diag(self.covariance), 0.0, np.inf))


# ---------------------------------------------------------------------------- evaluation


class Evaluator:
    """Runs of every test run at parameter vectors in ``u``, through an executor.

    Parameters
    ----------
    calibration : Calibration
        The calibration: runs, traces and their uncertainties [K], parameters.
    executor : StudyExecutor
        Runs the jobs.
    """

    def __init__(self, calibration: Calibration, executor: StudyExecutor):
        self.calibration, self.executor = calibration, executor
        self.parameters = calibration.parameters
        self.evaluations = self.model_runs = 0
        self.sigmas = np.concatenate(
            [np.full(t.times.size, t.uncertainty) for run in calibration.runs for t in run.traces]
        )
        self.measured = np.concatenate([t.temperatures for run in calibration.runs for t in run.traces])

    def job(self, run: TestRun, u: np.ndarray) -> CalibrationJob:
        """The job that runs ``run`` at the parameter vector ``u``.

        Parameters
        ----------
        run : TestRun
            The test run (its overrides and traces).
        u : ndarray
            Fitted coordinates of every parameter [-].

        Returns
        -------
        CalibrationJob
            The run's mapping with the parameter values written in, probes and trace times [s].
        """
        values = [from_internal(p, x) for p, x in zip(self.parameters, u, strict=True)]
        c = self.calibration
        return CalibrationJob(
            parameter_mapping(run.mapping, self.parameters, values, run.name),
            c.base_text,
            c.base_origin,
            str(c.base_dir),
            tuple(t.probe for t in run.traces),
            tuple(t.times for t in run.traces),
        )

    def run_jobs(self, jobs: list[CalibrationJob]) -> list[CalibrationOutcome]:
        """Run the jobs on the executor; results in job order.

        Parameters
        ----------
        jobs : list of CalibrationJob
            The runs.

        Returns
        -------
        list of CalibrationOutcome
            One outcome per job, in job order.
        """
        self.executor.start()
        futures = [self.executor.submit(run_calibration_job, job) for job in jobs]
        index = {id(f): k for k, f in enumerate(futures)}
        out: list[CalibrationOutcome | None] = [None] * len(jobs)
        try:
            for future in self.executor.as_completed(futures):
                out[index[id(future)]] = self.executor.result(future)
        finally:
            self.executor.cancel(futures)
        self.model_runs += len(jobs)
        return out  # type: ignore[return-value]

    def readings(self, points: list[np.ndarray], runs_of: list[tuple[int, ...]]) -> list[list[np.ndarray]]:
        """Model readings per run at several parameter vectors, each re-running only its runs.

        Parameters
        ----------
        points : list of ndarray
            Parameter vectors in ``u`` [-].
        runs_of : list of tuple of int
            For each point, the indices of the runs to re-run.

        Returns
        -------
        list of list
            ``table[k][r]``: the readings [K] of run ``r`` at point ``k`` (a list of arrays, one
            per trace), None for a run not re-run.

        Raises
        ------
        CalibrationFitError
            If a run fails (the parameter values are named).
        """
        runs = self.calibration.runs
        jobs, where = [], []
        for k, (u, which) in enumerate(zip(points, runs_of, strict=True)):
            for r in which:
                jobs.append(self.job(runs[r], u))
                where.append((k, r))
        outcomes = self.run_jobs(jobs)
        table: list[list[Any]] = [[None] * len(runs) for _ in points]
        for (k, r), outcome in zip(where, outcomes, strict=True):
            if outcome.error:
                values = ", ".join(
                    f"{p.name}={from_internal(p, x):.5g}" for p, x in zip(self.parameters, points[k], strict=True)
                )
                raise CalibrationFitError(f"run {runs[r].name!r} failed at {values}: {outcome.error}")
            table[k][r] = list(outcome.readings)
        return table

    def stack(self, per_run: list[Any]) -> np.ndarray:
        """Concatenate per-run readings (lists of per-trace arrays) into one vector.

        Parameters
        ----------
        per_run : list of list of ndarray
            Readings of every run, one array per trace [K].

        Returns
        -------
        ndarray
            All readings in run and trace order [K].
        """
        return np.concatenate([np.concatenate(readings) for readings in per_run])

    def prior_rows(self, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Prior residuals and their Jacobian rows in ``u``.

        Parameters
        ----------
        u : ndarray
            Fitted coordinates of every parameter [-].

        Returns
        -------
        rows : ndarray
            One residual per parameter with a prior, in prior spreads [-].
        jacobian : ndarray, shape (len(rows), len(u))
            Their derivatives in ``u``.
        """
        rows, jac = [], []
        for j, (p, x) in enumerate(zip(self.parameters, u, strict=True)):
            if p.prior is None:
                continue
            value, row = from_internal(p, x), np.zeros(len(u))
            if p.prior.kind == "lognormal":
                rows.append((np.log(value) - np.log(p.prior.center)) / p.prior.spread)
                row[j] = 1.0 / p.prior.spread  # a lognormal prior implies a log parameter
            else:
                rows.append((value - p.prior.center) / p.prior.spread)
                row[j] = (value if p.log else p.upper - p.lower) / p.prior.spread
            jac.append(row)
        return np.array(rows), np.array(jac).reshape(len(rows), len(u))

    def runs_using(self, j: int) -> tuple[int, ...]:
        """The indices of the runs parameter ``j`` applies to (every run for a shared parameter).

        Parameters
        ----------
        j : int
            Parameter index.

        Returns
        -------
        tuple of int
            Run indices.
        """
        run = self.parameters[j].run
        return tuple(k for k, r in enumerate(self.calibration.runs) if run is None or r.name == run)


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
        return _fit(calibration, runner, start, dict(fixed or {}))
    finally:
        if owned:
            runner.close()


def _fit(calibration: Calibration, runner: StudyExecutor, start, fixed: dict[int, float]) -> CalibrationFit:
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
    return _summarise_fit(calibration, problem, u, free, converged, message)


def _summarise_fit(
    calibration: Calibration, problem: _Problem, u: np.ndarray, free: list[int], converged: bool, message: str
) -> CalibrationFit:
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
    sd = np.sqrt(np.clip(np.diag(covariance), 0.0, np.inf))
    values = np.array([from_internal(p, x) for p, x in zip(params, u, strict=True)])
    low, high = np.full(len(params), -np.inf), np.full(len(params), np.inf)
    with np.errstate(over="ignore", invalid="ignore"):
        for k, (p, x, s) in enumerate(zip(params, u, sd, strict=True)):
            if np.isfinite(s):
                low[k], high[k] = from_internal(p, x - Z95 * s), from_internal(p, x + Z95 * s)
    predicted = tuple(r for run_readings in readings for r in run_readings)
    traces = [t for run in calibration.runs for t in run.traces]
    residuals = tuple(p - t.temperatures for p, t in zip(predicted, traces, strict=True))
    return CalibrationFit(
        params, values, low, high, u, covariance, jacobian, predicted, residuals,
        tuple(t.name for t in traces), chi2, ev.evaluations, ev.model_runs, converged, message,
    )  # fmt: skip
