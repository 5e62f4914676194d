"""A day of operations: a table of flights expanded into one chained duty, flight by flight.

An operations file (TOML, read by :mod:`heatstack.dayfile`) names the wheel-and-brake
case (design, grid, fuse plugs, tyre; its own duty is not used), the table of flights
(CSV) and the aircraft's constants::

    [operations]
    case = "wheel.toml"
    flights = "flights.csv"
    [aircraft]
    braked_wheels = 4
    brake_share = 0.9
    [limits]                      # optional: each departure's governing margin
    plug_margin = "10 K"
    heat_sink_limit = "900 degC"

Each row of the CSV is one turnaround at one airfield, in time order: ``arrival_time``
(``"07:30"`` or a time such as ``"2 h"``, from the start of the day), ``arrival_mass``,
``arrival_speed`` (brake-on ground speed), ``taxi_in``, ``turnaround``, ``departure_mass``,
``taxi_out``, and the airfield's ``elevation``, ``temperature`` and ``wind``; cells may
carry units (``"62 t"``), bare numbers are SI. Each flight expands into: landing stop,
taxi-in (snubs), parked turnaround, taxi-out (snubs), take-off roll, gear retraction, then
gear up in the wheel well until the next arrival. Every phase takes its air from the
flight's airfield (temperature, ISO 2533 pressure at the elevation, wind).

The braking events come from :mod:`heatstack.operations.heat_input` through an
:class:`EventBuilders` record, so a builder (e.g. an equation-of-motion landing roll) can
be swapped in without touching the expansion.

:func:`run_day` runs it as a chain of legs (each flight's arrival up to the departure,
then the departure up to the next arrival), each leg started from the previous leg's
state with the instruments and fuse plugs lagging on; :func:`day_duty` is the same day
as one duty, for checking the chain against a run in one piece.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Any

from ..answers.fuse_plugs import assess_fuse_plugs
from ..answers.tyre import TyreGas, tyre_gas, with_tyre_gas_state
from ..errors import InputError
from ..geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN, WHEEL_MAX, SurfaceGroup, series_label
from ..model import Model
from ..numerics.solver import SolverOptions
from ..operations.atmosphere import isa_pressure
from ..operations.duty import DutyCycle, DutyPhase, Environment
from ..operations.heat_input import BrakingEvent, gear_retraction, stop_from_aircraft, taxi_snubs
from ..result import Result, State
from ..wheel_design import FusePlugSpec
from .chaining import run_from_state
from .safe_wait import Departure, DispatchLimits, WaitProblem, WaitSample, evaluate_wait

__all__ = [
    "COLUMNS",
    "check_timing",
    "arrival_phases",
    "departure_phases",
    "Aircraft",
    "DayAnswer",
    "DayPlan",
    "EventBuilders",
    "Flight",
    "FlightAnswer",
    "day_duty",
    "run_day",
]

#: Columns of the flights table and the dimension of each.
COLUMNS = {
    "arrival_time": "time",
    "arrival_mass": "mass",
    "arrival_speed": "speed",
    "taxi_in": "time",
    "turnaround": "time",
    "departure_mass": "mass",
    "taxi_out": "time",
    "elevation": "length",
    "temperature": "temperature",
    "wind": "speed",
}


@dataclass(frozen=True)
class Flight:
    """One turnaround of the day (SI: s, kg, m/s, m, K); see :data:`COLUMNS`.

    Attributes
    ----------
    number : int
        Flight number.
    arrival_time : float
        Touchdown time from the start of the day [s].
    arrival_mass : float
        Landing mass [kg].
    arrival_speed : float
        Brake-on ground speed [m/s].
    taxi_in : float
        Taxi-in duration [s].
    turnaround : float
        Parked time [s].
    departure_mass : float
        Take-off mass [kg].
    taxi_out : float
        Taxi-out duration [s].
    elevation : float
        Airfield elevation [m].
    temperature : float
        Airfield air temperature [K].
    wind : float
        Wind [m/s].
    """

    number: int
    arrival_time: float
    arrival_mass: float
    arrival_speed: float
    taxi_in: float
    turnaround: float
    departure_mass: float
    taxi_out: float
    elevation: float
    temperature: float
    wind: float

    @property
    def ground_time(self) -> float:
        """From touchdown to the start of the take-off roll [s]."""
        return self.taxi_in + self.turnaround + self.taxi_out


@dataclass(frozen=True)
class Aircraft:
    """The aircraft's constants for the expansion (SI). Defaults are INVENTED, for the demo.

    Attributes
    ----------
    braked_wheels : int
        Number of braked wheels.
    brake_share : float
        Share of the kinetic energy taken by the brakes [-].
    landing_stop_time : float
        Duration of the landing stop [s].
    taxi_speed_high, taxi_speed_low : float
        Taxi speed before and after a snub [m/s].
    snub_duration : float
        Duration of one taxi snub [s].
    snub_interval : float
        Time between taxi snubs [s].
    take_off_roll : float
        Duration of the take-off roll [s].
    lift_off_speed : float
        Ground speed at lift-off [m/s], from which the wheels spin down.
    rejected_take_off_speed : float
        Brake-on speed of a rejected take-off [m/s].
    rejected_take_off_stop_time : float
        Duration of the rejected take-off stop [s].
    wheel_inertia : float
        Moment of inertia of one wheel [kg m^2].
    tyre_rolling_radius : float
        Tyre rolling radius [m].
    spin_down_time : float
        Duration of the spin-down braking at gear retraction [s].
    wheel_well_temperature : float
        Air and wall temperature of the wheel well in flight [K].
    after_last_departure : float
        Time run after the last departure's gear retraction [s].
    """

    braked_wheels: int = 4
    brake_share: float = 0.9
    landing_stop_time: float = 30.0
    taxi_speed_high: float = 10.3  # 20 kt
    taxi_speed_low: float = 4.1  # 8 kt
    snub_duration: float = 4.0
    snub_interval: float = 90.0
    take_off_roll: float = 35.0
    lift_off_speed: float = 82.3  # 160 kt
    rejected_take_off_speed: float = 66.9  # 130 kt
    rejected_take_off_stop_time: float = 35.0
    wheel_inertia: float = 30.0  # [kg m^2]
    tyre_rolling_radius: float = 0.52
    spin_down_time: float = 5.0
    wheel_well_temperature: float = 278.15
    after_last_departure: float = 3600.0


def _landing(flight: Flight, aircraft: Aircraft) -> BrakingEvent:
    return stop_from_aircraft(
        flight.arrival_mass, flight.arrival_speed, aircraft.braked_wheels, aircraft.brake_share,
        stop_time=aircraft.landing_stop_time, name=f"flight {flight.number} landing",
    )  # fmt: skip


def _taxi(mass: float, duration: float, aircraft: Aircraft, name: str) -> BrakingEvent | None:
    count = int(duration // aircraft.snub_interval)
    if count < 1:
        return None
    return taxi_snubs(
        mass, aircraft.braked_wheels, aircraft.brake_share, aircraft.taxi_speed_high, aircraft.taxi_speed_low,
        aircraft.snub_duration, aircraft.snub_interval, count, start=0.5 * aircraft.snub_interval, name=name,
    )  # fmt: skip


def _gear(flight: Flight, aircraft: Aircraft) -> BrakingEvent:
    return gear_retraction(
        aircraft.wheel_inertia, aircraft.lift_off_speed, aircraft.tyre_rolling_radius, aircraft.spin_down_time,
        name=f"flight {flight.number} gear retraction",
    )  # fmt: skip


def _rejected_take_off(flight: Flight, aircraft: Aircraft) -> BrakingEvent:
    return stop_from_aircraft(
        flight.departure_mass, aircraft.rejected_take_off_speed, aircraft.braked_wheels, aircraft.brake_share,
        stop_time=aircraft.rejected_take_off_stop_time, name=f"flight {flight.number} rejected take-off",
    )  # fmt: skip


@dataclass(frozen=True)
class EventBuilders:
    """The functions that make each braking event; swap one to change how it is modelled.

    Attributes
    ----------
    landing : callable (Flight, Aircraft) -> BrakingEvent
    taxi : callable (mass [kg], duration [s], Aircraft, name) -> BrakingEvent or None
    gear_retraction : callable (Flight, Aircraft) -> BrakingEvent
    rejected_take_off : callable (Flight, Aircraft) -> BrakingEvent
        The departure's stop if the take-off were rejected (for its margin).
    """

    landing: Callable[[Flight, Aircraft], BrakingEvent] = _landing
    taxi: Callable[[float, float, Aircraft, str], BrakingEvent | None] = _taxi
    gear_retraction: Callable[[Flight, Aircraft], BrakingEvent] = _gear
    rejected_take_off: Callable[[Flight, Aircraft], BrakingEvent] = _rejected_take_off


@dataclass(frozen=True, eq=False)
class DayPlan:
    """A validated day: model inputs, flights, aircraft, event builders, optional limits.

    Attributes
    ----------
    model : Model
        The built wheel-and-brake model.
    surfaces : tuple of SurfaceGroup
        The exposed-surface groups, for the cooling laws.
    plugs : tuple of FusePlugSpec
        Fuse plugs lagging on through the chain.
    initial_temperature : float
        Uniform temperature at the first arrival [K].
    flights : tuple of Flight
        The day's flights, in time order.
    aircraft : Aircraft
        The aircraft's constants.
    events : EventBuilders
        The functions that make each braking event.
    limits : DispatchLimits or None
        Limits for each departure's governing margin.
    options : SolverOptions or None
        Solver options.
    tyre : object
        The tyre model for the tyre pressure peak, or None.
    title : str
        Title of the day.
    """

    model: Model
    surfaces: tuple[SurfaceGroup, ...]
    plugs: tuple[FusePlugSpec, ...]
    initial_temperature: float
    flights: tuple[Flight, ...]
    aircraft: Aircraft = Aircraft()
    events: EventBuilders = EventBuilders()
    limits: DispatchLimits | None = None
    options: SolverOptions | None = None
    tyre: Any = None
    title: str = "day of operations"


def _air(flight: Flight, ground_speed: float = 0.0) -> Environment:
    pressure = float(isa_pressure(flight.elevation))
    return Environment(
        ambient_temperature=flight.temperature, ambient_pressure=pressure, ground_speed=ground_speed,
        wind_speed=flight.wind,
    )  # fmt: skip


def _phase(name: str, duration: float, env: Environment, event: BrakingEvent | None, clamped: bool | None = None):
    return DutyPhase(name, duration, env, [event] if event is not None else [], clamped)


def arrival_phases(plan: DayPlan, flight: Flight) -> list[DutyPhase]:
    """Landing, taxi-in, turnaround and taxi-out of one flight (up to the take-off roll).

    Parameters
    ----------
    plan : DayPlan
        The day.
    flight : Flight
        The flight.

    Returns
    -------
    list of DutyPhase
        The four phases, each with the flight's airfield air.
    """
    a, ev, n = plan.aircraft, plan.events, flight.number
    landing = ev.landing(flight, a)
    phases = [_phase(f"flight {n} landing", landing.end + 5.0, _air(flight, 0.5 * flight.arrival_speed), landing)]
    taxi_speed = 0.5 * (a.taxi_speed_high + a.taxi_speed_low)
    taxi_in = ev.taxi(flight.arrival_mass, flight.taxi_in, a, f"flight {n} taxi-in snubs")
    phases.append(_phase(f"flight {n} taxi-in", flight.taxi_in, _air(flight, taxi_speed), taxi_in))
    phases.append(_phase(f"flight {n} turnaround", flight.turnaround, _air(flight), None, False))
    taxi_out = ev.taxi(flight.departure_mass, flight.taxi_out, a, f"flight {n} taxi-out snubs")
    phases.append(_phase(f"flight {n} taxi-out", flight.taxi_out, _air(flight, taxi_speed), taxi_out))
    return phases


def departure_phases(plan: DayPlan, k: int) -> list[DutyPhase]:
    """Take-off roll, gear retraction and gear up until the next arrival (or the day's end).

    Parameters
    ----------
    plan : DayPlan
        The day.
    k : int
        Index of the flight in ``plan.flights``.

    Returns
    -------
    list of DutyPhase
        The three phases; gear up lasts until the next flight's arrival, or
        ``aircraft.after_last_departure`` after the last flight.
    """
    flight, a = plan.flights[k], plan.aircraft
    roll = _phase(f"flight {flight.number} take-off roll", a.take_off_roll, _air(flight, 0.5 * a.lift_off_speed), None)
    gear = plan.events.gear_retraction(flight, a)
    well = Environment(ambient_temperature=a.wheel_well_temperature, wheel_well=(a.wheel_well_temperature,) * 2)
    phases = [roll, _phase(f"flight {flight.number} gear retraction", gear.end, well, gear)]
    if k + 1 < len(plan.flights):
        up = plan.flights[k + 1].arrival_time - (flight.arrival_time + _arrival_length(plan, flight))
        up -= a.take_off_roll + gear.end
    else:
        up = a.after_last_departure
    phases.append(_phase(f"flight {flight.number} gear up", up, well, None))
    return phases


def _arrival_length(plan: DayPlan, flight: Flight) -> float:
    return sum(p.duration for p in arrival_phases(plan, flight))


def day_duty(plan: DayPlan) -> DutyCycle:
    """The whole day as one duty (starting at the first arrival): the chain's reference.

    Parameters
    ----------
    plan : DayPlan
        The day.

    Returns
    -------
    DutyCycle
        Every flight's arrival and departure phases in order.
    """
    phases = []
    for k, flight in enumerate(plan.flights):
        phases += arrival_phases(plan, flight) + departure_phases(plan, k)
    return DutyCycle(phases)


def check_timing(plan: DayPlan) -> None:
    """Raise :class:`~heatstack.errors.InputError` if a flight arrives before the last one has left.

    Parameters
    ----------
    plan : DayPlan
        The day.

    Raises
    ------
    InputError
        Naming the flights-table row of the arrival that comes too early.
    """
    for k in range(len(plan.flights) - 1):
        flight = plan.flights[k]
        gear = plan.events.gear_retraction(flight, plan.aircraft)
        leaves = flight.arrival_time + _arrival_length(plan, flight) + plan.aircraft.take_off_roll + gear.end
        if plan.flights[k + 1].arrival_time <= leaves:
            raise InputError(
                f"flights row {k + 2}: arrival_time {plan.flights[k + 1].arrival_time:g} s is not after "
                f"flight {flight.number} is airborne ({leaves:g} s: arrival, taxi-in, turnaround, taxi-out, take-off)"
            )


# ---------------------------------------------------------------------------- running the day


@dataclass(frozen=True, eq=False)
class FlightAnswer:
    """One flight's peaks [K] (tyre pressure [Pa gauge]) and its departure.

    Attributes
    ----------
    flight : Flight
    peaks : dict of str to (float, float)
        (peak, time [s] on the day's clock) of the sensor reading, every probe reading,
        the heat-sink series, ``wheel_max`` (the rim and wheel), each fuse plug and, with
        tyre settings, ``"tyre pressure"``; over the flight's arrival and departure legs.
    departure_state : State
        At the start of the take-off roll.
    departure_margin : WaitSample or None
        Margins if this take-off were rejected (with limits given).
    arrival : Result
    departure : Result
    """

    flight: Flight
    peaks: dict[str, tuple[float, float]]
    departure_state: State
    departure_margin: WaitSample | None
    arrival: Result
    departure: Result


@dataclass(frozen=True, eq=False)
class DayAnswer:
    """The day, flight by flight, and the fuse plugs of its design (their own temperatures are its plugs' answers).

    Attributes
    ----------
    title : str
        Title of the day.
    flights : tuple of FlightAnswer
        The answers of each flight.
    plugs : tuple of FusePlugSpec
        The fuse plugs of the design, whose own (lagged) temperatures the answers report.
    """

    title: str
    flights: tuple[FlightAnswer, ...]
    plugs: tuple[FusePlugSpec, ...] = ()

    def summary_lines(self) -> list[str]:
        """The per-flight peaks and departures in words [degC, bar]; each fuse plug once, its own temperature.

        Returns
        -------
        list of str
            The title, then per flight its arrival, peaks, departure sensor reading and margin.
        """
        lines = [self.title]
        for answer in self.flights:
            f = answer.flight
            lines.append(f"flight {f.number}: arrival at {f.arrival_time / 3600.0:.2f} h, {f.arrival_mass / 1e3:.0f} t")
            release = {plug.name: plug.release_temperature for plug in self.plugs}
            for name, (value, when) in answer.peaks.items():
                shown = f"{value / 1e5:7.2f} bar gauge" if name == "tyre pressure" else f"{value - 273.15:7.1f} degC"
                line = f"  {series_label(name):24s} peak {shown} at {when / 3600.0:6.2f} h"
                if name in release and value >= release[name]:
                    line += f"  RELEASES (release {release[name] - 273.15:.1f} degC)"
                lines.append(line)
            sensor = answer.departure_state.readings.get("sensor")
            if sensor is not None:
                lines.append(f"  departure: sensor reads {sensor - 273.15:.0f} degC")
            m = answer.departure_margin
            if m is not None:
                unit = dict((name, unit) for name, _, unit in m.margins).get(m.governing, "K")
                shown = f"{m.margin / 10.0:.2f} bar" if unit == "Pa" else f"{m.margin:.1f} K"
                governs = f"the {series_label(m.governing)} limit governs"
                lines.append(f"  if this take-off were rejected: {governs}, margin {shown}")
        return lines


def _leg_peaks(result: Result, plan: DayPlan, peaks: dict[str, tuple[float, float]]) -> None:
    """The leg's peaks into ``peaks``: each fuse plug once, as its own lagged temperature (its
    probe reads the rim at its seat, which ``wheel_max`` covers), then the other readings and series."""
    plugs = assess_fuse_plugs(result, plan.plugs) if plan.plugs else []
    found = {plug.name: (plug.peak, plug.time_of_peak) for plug in plugs}
    names = [*result.readings, *(s for s in (HEAT_SINK_MEAN, HEAT_SINK_MAX, WHEEL_MAX) if s in result.series)]
    for name in names:
        if name not in found:
            found[name] = result.peak(name)
    for name, (value, when) in found.items():
        if name not in peaks or value > peaks[name][0]:
            peaks[name] = (value, when)


def _with_tyre_gas(plan: DayPlan, leg: Result) -> tuple[Result, TyreGas | None]:
    """The leg with its final state carrying the tyre gas on, and the gas; (leg, None) without a tyre.

    The gas starts from the state the leg was chained from (the one-piece day's gas carries on)."""
    t = plan.tyre
    if t is None or "surface:tyre cavity" not in leg.series:
        return leg, None
    gas = tyre_gas(
        leg, t.cold_pressure, t.gas_volume, t.cavity_area, t.h_cavity, plan.initial_temperature,
        t.outer_conductance, ambient_pressure=t.ambient_pressure,
    )  # fmt: skip
    return with_tyre_gas_state(leg, gas), gas


def _tyre_peak(gases: list[TyreGas], peaks: dict[str, tuple[float, float]]) -> None:
    for gas in gases:
        peak = gas.peak_pressure - gas.ambient_pressure
        if "tyre pressure" not in peaks or peak > peaks["tyre pressure"][0]:
            peaks["tyre pressure"] = (peak, gas.time_of_peak)


def _departure_margin(plan: DayPlan, k: int, state: State) -> WaitSample | None:
    if plan.limits is None:
        return None
    flight = plan.flights[k]
    stop = plan.events.rejected_take_off(flight, plan.aircraft)
    departure = Departure(stop, _air(flight), _air(flight, 0.5 * plan.aircraft.rejected_take_off_speed))
    problem = WaitProblem(plan.model, state, departure, plan.limits, plan.surfaces, options=plan.options)
    return evaluate_wait(problem, 0.0)


def run_day(plan: DayPlan) -> DayAnswer:
    """Run the day as a chain of legs, each from the last one's state; the per-flight answers.

    Parameters
    ----------
    plan : DayPlan
        The day.

    Returns
    -------
    DayAnswer
        Per flight: peaks [K] and their times [s], the state at departure, the departure
        margin (with limits) and the two legs' results.

    Raises
    ------
    InputError
        If a flight arrives before the previous one is airborne.
    """
    check_timing(plan)
    state: float | State = plan.initial_temperature
    start = plan.flights[0].arrival_time
    # every leg reads the one-piece day's power: the sum of the events smooths each inner step of
    # power over a short ramp whose width depends on every knot of the day, and a leg summing its
    # own events alone would step at its first event instead (another input, and a solver that
    # restarts its step there). With the day's power the leg lands on the day's breakpoints and
    # steps exactly as the day run in one piece.
    day_power = day_duty(plan).schedule(plan.surfaces, start=start).power
    answers = []
    for k, flight in enumerate(plan.flights):
        legs: list[Result] = []
        gases: list[TyreGas] = []
        for phases in (arrival_phases(plan, flight), departure_phases(plan, k)):
            schedule = replace(DutyCycle(phases).schedule(plan.surfaces, start=start), power=day_power)
            leg, gas = _with_tyre_gas(plan, run_from_state(plan.model, schedule, state, plan.plugs, plan.options))
            legs.append(leg)
            gases += [gas] if gas is not None else []
            state, start = legs[-1].final_state, legs[-1].final_state.time
        peaks: dict[str, tuple[float, float]] = {}
        for leg in legs:
            _leg_peaks(leg, plan, peaks)
        _tyre_peak(gases, peaks)
        departure_state = legs[0].final_state
        answers.append(FlightAnswer(flight, peaks, departure_state, _departure_margin(plan, k, departure_state), *legs))
    return DayAnswer(plan.title, tuple(answers), tuple(plan.plugs))
