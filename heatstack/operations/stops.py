"""Stops from the equation of motion: rejected take-off, landing roll, taxi stop -> BrakingEvent.

Each function integrates the ground roll of :mod:`.ground_roll` and returns a
:class:`~heatstack.operations.events.BrakingEvent` carrying the power history of the
modelled brake (``modelled_brake``, counted from 1 among the braked wheels) and the
integrated roll itself (``ground_roll``: energy accounts, distance, time, the power of
every brake). No brake share is guessed: the brakes take what the forces leave them.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from ..errors import InputError
from ..numerics.schedule import PowerHistory
from ..unit_declarations import Declaration, declares
from .events import BrakingEvent
from .ground_roll import StopResult, accelerate, ground_roll_from_speed_trace, integrate_ground_roll
from .roll_inputs import Aircraft, Conditions, Runway, brake_on_ground_speed

__all__ = ["rejected_takeoff", "landing_roll", "taxi_stop", "speed_trace_roll", "event_from_ground_roll"]


def event_from_ground_roll(
    roll: StopResult, name: str, start: float, modelled_brake: int, notes: str = ""
) -> BrakingEvent:
    """The braking event of the modelled brake from an integrated ground roll.

    Parameters
    ----------
    roll : StopResult
        The integrated ground roll.
    name : str
        Label of the event.
    start : float
        Time of brake-on in the phase [s].
    modelled_brake : int
        Which braked wheel the thermal model represents, 1 .. number of braked wheels.
    notes : str
        Added to the roll's notes.

    Returns
    -------
    BrakingEvent
        The modelled brake's power history shifted to ``start`` [W], its energy [J], the
        kinetic energy removed [J] and the brakes' share of it [-], with ``roll`` attached.

    Raises
    ------
    InputError
        If ``modelled_brake`` is not a brake number.
    """
    count = len(roll.brake_powers)
    if isinstance(modelled_brake, bool) or not isinstance(modelled_brake, int) or not 1 <= modelled_brake <= count:
        raise InputError(f"modelled_brake: expected a brake number from 1 to {count}, got {modelled_brake!r}")
    own = roll.brake_powers[modelled_brake - 1]
    power = PowerHistory(own.times + start, own.powers)
    kinetic = roll.accounts.kinetic_energy_removed
    share = roll.accounts.brakes / kinetic if kinetic > 0 else 0.0
    text = f"{notes}; {roll.notes}" if notes else roll.notes
    return BrakingEvent(name, power, power.total_energy, kinetic, share, text, roll)


def _start(start: float) -> float:
    """The event's start [s] in its phase (already SI through the declaration of ``start``)."""
    return float(start)


@declares(reject_speed=Declaration("speed", positive=True), start=Declaration("time", minimum=0.0))
def rejected_takeoff(
    aircraft: Aircraft,
    runway: Runway,
    reject_speed: Any,
    conditions: Conditions | None = None,
    *,
    speed_kind: str = "ground",
    braking: Any = "maximum",
    accelerate_from_rest: bool = False,
    modelled_brake: int = 1,
    start: Any = 0.0,
    name: str = "rejected take-off",
) -> BrakingEvent:
    """A rejected take-off: optionally the run on take-off thrust, then the stop to rest.

    Parameters
    ----------
    aircraft : Aircraft
    runway : Runway
    reject_speed : float or str
        Speed at brake-on [m/s], of kind ``speed_kind``.
    conditions : Conditions, optional
        Wind and air; still ISA sea-level air by default.
    speed_kind : {"ground", "true", "calibrated"}
    braking : str or float or str
        Braking level, ``"maximum"`` (friction limit) or a target deceleration [m/s^2].
    accelerate_from_rest : bool
        If true, the event starts at brake release: the acceleration on
        ``aircraft.takeoff_thrust`` to the reject speed comes first (no brake power),
        and brake-on is at ``start`` plus its time.
    modelled_brake : int
        Which braked wheel the thermal model represents (1-based).
    start : float or str
        Start of the event in its phase [s].
    name : str

    Returns
    -------
    BrakingEvent
        With the integrated roll in ``ground_roll``.
    """
    conditions = conditions or Conditions()
    t0 = _start(start)
    v0 = brake_on_ground_speed(reject_speed, speed_kind, conditions, "reject_speed")
    notes = ""
    if accelerate_from_rest:
        run = accelerate(aircraft, runway, conditions, v0)
        t0 += run.time
        notes = f"take-off run of {run.time:.4g} s over {run.distance:.4g} m to {v0:.4g} m/s"
    roll = integrate_ground_roll(aircraft, runway, conditions, v0, braking)
    return event_from_ground_roll(roll, name, t0, modelled_brake, notes)


@declares(touchdown_speed=Declaration("speed", positive=True), start=Declaration("time", minimum=0.0))
def landing_roll(
    aircraft: Aircraft,
    runway: Runway,
    touchdown_speed: Any,
    conditions: Conditions | None = None,
    *,
    speed_kind: str = "ground",
    braking: Any = "medium",
    modelled_brake: int = 1,
    start: Any = 0.0,
    name: str = "landing roll",
) -> BrakingEvent:
    """A landing roll with an autobrake level (or maximum effort) from brake-on to rest.

    Lift dumping starts ``aircraft.spoiler_time`` after brake-on.

    Parameters
    ----------
    aircraft : Aircraft
    runway : Runway
    touchdown_speed : float or str
        Speed at brake-on [m/s], of kind ``speed_kind``.
    conditions : Conditions, optional
        Wind and air; still ISA sea-level air by default.
    speed_kind : {"ground", "true", "calibrated"}
    braking : str or float
        Braking level (``"gentle"``, ``"medium"``, ``"firm"``, ``"hard"``), ``"maximum"``
        (friction limit) or a target deceleration [m/s^2].
    modelled_brake : int
        Which braked wheel the thermal model represents (1-based).
    start : float or str
        Start of the event in its phase [s].
    name : str

    Returns
    -------
    BrakingEvent
        With the integrated roll in ``ground_roll``.

    Raises
    ------
    InputError
        If an input is out of range, the runway cannot give the target deceleration, or the
        stop never ends.
    """
    conditions = conditions or Conditions()
    v0 = brake_on_ground_speed(touchdown_speed, speed_kind, conditions, "touchdown_speed")
    roll = integrate_ground_roll(aircraft, runway, conditions, v0, braking)
    return event_from_ground_roll(roll, name, _start(start), modelled_brake)


@declares(
    taxi_speed=Declaration("speed", positive=True),
    end_speed=Declaration("speed", minimum=0.0),
    start=Declaration("time", minimum=0.0),
)
def taxi_stop(
    aircraft: Aircraft,
    runway: Runway,
    taxi_speed: Any,
    conditions: Conditions | None = None,
    *,
    braking: Any = "gentle",
    end_speed: Any = 0.0,
    modelled_brake: int = 1,
    start: Any = 0.0,
    name: str = "taxi stop",
) -> BrakingEvent:
    """A taxi stop (or a slow-down to ``end_speed``) on idle thrust, without reverse thrust.

    Parameters
    ----------
    aircraft : Aircraft
        The aircraft; its reversers are not used.
    runway : Runway
        The runway.
    taxi_speed : float or str
        Ground speed at brake-on [m/s].
    conditions : Conditions, optional
        Wind and air; still ISA sea-level air by default.
    braking : str or float
        Braking level, ``"maximum"`` (friction limit) or a target deceleration [m/s^2].
    end_speed : float or str
        Ground speed at brake release [m/s], below ``taxi_speed``; 0 for a stop.
    modelled_brake : int
        Which braked wheel the thermal model represents (1-based).
    start : float or str
        Start of the event in its phase [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        With the integrated roll in ``ground_roll``.

    Raises
    ------
    InputError
        If ``end_speed`` is not in ``[0, taxi_speed)`` or another input is out of range.
    """
    conditions = conditions or Conditions()
    v0 = brake_on_ground_speed(taxi_speed, "ground", conditions, "taxi_speed")
    v1 = float(end_speed)
    if not 0 <= v1 < v0:
        raise InputError(f"end_speed: {v1:.4g} m/s must lie in [0, taxi_speed {v0:.4g} m/s)")
    idle = replace(aircraft, reversers=0, reverse_thrust=())
    roll = integrate_ground_roll(idle, runway, conditions, v0, braking, stop_speed=v1)
    return event_from_ground_roll(roll, name, _start(start), modelled_brake)


@declares(start=Declaration("time", minimum=0.0))
def speed_trace_roll(
    aircraft: Aircraft,
    runway: Runway,
    path_or_rows: Any,
    conditions: Conditions | None = None,
    *,
    modelled_brake: int = 1,
    start: Any = 0.0,
    name: str = "speed trace",
) -> BrakingEvent:
    """A recorded ground-speed trace whose brake force follows from the equation of motion.

    Parameters
    ----------
    aircraft : Aircraft
        The aircraft.
    runway : Runway
        The runway.
    path_or_rows : str or os.PathLike or text stream or rows
        The trace (see :func:`heatstack.operations.speed_trace.read_speed_trace`); its
        first sample is brake-on, moved to ``start``.
    conditions : Conditions, optional
        Wind and air; still ISA sea-level air by default.
    modelled_brake : int
        Which braked wheel the thermal model represents (1-based).
    start : float or str
        Start of the event in its phase [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        With the brakes' share of the trace in ``ground_roll``.

    Raises
    ------
    InputError
        If the trace is malformed or ``modelled_brake`` is not a brake number.
    """
    roll = ground_roll_from_speed_trace(aircraft, runway, conditions or Conditions(), path_or_rows)
    return event_from_ground_roll(roll, name, _start(start), modelled_brake)
