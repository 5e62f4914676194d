"""Ground-roll dynamics: the aircraft's equation of motion on the runway -> brake power per brake.

The longitudinal equation of motion along the runway, with ``V`` the true ground
speed [m/s] and ``V_a = V + headwind`` the air-relative speed::

    m dV/dt = T_fwd - F_rev(V_a) - D(V_a) - mu_roll (W cos(theta) - L(V_a)) - W sin(theta) - F_brakes(t, V)

with ``D = 1/2 rho V_a |V_a| (C_D S)``, ``L = 1/2 rho V_a^2 (C_L S)`` (the lift area
drops from its value before lift dumping to its value after, at the spoiler
deployment time), ``rho`` from the ISO 2533 atmosphere at the pressure altitude and
air temperature, ``theta = atan(slope)`` (positive uphill), reverse thrust the number
of serviceable reversers times a per-engine table over air speed, cancelled below
the cancel speed. The brakes give a target deceleration of the aircraft (never
below zero force, never above the friction limit ``mu(V) f W_n`` with ``W_n`` the
weight on the wheels, ``f`` the share of it on the braked wheels), maximum effort
(the friction limit) or none.

The brakes' energy and every other work term are integrated as extra states, so the
energy accounts close to the integration tolerance: kinetic energy removed = brakes
+ reverse thrust + drag + rolling resistance + potential energy gained - forward
thrust work.

References
----------
Anderson, J.D., 1999, Aircraft Performance and Design, McGraw-Hill, sect. 6.7
(ground roll: the forces on a rolling aircraft), cited from memory.
ISO 2533:1975, Standard Atmosphere (density, through :mod:`.atmosphere`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.integrate import solve_ivp

from ..errors import InputError
from ..numerics.schedule import PowerHistory
from ..units import to_si
from . import atmosphere

__all__ = [
    "BRAKING_LEVELS",
    "Aircraft",
    "Runway",
    "Conditions",
    "EnergyAccounts",
    "StopResult",
    "integrate_ground_roll",
    "accelerate",
    "AccelerationRun",
    "brake_on_ground_speed",
]

#: Our own names for target decelerations of the aircraft [m/s^2]; "maximum" is the
#: friction limit and "none" no braking.
BRAKING_LEVELS: dict[str, float] = {"gentle": 1.5, "medium": 2.0, "firm": 3.0, "hard": 4.0}

_RTOL = 1e-11
_MAX_TIME = 3600.0  # a ground roll longer than this is taken as never ending [s]
_SAMPLES = 1200  # uniform samples of the power history over a stop
_KT = 1852.0 / 3600.0


def _number(value: Any, dimension: str, field: str) -> float:
    if value is None or isinstance(value, bool):
        raise InputError(f"{field}: a number or a quantity is required, got {value!r}")
    number = to_si(value, None, dimension, field)
    if not math.isfinite(number):
        raise InputError(f"{field}: must be finite, got {value!r}")
    return number


def _non_negative(value: Any, dimension: str, field: str, positive: bool = False) -> float:
    number = _number(value, dimension, field)
    if number < 0 or (positive and number == 0):
        raise InputError(f"{field}: must be {'> 0' if positive else '>= 0'}, got {value!r}")
    return number


def _table(rows: Any, dimension: str, field: str, speed_field: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Rows (speed, value) -> strictly increasing speeds [m/s] and values (SI)."""
    if isinstance(rows, str) or not isinstance(rows, Sequence) or len(rows) < 1:
        raise InputError(f"{field}: expected rows of ({speed_field}, value), e.g. [['0 kt', '40 kN'], ...]")
    speeds, values = [], []
    for k, row in enumerate(rows):
        if isinstance(row, str) or not isinstance(row, Sequence) or len(row) != 2:
            raise InputError(f"{field}[{k}]: expected a pair ({speed_field}, value), got {row!r}")
        speeds.append(_number(row[0], "speed", f"{field}[{k}] speed"))
        values.append(_non_negative(row[1], dimension, f"{field}[{k}] value"))
    if any(b <= a for a, b in zip(speeds, speeds[1:], strict=False)):
        raise InputError(f"{field}: the speeds must increase strictly, got {speeds} m/s")
    return tuple(speeds), tuple(values)


@dataclass(frozen=True)
class Aircraft:
    """The aircraft on the ground. Every quantity accepts a number (SI) or a string with a unit.

    Parameters
    ----------
    mass : float or str
        Aircraft mass [kg], > 0.
    drag_area : float or str
        Drag coefficient times reference area on the ground, ``C_D S`` [m^2], >= 0.
    lift_area : float or str
        ``C_L S`` on the ground before lift dumping [m^2], >= 0.
    lift_area_dumped : float or str
        ``C_L S`` after the spoilers deploy [m^2], >= 0.
    spoiler_time : float or str
        Time after brake-on at which the spoilers are deployed [s], >= 0.
    idle_thrust : float or str
        Total forward (idle) thrust of all engines during the stop [N], >= 0.
    takeoff_thrust : float or str
        Total take-off thrust for an acceleration phase [N], >= 0.
    reverse_thrust : sequence of (speed, force)
        Reverse thrust of ONE engine over air speed [m/s, N]; speeds increase strictly;
        held constant beyond the ends.
    reversers : int
        Number of serviceable thrust reversers, >= 0.
    reverse_cancel_speed : float or str
        Air speed below which reverse thrust is cancelled [m/s], >= 0.
    braked_wheels : int
        Number of braked wheels, >= 1.
    brake_shares : sequence of float, optional
        Share of the total brake force of each brake (``braked_wheels`` entries, each
        >= 0, summing to 1): e.g. 0 for an inoperative brake, more for a dragging one.
        Equal shares when not given.
    braked_weight_fraction : float
        Share of the weight on the wheels carried by the braked wheels (0, 1].
    """

    mass: Any
    drag_area: Any = 0.0
    lift_area: Any = 0.0
    lift_area_dumped: Any = 0.0
    spoiler_time: Any = 0.0
    idle_thrust: Any = 0.0
    takeoff_thrust: Any = 0.0
    reverse_thrust: Any = ()
    reversers: int = 0
    reverse_cancel_speed: Any = 0.0
    braked_wheels: int = 1
    brake_shares: Any = None
    braked_weight_fraction: Any = 1.0

    def __post_init__(self) -> None:
        put = object.__setattr__
        put(self, "mass", _non_negative(self.mass, "mass", "aircraft.mass", positive=True))
        for name in ("drag_area", "lift_area", "lift_area_dumped"):
            put(self, name, _non_negative(getattr(self, name), "area", f"aircraft.{name}"))
        put(self, "spoiler_time", _non_negative(self.spoiler_time, "time", "aircraft.spoiler_time"))
        for name in ("idle_thrust", "takeoff_thrust"):
            put(self, name, _non_negative(getattr(self, name), "force", f"aircraft.{name}"))
        put(
            self,
            "reverse_cancel_speed",
            _non_negative(self.reverse_cancel_speed, "speed", "aircraft.reverse_cancel_speed"),
        )
        for name, minimum in (("reversers", 0), ("braked_wheels", 1)):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
                raise InputError(f"aircraft.{name}: expected a whole number >= {minimum}, got {value!r}")
        if self.reverse_thrust is None or len(self.reverse_thrust) == 0:
            if self.reversers:
                raise InputError("aircraft.reverse_thrust: a table is needed when reversers > 0")
            put(self, "reverse_thrust", ((), ()))
        else:
            put(self, "reverse_thrust", _table(self.reverse_thrust, "force", "aircraft.reverse_thrust", "air speed"))
        fraction = _non_negative(self.braked_weight_fraction, "dimensionless", "aircraft.braked_weight_fraction")
        if not 0 < fraction <= 1:
            raise InputError(f"aircraft.braked_weight_fraction: must lie in (0, 1], got {fraction}")
        put(self, "braked_weight_fraction", fraction)
        put(self, "brake_shares", self._shares())

    def _shares(self) -> tuple[float, ...]:
        n = self.braked_wheels
        if self.brake_shares is None:
            return (1.0 / n,) * n
        shares = self.brake_shares
        if isinstance(shares, str) or not isinstance(shares, Sequence) or len(shares) != n:
            raise InputError(f"aircraft.brake_shares: expected {n} shares (one per braked wheel), got {shares!r}")
        values = tuple(_non_negative(s, "dimensionless", f"aircraft.brake_shares[{k}]") for k, s in enumerate(shares))
        if abs(sum(values) - 1.0) > 1e-9:
            raise InputError(f"aircraft.brake_shares: must sum to 1, got {sum(values):.12g}")
        return values


@dataclass(frozen=True)
class Runway:
    """The runway.

    Parameters
    ----------
    braking_friction : float or sequence of (speed, float)
        Tyre-runway friction coefficient available to a braked wheel [-], a constant
        or a table over ground speed [m/s] (held beyond the ends); for the surface
        state named in ``surface``.
    surface : str
        A label of the surface state for messages, e.g. ``"dry"`` or ``"wet"``.
    slope : float
        Gradient in the direction of travel, rise over run [-]; positive uphill.
    rolling_friction : float
        Rolling-resistance coefficient of the tyres [-]; 0.02 is a typical paved-runway
        value in flight-mechanics texts (from memory).
    """

    braking_friction: Any
    surface: str = "dry"
    slope: Any = 0.0
    rolling_friction: Any = 0.02

    def __post_init__(self) -> None:
        put = object.__setattr__
        if isinstance(self.braking_friction, Sequence) and not isinstance(self.braking_friction, str):
            table = _table(self.braking_friction, "dimensionless", "runway.braking_friction", "ground speed")
        else:
            value = _non_negative(self.braking_friction, "dimensionless", "runway.braking_friction")
            table = ((0.0,), (value,))
        put(self, "braking_friction", table)
        if not isinstance(self.surface, str):
            raise InputError(f"runway.surface: expected a label such as 'dry' or 'wet', got {self.surface!r}")
        put(self, "slope", _number(self.slope, "dimensionless", "runway.slope"))
        put(self, "rolling_friction", _non_negative(self.rolling_friction, "dimensionless", "runway.rolling_friction"))

    def friction(self, ground_speed: np.ndarray) -> np.ndarray:
        """Braking friction coefficient [-] at ground speed [m/s]."""
        speeds, values = self.braking_friction
        return np.interp(ground_speed, speeds, values)


@dataclass(frozen=True)
class Conditions:
    """Wind and air at the runway.

    Parameters
    ----------
    headwind : float or str
        Headwind component [m/s]; a tailwind is negative.
    pressure_altitude : float or str
        Pressure altitude of the runway [m].
    air_temperature : float or str, optional
        Outside air temperature [K]; or ``temperature_offset`` (ISA + dT) [K]; ISA if neither.
    temperature_offset : float or str, optional
        ISA deviation [K].
    """

    headwind: Any = 0.0
    pressure_altitude: Any = 0.0
    air_temperature: Any = None
    temperature_offset: Any = None

    def __post_init__(self) -> None:
        put = object.__setattr__
        put(self, "headwind", _number(self.headwind, "speed", "conditions.headwind"))
        put(self, "pressure_altitude", _number(self.pressure_altitude, "length", "conditions.pressure_altitude"))
        if self.air_temperature is not None:
            put(self, "air_temperature", _number(self.air_temperature, "temperature", "conditions.air_temperature"))
        if self.temperature_offset is not None:
            offset = _number(self.temperature_offset, "temperature_difference", "conditions.temperature_offset")
            put(self, "temperature_offset", offset)
        temperature = atmosphere.air_temperature_at(
            self.pressure_altitude, self.air_temperature, self.temperature_offset
        )
        put(self, "air_temperature", temperature)
        put(self, "temperature_offset", None)

    @property
    def density(self) -> float:
        """Air density [kg/m^3]: ISO 2533 static pressure over ``R T``."""
        return float(atmosphere.isa_pressure(self.pressure_altitude)) / (atmosphere.R_ISA * self.air_temperature)


def brake_on_ground_speed(speed: Any, speed_kind: str, conditions: Conditions, field: str = "brake_on_speed") -> float:
    """Ground speed [m/s] from a speed of kind ``"ground"``, ``"true"`` or ``"calibrated"`` (airspeeds).

    Airspeeds become ground speed through the headwind; a calibrated airspeed becomes a
    true airspeed through the ISO 2533 atmosphere at the conditions' pressure altitude
    and temperature.
    """
    value = _non_negative(speed, "speed", field, positive=True)
    if speed_kind == "ground":
        return value
    if speed_kind == "true":
        tas = value
    elif speed_kind == "calibrated":
        tas = float(atmosphere.true_airspeed(value, conditions.pressure_altitude, conditions.air_temperature))
    else:
        raise InputError(f"speed_kind: {speed_kind!r} is not 'ground', 'calibrated' or 'true'")
    ground = float(atmosphere.ground_speed(tas, conditions.headwind))
    if ground <= 0:
        raise InputError(f"{field}: the headwind leaves a ground speed of {ground:.3g} m/s")
    return ground


@dataclass(frozen=True)
class EnergyAccounts:
    """Where the kinetic energy of a ground roll went [J].

    ``kinetic_energy_removed = brakes + reverse_thrust + drag + rolling_resistance
    + potential_energy - forward_thrust`` to the integration tolerance.
    """

    kinetic_energy_removed: float
    brakes: float
    reverse_thrust: float
    drag: float
    rolling_resistance: float
    potential_energy: float
    forward_thrust: float

    @property
    def closure(self) -> float:
        """Kinetic energy removed minus the sum of the terms [J]."""
        terms = self.brakes + self.reverse_thrust + self.drag + self.rolling_resistance + self.potential_energy
        return self.kinetic_energy_removed - (terms - self.forward_thrust)


@dataclass(frozen=True, eq=False)
class StopResult:
    """The outcome of a ground roll; times from brake-on (0) [s].

    Attributes
    ----------
    times, speeds, distances : ndarray
        Samples of time [s], ground speed [m/s] and distance from brake-on [m].
    brake_forces : ndarray
        Total brake force [N] at the samples.
    accounts : EnergyAccounts
    stopping_time : float
        [s]
    stopping_distance : float
        [m]
    brake_on_speed : float
        Ground speed at brake-on [m/s].
    brake_power : PowerHistory
        Total power of all brakes [W].
    brake_powers : tuple of PowerHistory
        Power of each brake [W], its share of ``brake_power``.
    brake_shares : tuple of float
    notes : str
    """

    times: np.ndarray
    speeds: np.ndarray
    distances: np.ndarray
    brake_forces: np.ndarray
    accounts: EnergyAccounts
    stopping_time: float
    stopping_distance: float
    brake_on_speed: float
    brake_power: PowerHistory
    brake_powers: tuple[PowerHistory, ...]
    brake_shares: tuple[float, ...]
    notes: str = ""

    @property
    def energy_per_brake(self) -> tuple[float, ...]:
        """Energy into each brake [J], its share of the integrated brake energy."""
        return tuple(share * self.accounts.brakes for share in self.brake_shares)


def _deceleration_target(braking: Any) -> float | None | str:
    """A target deceleration [m/s^2], or "maximum" / "none"."""
    if isinstance(braking, str) and braking in ("maximum", "none"):
        return braking
    if isinstance(braking, str) and braking in BRAKING_LEVELS:
        return BRAKING_LEVELS[braking]
    if isinstance(braking, str) and not any(ch.isdigit() for ch in braking):
        names = ", ".join([*BRAKING_LEVELS, "maximum", "none"])
        raise InputError(
            f"braking: unknown level {braking!r}; use one of {names} or a deceleration such as '2.5 m/s^2'"
        )
    return _non_negative(braking, "acceleration", "braking", positive=True)


class _Forces:
    """The forces of the equation of motion, vectorised over samples."""

    def __init__(self, aircraft: Aircraft, runway: Runway, conditions: Conditions, braking: Any, forward: float):
        self.aircraft, self.runway, self.forward = aircraft, runway, forward
        self.mass = aircraft.mass
        weight = aircraft.mass * atmosphere.G0
        theta = math.atan(runway.slope)
        self.weight_normal, self.weight_along = weight * math.cos(theta), weight * math.sin(theta)
        self.density, self.headwind = conditions.density, conditions.headwind
        self.target = _deceleration_target(braking)
        speeds, thrust = aircraft.reverse_thrust
        self.reverse_speeds = np.asarray(speeds)
        self.reverse_total = aircraft.reversers * np.asarray(thrust)

    def evaluate(self, t: np.ndarray, v: np.ndarray, reverse_on: bool) -> tuple[np.ndarray, ...]:
        """(forward, reverse, drag, rolling, gravity, brakes, brake limit) [N]."""
        a = self.aircraft
        air = v + self.headwind
        drag = 0.5 * self.density * air * np.abs(air) * a.drag_area
        lift_area = np.where(t < a.spoiler_time, a.lift_area, a.lift_area_dumped)
        normal = np.maximum(self.weight_normal - 0.5 * self.density * air**2 * lift_area, 0.0)
        rolling = self.runway.rolling_friction * normal
        gravity = np.full(np.shape(v), self.weight_along)
        forward = np.full(np.shape(v), self.forward)
        if reverse_on and self.reverse_total.size and np.any(self.reverse_total > 0):
            reverse = np.interp(np.abs(air), self.reverse_speeds, self.reverse_total)
        else:
            reverse = np.zeros(np.shape(v))
        limit = self.runway.friction(v) * a.braked_weight_fraction * normal
        if self.target == "maximum":
            brakes = limit
        elif self.target == "none":
            brakes = np.zeros(np.shape(v))
        else:
            need = self.mass * self.target - (reverse + drag + rolling + gravity - forward)
            brakes = np.clip(need, 0.0, limit)
        return forward, reverse, drag, rolling, gravity, brakes, limit

    def rates(self, t: float, y: np.ndarray, reverse_on: bool) -> np.ndarray:
        v = y[0]
        forward, reverse, drag, rolling, gravity, brakes, _ = self.evaluate(np.asarray(t), np.asarray(v), reverse_on)
        accel = (forward - reverse - drag - rolling - gravity - brakes) / self.mass
        return np.array(
            [accel, v, brakes * v, reverse * v, drag * v, rolling * v, gravity * v, forward * v], dtype=float
        )


def integrate_ground_roll(
    aircraft: Aircraft,
    runway: Runway,
    conditions: Conditions,
    brake_on_speed: float,
    braking: Any = "maximum",
    forward_thrust: float | None = None,
    stop_speed: float = 0.0,
) -> StopResult:
    """Integrate the equation of motion from brake-on to ``stop_speed`` (rest by default).

    Parameters
    ----------
    aircraft, runway, conditions : Aircraft, Runway, Conditions
    brake_on_speed : float
        Ground speed at brake-on [m/s], > 0.
    braking : str or float
        A level of :data:`BRAKING_LEVELS`, ``"maximum"`` (friction limit), ``"none"``,
        or a target deceleration [m/s^2] (number or string with unit).
    forward_thrust : float, optional
        Total forward thrust [N]; the aircraft's idle thrust by default.
    stop_speed : float
        Ground speed at which the roll ends [m/s], ``0 <= stop_speed < brake_on_speed``.

    Returns
    -------
    StopResult

    Raises
    ------
    InputError
        For a target deceleration the runway friction cannot give (with the deceleration
        achievable throughout the stop), or a roll that never ends (forward thrust
        exceeds all retarding forces; the speed is named).
    """
    v0 = _non_negative(brake_on_speed, "speed", "brake_on_speed", positive=True)
    if not 0 <= stop_speed < v0:
        raise InputError(f"stop_speed: {stop_speed} m/s must lie in [0, brake-on speed {v0:.4g} m/s)")
    forces = _Forces(
        aircraft, runway, conditions, braking, aircraft.idle_thrust if forward_thrust is None else forward_thrust
    )
    kinetic = 0.5 * aircraft.mass * v0**2
    scale = np.array([v0, v0 * 60.0, *([kinetic] * 6)])
    reverse_on = bool(aircraft.reversers)
    t, y = 0.0, np.array([v0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0])
    pieces: list[tuple[Any, bool, float, float]] = []
    _check_moving(forces, t, y, reverse_on)
    while True:
        t_end = aircraft.spoiler_time if t < aircraft.spoiler_time else _MAX_TIME
        events = [_stopped(stop_speed), _never_ends(forces, reverse_on)]
        if reverse_on:
            events.append(_cancel(aircraft.reverse_cancel_speed - conditions.headwind))
        solution = solve_ivp(
            forces.rates, (t, t_end), y, method="DOP853", rtol=_RTOL, atol=_RTOL * scale,
            dense_output=True, events=events, args=(reverse_on,),
        )  # fmt: skip
        if solution.status < 0:
            raise InputError(f"ground roll: the integration failed at {solution.t[-1]:.4g} s ({solution.message})")
        fired = [k for k, times in enumerate(solution.t_events) if times.size]
        t_stop = solution.t[-1]
        pieces.append((solution.sol, reverse_on, t, t_stop))
        t, y = t_stop, solution.y[:, -1].copy()
        if 0 in fired:
            break
        if 1 in fired:
            _raise_never_ends(forces, t, y, reverse_on)
        if 2 in fired:
            reverse_on = False
            continue
        if t >= _MAX_TIME:
            raise InputError(f"ground roll: not stopped after {_MAX_TIME:.0f} s (at {y[0]:.4g} m/s)")
    return _result(forces, pieces, t, y, v0, kinetic, stop_speed)


def _stopped(stop_speed: float):
    def event(t: float, y: np.ndarray, reverse_on: bool) -> float:
        return y[0] - stop_speed

    event.terminal, event.direction = True, -1
    return event


def _cancel(cancel_ground_speed: float):
    def event(t: float, y: np.ndarray, reverse_on: bool) -> float:
        return y[0] - cancel_ground_speed

    event.terminal, event.direction = True, -1
    return event


def _never_ends(forces: _Forces, reverse_on: bool):
    def event(t: float, y: np.ndarray, reverse_on: bool) -> float:
        return forces.rates(t, y, reverse_on)[0] + 1e-9

    event.terminal, event.direction = True, 1
    return event


def _check_moving(forces: _Forces, t: float, y: np.ndarray, reverse_on: bool) -> None:
    if forces.rates(t, y, reverse_on)[0] >= -1e-9:
        _raise_never_ends(forces, t, y, reverse_on)


def _raise_never_ends(forces: _Forces, t: float, y: np.ndarray, reverse_on: bool) -> None:
    v = y[0]
    raise InputError(
        f"aircraft.idle_thrust: the stop never ends: the forward thrust {forces.forward / 1e3:.4g} kN balances or "
        f"exceeds all retarding forces at {v:.4g} m/s ({v / _KT:.4g} kt), {t:.4g} s after brake-on"
    )


def _result(
    forces: _Forces, pieces: list, t_stop: float, y_end: np.ndarray, v0: float, kinetic: float, stop_speed: float
) -> StopResult:
    aircraft = forces.aircraft
    grid = np.linspace(0.0, t_stop, _SAMPLES + 1)
    bounds = [p[2] for p in pieces] + [t_stop]
    times, states, flags = [], [], []
    for k, (sol, reverse_on, t0, t1) in enumerate(pieces):
        inside = grid[(grid >= t0) & (grid < t1)] if k < len(pieces) - 1 else grid[(grid >= t0) & (grid <= t1)]
        local = np.unique(np.concatenate((inside, sol.ts[(sol.ts >= t0) & (sol.ts <= t1)], [t0, t1])))
        if k < len(pieces) - 1:
            local = local[local < t1]  # the next piece starts there
        times.append(local)
        states.append(sol(local))
        flags.append(np.full(local.size, reverse_on))
    t = np.concatenate(times)
    y = np.concatenate(states, axis=1)
    reverse_flags = np.concatenate(flags)
    v = np.maximum(y[0], 0.0)
    v[-1] = stop_speed
    brakes = np.empty_like(t)
    for on in (True, False):
        mask = reverse_flags == on
        if np.any(mask):
            brakes[mask] = forces.evaluate(t[mask], v[mask], on)[5]
    _check_target(forces, t, v, reverse_flags)
    accounts = EnergyAccounts(kinetic - 0.5 * aircraft.mass * stop_speed**2, *(float(x) for x in y_end[2:]))
    total = PowerHistory(t, brakes * v)
    powers = tuple(PowerHistory(t, share * brakes * v) for share in aircraft.brake_shares)
    notes = (
        f"ground roll from {v0:.4g} m/s in {t_stop:.4g} s over {float(y_end[1]):.4g} m; "
        f"breakpoints at {', '.join(f'{b:.4g}' for b in bounds[1:-1]) or 'none'} s"
    )
    return StopResult(
        t, v, y[1], brakes, accounts, float(t_stop), float(y_end[1]), v0, total, powers, aircraft.brake_shares, notes
    )


def _check_target(forces: _Forces, t: np.ndarray, v: np.ndarray, reverse_flags: np.ndarray) -> None:
    """Raise if a target deceleration met the friction limit anywhere in the stop."""
    if not isinstance(forces.target, float):
        return
    achievable = np.empty_like(t)
    short = np.zeros(t.size, dtype=bool)
    for on in (True, False):
        mask = reverse_flags == on
        if not np.any(mask):
            continue
        forward, reverse, drag, rolling, gravity, _, limit = forces.evaluate(t[mask], v[mask], on)
        others = reverse + drag + rolling + gravity - forward
        achievable[mask] = (limit + others) / forces.mass
        short[mask] = forces.mass * forces.target - others > limit * (1.0 + 1e-9) + 1e-9
    moving = v > 0
    if np.any(short & moving):
        k = int(np.argmin(np.where(moving, achievable, np.inf)))
        raise InputError(
            f"braking: a deceleration of {forces.target:.3g} m/s^2 cannot be given by the {forces.runway.surface} "
            f"runway's friction; the deceleration achievable throughout the stop is {achievable[k]:.3g} m/s^2 "
            f"(lowest at {v[k]:.4g} m/s)"
        )


@dataclass(frozen=True)
class AccelerationRun:
    """An acceleration on take-off thrust from rest to a speed.

    Attributes
    ----------
    time : float
        Time from brake release to the speed [s].
    distance : float
        Distance run [m].
    speed : float
        Ground speed reached [m/s].
    """

    time: float
    distance: float
    speed: float


def accelerate(aircraft: Aircraft, runway: Runway, conditions: Conditions, to_speed: float) -> AccelerationRun:
    """Integrate the take-off run on ``aircraft.takeoff_thrust`` from rest to ``to_speed`` [m/s].

    No braking and no reverse thrust; the lift area before lift dumping.

    Raises
    ------
    InputError
        If the take-off thrust cannot reach the speed (the speed where it stalls is named).
    """
    v1 = _non_negative(to_speed, "speed", "reject_speed", positive=True)
    forces = _Forces(aircraft, runway, conditions, "none", aircraft.takeoff_thrust)
    before_dump = -1.0  # any time before the spoilers deploy

    def rates(t: float, y: np.ndarray) -> np.ndarray:
        return forces.rates(before_dump, y, False)[:2]

    def reached(t: float, y: np.ndarray) -> float:
        return y[0] - v1

    def stalled(t: float, y: np.ndarray) -> float:
        return rates(t, y)[0] - 1e-9

    reached.terminal, reached.direction = True, 1
    stalled.terminal, stalled.direction = True, -1
    if rates(0.0, np.zeros(2))[0] <= 1e-9:
        raise InputError("aircraft.takeoff_thrust: does not overcome the retarding forces at rest")
    solution = solve_ivp(
        rates, (0.0, _MAX_TIME), np.zeros(2), method="DOP853", rtol=_RTOL, atol=_RTOL * np.array([v1, 60.0 * v1]),
        events=[reached, stalled],
    )  # fmt: skip
    if solution.t_events[0].size == 0:
        v = float(solution.y[0, -1])
        raise InputError(
            f"aircraft.takeoff_thrust: cannot reach the reject speed {v1:.4g} m/s; "
            f"the retarding forces balance it at {v:.4g} m/s ({v / _KT:.4g} kt)"
        )
    return AccelerationRun(float(solution.t[-1]), float(solution.y[1, -1]), v1)
