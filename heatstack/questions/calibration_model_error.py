"""The fit model's own discretisation error, estimated by one refined re-run and carried into the covariance.

Method
------
A calibration's model is a discretisation: its readings differ from the exact solution of
the same equations by a grid error and a time-step error. Unlike the measurement noise these
do not average out over the readings of a trace (they are the same at every noise draw), so
the linearised covariance of the noise alone leaves them out. With ``[fit] model_error =
"estimate"`` each test run is re-run once at the fitted values on a refined model (see
:func:`refined_mapping`): cells half the size in each direction (``min_cells`` doubled), the
step control four times tighter (``accuracy / 4`` for BDF2, ``target_change / 4`` for
backward Euler, ``max_step / 4``). Each refinement cuts its error at least twofold (measured
on the shipped example: halving the cells 2.2 to 3.5 times, ``accuracy / 4`` 2.5 to 2.9
times, ``target_change / 4`` 3.2 to 3.8 times, RMS at the three probes), so by Richardson's
argument [1]_, [2]_ the fit model's error is at most

    e = REFINEMENT_FACTOR * (y_refined - y_fit),   REFINEMENT_FACTOR = R / (R - 1) <= 2 for R >= 2  [K]

at every reading (the bound is taken: the intervals err on the wide side when the error
falls faster). Were the model in error by ``e``, the weighted least-squares estimate would
move, to first order, by

    delta_u = (J^T J)^+ J^T (e / sigma)

(``J`` the weighted Jacobian of the free parameters with the prior rows, ``e`` zero on the
prior rows; ``+`` the pseudo-inverse truncated as the covariance is) [3]_. ``delta_u`` is not
applied as a correction (it rests on the extrapolation); like an uncorrected systematic
effect it enlarges the uncertainty [4]_: the covariance of ``u`` becomes
``C_noise + delta_u delta_u^T``, and the 95 % intervals follow from it.

References
----------
.. [1] Richardson, L.F., The approximate arithmetical solution by finite differences of
   physical problems, Phil. Trans. R. Soc. A 210 (1911) 307-357.
.. [2] Roache, P.J., Verification and Validation in Computational Science and Engineering,
   Hermosa, 1998, ch. 5 (grid convergence: Richardson extrapolation, the safety factor).
.. [3] Seber, G.A.F., Wild, C.J., Nonlinear Regression, Wiley, 1989, sec. 2.1 (the
   linearised least-squares estimate as a linear function of the data).
.. [4] JCGM 100:2008 (GUM), Evaluation of measurement data - Guide to the expression of
   uncertainty in measurement, annex F.2.4.5 (a known systematic effect left uncorrected,
   from memory).
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, replace

import numpy as np

from ..case import case_from_mapping
from ..case_guards import DEFAULT_MAX_CELLS
from .calibration_records import Calibration
from .calibration_runs import CalibrationFitError, Evaluator

__all__ = ["REFINEMENT_FACTOR", "ModelErrorEstimate", "refined_mapping", "estimate_model_error"]

#: The fit model's error per unit of its difference to the refined model (an error falling at least twofold) [-].
REFINEMENT_FACTOR = 2.0
#: How much tighter the refined model's step control is (accuracy, target change, longest step) [-].
STEP_REFINEMENT = 4.0


@dataclass(frozen=True, eq=False)
class ModelErrorEstimate:
    """The fit model's estimated error and what it does to the fitted coordinates.

    Attributes
    ----------
    description : str
        The fit model's and the refined model's grid and step control, in words.
    trace_names : tuple of str
    trace_rms : ndarray
        Per trace, the RMS of the estimated model error ``e`` over its readings [K].
    trace_max : ndarray
        Per trace, the largest ``|e|`` [K].
    shift : ndarray
        ``delta_u``, the first-order shift of every fitted coordinate ``u`` (0 for a held one) [-].
    """

    description: str
    trace_names: tuple[str, ...]
    trace_rms: np.ndarray
    trace_max: np.ndarray
    shift: np.ndarray

    def covariance(self) -> np.ndarray:
        """The systematic term added to the covariance of ``u``: ``delta_u delta_u^T`` [-].

        Returns
        -------
        ndarray
            Rank-one, parameters by parameters.
        """
        return np.outer(self.shift, self.shift)


def _solver_text(solver: dict) -> str:
    if solver.get("scheme", "bdf2") == "euler":
        return f"backward Euler, target change {solver['target_change']:.3g} K"
    return f"BDF2, accuracy {solver['accuracy']:.3g} K"


def refined_mapping(mapping: dict, calibration: Calibration) -> tuple[dict, str]:
    """A run's case mapping on the refined model: half the cells, a four times tighter step control.

    Parameters
    ----------
    mapping : dict
        The run's case mapping with the parameter values written in.
    calibration : Calibration
        Where the base case's text and folder come from.

    Returns
    -------
    refined : dict
        The mapping with ``assembly.cell_size_radial`` and ``cell_size_axial`` halved,
        ``min_cells`` doubled, ``max_cells`` four times, and ``solver.accuracy`` (BDF2) or
        ``solver.target_change`` (Euler) and ``max_step`` divided by :data:`STEP_REFINEMENT`.
    description : str
        The fit model's and the refined model's settings, in words.
    """
    case = case_from_mapping(mapping, calibration.base_text, calibration.base_origin, calibration.base_dir)
    refined = copy.deepcopy(mapping)
    assembly = refined.setdefault("assembly", {})
    radial, axial = case.cell_size
    assembly["cell_size_radial"], assembly["cell_size_axial"] = radial / 2.0, axial / 2.0
    assembly["min_cells"] = 2 * int(assembly.get("min_cells", 3))
    assembly["max_cells"] = 4 * int(assembly.get("max_cells", DEFAULT_MAX_CELLS))
    options = case.solver
    solver = refined.setdefault("solver", {})
    before: dict = {"scheme": options.scheme}
    if options.scheme == "euler":
        before["target_change"] = options.euler_target_change
        solver["target_change"] = options.euler_target_change / STEP_REFINEMENT
    else:
        before["accuracy"] = options.accuracy
        solver["accuracy"] = options.accuracy / STEP_REFINEMENT
    solver["max_step"] = options.max_step / STEP_REFINEMENT
    after = {**before, **{k: solver[k] for k in ("accuracy", "target_change") if k in before}}
    description = (
        f"fit model: cells {1e3 * radial:.4g} x {1e3 * axial:.4g} mm, {_solver_text(before)}; refined model: "
        f"cells {5e2 * radial:.4g} x {5e2 * axial:.4g} mm, {_solver_text(after)}"
    )
    return refined, description


def estimate_model_error(
    evaluator: Evaluator, u: np.ndarray, predicted: np.ndarray, jacobian: np.ndarray, free: list[int]
) -> ModelErrorEstimate:
    """Re-run every test run at ``u`` on the refined model and propagate the difference (module docstring).

    Parameters
    ----------
    evaluator : Evaluator
        The fit's evaluator (its calibration, executor and reading weights ``sigma`` [K]).
    u : ndarray
        The fitted coordinates [-].
    predicted : ndarray
        The fit model's readings at ``u``, all traces stacked [K].
    jacobian : ndarray
        Weighted Jacobian at ``u`` of the free parameters, prior rows below the data rows [-].
    free : list of int
        Indices of the free parameters (the columns of ``jacobian``).

    Returns
    -------
    ModelErrorEstimate
        Per-trace RMS and largest estimated error [K], and the shift ``delta_u`` [-].

    Raises
    ------
    CalibrationFitError
        If a refined run fails (e.g. over its step or time budget).
    """
    calibration = evaluator.calibration
    jobs, description = [], ""
    for run in calibration.runs:
        job = evaluator.job(run, u)
        mapping, description = refined_mapping(job.mapping, calibration)
        jobs.append(replace(job, mapping=mapping))
    outcomes = evaluator.run_jobs(jobs)
    for run, outcome in zip(calibration.runs, outcomes, strict=True):
        if outcome.error:
            raise CalibrationFitError(f"model_error: the refined run of {run.name!r} failed: {outcome.error}")
    refined = np.concatenate([np.concatenate(outcome.readings) for outcome in outcomes])
    error = REFINEMENT_FACTOR * (refined - predicted)
    rows = np.concatenate([error / evaluator.sigmas, np.zeros(jacobian.shape[0] - error.size)])
    shift = np.zeros(u.size)
    shift[free] = np.linalg.pinv(jacobian, rcond=1e-8) @ rows
    traces = [t for run in calibration.runs for t in run.traces]
    pieces = np.split(error, np.cumsum([t.times.size for t in traces])[:-1])
    return ModelErrorEstimate(
        description,
        tuple(t.name for t in traces),
        np.array([np.sqrt(np.mean(p**2)) for p in pieces]),
        np.array([np.max(np.abs(p)) for p in pieces]),
        shift,
    )
