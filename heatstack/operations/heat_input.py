"""Braking events: the friction power history of one brake, with energy bookkeeping.

Every event returns a :class:`BrakingEvent` whose ``power`` is a
:class:`~heatstack.numerics.schedule.PowerHistory` [W] on a time axis that starts at
the event's ``start`` time [s]. Quantities accept SI numbers or strings with a unit
(``"62 t"``, ``"135 kt"``, ``"24 MJ"``), converted by :func:`heatstack.units.quantity`.

Energy bookkeeping: ``kinetic_energy`` is the kinetic energy the event removes from
the aircraft (or a wheel), ``brake_share`` the fraction of it the brakes absorb (the
rest goes to reverse thrust, aerodynamic drag and rolling resistance), and
``energy_per_brake = share * kinetic_energy / braked_wheels``, equal to the integral
of the power history. The record and :func:`combine` live in
:mod:`heatstack.operations.events`; speed traces are read by
:mod:`heatstack.operations.speed_trace`.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any, Literal

import numpy as np

from ..errors import InputError
from ..numerics.schedule import PowerHistory
from ..unit_declarations import Declaration, declares
from ..units import quantity, quantity_array
from . import atmosphere
from .events import BrakingEvent, combine
from .speed_trace import read_speed_trace

__all__ = [
    "stop_from_energy",
    "stop_from_aircraft",
    "stop_from_speed_trace",
    "taxi_snubs",
    "gear_retraction",
]

#: A brake share: a constant in [0, 1], a function of ground speed [m/s], or a table
#: of rows (ground speed [m/s], share) interpolated linearly and held at the ends.
Share = float | Callable[[np.ndarray], Any] | Sequence[Sequence[float]]

_TABLE_STEPS = 400  # time steps of a stop with a speed-dependent share


#: The most braked wheels, and the most taxi snubs of one event [-] (common practice, no source:
#: no aircraft has more than about 30 braked wheels; a taxi has tens of snubs, not thousands).
_MOST = {"braked_wheels": 64, "count": 10_000}


def _count(value: Any, field: str) -> int:
    most = _MOST.get(field, 10_000)
    try:
        whole = not isinstance(value, bool) and float(value).is_integer() and 1 <= float(value) <= most
    except (TypeError, ValueError, OverflowError):
        whole = False
    if not whole:
        raise InputError(f"{field}: must be a whole number from 1 to {most}, got {str(value)[:80]}")
    return int(value)


def _share_function(share: Share, speed_unit: str | None) -> tuple[Callable[[np.ndarray], np.ndarray], float | None]:
    """Return ``(f(v) -> share, constant or None)`` from a brake-share input."""
    if callable(share):
        return _checked(share), None
    if isinstance(share, str) or np.ndim(share) == 0:
        value = quantity(share, "dimensionless", "brake_share", minimum=0.0, maximum=1.0)
        return (lambda v: np.full(np.shape(v), value)), value
    rows = list(share)
    if len(rows) < 2 or not all(isinstance(row, Sequence | np.ndarray) and len(row) == 2 for row in rows):
        raise InputError("brake_share: a table needs rows of (ground speed, share), at least two")
    speeds = quantity_array([row[0] for row in rows], "speed", "brake_share speed", unit=speed_unit)
    if np.any(np.diff(speeds) <= 0):
        raise InputError("brake_share: table speeds must increase strictly")
    shares = quantity_array([row[1] for row in rows], "dimensionless", "brake_share share", minimum=0.0, maximum=1.0)
    table = np.column_stack((speeds, shares))
    return (lambda v: np.interp(v, speeds, table[:, 1])), None


def _checked(function: Callable[[np.ndarray], Any]) -> Callable[[np.ndarray], np.ndarray]:
    def share(v: np.ndarray) -> np.ndarray:
        out = np.broadcast_to(np.asarray(function(v), dtype=float), np.shape(v))
        bad = ~((out >= 0) & (out <= 1))
        if np.any(bad):
            at = float(np.asarray(v).flat[int(np.flatnonzero(bad)[0])])
            raise InputError(f"brake_share: the function returned a value outside [0, 1] at {at} m/s")
        return out

    return share


# ---------------------------------------------------------------------------- stops


@declares(
    energy=Declaration("energy", positive=True),
    duration=Declaration("time", positive=True),
    start=Declaration("time"),
)
def stop_from_energy(
    energy: Any,
    duration: Any,
    profile: str | Sequence[Sequence[float]] = "constant_deceleration",
    start: Any = 0.0,
    name: str = "stop",
) -> BrakingEvent:
    """A stop given the energy into one brake and its duration.

    Parameters
    ----------
    energy : float or str
        Energy absorbed by one brake [J], > 0.
    duration : float or str
        Braking time [s], > 0.
    profile : str or sequence of (float, float)
        ``"constant_deceleration"``: power falls linearly from ``2E/t_s`` to 0.
        ``"constant_power"``: ``E/t_s`` throughout. A table of rows
        (relative time in [0, 1] from 0 to 1, relative power >= 0): the shape,
        scaled to deliver ``E``.
    start : float or str
        Brake-on time [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        The event; ``kinetic_energy`` and ``brake_share`` are NaN (not known).

    Raises
    ------
    InputError
        For a non-positive energy or duration, an unknown profile or a bad table.
    """
    e = energy
    ts = duration
    t0 = start
    if isinstance(profile, str):
        if profile == "constant_deceleration":
            power = PowerHistory(np.array([t0, t0 + ts]), np.array([2.0 * e / ts, 0.0]))
        elif profile == "constant_power":
            power = PowerHistory(np.array([t0, t0 + ts]), np.full(2, e / ts))
        else:
            raise InputError(
                f"profile: unknown profile {profile!r}; use constant_deceleration, constant_power or a table"
            )
    else:
        power = _table_profile(profile, e, ts, t0)
    notes = f"stop of {ts:g} s, profile {_label(profile)}"
    return BrakingEvent(name, power, power.total_energy, math.nan, math.nan, notes)


def _label(profile: Any) -> str:
    return profile if isinstance(profile, str) else "table"


def _table_profile(profile: Sequence[Sequence[float]], energy: float, duration: float, start: float) -> PowerHistory:
    try:
        table = np.asarray(profile, dtype=float)
    except (TypeError, ValueError):
        raise InputError("profile: a table must hold numbers") from None
    if table.ndim != 2 or table.shape[1] != 2 or table.shape[0] < 2:
        raise InputError("profile: a table needs rows of (relative time, relative power), at least two")
    tau, shape = table[:, 0], table[:, 1]
    if tau[0] != 0.0 or tau[-1] != 1.0 or np.any(np.diff(tau) <= 0):
        raise InputError("profile: relative times must increase strictly from 0 to 1")
    if np.any(~np.isfinite(shape)) or np.any(shape < 0):
        raise InputError("profile: relative powers must be finite and >= 0")
    area = float(np.sum(0.5 * (shape[1:] + shape[:-1]) * np.diff(tau)))
    if area <= 0:
        raise InputError("profile: relative powers are all zero")
    return PowerHistory(start + tau * duration, shape * energy / (area * duration))


def _brake_on_ground_speed(
    speed: float,
    speed_kind: str,
    pressure_altitude: Any,
    air_temperature: Any,
    temperature_offset: Any,
    headwind: Any,
) -> tuple[float, str]:
    """Ground speed [m/s] at brake-on and a note on how it was found."""
    if speed_kind not in ("ground", "calibrated", "true"):
        raise InputError(f"speed_kind: {speed_kind!r} is not 'ground', 'calibrated' or 'true'")
    air_data = {
        "pressure_altitude": pressure_altitude,
        "air_temperature": air_temperature,
        "temperature_offset": temperature_offset,
    }
    unused = [key for key, value in air_data.items() if value is not None]
    if speed_kind == "ground" and headwind is not None:
        unused.append("headwind")
    if speed_kind != "calibrated" and unused:
        raise InputError(f"{', '.join(unused)}: not used for a {speed_kind} speed; remove or set speed_kind")
    if speed_kind == "ground":
        return speed, "ground speed given"
    wind = 0.0 if headwind is None else headwind
    if speed_kind == "true":
        tas = speed
    else:
        if pressure_altitude is None:
            raise InputError("pressure_altitude: required to convert a calibrated airspeed")
        tas = float(atmosphere.true_airspeed(speed, pressure_altitude, air_temperature, temperature_offset))
    ground = float(atmosphere.ground_speed(tas, wind))
    if ground <= 0:
        raise InputError(f"headwind: leaves a ground speed of {ground:.3g} m/s at brake-on")
    return ground, f"{speed_kind} airspeed {speed:.4g} m/s -> TAS {tas:.4g} m/s, ground {ground:.4g} m/s"


@declares(
    mass=Declaration("mass", positive=True),
    brake_on_speed=Declaration("speed", positive=True),
    stop_time=Declaration("time", positive=True),
    mean_deceleration=Declaration("acceleration", positive=True),
    pressure_altitude=Declaration("length"),
    air_temperature=Declaration("temperature", positive=True),
    temperature_offset=Declaration("temperature_difference"),
    headwind=Declaration("speed"),
    start=Declaration("time"),
)
def stop_from_aircraft(
    mass: Any,
    brake_on_speed: Any,
    braked_wheels: int,
    brake_share: Share = 1.0,
    stop_time: Any = None,
    mean_deceleration: Any = None,
    *,
    speed_kind: Literal["ground", "calibrated", "true"] = "ground",
    pressure_altitude: Any = None,
    air_temperature: Any = None,
    temperature_offset: Any = None,
    headwind: Any = None,
    share_speed_unit: str | None = None,
    start: Any = 0.0,
    name: str = "stop",
) -> BrakingEvent:
    """A constant-deceleration stop to rest from the aircraft's mass and speed.

    Parameters
    ----------
    mass : float or str
        Aircraft mass [kg], > 0.
    brake_on_speed : float or str
        Speed at brake-on [m/s], of the kind ``speed_kind``.
    braked_wheels : int
        Number of braked wheels sharing the energy equally, >= 1.
    brake_share : float or callable or table
        Fraction of the kinetic energy absorbed by the brakes: a constant in
        [0, 1], a function of ground speed [m/s], or rows (ground speed, share).
    stop_time : float or str, optional
        Braking time [s]; give this or ``mean_deceleration``.
    mean_deceleration : float or str, optional
        Constant deceleration [m/s^2].
    speed_kind : {"ground", "calibrated", "true"}
        What ``brake_on_speed`` is. Airspeeds are turned into ground speed with
        ``headwind``; a calibrated airspeed needs ``pressure_altitude``.
    pressure_altitude : float or str, optional
        Pressure altitude of the runway [m].
    air_temperature : float or str, optional
        Outside air temperature [K]; or give ``temperature_offset`` (ISA + dT) [K];
        ISA if neither.
    temperature_offset : float or str, optional
        ISA deviation [K].
    headwind : float or str, optional
        Headwind component [m/s]; a tailwind is negative.
    share_speed_unit : str, optional
        Unit of the speeds of a ``brake_share`` table (SI if not given).
    start : float or str
        Brake-on time [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        Power of one brake ``P(t) = share(v) m a v / n`` along ``v = v0 - a (t - start)``.

    Raises
    ------
    InputError
        For bad numbers, a share outside [0, 1], both or neither of ``stop_time`` and
        ``mean_deceleration``, or a calibrated airspeed without ``pressure_altitude``.
    """
    m = mass
    v_in = brake_on_speed
    n = _count(braked_wheels, "braked_wheels")
    share_of, constant = _share_function(brake_share, share_speed_unit)
    v0, note = _brake_on_ground_speed(
        v_in, speed_kind, pressure_altitude, air_temperature, temperature_offset, headwind
    )
    if (stop_time is None) == (mean_deceleration is None):
        raise InputError("stop_time, mean_deceleration: give exactly one")
    if stop_time is not None:
        ts = stop_time
    else:
        ts = v0 / mean_deceleration
    t0 = start
    a = v0 / ts
    if constant is not None:
        power = PowerHistory(np.array([t0, t0 + ts]), np.array([constant * m * a * v0 / n, 0.0]))
    else:
        tau = np.linspace(0.0, 1.0, _TABLE_STEPS + 1)
        v = v0 * (1.0 - tau)
        power = PowerHistory(t0 + tau * ts, share_of(v) * m * a * v / n)
    kinetic = 0.5 * m * v0**2
    return _event(name, power, kinetic, n, f"{note}; stop {ts:.4g} s at {a:.4g} m/s^2", constant)


def _event(
    name: str, power: PowerHistory, kinetic: float, wheels: int, notes: str, share: float | None = None
) -> BrakingEvent:
    """Bundle a history; ``share`` defaults to the energy-weighted mean of the history."""
    energy = power.total_energy
    if share is None:
        share = energy * wheels / kinetic if kinetic > 0 else 0.0
    return BrakingEvent(name, power, energy, kinetic, share, notes)


@declares(
    mass=Declaration("mass", positive=True),
    start=Declaration("time"),
)
def stop_from_speed_trace(
    path_or_rows: Any,
    mass: Any,
    braked_wheels: int,
    brake_share: Share = 1.0,
    *,
    share_speed_unit: str | None = None,
    start: Any = None,
    name: str = "speed trace",
) -> BrakingEvent:
    """Braking power from a recorded ground-speed trace.

    On each interval ``P = share(v_m) m max(-dv/dt, 0) v_m / n`` with ``v_m`` the
    mid-interval speed, so the interval's energy is
    ``share m (v_i^2 - v_(i+1)^2) / (2 n)`` when the aircraft slows (none when it
    speeds up). The power history holds these interval energies exactly, as a
    piecewise-linear curve through the interval mid-points (its value at a sample
    time is the smaller power of the two neighbouring intervals).

    Parameters
    ----------
    path_or_rows : str or os.PathLike or text stream or iterable of (float, float)
        The trace; see :func:`heatstack.operations.speed_trace.read_speed_trace`.
    mass : float or str
        Aircraft mass [kg], > 0.
    braked_wheels : int
        Number of braked wheels, >= 1.
    brake_share : float or callable or table
        As for :func:`stop_from_aircraft`.
    share_speed_unit : str, optional
        Unit of the speeds of a ``brake_share`` table.
    start : float or str, optional
        Time [s] to which the first sample is moved; the trace's own times if None.
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        ``kinetic_energy`` is the sum of the kinetic-energy drops of the slowing
        intervals.

    Raises
    ------
    InputError
        If the trace cannot be read (the message names the file line), or a field is not
        a valid quantity (the message names it).
    """
    t, v = read_speed_trace(path_or_rows)
    m = mass
    n = _count(braked_wheels, "braked_wheels")
    share_of, _ = _share_function(brake_share, share_speed_unit)
    if start is not None:
        t = t - t[0] + start
    dt = np.diff(t)
    v_mid = 0.5 * (v[1:] + v[:-1])
    drop = np.maximum(0.5 * (v[:-1] ** 2 - v[1:] ** 2), 0.0)  # kinetic energy per kg lost
    level = share_of(v_mid) * m * drop / (n * dt)  # interval-mean power [W]
    power = _piecewise_constant(t, level)
    return _event(name, power, m * float(np.sum(drop)), n, f"speed trace of {t.size} samples")


def _piecewise_constant(t: np.ndarray, level: np.ndarray) -> PowerHistory:
    """Piecewise-linear history with interval energies ``level * dt`` exactly.

    Sample-time values ``q`` are the smaller neighbouring level (the end levels at the
    ends); each interval mid-point value ``r = 2 level - (q_i + q_(i+1)) / 2 >= level``
    makes the trapezoid integral of the two half-intervals equal ``level * dt``.
    """
    q = np.concatenate(([level[0]], np.minimum(level[1:], level[:-1]), [level[-1]]))
    r = 2.0 * level - 0.5 * (q[:-1] + q[1:])
    times = np.empty(2 * t.size - 1)
    powers = np.empty_like(times)
    times[0::2], powers[0::2] = t, q
    times[1::2], powers[1::2] = 0.5 * (t[1:] + t[:-1]), r
    return PowerHistory(times, powers)


# ---------------------------------------------------------------------------- taxi, retraction


@declares(
    mass=Declaration("mass", positive=True),
    speed_high=Declaration("speed", positive=True),
    speed_low=Declaration("speed", minimum=0.0),
    snub_duration=Declaration("time", positive=True),
    interval=Declaration("time", positive=True),
    start=Declaration("time"),
)
def taxi_snubs(
    mass: Any,
    braked_wheels: int,
    brake_share: float,
    speed_high: Any,
    speed_low: Any,
    snub_duration: Any,
    interval: Any,
    count: int,
    start: Any = 0.0,
    name: str = "taxi snubs",
) -> BrakingEvent:
    """A series of equal slow-downs (snubs) while taxiing, at constant deceleration.

    Parameters
    ----------
    mass : float or str
        Aircraft mass [kg], > 0.
    braked_wheels : int
        Number of braked wheels, >= 1.
    brake_share : float
        Fraction of the kinetic energy taken by the brakes, in [0, 1].
    speed_high, speed_low : float or str
        Ground speed at the start and end of each snub [m/s], ``0 <= low < high``.
    snub_duration : float or str
        Duration of one snub [s], > 0.
    interval : float or str
        Time between the starts of successive snubs [s], >= ``snub_duration``.
    count : int
        Number of snubs, >= 1.
    start : float or str
        Start of the first snub [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        Energy per brake ``count * share m (v_h^2 - v_l^2) / (2 n)``.

    Raises
    ------
    InputError
        Naming the field: a value that is not a finite quantity of its dimension, a
        share outside [0, 1], ``speed_low >= speed_high`` or ``interval < snub_duration``.
    """
    m = mass
    n = _count(braked_wheels, "braked_wheels")
    _, share = _share_function(brake_share, None)
    if share is None:
        raise InputError("brake_share: taxi snubs take a constant share")
    v_h = speed_high
    v_l = speed_low
    if v_l >= v_h:
        raise InputError(f"speed_low: {v_l} m/s must be below speed_high {v_h} m/s")
    d = snub_duration
    gap = interval
    if gap < d:
        raise InputError(f"interval: {gap} s is shorter than snub_duration {d} s")
    k = _count(count, "count")
    t0 = start
    a = (v_h - v_l) / d
    levels = np.array([v_h, v_l]) * share * m * a / n
    snubs = [PowerHistory(np.array([t0 + i * gap, t0 + i * gap + d]), levels) for i in range(k)]
    kinetic = k * 0.5 * m * (v_h**2 - v_l**2)
    notes = f"{k} snubs {v_h:.3g}->{v_l:.3g} m/s every {gap:g} s"
    return _event(name, combine(*snubs), kinetic, n, notes, share)


@declares(
    moment_of_inertia=Declaration("moment_of_inertia", positive=True),
    lift_off_speed=Declaration("speed", positive=True),
    tyre_rolling_radius=Declaration("length", positive=True),
    spin_down_time=Declaration("time", positive=True),
    start=Declaration("time"),
)
def gear_retraction(
    moment_of_inertia: Any,
    lift_off_speed: Any,
    tyre_rolling_radius: Any,
    spin_down_time: Any,
    start: Any = 0.0,
    name: str = "gear retraction",
) -> BrakingEvent:
    """Braking of a spinning wheel after lift-off: ``E = I omega^2 / 2``, ``omega = v / r``.

    The brake stops the wheel at constant torque, so the power falls linearly from
    ``2E / t`` to zero over the spin-down time.

    Parameters
    ----------
    moment_of_inertia : float or str
        Polar moment of inertia of the rotating wheel assembly of one brake [kg m^2].
    lift_off_speed : float or str
        Ground speed at lift-off [m/s], > 0.
    tyre_rolling_radius : float or str
        Rolling radius of the tyre [m], > 0.
    spin_down_time : float or str
        Time to stop the wheel [s], > 0.
    start : float or str
        Time of brake application [s].
    name : str
        Label of the event.

    Returns
    -------
    BrakingEvent
        Energy per brake ``I v^2 / (2 r^2)`` [J] over a linearly falling power [W].

    Raises
    ------
    InputError
        Naming the field: a value that is not a finite quantity of its dimension, or not > 0.
    """
    inertia = moment_of_inertia
    v = lift_off_speed
    r = tyre_rolling_radius
    ts = spin_down_time
    t0 = start
    omega = v / r
    energy = 0.5 * inertia * omega**2
    power = PowerHistory(np.array([t0, t0 + ts]), np.array([2.0 * energy / ts, 0.0]))
    return _event(name, power, energy, 1, f"wheel at {omega:.4g} rad/s stopped in {ts:g} s", 1.0)
