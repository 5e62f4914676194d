"""Turnaround questions asked of a saved state: how long to cool, and what if we braked now.

Both answers run the model forward from a :class:`~heatstack.result.State` (the
``final_state`` of an earlier run, or one reloaded from disk) under a duty built here:

* :func:`cooling_time_from_state` parks the wheel in an :class:`~heatstack.operations.duty.Environment`
  and reads when a probe reading or a global series falls below a threshold for good.
* :func:`what_if` applies a braking event (a rejected take-off, a landing, a taxi-out)
  starting at the time of the state, then lets the wheel cool, and reports the peak of
  every probe reading and series of interest.

Times in the answers count from the state ("now") [s]; the :class:`~heatstack.result.Result`
attached to each answer keeps the model's own clock.

A saved state carries the readings of the lagged instruments (``State.readings``, e.g. the
brake-temperature sensor), so a sensor that still lagged behind the metal when the state
was saved goes on lagging; a state made by hand without readings starts every instrument
in equilibrium with its local temperature. The fuse plugs' own lag is applied by
:func:`~heatstack.answers.fuse_plugs.assess_fuse_plugs` to each result and starts in
equilibrium at the state.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..geometry import HEAT_SINK_MEAN, SurfaceGroup
from ..model import Model
from ..numerics.options import SolverOptions
from ..operations.duty import DutyCycle, DutyPhase, Environment
from ..operations.events import BrakingEvent
from ..result import Result, State
from ..units import quantity

__all__ = ["CoolingAnswer", "WhatIfAnswer", "check_history_name", "cooling_time_from_state", "what_if", "history_names"]


def history_names(model: Model) -> tuple[str, ...]:
    """Names a run of ``model`` records: probe readings, global series, surface means.

    Parameters
    ----------
    model : Model

    Returns
    -------
    tuple of str
        Probe names first, then the series of every cell group of the assembly that
        has cells (``heat_sink_mean``, ``heat_sink_max``, ``wheel_max`` for a built wheel
        and brake) and ``surface:<group>`` for every exposed-surface group.
    """
    net = model.network
    names = list(net.probe_names)
    for group, cells in zip(net.assembly.cell_groups, net.cell_group_masks, strict=True):
        if np.any(cells):
            names += group.series_names
    names += [f"surface:{group}" for group in net.groups]
    return tuple(names)


def check_history_name(model: Model, name: str, what: str = "series") -> None:
    """Raise :class:`~heatstack.errors.InputError` unless a run of ``model`` records ``name``.

    Parameters
    ----------
    model : Model
        The model.
    name : str
        A probe or series name.
    what : str, optional
        What the name is, for the message.

    Raises
    ------
    InputError
        If ``name`` is not among :func:`history_names` of ``model``.
    """
    known = history_names(model)
    if name not in known:
        raise InputError(f"{what}: no probe or series named {name!r}; this model records {list(known)}")


def _check_state(model: Model, state: State) -> None:
    if not isinstance(state, State):
        raise InputError(f"state: expected a heatstack State, got {type(state).__name__}")
    temperature = np.asarray(state.temperature, dtype=float)
    if temperature.shape != (model.n_cells,):
        raise InputError(
            f"state: it holds {temperature.size} cell temperatures; this model has {model.n_cells} "
            "(a state can only restart the model, and grid, it came from)"
        )
    if not np.isfinite(state.time):
        raise InputError(f"state: time must be finite, got {state.time}")


def _check_surfaces(model: Model, surfaces: Sequence[SurfaceGroup]) -> None:
    if isinstance(surfaces, Mapping | str) or not all(isinstance(s, SurfaceGroup) for s in surfaces):
        raise InputError("surfaces: expected SurfaceGroup records (e.g. the assembly's 'surfaces')")
    given = {s.name for s in surfaces}
    missing = [group for group in model.network.groups if group not in given]
    if missing:
        raise InputError(
            f"surfaces: no surface record for the surface group(s) {missing}; give one for every "
            f"group of the model {list(model.network.groups)}"
        )


# ---------------------------------------------------------------------------- cooling time


@dataclass(frozen=True, eq=False)
class CoolingAnswer:
    """How long a series takes to cool below a threshold from a saved state.

    Attributes
    ----------
    series : str
        The probe reading or global series watched.
    threshold : float
        [K].
    time_needed : float or None
        Time from the state until the series is below ``threshold`` for the rest of the
        horizon [s]; 0 if it never reaches the threshold; None if it is still at or above
        it at the end of the horizon.
    reached : bool
        Whether the threshold was reached within the horizon.
    start_value : float
        Value of the series at the state [K].
    final_value : float
        Value at the end of the horizon [K].
    peak_value : float
        Highest value over the horizon [K] (above ``start_value`` when heat is still
        soaking into the part watched).
    horizon : float
        Length of the cooling run [s].
    message : str
        The answer in words; says so when the threshold is not reached.
    result : Result
        The cooling run, on the model's clock (it starts at the state's time).
    """

    series: str
    threshold: float
    time_needed: float | None
    reached: bool
    start_value: float
    final_value: float
    peak_value: float
    horizon: float
    message: str
    result: Result


def _time_below(times: np.ndarray, values: np.ndarray, threshold: float) -> float | None:
    """Elapsed time after which ``values`` stays below ``threshold``, linearly interpolated.

    Returns 0 when no value reaches the threshold and None when the last one does.
    """
    at_or_above = np.flatnonzero(values >= threshold)
    if at_or_above.size == 0:
        return 0.0
    k = int(at_or_above[-1])
    if k == values.size - 1:
        return None
    fraction = (values[k] - threshold) / (values[k] - values[k + 1])
    return float(times[k] + fraction * (times[k + 1] - times[k]) - times[0])


def cooling_time_from_state(
    model: Model,
    state: State,
    environment: Environment,
    surfaces: Sequence[SurfaceGroup],
    series: str = HEAT_SINK_MEAN,
    *,
    below: Any,
    horizon: Any = "6 h",
    clamped: bool = True,
    options: SolverOptions | None = None,
) -> CoolingAnswer:
    """Time for a series to cool below a threshold, parked from a saved state.

    Runs one parked phase of length ``horizon`` in ``environment`` from ``state`` and
    finds the last time the series falls below ``below`` (linear interpolation between
    recorded steps). For a series that only cools this is the first time it falls below
    the threshold; for one that first rises (heat soaking into a wheel probe) it is the
    fall after the rise.

    Parameters
    ----------
    model : Model
        The model the state belongs to.
    state : State
        Saved state ("now"), e.g. ``result.final_state`` of the arrival run.
    environment : Environment
        Cooling conditions while parked.
    surfaces : sequence of SurfaceGroup
        Characteristic length [m] and orientation of every exposed-surface group of the
        model (a built wheel's ``assembly.surfaces``; for a hand-made assembly the groups
        are ``"part:side"`` unless named).
    series : str
        A probe name (its instrument reading) or a global series (``heat_sink_mean``,
        ``heat_sink_max``, ``wheel_max``, ``surface:<group>``).
    below : float or str
        Threshold temperature [K], or a string with a unit (``"150 degC"``).
    horizon : float or str
        Longest cooling time looked at [s] (or e.g. ``"6 h"``).
    clamped : bool
        Whether the stack stays clamped (parking brake set) while parked.
    options : SolverOptions, optional
        Solver controls (tighten ``max_step`` for a sharper crossing time).

    Returns
    -------
    CoolingAnswer
        ``reached`` False, ``time_needed`` None and a message saying so when the series
        is still at or above the threshold at the end of the horizon.

    Raises
    ------
    InputError
        For an unknown series, a state of another model, missing length scales, or a
        non-positive threshold or horizon.

    References
    ----------
    .. [1] Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of
       Heat and Mass Transfer, 6th ed., Wiley, 2007, sec. 5.1-5.2 (the lumped
       capacitance cooling curve the tests compare with).
    """
    check_history_name(model, series, "series")
    _check_state(model, state)
    _check_surfaces(model, surfaces)
    if not isinstance(environment, Environment):
        raise InputError(f"environment: expected an Environment, got {type(environment).__name__}")
    threshold = quantity(below, "temperature", "below", minimum=0.0, exclusive_minimum=True)
    duration = quantity(horizon, "time", "horizon", minimum=0.0, exclusive_minimum=True)
    duty = DutyCycle([DutyPhase("parked", duration, environment, clamped=bool(clamped))])
    result = model.run(duty.schedule(surfaces, start=float(state.time)), state, options)
    values = result.history(series)
    needed = _time_below(result.times, values, threshold)
    start, final, peak = float(values[0]), float(values[-1]), float(np.max(values))
    if needed is None:
        message = (
            f"{series} is still {final:.1f} K at the end of the {duration:g} s horizon, "
            f"{final - threshold:.1f} K above the threshold {threshold:.2f} K: not reached; "
            "extend the horizon or improve the cooling"
        )
    elif needed == 0.0:
        message = f"{series} stays below {threshold:.2f} K throughout (now {start:.1f} K, peak {peak:.1f} K)"
    else:
        message = f"{series} falls below {threshold:.2f} K after {needed:.0f} s (now {start:.1f} K)"
    return CoolingAnswer(
        series=series,
        threshold=threshold,
        time_needed=needed,
        reached=needed is not None,
        start_value=start,
        final_value=final,
        peak_value=peak,
        horizon=duration,
        message=message,
        result=result,
    )


# ---------------------------------------------------------------------------- what if


@dataclass(frozen=True, eq=False)
class WhatIfAnswer:
    """Peaks reached if a braking event started at the time of a saved state.

    Attributes
    ----------
    start_time : float
        Time of the state on the model's clock [s].
    energy : float
        Energy of the event into one brake [J] (0 for no braking).
    peaks : dict of str to (float, float)
        For each probe reading or series: (peak temperature [K], time of the peak after
        the state [s]).
    now : dict of str to float
        Value of each at the state [K].
    result : Result
        The run from the state: the event, then the cooling after it.
    """

    start_time: float
    energy: float
    peaks: dict[str, tuple[float, float]]
    now: dict[str, float]
    result: Result

    def peak(self, name: str) -> tuple[float, float]:
        """(peak [K], time after the state [s]) of one probe reading or series.

        Parameters
        ----------
        name : str
            Probe or series name.

        Returns
        -------
        peak : float
            Peak value [K].
        time : float
            Its time after the state [s].

        Raises
        ------
        InputError
            If no peak was recorded for ``name``.
        """
        if name not in self.peaks:
            raise InputError(f"no peak recorded for {name!r}; recorded: {sorted(self.peaks)}")
        return self.peaks[name]


def _default_names(model: Model) -> tuple[str, ...]:
    return tuple(n for n in history_names(model) if not n.startswith("surface:"))


def what_if(
    model: Model,
    state: State,
    event: BrakingEvent | None,
    environment: Environment,
    surfaces: Sequence[SurfaceGroup],
    after: Any = "3 h",
    probes: Sequence[str] | None = None,
    *,
    braking_environment: Environment | None = None,
    clamped_after: bool = True,
    options: SolverOptions | None = None,
) -> WhatIfAnswer:
    """The peaks if ``event`` started now, from a saved state: the turnaround question.

    The run has a braking phase covering the event (its times count from the state; it
    lasts until the event's last power sample), clamped, in ``braking_environment``, then
    ``after`` of cooling in ``environment``. With ``event=None`` (or an event of zero
    power) it is the continued cooling from the state.

    Parameters
    ----------
    model : Model
    state : State
        Saved state ("now").
    event : BrakingEvent or None
        E.g. a rejected take-off from :func:`~heatstack.operations.heat_input.stop_from_energy`
        or :func:`~heatstack.operations.heat_input.stop_from_aircraft`; its times count
        from now [s] and must start at or after 0.
    environment : Environment
        Cooling conditions after the event.
    surfaces : sequence of SurfaceGroup
        Characteristic length [m] and orientation of every exposed-surface group of the model.
    after : float or str
        Cooling time watched after the event [s] (or e.g. ``"3 h"``); the peaks of the
        wheel and fuse plugs come long after the stop.
    probes : sequence of str, optional
        Probe readings and series to report; every probe and global series by default.
    braking_environment : Environment, optional
        Cooling conditions during the event (e.g. the ground speed of the roll); the
        ``environment`` by default.
    clamped_after : bool
        Whether the stack stays clamped (parking brake) after the event.
    options : SolverOptions, optional

    Returns
    -------
    WhatIfAnswer

    Raises
    ------
    InputError
        For an unknown probe or series name (before any run), a state of another model,
        missing length scales or a non-positive ``after``.
    """
    names = _default_names(model) if probes is None else tuple(probes)
    if not names:
        raise InputError("probes: give at least one probe or series name")
    for name in names:
        check_history_name(model, name, "probes")
    _check_state(model, state)
    _check_surfaces(model, surfaces)
    for label, env in (("environment", environment), ("braking_environment", braking_environment)):
        if env is not None and not isinstance(env, Environment):
            raise InputError(f"{label}: expected an Environment, got {type(env).__name__}")
    if event is not None and not isinstance(event, BrakingEvent):
        raise InputError(f"event: expected a BrakingEvent or None, got {type(event).__name__}")
    cooling = quantity(after, "time", "after", minimum=0.0, exclusive_minimum=True)
    phases = []
    energy = 0.0
    if event is not None:
        if event.start < 0:
            raise InputError(f"event {event.name!r}: starts {event.start:g} s before now; it must start >= 0")
        energy = float(event.power.total_energy)
        phases.append(DutyPhase("braking", event.end, braking_environment or environment, [event]))
    phases.append(DutyPhase("after", cooling, environment, clamped=bool(clamped_after)))
    duty = DutyCycle(phases)
    t0 = float(state.time)
    result = model.run(duty.schedule(surfaces, start=t0), state, options)
    peaks = {}
    now = {}
    for name in names:
        value, time = result.peak(name)
        peaks[name] = (value, time - t0)
        now[name] = float(result.history(name)[0])
    return WhatIfAnswer(start_time=t0, energy=energy, peaks=peaks, now=now, result=result)
