"""Implicit, energy-conserving time integration of the conduction network: the run.

:func:`integrate` runs a schedule from an initial field and returns the
:class:`~heatstack.result.Result`. Reading on, in the order a step uses them:

- ``step_matrix.py``: the step matrix pattern, its assembly, cell properties, heat sources;
- ``boundaries.py``: exposed faces (convection, linearised radiation) and radiating gaps;
- ``newton.py``: one backward-Euler or BDF2 step on enthalpy, by Newton, closed by its accounts
  (its records in ``step_records.py``, its Anderson acceleration in ``anderson.py``);
- ``multistep.py``: the BDF2 coefficients, the ledger's history term and the error estimate;
- ``stepping.py``: step-size control by the error estimate, rejection and cuts;
- ``predictor.py`` (initial guess of a step) and ``recording.py`` (histories and ledger).

The run loop here walks the schedule's breakpoints: the first step and the first step
after every breakpoint (the corners of the power table, the phase changes) are backward
Euler, which is L-stable on a corner; the others variable-step BDF2 over the step before
(scheme ``"bdf2"``). Each accepted step is extrapolated into the next step's guess and
handed to the recorder; whole fields are kept at the snapshot times.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from ..errors import HeatstackError, InputError, SolverError
from ..result import Result, State
from .boundaries import SurfaceTemperatures
from .network import Network
from .newton import NewtonStep
from .options import SolverOptions
from .predictor import Extrapolator
from .recording import Recorder
from .rubbing_faces import RubbingFaces
from .schedule import Schedule
from .step_matrix import cell_enthalpy, cell_properties
from .step_records import StepOutcome
from .stepping import MAX_STEP_RATIO, StepControl, newton_relative, newton_tolerance

__all__ = ["integrate", "Integrator", "initial_field", "landing_times", "CORNER_FRACTION"]

#: A power-table node is a corner when the power there departs from the straight line
#: through its neighbours by more than this fraction of the largest power.
CORNER_FRACTION = 1e-3


def integrate(
    network: Network,
    schedule: Schedule,
    initial: float | Mapping[str, float] | State | np.ndarray,
    options: SolverOptions | None = None,
    progress: Callable[[float], None] | None = None,
) -> Result:
    """Run the schedule from ``initial`` and return the histories.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    initial : float, mapping, State or ndarray
        Initial temperature [K]: uniform, per part name (``"*"`` as default), or a
        saved state of the same model.
    options : SolverOptions, optional
    progress : callable, optional
        Called with the simulated time [s] after every accepted step.

    Returns
    -------
    Result

    Raises
    ------
    SolverError
        If a step diverges or Newton fails after repeated step cuts; the message gives
        the time and the part.
    """
    options = options or SolverOptions()
    T0 = initial_field(network, initial)
    start = initial.time if isinstance(initial, State) else schedule.start
    if start < schedule.start - 1e-9 or start >= schedule.end:
        raise InputError(f"initial state time {start} s is outside the schedule {schedule.start}..{schedule.end} s")
    readings = _start_readings(initial) if isinstance(initial, State) else None
    step = initial.step if isinstance(initial, State) else None
    try:
        return Integrator(network, schedule, options, progress).run(T0, max(start, schedule.start), readings, step)
    except HeatstackError:
        raise
    except (FloatingPointError, ValueError, RuntimeError) as exc:
        raise SolverError(f"integration failed: {exc}") from exc


class Integrator:
    """One run of a schedule over a network: the loop over the schedule's breakpoints.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    options : SolverOptions
    progress : callable, optional
        Called with the simulated time [s] after every accepted step.
    """

    def __init__(
        self,
        network: Network,
        schedule: Schedule,
        options: SolverOptions,
        progress: Callable[[float], None] | None = None,
    ):
        self.net, self.schedule, self.opt = network, schedule, options
        self.progress = progress
        self.mass = network.mass()
        self.stats = {"steps": 0, "rejected_steps": 0, "iterations": 0, "factorisations": 0, "bdf2_steps": 0}
        self.newton = NewtonStep(
            network,
            schedule,
            tolerance=newton_tolerance(options),
            relative=newton_relative(options),
            max_iterations=options.max_iterations,
            stats=self.stats,
        )
        self.control = StepControl(network, schedule, options, self.newton, self.stats)

    def run(
        self,
        T0: np.ndarray,
        t_start: float,
        start_readings: dict[str, float] | None = None,
        first_step: float | None = None,
    ) -> Result:
        """Integrate from the field ``T0`` at ``t_start`` to the end of the schedule.

        Parameters
        ----------
        T0 : ndarray, shape (n,)
            Starting cell temperatures [K].
        t_start : float
            Starting time [s].
        start_readings : dict of str to float, optional
            Instrument readings at ``t_start`` [K].
        first_step : float, optional
            The step a run that made the starting state would have taken next [s] (a chained
            run then steps as the run in one piece would, unless heating starts at once).

        Returns
        -------
        Result
            The recorded histories, snapshots, ledger and final state of the run.
        """
        net, opt, schedule, control = self.net, self.opt, self.schedule, self.control
        landings, corners = landing_times(schedule, smooth_nodes=opt.scheme == "euler")
        breakpoints = np.unique(np.concatenate((landings, np.asarray(opt.snapshot_times, float))))
        breakpoints = breakpoints[(breakpoints > t_start) & (breakpoints <= schedule.end)]
        snapshot_times = set(float(t) for t in opt.snapshot_times)
        kinks = set(float(b) for b in corners)
        T = T0.copy()
        H = cell_enthalpy(net, T)
        start = cell_properties(net, T)  # a field outside a property table fails here, naming the table
        surfaces = SurfaceTemperatures.of_cells(net, T)
        rubbing = RubbingFaces(net) if net.friction_a.size else None
        rec = Recorder(net, self.mass)
        no_heat = np.zeros(net.friction_a.size)  # none made yet: the surfaces from the cells alone
        clamped = schedule.phase_at(t_start).clamped
        first = None if rubbing is None else rubbing.hottest(T, start.conductivity, clamped, no_heat, no_heat)
        rec.record(t_start, T, None, surfaces.face, first)
        rec.snapshot(t_start, T)
        t = t_start
        dt = opt.fixed_step or opt.initial_step
        if opt.fixed_step is None and first_step and not control.heating_starts(t_start):
            dt = min(max(float(first_step), opt.min_step), opt.max_step)
        predictor = Extrapolator()
        predictor.accept(t, T)
        bdf2 = opt.scheme == "bdf2"
        last = None  # the previous accepted step: the error estimate's predictor and the BDF2 history
        ambient = float(np.min(T, initial=0.0))
        restarted = False  # the step was reset to initial_step where heating starts
        after_breakpoint = True  # backward Euler for the first step and the first after every breakpoint
        for target in breakpoints:
            while t < target - 1e-9 * max(1.0, abs(target)):
                multistep = bdf2 and last is not None and not after_breakpoint
                proposal = min(dt, MAX_STEP_RATIO * last.dt) if multistep else dt
                if bdf2 and after_breakpoint and last is not None and opt.fixed_step is None and not restarted:
                    # (where heating starts the step restarts from initial_step, as a chained run's does)
                    proposal = control.corner_step(t, proposal, T, H, surfaces, last, ambient)
                step = control.land(t, proposal, target)
                outcome, taken, norm = control.advance(
                    t, step, T, H, predictor.guess(t + step), surfaces, last, multistep
                )
                T_prev = T
                T, H, surfaces = outcome.temperature, outcome.enthalpy, outcome.surfaces
                t = target if abs(t + taken - target) <= 1e-9 * max(1.0, abs(target)) else t + taken
                predictor.accept(t, T)
                surface = _hottest_rubbing_surface(rubbing, schedule, t - 0.5 * taken, outcome)
                rec.record(t, T, outcome.accounts, surfaces.face, surface)
                if self.progress is not None:
                    self.progress(t)
                self.stats["steps"] += 1
                self.stats["bdf2_steps"] += int(multistep)
                last, after_breakpoint, ambient, restarted = outcome.history, False, outcome.ambient, False
                if taken == step and step < proposal:
                    # a step shortened only to land on a breakpoint does not shrink the next one
                    dt = control.next_step(proposal, T - T_prev) if not bdf2 else proposal
                else:
                    dt = control.next_step(taken, T - T_prev, norm, multistep)
            if float(target) in snapshot_times:
                rec.snapshot(t, T)
            if float(target) in kinks:
                predictor.kink()
                after_breakpoint = True
            if opt.fixed_step is None and control.heating_starts(target):
                dt, restarted = opt.initial_step, True
                predictor.restart()
                predictor.accept(t, T)
        rec.snapshot(t, T)
        final = State(time=t, temperature=T.copy(), step=float(dt))
        return rec.result(schedule, final, self.stats, start_readings)


def landing_times(schedule: Schedule, smooth_nodes: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """The schedule's breakpoints the steps land on, and the corners among them.

    A tabulated power history (one sampled every few hundredths of a second) has
    nodes where nothing happens: the power there lies on the straight line through its
    neighbours to within :data:`CORNER_FRACTION` of the peak power. A step may cross such a
    node, since :meth:`Schedule.energy` integrates the table exactly. The corners (the
    start and end of the run and of heating, a steep ramp of the power, the phase ends)
    are landed on and restart the BDF2 history with a backward-Euler step; the extra
    breakpoints (output times) are landed on only.

    Parameters
    ----------
    schedule : Schedule
        The run's schedule.
    smooth_nodes : bool
        Treat every power-table node as a corner (the Euler scheme, stepping as before).

    Returns
    -------
    landings : ndarray
        Sorted landing times [s].
    corners : ndarray
        The landing times that are corners [s].
    """
    times = schedule.breakpoints()
    power = schedule.power
    t, p = np.asarray(power.times, float), np.asarray(power.powers, float)
    extra = np.asarray(schedule.extra_breakpoints, float)
    kinks = np.array([schedule.start, schedule.end, *(phase.end for phase in schedule.phases)])
    if np.any(p > 0):
        if smooth_nodes or t.size < 3:
            kinks = np.concatenate((kinks, t))
        else:
            left, right = np.diff(t)[:-1], np.diff(t)[1:]
            bend = np.abs(np.diff(p)[1:] / right - np.diff(p)[:-1] / left) * left * right / (left + right)
            switch = ((p[1:-1] > 0) != (p[:-2] > 0)) | ((p[1:-1] > 0) != (p[2:] > 0))
            corner = (bend > CORNER_FRACTION * p.max()) | switch
            kinks = np.concatenate((kinks, t[[0, -1]], t[1:-1][corner]))
    corners = times[np.isin(times, kinks)]
    landings = times[np.isin(times, kinks) | np.isin(times, extra)]
    return landings, corners


def initial_field(network: Network, initial: float | Mapping[str, float] | State | np.ndarray) -> np.ndarray:
    """Per-cell initial temperature from a uniform value, per-part values or a saved state.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    initial : float, mapping of str to float, State or ndarray
        Uniform temperature [K]; per-part temperatures [K] by part name, ``"*"`` the default;
        a saved State; or one temperature per cell [K].

    Returns
    -------
    ndarray, shape (n,)
        Cell temperatures [K].

    Raises
    ------
    InputError
        If a part has no value and there is no default, a part name is unknown, the cell count
        does not match, or a temperature is not finite and positive.
    """
    n = network.n_cells
    if isinstance(initial, State):
        initial = initial.temperature
    if isinstance(initial, Mapping):
        T = np.full(n, np.nan)
        names = [p.name for p in network.assembly.parts]
        default = initial.get("*")
        for name, block in zip(names, network.grid.part_slices, strict=True):
            value = initial.get(name, default)
            if value is None:
                raise InputError(f"initial temperature: no value for part {name!r} and no default '*'")
            T[block] = float(value)
        unknown = set(initial) - set(names) - {"*"}
        if unknown:
            raise InputError(f"initial temperature: no part named {sorted(unknown)[0]!r}")
    elif np.ndim(initial) == 0:
        T = np.full(n, float(initial))
    else:
        T = np.asarray(initial, dtype=float).copy()
        if T.shape != (n,):
            raise InputError(f"initial state has {T.size} cells; this model has {n}")
    if not np.all(np.isfinite(T)) or np.any(T <= 0):
        raise InputError("initial temperature must be finite and > 0 K everywhere")
    return T


def _start_readings(state: State) -> dict[str, float]:
    """The instrument readings [K] a saved state carries, checked."""
    readings = {}
    for name, value in dict(state.readings).items():
        try:
            value = float(value)
        except (TypeError, ValueError):
            value = float("nan")
        if not (np.isfinite(value) and value > 0):
            raise InputError(f"initial state: reading of probe {name!r} must be finite and > 0 K, got {value!r}")
        readings[str(name)] = value
    return readings


def _hottest_rubbing_surface(
    rubbing: RubbingFaces | None, schedule: Schedule, midpoint: float, outcome: StepOutcome
) -> float | None:
    """The hottest rubbing surface [K] after a step whose midpoint is ``midpoint`` [s] (None without rubbing faces)."""
    if rubbing is None:
        return None
    heat = (outcome.friction_a, outcome.friction_b)
    return rubbing.hottest(outcome.temperature, outcome.conductivity, schedule.phase_at(midpoint).clamped, *heat)
