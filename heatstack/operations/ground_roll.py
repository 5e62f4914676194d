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

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.integrate import solve_ivp

from ..errors import InputError
from ..numerics.schedule import PowerHistory
from . import atmosphere
from .roll_inputs import Aircraft, Conditions, Runway, SpeedTable, deceleration_target, non_negative
from .speed_trace import read_speed_trace

__all__ = [
    "EnergyAccounts",
    "StopResult",
    "integrate_ground_roll",
    "accelerate",
    "AccelerationRun",
    "ground_roll_from_speed_trace",
]

_RTOL = 1e-11
_MAX_TIME = 3600.0  # a ground roll longer than this is taken as never ending [s]
_KNOTS = 100  # uniform intervals of the power history over a stop (each knot is a solver breakpoint)
_CHECK_SAMPLES = 2000  # samples on which a target deceleration is checked against friction
_RAMP = 1e-3  # width of the ramp replacing a step of the forces in the power history [s]
_MERGE = 1e-9  # share of the stop's duration within which a grid time merges into a piece end [-]
_KT = 1852.0 / 3600.0


@dataclass(frozen=True)
class EnergyAccounts:
    """Where the kinetic energy of a ground roll went [J].

    ``kinetic_energy_removed = brakes + reverse_thrust + drag + rolling_resistance
    + potential_energy - forward_thrust - extra_propulsion`` to the integration tolerance.
    ``extra_propulsion`` is zero for an integrated roll; for a recorded speed trace it is
    the work the trace needs beyond the modelled forces where it slows less than they
    alone would slow it (see :func:`ground_roll_from_speed_trace`).

    Attributes
    ----------
    kinetic_energy_removed : float
        Kinetic energy removed from the aircraft [J].
    brakes : float
        Work of the brakes [J].
    reverse_thrust : float
        Work of the reverse thrust [J].
    drag : float
        Work of the aerodynamic drag [J].
    rolling_resistance : float
        Work of the rolling resistance [J].
    potential_energy : float
        Work against the runway slope (gain of potential energy) [J].
    forward_thrust : float
        Work of the forward (idle or take-off) thrust [J].
    extra_propulsion : float
        Work a recorded trace needs beyond the modelled forces [J].
    """

    kinetic_energy_removed: float
    brakes: float
    reverse_thrust: float
    drag: float
    rolling_resistance: float
    potential_energy: float
    forward_thrust: float
    extra_propulsion: float = 0.0

    @property
    def closure(self) -> float:
        """Kinetic energy removed minus the sum of the terms [J]."""
        terms = self.brakes + self.reverse_thrust + self.drag + self.rolling_resistance + self.potential_energy
        return self.kinetic_energy_removed - (terms - self.forward_thrust - self.extra_propulsion)


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


class _Forces:
    """The forces of the equation of motion: vectorised over samples, or on plain floats for the solver."""

    def __init__(self, aircraft: Aircraft, runway: Runway, conditions: Conditions, braking: Any, forward: float):
        self.aircraft, self.runway, self.forward = aircraft, runway, float(forward)
        self.mass = aircraft.mass
        weight = aircraft.mass * atmosphere.G0
        theta = math.atan(runway.slope)
        self.weight_normal, self.weight_along = weight * math.cos(theta), weight * math.sin(theta)
        self.density, self.headwind = conditions.density, conditions.headwind
        self.half_density = 0.5 * self.density
        self.target = deceleration_target(braking)
        speeds, thrust = aircraft.reverse_thrust
        self.reverse_speeds = np.asarray(speeds)
        self.reverse_total = aircraft.reversers * np.asarray(thrust)
        self.has_reverse = bool(self.reverse_total.size and np.any(self.reverse_total > 0))
        self.reverse_table = SpeedTable(speeds, [float(x) for x in self.reverse_total])
        self.friction_table = SpeedTable(*runway.braking_friction)
        self.friction_weight = aircraft.braked_weight_fraction

    def evaluate(self, t: np.ndarray, v: np.ndarray, reverse_on: bool) -> tuple[np.ndarray, ...]:
        """(forward, reverse, drag, rolling, gravity, brakes, brake limit) [N] on arrays of time [s] and speed [m/s]."""
        a = self.aircraft
        air = v + self.headwind
        drag = 0.5 * self.density * air * np.abs(air) * a.drag_area
        lift_area = np.where(t < a.spoiler_time, a.lift_area, a.lift_area_dumped)
        normal = np.maximum(self.weight_normal - 0.5 * self.density * air**2 * lift_area, 0.0)
        rolling = self.runway.rolling_friction * normal
        gravity = np.full(np.shape(v), self.weight_along)
        forward = np.full(np.shape(v), self.forward)
        if reverse_on and self.has_reverse:
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

    def at(self, v: float, reverse_on: bool, lift_area: float) -> tuple[float, float, float, float, float, float]:
        """(forward, reverse, drag, rolling, gravity, brakes) [N] at one speed [m/s] and lift area [m^2].

        The arithmetic of :meth:`evaluate` in the same order on plain floats, so each force
        is the same double as there, at a fraction of the cost of numpy calls on scalars.
        The lift area is the integrated piece's (before or after lift dumping), so no
        stage of a step that ends at the spoiler time sees the step of the lift.
        """
        a = self.aircraft
        air = v + self.headwind
        drag = self.half_density * air * abs(air) * a.drag_area
        normal = max(self.weight_normal - self.half_density * (air * air) * lift_area, 0.0)
        rolling = self.runway.rolling_friction * normal
        reverse = self.reverse_table(abs(air)) if reverse_on and self.has_reverse else 0.0
        if self.target == "none":
            return self.forward, reverse, drag, rolling, self.weight_along, 0.0
        limit = self.friction_table(v) * self.friction_weight * normal
        if self.target == "maximum":
            return self.forward, reverse, drag, rolling, self.weight_along, limit
        need = self.mass * self.target - (reverse + drag + rolling + self.weight_along - self.forward)
        return self.forward, reverse, drag, rolling, self.weight_along, min(max(need, 0.0), limit)

    def acceleration(self, v: float, reverse_on: bool, lift_area: float) -> float:
        """dV/dt [m/s^2] at one speed [m/s] and lift area [m^2]."""
        forward, reverse, drag, rolling, gravity, brakes = self.at(v, reverse_on, lift_area)
        return (forward - reverse - drag - rolling - gravity - brakes) / self.mass

    def rates(self, t: float, y: np.ndarray, reverse_on: bool, lift_area: float) -> list[float]:
        """Right-hand side of the 8 states (speed, distance, six work integrals) for the solver."""
        v = float(y[0])
        forward, reverse, drag, rolling, gravity, brakes = self.at(v, reverse_on, lift_area)
        accel = (forward - reverse - drag - rolling - gravity - brakes) / self.mass
        return [accel, v, brakes * v, reverse * v, drag * v, rolling * v, gravity * v, forward * v]


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
    v0 = non_negative(brake_on_speed, "speed", "brake_on_speed", positive=True)
    if not 0 <= stop_speed < v0:
        raise InputError(f"stop_speed: {stop_speed} m/s must lie in [0, brake-on speed {v0:.4g} m/s)")
    forces = _Forces(
        aircraft, runway, conditions, braking, aircraft.idle_thrust if forward_thrust is None else forward_thrust
    )
    kinetic = 0.5 * aircraft.mass * v0**2
    scale = np.array([v0, v0 * 60.0, *([kinetic] * 6)])
    reverse_on = bool(aircraft.reversers) and v0 > aircraft.reverse_cancel_speed - conditions.headwind
    t, y = 0.0, np.array([v0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0])
    pieces: list[tuple[Any, bool, float, float]] = []
    while True:
        before_dump = t < aircraft.spoiler_time
        t_end, lift_area = (
            (aircraft.spoiler_time, aircraft.lift_area) if before_dump else (_MAX_TIME, aircraft.lift_area_dumped)
        )
        if not pieces:
            _check_moving(forces, y, reverse_on, lift_area)
        events = [_stopped(stop_speed), _never_ends(forces)]
        if reverse_on:
            events.append(_cancel(aircraft.reverse_cancel_speed - conditions.headwind))
        solution = solve_ivp(
            forces.rates, (t, t_end), y, method="DOP853", rtol=_RTOL, atol=_RTOL * scale,
            dense_output=True, events=events, args=(reverse_on, lift_area),
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
    def event(t: float, y: np.ndarray, reverse_on: bool, lift_area: float) -> float:
        return y[0] - stop_speed

    event.terminal, event.direction = True, -1
    return event


def _cancel(cancel_ground_speed: float):
    def event(t: float, y: np.ndarray, reverse_on: bool, lift_area: float) -> float:
        return y[0] - cancel_ground_speed

    event.terminal, event.direction = True, -1
    return event


def _never_ends(forces: _Forces):
    def event(t: float, y: np.ndarray, reverse_on: bool, lift_area: float) -> float:
        return forces.acceleration(float(y[0]), reverse_on, lift_area) + 1e-9

    event.terminal, event.direction = True, 1
    return event


def _check_moving(forces: _Forces, y: np.ndarray, reverse_on: bool, lift_area: float) -> None:
    if forces.acceleration(float(y[0]), reverse_on, lift_area) >= -1e-9:
        _raise_never_ends(forces, 0.0, y, reverse_on)


def _raise_never_ends(forces: _Forces, t: float, y: np.ndarray, reverse_on: bool) -> None:
    v = y[0]
    raise InputError(
        f"aircraft.idle_thrust: the stop never ends: the forward thrust {forces.forward / 1e3:.4g} kN balances or "
        f"exceeds all retarding forces at {v:.4g} m/s ({v / _KT:.4g} kt), {t:.4g} s after brake-on"
    )


def _sample(pieces: list, grid: np.ndarray, width: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Times, states and reverse flags on ``grid`` and the piece ends.

    A piece that is followed by another also gets a sample ``width`` before its end, so
    a step of the forces there (lift dumping, reverse cancelled) becomes a short ramp.
    A grid time within :data:`_MERGE` of the stop's duration of a piece's end sample is
    left out: two samples a few rounding errors apart would make an interval of no width.
    """
    times, states, flags = [], [], []
    tiny = _MERGE * pieces[-1][3]
    for k, (sol, reverse_on, t0, t1) in enumerate(pieces):
        last = k == len(pieces) - 1
        inside = grid[(grid >= t0) & ((grid <= t1) if last else (grid < t1 - width))]
        ends = [t0, t1] if last else [t0, max(t1 - width, t0 + 0.5 * (t1 - t0))]
        inside = inside[(np.abs(inside - ends[0]) > tiny) & (np.abs(inside - ends[1]) > tiny)]
        local = np.unique(np.concatenate((inside, ends)))
        times.append(local)
        states.append(sol(local))
        flags.append(np.full(local.size, reverse_on))
    return np.concatenate(times), np.concatenate(states, axis=1), np.concatenate(flags)


def _exact_energy_history(t: np.ndarray, power: np.ndarray, energy: np.ndarray) -> PowerHistory:
    """A piecewise-linear power history through the samples whose integral is the energy state.

    Each interval ``[t_i, t_i+1]`` gets a mid-point knot of value
    ``r_i = 2 e_i / dt_i - (P_i + P_i+1) / 2``, so the trapezoid over its two halves is the
    interval's integrated brake energy ``e_i`` (to the integration tolerance); ``r_i`` is
    the true mid-point power to second order. Intervals where ``r_i`` would be negative
    (a ramp across a step of the forces) keep their trapezoid.
    """
    dt = np.diff(t)
    r = 2.0 * np.diff(energy) / dt - 0.5 * (power[1:] + power[:-1])
    keep = r >= 0
    times = np.concatenate((t, 0.5 * (t[1:] + t[:-1])[keep]))
    values = np.concatenate((power, r[keep]))
    order = np.argsort(times, kind="stable")
    return PowerHistory(times[order], values[order])


def _brake_force(forces: _Forces, t: np.ndarray, v: np.ndarray, reverse_flags: np.ndarray) -> np.ndarray:
    brakes = np.empty_like(t)
    for on in (True, False):
        mask = reverse_flags == on
        if np.any(mask):
            brakes[mask] = forces.evaluate(t[mask], v[mask], on)[5]
    return brakes


def _result(
    forces: _Forces, pieces: list, t_stop: float, y_end: np.ndarray, v0: float, kinetic: float, stop_speed: float
) -> StopResult:
    aircraft = forces.aircraft
    if isinstance(forces.target, float):
        dense = np.concatenate([np.linspace(0.0, t_stop, _CHECK_SAMPLES + 1), *(p[0].ts for p in pieces)])
        t_check, y_check, flags_check = _sample(pieces, np.unique(dense), 0.0)
        _check_target(forces, t_check, np.maximum(y_check[0], 0.0), flags_check)
    width = min(_RAMP, 0.25 * t_stop / _KNOTS)
    t, y, reverse_flags = _sample(pieces, np.linspace(0.0, t_stop, _KNOTS + 1), width)
    v = np.maximum(y[0], 0.0)
    v[-1] = stop_speed
    brakes = _brake_force(forces, t, v, reverse_flags)
    accounts = EnergyAccounts(kinetic - 0.5 * aircraft.mass * stop_speed**2, *(float(x) for x in y_end[2:]))
    total = _exact_energy_history(t, brakes * v, y[2])
    powers = tuple(PowerHistory(total.times, share * total.powers) for share in aircraft.brake_shares)
    bounds = [p[2] for p in pieces[1:]]
    notes = (
        f"ground roll from {v0:.4g} m/s in {t_stop:.4g} s over {float(y_end[1]):.4g} m; "
        f"force steps at {', '.join(f'{b:.4g}' for b in bounds) or 'none'} s"
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
    """Integrate the take-off run on ``aircraft.takeoff_thrust`` from rest to ``to_speed``.

    No braking and no reverse thrust; the lift area before lift dumping.

    Parameters
    ----------
    aircraft : Aircraft
        The aircraft (mass, thrust, aerodynamics).
    runway : Runway
        The runway (slope, rolling resistance).
    conditions : Conditions
        Wind and air.
    to_speed : float or str
        Ground speed to reach [m/s].

    Returns
    -------
    AccelerationRun
        Time [s], distance [m] and speed [m/s] of the run.

    Raises
    ------
    InputError
        If the speed is not positive, or the take-off thrust cannot reach the speed (the speed
        where it stalls is named).
    """
    v1 = non_negative(to_speed, "speed", "reject_speed", positive=True)
    forces = _Forces(aircraft, runway, conditions, "none", aircraft.takeoff_thrust)

    def rates(t: float, y: np.ndarray) -> list[float]:
        v = float(y[0])
        return [forces.acceleration(v, False, aircraft.lift_area), v]

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


_GAUSS_NODES, _GAUSS_WEIGHTS = np.polynomial.legendre.leggauss(6)
_TRACE_SUBDIVISIONS = 4  # power-history intervals per trace interval


def ground_roll_from_speed_trace(
    aircraft: Aircraft, runway: Runway, conditions: Conditions, path_or_rows: Any
) -> StopResult:
    """The brakes' share of a recorded ground-speed trace, from the equation of motion.

    On each trace interval the speed is linear (deceleration ``a`` constant); the brake
    force is what the recorded deceleration leaves after the modelled forces,
    ``F_b = max(m a - (F_rev + D + F_roll + W sin(theta) - T_fwd), 0)``; reverse thrust
    acts wherever the air speed is at or above the cancel speed. Every work term is a
    6-point Gauss-Legendre sum on each sub-interval, so the accounts close to round-off;
    where the trace slows less than the modelled forces alone would slow it, the missing
    push is reported as ``extra_propulsion``. The trace's first sample is brake-on (0 s).

    Parameters
    ----------
    aircraft, runway, conditions : Aircraft, Runway, Conditions
    path_or_rows : str or os.PathLike or text stream or rows
        The trace, read by :func:`heatstack.operations.speed_trace.read_speed_trace`.

    Returns
    -------
    StopResult
        Samples at the trace's knots, energy accounts and the brakes' power histories.
    """
    t_trace, v_trace = read_speed_trace(path_or_rows)
    t_trace = t_trace - t_trace[0]
    forces = _Forces(aircraft, runway, conditions, "none", aircraft.idle_thrust)
    cancel = aircraft.reverse_cancel_speed - conditions.headwind
    accel = -np.diff(v_trace) / np.diff(t_trace)
    knots, owner = _trace_knots(t_trace, aircraft.spoiler_time)
    left, right = knots[:-1], knots[1:]
    mid, half = 0.5 * (left + right), 0.5 * (right - left)
    tq = mid[:, None] + half[:, None] * _GAUSS_NODES[None, :]
    a = accel[owner][:, None] * np.ones_like(tq)
    vq = np.interp(tq, t_trace, v_trace)
    works = _trace_forces(forces, tq, vq, a, cancel)
    weights = (half[:, None] * _GAUSS_WEIGHTS[None, :]) * vq
    energies = [np.sum(f * weights, axis=1) for f in works]  # per sub-interval [J]
    v_knots = np.interp(knots, t_trace, v_trace)
    a_knots = np.append(accel[owner], accel[owner[-1]])
    brake_at_knots = _trace_forces(forces, knots, v_knots, a_knots, cancel)[0]
    totals = [float(np.sum(e)) for e in energies]
    kinetic = float(np.sum(aircraft.mass * accel[owner][:, None] * weights))
    accounts = EnergyAccounts(kinetic, *totals)
    brake_energy = np.concatenate(([0.0], np.cumsum(energies[0])))
    total = _exact_energy_history(knots, brake_at_knots * v_knots, brake_energy)
    powers = tuple(PowerHistory(total.times, share * total.powers) for share in aircraft.brake_shares)
    distances = np.concatenate(([0.0], np.cumsum(0.5 * (v_knots[1:] + v_knots[:-1]) * np.diff(knots))))
    notes = f"speed trace of {t_trace.size} samples, {float(t_trace[-1]):.4g} s"
    return StopResult(
        knots, v_knots, distances, brake_at_knots, accounts, float(t_trace[-1]), float(distances[-1]),
        float(v_trace[0]), total, powers, aircraft.brake_shares, notes,
    )  # fmt: skip


def _trace_knots(t_trace: np.ndarray, spoiler_time: float) -> tuple[np.ndarray, np.ndarray]:
    """Sub-interval knots of a trace (and the spoiler time), with the trace interval each starts in."""
    parts = [np.linspace(a, b, _TRACE_SUBDIVISIONS + 1)[:-1] for a, b in zip(t_trace[:-1], t_trace[1:], strict=True)]
    knots = np.concatenate([*parts, t_trace[-1:]])
    if t_trace[0] < spoiler_time < t_trace[-1]:
        knots = np.unique(np.append(knots, spoiler_time))
    owner = np.clip(np.searchsorted(t_trace, knots[:-1], side="right") - 1, 0, t_trace.size - 2)
    return knots, owner


def _trace_forces(forces: _Forces, t: np.ndarray, v: np.ndarray, a: np.ndarray, cancel: float) -> list[np.ndarray]:
    """[brakes, reverse, drag, rolling, gravity, forward, extra propulsion] [N] along a trace."""
    forward, reverse, drag, rolling, gravity, _, _ = forces.evaluate(t, v, True)
    reverse = np.where(v >= cancel, reverse, 0.0)
    residual = forces.mass * a - (reverse + drag + rolling + gravity - forward)
    return [np.maximum(residual, 0.0), reverse, drag, rolling, gravity, forward, np.maximum(-residual, 0.0)]
