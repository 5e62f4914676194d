"""The shortest safe wait before the next departure, found by root finding over full runs.

From a saved :class:`~heatstack.result.State` ("now"), a run parks the wheel for a wait
``w``, then applies the departure's rejected take-off and watches the cooling after it.
Each limit gives a margin at that wait:

* every fuse plug: ``release temperature - plug margin - plug peak`` [K];
* the heat sink: ``limit - peak`` of a heat-sink series [K];
* the tyre gas (when given): ``pressure limit - peak pressure`` [Pa].

Each margin grows with the wait (a cooler wheel peaks lower after the same stop); the
governing margin is the smallest, each scaled to a common footing (1 K, 0.1 bar). The
search samples a ladder of waits (independent runs, through a study executor), asserts
the governing margin is non-decreasing on them, brackets its zero and closes the bracket
by Brent's method (:func:`scipy.optimize.brentq`: a bracketing root finder like
bisection, faster on a smooth margin). The wait returned is the shortest run wait
whose margin is >= 0: on the safe side of the root, within ``tolerance`` above it.

References
----------
.. [1] Brent, R.P., Algorithms for Minimization without Derivatives, Prentice-Hall,
   1973, ch. 4.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from scipy.optimize import brentq

from ..answers.fuse_plugs import FusePlug, assess_fuse_plugs
from ..answers.tyre import TyreGas, tyre_gas, with_tyre_gas_state
from ..errors import HeatstackError, InputError
from ..geometry import HEAT_SINK_MAX, SurfaceGroup, series_label
from ..model import Model
from ..numerics.solver import SolverOptions
from ..operations.duty import DutyCycle, DutyPhase, Environment
from ..operations.heat_input import BrakingEvent
from ..result import Result, State
from ..units import to_si
from ..wheel_design import FusePlugSpec
from .chaining import run_from_state

__all__ = [
    "Departure",
    "DispatchLimits",
    "NoSafeWaitError",
    "TyreCheck",
    "WaitAnswer",
    "WaitProblem",
    "WaitSample",
    "evaluate_wait",
    "shortest_safe_wait",
    "shown_margin",
]

#: Scale of a margin of each kind on the common footing of the governing margin.
_SCALE = {"K": 1.0, "Pa": 1.0e4}
#: Waits sampled to bracket the root, as fractions of ``max_wait`` (0 first).
_LADDER = (0.0, 1 / 24, 1 / 12, 1 / 6, 1 / 3, 2 / 3, 1.0)


def _gas_start(result: Result) -> float:
    """Tyre gas temperature [K] at the departure's start: the one its state carried, else the rim inside the tyre."""
    carried = result.initial_tyre_gas_temperature
    return float(result.series["surface:tyre cavity"][0]) if carried is None else float(carried)


class NoSafeWaitError(InputError):
    """No wait within reach makes the departure safe (the message says which limit and why)."""


@dataclass(frozen=True)
class TyreCheck:
    """Tyre gas inputs and its pressure limit (SI; pressures gauge [Pa]).

    Attributes
    ----------
    cold_pressure, pressure_limit : float
        [Pa gauge].
    gas_volume : float
        [m^3].
    cavity_area : float
        [m^2].
    h_cavity : float
        [W/(m^2 K)].
    outer_conductance : float
        [W/K].
    cold_temperature : float
        Gas temperature at which ``cold_pressure`` holds [K].
    """

    cold_pressure: float
    pressure_limit: float
    gas_volume: float
    cavity_area: float
    h_cavity: float = 15.0
    outer_conductance: float = 0.0
    cold_temperature: float = 288.15


@dataclass(frozen=True)
class DispatchLimits:
    """What "safe" means for the departure.

    Attributes
    ----------
    plugs : tuple of FusePlug or FusePlugSpec
        Fuse plugs that must not release.
    plug_margin : float
        Required distance of each plug's peak below its release temperature [K].
    heat_sink_limit : float or None
        Highest allowed peak of ``heat_sink_series`` [K].
    heat_sink_series : str
    tyre : TyreCheck or None
    """

    plugs: tuple[FusePlug | FusePlugSpec, ...] = ()
    plug_margin: float = 10.0
    heat_sink_limit: float | None = None
    heat_sink_series: str = HEAT_SINK_MAX
    tyre: TyreCheck | None = None

    def __post_init__(self) -> None:
        if not self.plugs and self.heat_sink_limit is None and self.tyre is None:
            raise InputError("limits: give at least one of fuse plugs, a heat-sink limit or a tyre pressure limit")
        if not (np.isfinite(self.plug_margin) and self.plug_margin >= 0):
            raise InputError(f"plug_margin: must be a finite temperature difference >= 0 K, got {self.plug_margin}")


@dataclass(frozen=True, eq=False)
class Departure:
    """The departure the wait is for.

    Attributes
    ----------
    rejected_take_off : BrakingEvent
        The stop if the take-off is rejected, its times from brake application [s].
    environment : Environment
        Conditions while waiting and after the stop.
    braking_environment : Environment or None
        Conditions during the stop (the environment when None).
    after : float
        Cooling watched after the stop [s]; the plug peaks come long after it.
    clamped_while_waiting : bool
        Parking brake set while waiting.
    """

    rejected_take_off: BrakingEvent
    environment: Environment
    braking_environment: Environment | None = None
    after: float = 5400.0
    clamped_while_waiting: bool = False


@dataclass(frozen=True, eq=False)
class WaitProblem:
    """Everything one run of the wait question needs (sent to executor workers).

    Attributes
    ----------
    model : Model
        The built model.
    state : State
        The state the wait starts from.
    departure : Departure
        The departure the wait is for.
    limits : DispatchLimits
        What "safe" means.
    surfaces : tuple of SurfaceGroup
        The exposed-surface groups, for the cooling laws.
    sensor : str
        Probe whose reading at departure is reported.
    options : SolverOptions or None
        Solver options.
    """

    model: Model
    state: State
    departure: Departure
    limits: DispatchLimits
    surfaces: tuple[SurfaceGroup, ...]
    sensor: str = "sensor"
    options: SolverOptions | None = None


@dataclass(frozen=True, eq=False)
class WaitSample:
    """The departure's margins after one wait.

    Attributes
    ----------
    wait : float
        [s].
    margins : tuple of (str, float, str)
        (limit, margin, unit) for every limit: K for temperatures, Pa for pressure.
    governing : str
        The limit with the smallest scaled margin.
    margin : float
        Governing margin on the common footing (K; 0.1 bar counts as 1).
    peaks : dict of str to float
        Peak of each limited quantity after the stop [K or Pa gauge].
    sensor_at_departure : float or None
        The sensor's reading at the end of the wait [K] (what the crew sees).
    result : Result or None
        The departure's run, from the end of the wait (kept for the answer's wait only).
    departure_state : State or None
        The state at the end of the wait (a longer wait can continue from it).
    """

    wait: float
    margins: tuple[tuple[str, float, str], ...]
    governing: str
    margin: float
    peaks: dict[str, float]
    sensor_at_departure: float | None
    result: Result | None = None
    departure_state: State | None = None


def _departure_state(problem: WaitProblem, wait: float, base: WaitSample | None) -> State:
    """The state at the end of the wait: parked cooling chained from the problem's state,
    or from the departure state of an earlier sample ``base`` with a shorter wait."""
    start, waited = problem.state, 0.0
    if base is not None and base.departure_state is not None and base.wait <= wait:
        start, waited = base.departure_state, base.wait
    if wait - waited <= 0:
        return start
    dep = problem.departure
    duty = DutyCycle([DutyPhase("wait", wait - waited, dep.environment, clamped=dep.clamped_while_waiting)])
    schedule = duty.schedule(problem.surfaces, start=float(start.time))
    waited_run = run_from_state(problem.model, schedule, start, problem.limits.plugs, problem.options)
    if problem.limits.tyre is not None and "surface:tyre cavity" in waited_run.series:  # the gas carries on
        waited_run = with_tyre_gas_state(waited_run, _tyre_gas(problem.limits.tyre, waited_run))
    return waited_run.final_state


def _tyre_gas(tyre: TyreCheck, result: Result) -> TyreGas:
    """The tyre gas over ``result``, from the gas temperature its state carried (else the rim inside the tyre)."""
    return tyre_gas(
        result,
        tyre.cold_pressure,
        tyre.gas_volume,
        tyre.cavity_area,
        tyre.h_cavity,
        tyre.cold_temperature,
        tyre.outer_conductance,
        initial_temperature=_gas_start(result),
    )


def _departure_duty(problem: WaitProblem) -> DutyCycle:
    dep = problem.departure
    event = dep.rejected_take_off
    return DutyCycle(
        [
            DutyPhase("rejected take-off", event.end, dep.braking_environment or dep.environment, [event]),
            DutyPhase("after the stop", dep.after, dep.environment, clamped=True),
        ]
    )


def _margins(problem: WaitProblem, result: Result) -> tuple[list[tuple[str, float, str]], dict[str, float]]:
    limits = problem.limits
    margins, peaks = [], {}
    if limits.plugs:
        for plug in assess_fuse_plugs(result, limits.plugs):
            peaks[plug.name] = plug.peak
            margins.append((plug.name, plug.release_temperature - limits.plug_margin - plug.peak, "K"))
    if limits.heat_sink_limit is not None:
        peak = float(np.max(result.history(limits.heat_sink_series)))
        peaks[limits.heat_sink_series] = peak
        margins.append((limits.heat_sink_series, limits.heat_sink_limit - peak, "K"))
    if limits.tyre is not None:
        gas = _tyre_gas(limits.tyre, result)
        peak = gas.peak_pressure - gas.ambient_pressure
        peaks["tyre pressure"] = peak
        margins.append(("tyre pressure", limits.tyre.pressure_limit - peak, "Pa"))
    return margins, peaks


def evaluate_wait(
    problem: WaitProblem, wait: float, keep_result: bool = False, base: WaitSample | None = None
) -> WaitSample:
    """Run the departure's rejected take-off after ``wait`` [s] from the state; its margins.

    The wait is one parked run chained from the state, the departure a second run
    chained from the end of the wait (instruments and fuse plugs lag on across both);
    the peaks count from the departure on. The tyre gas starts at the departure in
    equilibrium with the rim surface under it (a cautious choice: the gas lags below the
    rim while both cool). With ``base`` (a sample of a shorter wait) the wait continues
    from that sample's departure state instead of starting over.

    Parameters
    ----------
    problem : WaitProblem
        The state, departure and limits.
    wait : float
        Time parked before the departure [s].
    keep_result : bool, optional
        Keep the departure run's Result in the sample.
    base : WaitSample, optional
        A sample of a shorter wait to continue from.

    Returns
    -------
    WaitSample
        The margins, the governing one, peaks, the sensor reading at departure [K] and the
        departure state.
    """
    departure = _departure_state(problem, wait, base)
    schedule = _departure_duty(problem).schedule(problem.surfaces, start=float(departure.time))
    result = run_from_state(problem.model, schedule, departure, problem.limits.plugs, problem.options)
    margins, peaks = _margins(problem, result)
    scaled = [m / _SCALE[unit] for _, m, unit in margins]
    k = int(np.argmin(scaled))
    sensor = departure.readings.get(problem.sensor)
    if sensor is None and problem.sensor in result.readings:
        sensor = float(result.readings[problem.sensor][0])
    return WaitSample(
        wait=float(wait),
        margins=tuple(margins),
        governing=margins[k][0],
        margin=float(scaled[k]),
        peaks=peaks,
        sensor_at_departure=sensor,
        result=result if keep_result else None,
        departure_state=departure,
    )


def _sample(job: tuple[WaitProblem, float]) -> WaitSample:
    """Executor entry point (module level so worker processes can import it)."""
    problem, wait = job
    return evaluate_wait(problem, wait)


@dataclass(frozen=True, eq=False)
class WaitAnswer:
    """The shortest safe wait before the departure.

    Attributes
    ----------
    wait : float
        Shortest wait found [s] (on the safe side of the root, within ``tolerance``).
    governing : str
        The limit that sets it.
    at_wait : WaitSample
        Margins, peaks and the sensor reading expected at departure, at ``wait`` (with
        its run).
    samples : tuple of WaitSample
        Every wait run, in increasing wait: the margin against wait time.
    tolerance : float
        [s].
    message : str
        The answer in words.
    """

    wait: float
    governing: str
    at_wait: WaitSample
    samples: tuple[WaitSample, ...]
    tolerance: float
    message: str


def _run_all(problem: WaitProblem, waits: Sequence[float], executor: Any) -> list[WaitSample]:
    if executor is None:
        return [evaluate_wait(problem, w) for w in waits]
    return list(executor.map_unordered(_sample, [(problem, float(w)) for w in waits]))


def check_monotone(samples: Sequence[WaitSample], slack: float = 0.05) -> None:
    """Raise :class:`~heatstack.errors.HeatstackError` unless the margin never falls with the wait.

    Parameters
    ----------
    samples : sequence of WaitSample
        Samples at several waits (any order).
    slack : float, optional
        Fall allowed between neighbours, absorbing the solver's tolerance [K on the common
        footing].

    Raises
    ------
    HeatstackError
        If the governing margin falls by more than ``slack`` between two waits.
    """
    ordered = sorted(samples, key=lambda s: s.wait)
    for a, b in zip(ordered, ordered[1:], strict=False):
        if b.margin < a.margin - slack:
            raise HeatstackError(
                f"the governing margin falls from {a.margin:.3f} at {a.wait:g} s to {b.margin:.3f} at "
                f"{b.wait:g} s: it is not monotone in the wait, so no single shortest wait exists"
            )


def _from_ambient(problem: WaitProblem) -> WaitSample:
    ambient = problem.departure.environment.ambient_temperature
    cold = State(time=float(problem.state.time), temperature=np.full(problem.model.n_cells, ambient))
    return evaluate_wait(replace(problem, state=cold), 0.0)


def _no_wait(problem: WaitProblem, last: WaitSample, max_wait: float) -> NoSafeWaitError:
    cold = _from_ambient(problem)
    if cold.margin < 0:
        return NoSafeWaitError(
            f"no wait is long enough: even from ambient ({problem.departure.environment.ambient_temperature:.2f} K) "
            f"the rejected take-off breaks the {series_label(cold.governing)} limit (margin {cold.margin:.2f}); "
            "the limit is exceeded even from a cold wheel"
        )
    return NoSafeWaitError(
        f"no safe wait within max_wait {max_wait:g} s: after it the {series_label(last.governing)} margin is still "
        f"{last.margin:.2f} (from ambient it would be {cold.margin:.2f}); give a longer max_wait"
    )


def _close_bracket(problem: WaitProblem, lo: WaitSample, hi: WaitSample, tolerance: float) -> list[WaitSample]:
    """Brent's method on the governing margin between ``lo`` (unsafe) and ``hi`` (safe).

    Every run is kept; when no safe run lies within ``tolerance`` above the root, one
    more run at the root plus half the tolerance supplies it.
    """
    runs: list[WaitSample] = []
    ends = {lo.wait: lo.margin, hi.wait: hi.margin}

    def margin(wait: float) -> float:
        if wait in ends:  # brentq starts by evaluating the bracket's ends, already run
            return ends[wait]
        below = [s for s in (lo, *runs) if s.wait <= wait and s.margin < 0]
        sample = evaluate_wait(problem, wait, keep_result=True, base=max(below, key=lambda s: s.wait))
        runs.append(sample)
        return sample.margin

    root = brentq(margin, lo.wait, hi.wait, xtol=0.25 * tolerance, full_output=False)
    safe = [s.wait for s in (*runs, hi) if s.margin >= 0]
    for shift in (0.5, 1.0):
        if min(safe) <= root + tolerance:
            break
        if margin(root + shift * tolerance) >= 0:
            safe.append(root + shift * tolerance)
    return runs


def shortest_safe_wait(
    problem: WaitProblem,
    max_wait: Any = "4 h",
    tolerance: Any = "30 s",
    executor: Any = None,
) -> WaitAnswer:
    """The shortest wait from the state after which a rejected take-off stays within every limit.

    Parameters
    ----------
    problem : WaitProblem
    max_wait : float or str
        Longest wait looked at [s].
    tolerance : float or str
        Width of the final bracket [s]: the wait returned is safe and at most this much
        above the root.
    executor : StudyExecutor, optional
        Runs the ladder of bracketing waits in parallel (e.g.
        :class:`~heatstack.studies.executors.LocalExecutor`); serial when None.

    Returns
    -------
    WaitAnswer

    Raises
    ------
    NoSafeWaitError
        If no wait up to ``max_wait`` is safe; the message says whether the limit is
        broken even from a wheel at ambient temperature.
    HeatstackError
        If the margin is not monotone in the wait on the samples.
    """
    longest = to_si(max_wait, None, "time", "max_wait")
    step = to_si(tolerance, None, "time", "tolerance")
    if not (np.isfinite(longest) and longest > 0 and np.isfinite(step) and 0 < step < longest):
        raise InputError(f"max_wait, tolerance: need 0 < tolerance < max_wait, got {tolerance!r}, {max_wait!r}")
    samples = sorted(_run_all(problem, [f * longest for f in _LADDER], executor), key=lambda s: s.wait)
    check_monotone(samples)
    if samples[0].margin >= 0:
        return _answer(problem, samples[0], samples, step)
    if samples[-1].margin < 0:
        raise _no_wait(problem, samples[-1], longest)
    k = next(i for i, s in enumerate(samples) if s.margin >= 0)
    runs = _close_bracket(problem, samples[k - 1], samples[k], step)
    every = sorted([*samples, *runs], key=lambda s: s.wait)
    check_monotone(every)
    best = min((s for s in every if s.margin >= 0), key=lambda s: s.wait)
    return _answer(problem, best, every, step)


def shown_margin(margin: float, unit: str, width: int = 0) -> str:
    """A margin in its own unit: kelvin, or bar for a pressure given in pascal.

    Parameters
    ----------
    margin : float
        The margin [K or Pa].
    unit : {"K", "Pa"}
        Its unit, as :attr:`WaitSample.margins` gives it.
    width : int
        Width of the number, for columns (0: as narrow as it needs).

    Returns
    -------
    str
        E.g. ``"33.2 K"`` or ``"0.33 bar"``.
    """
    return f"{margin / 1e5:{width}.2f} bar" if unit == "Pa" else f"{margin:{width}.1f} K"


def _answer(problem: WaitProblem, best: WaitSample, samples: list[WaitSample], step: float) -> WaitAnswer:
    at = best if best.result is not None else evaluate_wait(problem, best.wait, keep_result=True)
    wait, governing = at.wait, series_label(at.governing)
    if wait == 0.0:
        shown = next(shown_margin(m, unit) for name, m, unit in at.margins if name == at.governing)
        message = f"safe now: the rejected take-off keeps every limit (least margin: {governing}, {shown})"
    else:
        message = f"wait at least {wait / 60.0:.1f} min (to within {step:g} s): the {governing} limit governs"
    return WaitAnswer(wait, at.governing, at, tuple(samples), step, message)
