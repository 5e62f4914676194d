"""The model runs of a calibration: one job per test run at a parameter vector, and who runs it.

A :class:`CalibrationJob` is one test run of the base case with the run's overrides and the
fitted parameter values written in (:func:`parameter_mapping`); :func:`run_calibration_job`
builds and runs it in a worker and reads its probes at the traces' own sample times.
:class:`Evaluator` sends the jobs of every parameter vector the fit asks for to a study
executor (serial or local pool, :mod:`heatstack.studies.executors`; Dask,
:mod:`heatstack.studies.dask_executor`; :func:`make_executor`)
and stacks the readings. The fitted coordinate of a parameter (:func:`to_internal`,
:func:`from_internal`) is ``ln(value)`` for a parameter whose lower bound is above zero,
``value / (upper - lower)`` otherwise.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..case import case_from_mapping, run_case
from ..errors import HeatstackError, InputError
from ..studies.dask_executor import DaskExecutor
from ..studies.executors import LocalExecutor, SerialExecutor, StudyExecutor
from ..studies.paths import set_value_at
from ..studies.runner import summarise
from .calibration_records import Calibration, FitParameter, TestRun

__all__ = [
    "CalibrationJob",
    "CalibrationOutcome",
    "CalibrationFitError",
    "run_calibration_job",
    "make_executor",
    "to_internal",
    "from_internal",
    "parameter_mapping",
    "Evaluator",
]

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
        self.sigmas = np.concatenate([np.full(t.times.size, t.sigma) for run in calibration.runs for t in run.traces])
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
