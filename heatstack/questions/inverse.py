"""The inverse problem: the braking energy behind a recorded brake-temperature-sensor trace.

Given a sensor trace (time, reading) and a duty whose braking energy is unknown, find the
energy (and optionally a uniform initial temperature and a multiplier on every convective
coefficient) whose simulated sensor reading best matches the trace in the least-squares
sense, with standard errors from the fit.

Reading a sensor-trace CSV file (:func:`~heatstack.questions.sensor_trace.read_sensor_trace`,
format in :mod:`heatstack.questions.sensor_trace`), the convection multiplier on a schedule
(:mod:`heatstack.questions.convection_scaling`) and the surrogate and covariance helpers
(:mod:`heatstack.questions.fit_tools`) live in their own modules.

Method
------
A full run costs seconds, so the fit is done on a cheap *surrogate* of the sensor
response, built from a few full runs and corrected by one full run at each estimate:

1. Energy runs. The response is smooth and only mildly nonlinear in the energy ``E``
   (the rise grows a little slower than ``E`` because heat capacity and cooling grow with
   temperature). Full runs at the guess ``E_g`` and at ``E_g (1 +/- delta)`` (the sign
   chosen towards the trace) give responses ``y_k(t)``; ``Q(t; E)`` interpolates them,
   quadratically in ``E`` (Lagrange) through the three runs nearest the current estimate,
   linearly while only two exist.
2. Other parameters. With ``fit_initial_temperature`` one more run at ``T0 + dT`` gives a
   sensitivity ``S_T(t)``; with ``fit_convection_multiplier`` one run at ``c (1 + dc)``
   gives ``S_c(t)``. Both are forward differences at ``E_g``; the surrogate is
   ``s(t; p) = Q(t; E) + S_T (T0 - T0_g) + S_c (c - c_g)``.
3. Fit. :func:`scipy.optimize.least_squares` (trust-region reflective, analytic Jacobian)
   minimises ``sum (s(t_i; p) + D(t_i) - y_i)^2``, ``D`` the defect below (0 at first),
   with ``E`` kept within ``[E_min / 2, 2 E_max]`` of the energies already run.
4. Check run. A full run at the estimate ``p``. Its residual is the reported one. If only
   the energy is fitted, the run joins the energy runs (the quadratic then passes through
   it); otherwise it gives the defect ``D = y_full(p) - s(p)``, which makes the surrogate
   exact at ``p`` while keeping its sensitivities. Steps 3-4 repeat until a refit moves no
   parameter by more than ``max(0.05 standard errors, 1e-4 relative)`` (1e-3 K for the
   initial temperature). The estimate reported is the one whose full run is reported.

An energy-only fit typically costs 4 runs (2 energy runs, a check run, a confirming
run); each extra parameter adds one sensitivity run and usually one check run. At the
fixed point the full-run residual is orthogonal to the surrogate's sensitivities; where
those differ from the true ones by a few percent the estimate differs from the exact
least-squares optimum by a correspondingly small fraction of the (already small)
distance between model and data.

Uncertainty: ``cov = s^2 (J^T J)^-1`` with ``J`` the surrogate's Jacobian at the estimate,
``s^2 = SSR / (n - p)`` the residual variance of the check run: the usual linearised
least-squares covariance. It reflects the scatter of the trace about the model, not the
model's own errors (contact conductances, materials, the duty's shape), which a measured
trace cannot separate from the energy.

References
----------
.. [1] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
   Wiley, 1988, ch. 2 (linear approximation inference: ``s^2 (J^T J)^-1``).
.. [2] Press, W.H., Teukolsky, S.A., Vetterling, W.T., Flannery, B.P., Numerical Recipes,
   3rd ed., Cambridge University Press, 2007, ch. 15 (modeling of data; covariance of the
   fitted parameters).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from ..errors import HeatstackError, InputError, SolverError
from ..geometry import SurfaceGroup
from ..model import Model
from ..numerics.options import SolverOptions
from ..numerics.schedule import PowerHistory, Schedule
from ..operations.duty import DutyCycle
from ..result import Result, State
from ..units import to_si
from .convection_scaling import scale_convection
from .fit_tools import Surrogate, parameter_covariance
from .sensor_trace import check_trace
from .whatif import check_history_name

__all__ = [
    "EnergyEstimate",
    "FitError",
    "estimate_energy",
    "predict_from_estimate",
]

_DELTA = 0.25  # relative spacing of the energy runs
_DT0 = 5.0  # step of the initial-temperature sensitivity run [K]
_DC = 0.2  # relative step of the convection-multiplier sensitivity run


class FitError(HeatstackError, RuntimeError):
    """The energy fit did not converge, or a run it needed failed.

    ``estimate`` holds the best estimate so far (an :class:`EnergyEstimate` with
    ``converged`` False) when there is one, else None.

    Parameters
    ----------
    message : str
        What went wrong.
    estimate : EnergyEstimate, optional
        The best estimate so far.
    """

    def __init__(self, message: str, estimate: EnergyEstimate | None = None):
        super().__init__(message)
        self.estimate = estimate


# ---------------------------------------------------------------------------- the answer


@dataclass(frozen=True, eq=False)
class EnergyEstimate:
    """The braking energy fitted to a sensor trace, with its uncertainty.

    Attributes
    ----------
    energy : float
        Estimated friction energy into one brake [J] (for a :class:`DutyCycle`, the
        total of all its braking events, scaled together).
    standard_error : float
        Standard error of ``energy`` [J] (linearised least squares).
    initial_temperature : float or None
        Uniform initial temperature [K]: fitted, or the given one if it was uniform;
        None for a per-part or saved-state start.
    initial_temperature_se : float or None
        [K]; None when not fitted.
    convection_multiplier : float
        Factor on every convective coefficient [-]: fitted, or the given one.
    convection_multiplier_se : float or None
        [-]; None when not fitted.
    residual_rms : float
        Root-mean-square of (full run at the estimate - trace) [K].
    residual_sd : float
        ``sqrt(SSR / (n - p))`` [K], the scatter used for the standard errors.
    n_points : int
        Trace samples used.
    n_runs : int
        Full runs of the model the fit cost.
    converged : bool
    message : str
        How the fit ended, in words.
    parameters : tuple of str
        Names of the fitted parameters, in the order of ``covariance``.
    covariance : ndarray
        Covariance of the fitted parameters (SI units).
    predicted : Result
        The full run at the estimate: heat-sink, fuse-plug and every other history.
    residuals : ndarray
        Full run at the estimate minus trace, at each trace time [K].
    """

    energy: float
    standard_error: float
    initial_temperature: float | None
    initial_temperature_se: float | None
    convection_multiplier: float
    convection_multiplier_se: float | None
    residual_rms: float
    residual_sd: float
    n_points: int
    n_runs: int
    converged: bool
    message: str
    parameters: tuple[str, ...]
    covariance: np.ndarray
    predicted: Result
    residuals: np.ndarray = field(default_factory=lambda: np.zeros(0))


# ---------------------------------------------------------------------------- forward model


def _duty_energy(duty: DutyCycle) -> float:
    return float(duty.power().total_energy) if any(p.events for p in duty.phases) else 0.0


class _Forward:
    """Full runs of the model at (energy, initial temperature, multiplier), read at the trace times."""

    def __init__(
        self,
        model: Model,
        make_duty: Callable[[float], DutyCycle] | DutyCycle,
        surfaces: Sequence[SurfaceGroup],
        trace_t: np.ndarray,
        initial: Any,
        sensor: str,
        start: float,
        options: SolverOptions | None,
    ):
        self.model, self.surfaces, self.trace_t = model, surfaces, trace_t
        self.initial, self.sensor, self.start, self.options = initial, sensor, start, options
        self.runs = 0
        if isinstance(make_duty, DutyCycle):
            nominal = _duty_energy(make_duty)
            if not nominal > 0:
                raise InputError("make_duty: the duty cycle has no braking energy to scale")
            base = make_duty.schedule(surfaces, start=start, extra_breakpoints=trace_t)
            self.nominal: float | None = nominal

            def schedule_for(energy: float) -> Schedule:
                power = PowerHistory(base.power.times, base.power.powers * (energy / nominal))
                return replace(base, power=power)

        elif callable(make_duty):
            self.nominal = None

            def schedule_for(energy: float) -> Schedule:
                duty = make_duty(energy)
                if not isinstance(duty, DutyCycle):
                    raise InputError(f"make_duty({energy:g}) returned {type(duty).__name__}, not a DutyCycle")
                return duty.schedule(surfaces, start=start, extra_breakpoints=trace_t)

        else:
            raise InputError("make_duty: give a DutyCycle or a function energy [J] -> DutyCycle")
        self.schedule_for = schedule_for

    def schedule(self, energy: float, multiplier: float) -> Schedule:
        return scale_convection(self.schedule_for(energy), multiplier)

    def run(self, energy: float, t0: float | None, multiplier: float) -> tuple[np.ndarray, Result]:
        initial = self.initial if t0 is None else t0
        schedule = self.schedule(energy, multiplier)
        self.runs += 1
        try:
            result = self.model.run(schedule, initial, self.options)
        except SolverError as exc:
            raise FitError(
                f"the run at energy {energy / 1e6:.4g} MJ, multiplier {multiplier:.4g} failed: {exc}"
            ) from exc
        return np.interp(self.trace_t, result.times, result.history(self.sensor)), result


# ---------------------------------------------------------------------------- the fit


def estimate_energy(
    model: Model,
    make_duty: Callable[[float], DutyCycle] | DutyCycle,
    surfaces: Sequence[SurfaceGroup],
    trace_t: Any,
    trace_T: Any,
    initial_temperature: float | Mapping[str, float] | State,
    sensor: str = "sensor",
    fit_initial_temperature: bool = False,
    fit_convection_multiplier: bool = False,
    *,
    energy_guess: Any = None,
    convection_multiplier: float = 1.0,
    start: Any = None,
    options: SolverOptions | None = None,
    max_runs: int = 12,
    raise_on_failure: bool = True,
) -> EnergyEstimate:
    """Estimate the braking energy from a recorded sensor trace by least squares.

    See the module docstring for the method (a surrogate from a few full runs, refined by
    one full run at each estimate) and the uncertainty.

    Parameters
    ----------
    model : Model
        The model (its grid need not be the one that made a synthetic trace).
    make_duty : DutyCycle or callable
        A :class:`DutyCycle` whose braking power is scaled uniformly to the energy tried
        (its total braking energy is the ``energy`` fitted), or a function
        ``energy [J] -> DutyCycle``.
    surfaces : sequence of SurfaceGroup
        Characteristic length [m] and orientation of every exposed-surface group (the
        assembly's ``surfaces``).
    trace_t : array_like
        Sample times [s] on the duty's clock (the duty starts at ``start``); strictly
        increasing, within the duty.
    trace_T : array_like
        Sensor readings [K] (see :func:`~heatstack.questions.sensor_trace.read_sensor_trace` for a CSV).
    initial_temperature : float or mapping or State
        Start of every run [K] (uniform, per part, or a saved state); with
        ``fit_initial_temperature`` a uniform value, the first guess. Each run starts the
        sensor's instrument lag in equilibrium with its local temperature (a saved state
        holds no instrument state).
    sensor : str
        Probe whose reading (after its instrument lag) the trace records.
    fit_initial_temperature : bool
        Also fit a uniform initial temperature.
    fit_convection_multiplier : bool
        Also fit one factor on every convective coefficient of every phase.
    energy_guess : float or str, optional
        First energy tried [J] (or e.g. ``"15 MJ"``); by default the duty cycle's own
        energy, or 10 MJ for a function.
    convection_multiplier : float
        Factor on every ``h``: the first guess if fitted, else held.
    start : float or str, optional
        Start time of the duty [s]; the saved state's time, or 0.
    options : SolverOptions, optional
        Solver controls of every run.
    max_runs : int
        Largest number of full runs the fit may cost.
    raise_on_failure : bool
        Raise :class:`FitError` when the fit does not converge (default); if False,
        return the best estimate with ``converged`` False and the reason in ``message``.

    Returns
    -------
    EnergyEstimate

    Raises
    ------
    InputError
        For too few trace points, non-increasing times (naming the row), times outside
        the duty, a trace at or below the ambient temperature everywhere, an unknown
        sensor name, or a non-uniform initial temperature with
        ``fit_initial_temperature``.
    FitError
        If the fit does not converge within ``max_runs`` (with the best estimate and the
        reason), the trace does not determine the parameters, or a run fails.

    References
    ----------
    .. [1] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
       Wiley, 1988, ch. 2.
    .. [2] Press, W.H. et al., Numerical Recipes, 3rd ed., Cambridge University Press,
       2007, ch. 15.
    """
    check_history_name(model, sensor, "sensor")
    names = ("energy",)
    if fit_initial_temperature:
        names += ("initial_temperature",)
    if fit_convection_multiplier:
        names += ("convection_multiplier",)
    t, y_obs = check_trace(trace_t, trace_T, len(names))
    uniform = None
    if isinstance(initial_temperature, State):
        default_start = float(initial_temperature.time)
    else:
        default_start = 0.0
        if np.ndim(initial_temperature) == 0 and not isinstance(initial_temperature, Mapping):
            uniform = to_si(initial_temperature, None, "temperature", "initial_temperature")
    if fit_initial_temperature and uniform is None:
        raise InputError("fit_initial_temperature: needs a uniform initial_temperature [K] as the first guess")
    t_start = default_start if start is None else to_si(start, None, "time", "start")
    if not (math.isfinite(convection_multiplier) and convection_multiplier > 0):
        raise InputError(f"convection_multiplier: must be > 0, got {convection_multiplier}")
    if int(max_runs) != max_runs or max_runs < 3 + len(names):
        raise InputError(f"max_runs: must be a whole number >= {3 + len(names)}, got {max_runs}")

    forward = _Forward(model, make_duty, surfaces, t, uniform or initial_temperature, sensor, t_start, options)
    if energy_guess is None:
        e_guess = forward.nominal or 1e7
    else:
        e_guess = to_si(energy_guess, None, "energy", "energy_guess")
        if not (math.isfinite(e_guess) and e_guess > 0):
            raise InputError(f"energy_guess: must be > 0 J, got {energy_guess!r}")
    probe_schedule = forward.schedule_for(e_guess)
    if t[0] < probe_schedule.start - 1e-9 or t[-1] > probe_schedule.end + 1e-9:
        row = 1 if t[0] < probe_schedule.start - 1e-9 else t.size
        raise InputError(
            f"trace row {row}: time {t[row - 1]:g} s lies outside the duty "
            f"({probe_schedule.start:g}-{probe_schedule.end:g} s)"
        )
    ambient = max(law.ambient_temperature for law in probe_schedule.phases[0].laws.values())
    if np.all(y_obs <= ambient):
        raise InputError(
            f"trace: every reading is at or below the ambient {ambient:.2f} K (max {y_obs.max():.2f} K): "
            "the trace shows no braking energy to recover"
        )

    return _fit(
        forward,
        names,
        t,
        y_obs,
        e_guess,
        uniform,
        float(convection_multiplier),
        int(max_runs),
        raise_on_failure,
    )


def _fit(
    forward: _Forward,
    names: tuple[str, ...],
    t: np.ndarray,
    y_obs: np.ndarray,
    e_guess: float,
    t0_ref: float | None,
    c_ref: float,
    max_runs: int,
    raise_on_failure: bool,
) -> EnergyEstimate:
    sur = Surrogate(names, t0_ref, c_ref)
    y_g, _ = forward.run(e_guess, t0_ref, c_ref)
    sur.energy_runs.append((e_guess, y_g))
    toward = 1.0 if np.max(y_obs) >= np.max(y_g) else -1.0
    e_2 = e_guess * (1.0 + toward * _DELTA)
    sur.energy_runs.append((e_2, forward.run(e_2, t0_ref, c_ref)[0]))
    if "initial_temperature" in names:
        sur.s_t = (forward.run(e_guess, t0_ref + _DT0, c_ref)[0] - y_g) / _DT0
    if "convection_multiplier" in names:
        step = _DC * c_ref
        sur.s_c = (forward.run(e_guess, t0_ref, c_ref + step)[0] - y_g) / step
    on_slice = names == ("energy",)

    p = np.array(
        [e_guess]
        + ([t0_ref] if "initial_temperature" in names else [])
        + ([c_ref] if "convection_multiplier" in names else []),
        dtype=float,
    )
    scale = np.array([e_guess] + [1.0] * (len(names) - 1))
    p, _, _ = _refit(sur, p, y_obs, scale, names)
    best: tuple | None = None
    reason = ""
    while forward.runs < max_runs:
        energy, t0, c = sur.split(p)
        y_full, result = forward.run(energy, t0, c)
        residual = y_full - y_obs
        if on_slice:  # a run at an energy already run replaces it (no repeated Lagrange node)
            sur.energy_runs = [run for run in sur.energy_runs if abs(run[0] - energy) > 1e-9 * energy]
            sur.energy_runs.append((energy, y_full))
        else:
            sur.defect_at = (p.copy(), y_full)
        p_new, jac, at_bound = _refit(sur, p, y_obs, scale, names)
        cov, sd = parameter_covariance(jac, residual)
        se = np.sqrt(np.diag(cov))
        if best is None or np.dot(residual, residual) <= np.dot(best[2], best[2]):
            best = (p.copy(), result, residual, cov, sd)
        if not np.all(np.isfinite(se)):
            reason = "the trace does not determine the parameters (singular Jacobian): " + (
                "fit fewer parameters or use a longer trace" if len(names) > 1 else "is the sensor responsive?"
            )
            break
        tolerance = np.maximum(0.05 * se, _floor(p, names))
        if np.all(np.abs(p_new - p) <= tolerance) and not at_bound:
            return _answer(
                names,
                p,
                result,
                residual,
                cov,
                sd,
                t.size,
                forward.runs,
                True,
                _done_message(names, forward.runs),
                t0_ref,
                c_ref,
            )
        moved = np.abs(p_new - p) / np.where(se > 0, se, 1.0)
        reason = f"the last refit still moved the estimate by {moved.max():.2g} standard errors" + (
            " (it is at the edge of the energies run so far)" if at_bound else ""
        )
        p = p_new
    if best is None:
        raise FitError("the fit made no check run within max_runs")
    p, result, residual, cov, sd = best
    message = (
        f"not converged after {forward.runs} runs: {reason}. Best estimate "
        f"{p[0] / 1e6:.4g} MJ (the lowest residual of the check runs, rms "
        f"{math.sqrt(np.mean(residual**2)):.3g} K); raise max_runs or give a closer energy_guess"
    )
    estimate = _answer(names, p, result, residual, cov, sd, t.size, forward.runs, False, message, t0_ref, c_ref)
    if raise_on_failure:
        raise FitError(message, estimate)
    return estimate


def _floor(p: np.ndarray, names: tuple[str, ...]) -> np.ndarray:
    floors = {"energy": 1e-4 * abs(p[0]), "initial_temperature": 1e-3}
    return np.array([floors.get(n, 1e-4 * abs(v)) for n, v in zip(names, p, strict=True)])


def _refit(
    sur: Surrogate, p0: np.ndarray, y_obs: np.ndarray, scale: np.ndarray, names: tuple[str, ...]
) -> tuple[np.ndarray, np.ndarray, bool]:
    """Least squares on the surrogate from ``p0``: (estimate, Jacobian there, at the energy bound)."""
    points = sur.basis(p0[0])
    defect = sur.defect(points)
    energies = [e for e, _ in sur.energy_runs]
    lower = [0.5 * min(energies)] + [-np.inf] * (len(names) - 1)
    upper = [2.0 * max(energies)] + [np.inf] * (len(names) - 1)
    if "initial_temperature" in names:
        k = names.index("initial_temperature")
        lower[k], upper[k] = max(1.0, sur.t0_ref - 150.0), sur.t0_ref + 150.0
    if "convection_multiplier" in names:
        k = names.index("convection_multiplier")
        lower[k], upper[k] = 1e-3, 1e3

    def residual(x: np.ndarray) -> np.ndarray:
        return sur.evaluate(x * scale, points)[0] + defect - y_obs

    def jacobian(x: np.ndarray) -> np.ndarray:
        return sur.evaluate(x * scale, points)[1] * scale

    lo, hi = np.array(lower) / scale, np.array(upper) / scale
    x0 = np.clip(p0 / scale, lo + 1e-12 * np.abs(lo), hi - 1e-12 * np.abs(hi))
    fit = least_squares(residual, x0, jac=jacobian, bounds=(lo, hi), method="trf", xtol=1e-12, ftol=1e-12)
    p = fit.x * scale
    at_bound = bool(p[0] <= lower[0] * (1 + 1e-9) or p[0] >= upper[0] * (1 - 1e-9))
    return p, sur.evaluate(p, points)[1], at_bound


def _done_message(names: tuple[str, ...], runs: int) -> str:
    return f"converged: {', '.join(names)} fitted with {runs} full runs"


def _answer(names, p, result, residual, cov, sd, n, runs, converged, message, t0_ref, c_ref) -> EnergyEstimate:
    values = dict(zip(names, p, strict=True))
    errors = dict(zip(names, np.sqrt(np.diag(cov)), strict=True))
    fitted_t0 = "initial_temperature" in names
    fitted_c = "convection_multiplier" in names
    return EnergyEstimate(
        energy=float(values["energy"]),
        standard_error=float(errors["energy"]),
        initial_temperature=float(values["initial_temperature"]) if fitted_t0 else t0_ref,
        initial_temperature_se=float(errors["initial_temperature"]) if fitted_t0 else None,
        convection_multiplier=float(values["convection_multiplier"]) if fitted_c else c_ref,
        convection_multiplier_se=float(errors["convection_multiplier"]) if fitted_c else None,
        residual_rms=float(math.sqrt(np.mean(residual**2))),
        residual_sd=float(sd),
        n_points=int(n),
        n_runs=int(runs),
        converged=converged,
        message=message,
        parameters=names,
        covariance=cov,
        predicted=result,
        residuals=residual,
    )


def predict_from_estimate(
    model: Model,
    make_duty: Callable[[float], DutyCycle] | DutyCycle,
    surfaces: Sequence[SurfaceGroup],
    estimate: EnergyEstimate,
    initial_temperature: float | Mapping[str, float] | State | None = None,
    start: Any = None,
    options: SolverOptions | None = None,
    extra_breakpoints: Sequence[float] = (),
) -> Result:
    """Run a duty at an estimate: heat-sink, fuse-plug and every other history.

    The duty may be longer than the one fitted (e.g. the same stop followed by hours of
    parking, to see the fuse plugs' peaks); its braking is scaled (or built) to the
    estimated energy and its convection scaled by the estimated multiplier.

    Parameters
    ----------
    model : Model
    make_duty : DutyCycle or callable
        As for :func:`estimate_energy`.
    surfaces : sequence of SurfaceGroup
        As for :func:`estimate_energy`.
    estimate : EnergyEstimate
    initial_temperature : float or mapping or State, optional
        [K]; the estimate's (fitted or given uniform) initial temperature by default.
    start : float or str, optional
        Start of the duty [s]; a saved state's time, or 0.
    options : SolverOptions, optional
    extra_breakpoints : sequence of float
        More times [s] the run lands on.

    Returns
    -------
    Result
        ``series["heat_sink_mean"]``, ``probes["fuse plug 1"]``, ... (see
        :class:`~heatstack.result.Result`); the estimate's own check run is
        ``estimate.predicted``.

    Raises
    ------
    InputError
        If the duty, length scales or initial temperature do not fit the model.
    SolverError
        If the run fails.
    """
    if not isinstance(estimate, EnergyEstimate):
        raise InputError("estimate: expected an EnergyEstimate")
    initial = estimate.initial_temperature if initial_temperature is None else initial_temperature
    if initial is None:
        raise InputError("initial_temperature: the estimate holds no uniform one; give it")
    if start is None:
        start = float(initial.time) if isinstance(initial, State) else 0.0
    t_start = to_si(start, None, "time", "start")
    breakpoints = np.asarray(extra_breakpoints, dtype=float)
    forward = _Forward(model, make_duty, surfaces, breakpoints, initial, "sensor", t_start, options)
    return model.run(forward.schedule(estimate.energy, estimate.convection_multiplier), initial, options)
