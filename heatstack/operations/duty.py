"""A day's operations as a duty cycle: ordered phases, each with its braking and its cooling.

A :class:`DutyCycle` is a readable protocol (landing roll, taxi-in, turnaround, ...).
:meth:`DutyCycle.schedule` turns it into the :class:`~heatstack.numerics.schedule.Schedule`
the solver reads: one brake's friction power P(t), a cooling law for every exposed-surface
group in every phase, whether the stack is clamped, and the exact breakpoints.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import ScheduleError
from ..geometry import SurfaceGroup
from ..numerics.schedule import BoundaryLaw, Phase, PowerHistory, Schedule
from ..unit_declarations import convert_declared, declared
from .air import T_MAX, T_MIN
from .environment import CrossFlow, FanCooling, MixedConvection, NaturalConvection, RotatingDisc, WheelWell
from .events import BrakingEvent, combine
from .roll_inputs import GROUND_SPEED_MAX, WIND_SPEED_MAX

__all__ = ["Environment", "DutyPhase", "DutyCycle"]


@dataclass(frozen=True)
class Environment:
    """The cooling conditions of one phase.

    Parameters
    ----------
    ambient_temperature : float or str
        Outside air temperature [K] (or a string with a unit, e.g. ``"15 degC"``), within the
        200-1500 K range of the air property fits (checked when the case is read, not at the run).
    ambient_pressure : float or str
        [Pa].
    surroundings_temperature : float or str, optional
        Radiation surroundings [K]; the air temperature by default.
    ground_speed : float or str
        Speed at which the wheel rolls [m/s]; 0 when stopped. A rolling wheel sees a
        cross-flow of air at this speed plus the headwind, and its disc faces spin. At most
        :data:`~heatstack.operations.roll_inputs.GROUND_SPEED_MAX` (150 m/s).
    wind_speed : float or str
        Wind across the wheel [m/s], at most
        :data:`~heatstack.operations.roll_inputs.WIND_SPEED_MAX` (100 m/s).
    fan_speed : float or str
        Air speed of a brake-cooling fan over the stack [m/s]; 0 for none; at most 100 m/s.
    wheel_well : (float, float), optional
        Air and wall temperatures [K] of an enclosed wheel well (gear up): natural
        convection only, radiation to the walls.
    overrides : mapping of str to BoundaryLaw
        Cooling laws given by hand for some surface groups (``"*"`` for all others).
    """

    ambient_temperature: Any = declared("temperature", 288.15, minimum=T_MIN, maximum=T_MAX)
    ambient_pressure: Any = declared("pressure", 101325.0, positive=True)
    surroundings_temperature: Any = declared("temperature", None, positive=True)
    ground_speed: Any = declared("speed", 0.0, minimum=0.0, maximum=GROUND_SPEED_MAX)
    wind_speed: Any = declared("speed", 0.0, minimum=0.0, maximum=WIND_SPEED_MAX)
    fan_speed: Any = declared("speed", 0.0, minimum=0.0, maximum=WIND_SPEED_MAX)
    wheel_well: tuple[Any, Any] | None = declared("temperature", None, positive=True)
    overrides: Mapping[str, BoundaryLaw] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if self.wheel_well is not None and (not isinstance(self.wheel_well, tuple | list) or len(self.wheel_well) != 2):
            raise ScheduleError(f"environment wheel_well: expected (air, wall) temperatures, got {self.wheel_well!r}")
        convert_declared(self, "environment", ScheduleError)
        object.__setattr__(self, "overrides", dict(self.overrides))

    def laws(self, surfaces: Sequence[SurfaceGroup], rolling_radius: float) -> dict[str, BoundaryLaw]:
        """A cooling law for every surface group in ``surfaces``.

        Parameters
        ----------
        surfaces : sequence of SurfaceGroup
            Name, characteristic length [m] (diameter of a cylinder, height of a
            vertical face) and orientation of each surface group.
        rolling_radius : float
            Tyre rolling radius [m], to turn ground speed into wheel angular speed.

        Returns
        -------
        dict of str to BoundaryLaw
            The cooling law of each group: an override for the group, else the ``"*"`` override,
            else the law this environment builds for the group's orientation and length.
        """
        laws = {}
        for surface in _surface_records(surfaces):
            group = surface.name
            if group in self.overrides:
                laws[group] = self.overrides[group]
            elif "*" in self.overrides:
                laws[group] = self.overrides["*"]
            else:
                laws[group] = self._law(surface.orientation, surface.length, rolling_radius)
        return laws

    def _law(self, shape: str, length: float, rolling_radius: float) -> BoundaryLaw:
        if self.wheel_well is not None:
            air, wall = self.wheel_well
            return WheelWell(shape, length, air, wall, self.ambient_pressure)
        state = {
            "ambient_temperature": self.ambient_temperature,
            "ambient_pressure": self.ambient_pressure,
            "surroundings_temperature": self.surroundings_temperature,
        }
        natural = NaturalConvection(shape, length, **state)
        forced = self._forced(shape, length, rolling_radius, state)
        return natural if forced is None else MixedConvection(natural, forced)

    def _forced(self, shape: str, length: float, rolling_radius: float, state: dict) -> BoundaryLaw | None:
        if self.fan_speed > 0:
            return FanCooling(length, self.fan_speed, **state)
        air_speed = self.ground_speed + self.wind_speed
        if air_speed <= 0:
            return None
        if shape == "vertical_plate" and self.ground_speed > 0:
            return RotatingDisc(0.5 * length, self.ground_speed / rolling_radius, **state)
        if shape == "vertical_plate":
            return FanCooling(length, air_speed, **state)
        return CrossFlow(length, air_speed, **state)


#: The longest phase [s]: ten years; beyond, simulated times lose the precision of a second step.
MAX_PHASE_DURATION = 10 * 365.25 * 86400.0


@dataclass(frozen=True)
class DutyPhase:
    """One phase of a duty cycle.

    Parameters
    ----------
    name : str
        E.g. ``"landing roll"``, ``"taxi-in"``, ``"turnaround"``.
    duration : float or str
        [s] (or e.g. ``"45 min"``), > 0.
    environment : Environment
    events : sequence of BrakingEvent
        Braking in the phase; each event's times count from the phase start.
    clamped : bool, optional
        Whether the stack is clamped (brake applied, or parking brake set). By default,
        clamped when the phase has braking events.
    """

    name: str
    duration: Any = declared("time", positive=True, maximum=MAX_PHASE_DURATION)
    environment: Environment = field(default_factory=Environment)
    events: Sequence[BrakingEvent] = ()
    clamped: bool | None = None

    def __post_init__(self) -> None:
        convert_declared(self, f"phase {self.name!r}", ScheduleError)
        duration = self.duration
        object.__setattr__(self, "events", tuple(self.events))
        for event in self.events:
            if event.start < 0 or event.end > duration * (1 + 1e-12):
                raise ScheduleError(
                    f"phase {self.name!r}: event {event.name!r} ({event.start:g}-{event.end:g} s) "
                    f"does not fit in the phase (0-{duration:g} s)"
                )

    @property
    def is_clamped(self) -> bool:
        """The contact state used for the phase."""
        return bool(self.events) if self.clamped is None else bool(self.clamped)


@dataclass(frozen=True)
class DutyCycle:
    """An ordered list of phases, from the first to the last, without gaps.

    Parameters
    ----------
    phases : sequence of DutyPhase
    rolling_radius : float or str
        Tyre rolling radius [m] for disc spin from ground speed.
    """

    phases: Sequence[DutyPhase]
    rolling_radius: Any = declared("length", 0.5, positive=True)

    def __post_init__(self) -> None:
        phases = tuple(self.phases)
        if not phases:
            raise ScheduleError("duty cycle: at least one phase is needed")
        names = [p.name for p in phases]
        for name in names:
            if names.count(name) > 1:
                raise ScheduleError(f"duty cycle: two phases are named {name!r}")
        convert_declared(self, "duty cycle", ScheduleError)
        object.__setattr__(self, "phases", phases)

    @property
    def duration(self) -> float:
        """Total length of the cycle [s]."""
        return float(sum(p.duration for p in self.phases))

    def phase_starts(self, start: float = 0.0) -> np.ndarray:
        """Start time of each phase for a cycle beginning at ``start``.

        Parameters
        ----------
        start : float, optional
            Start of the cycle [s].

        Returns
        -------
        ndarray
            Start time of each phase [s].
        """
        return start + np.concatenate(([0.0], np.cumsum([p.duration for p in self.phases])[:-1]))

    def power(self, start: float = 0.0) -> PowerHistory:
        """Friction power of one brake over the whole cycle.

        Parameters
        ----------
        start : float, optional
            Start of the cycle [s].

        Returns
        -------
        PowerHistory
            The events' power histories shifted to their phases and combined [W]; zero power
            when the cycle has no braking event.
        """
        shifted = []
        for phase, t0 in zip(self.phases, self.phase_starts(start), strict=True):
            for event in phase.events:
                shifted.append(PowerHistory(event.power.times + t0, event.power.powers))
        return combine(*shifted) if shifted else PowerHistory(np.array([start, start + 1.0]), np.zeros(2))

    def end_of_braking(self, reference_event: str | None = None, start: float = 0.0) -> float:
        """End of the stop that loaded the brake [s], for a cycle beginning at ``start``.

        The reference event is the one named ``reference_event`` (the case key
        ``[output] reference_event``), or else the event with the most energy per brake
        (the first of equals). Later, smaller events (taxi snubs, gear retraction, a
        dragging brake) do not move it, so delays "after braking" count from the stop
        that heated the brake.

        Parameters
        ----------
        reference_event : str, optional
            Name of the reference braking event.
        start : float
            Start time of the cycle [s].

        Returns
        -------
        float
            End time of the reference event [s]; ``start`` for a cycle without braking.

        Raises
        ------
        ScheduleError
            If ``reference_event`` names no event of the cycle (the message lists them).
        """
        ends = [
            (event.name, event.energy_per_brake, float(t0 + event.end))
            for phase, t0 in zip(self.phases, self.phase_starts(start), strict=True)
            for event in phase.events
        ]
        if reference_event is not None:
            named = [end for name, _, end in ends if name == reference_event]
            if not named:
                known = ", ".join(repr(name) for name, _, _ in ends) or "none"
                raise ScheduleError(
                    f"reference_event {reference_event!r}: no braking event of that name; events: {known}"
                )
            return named[0]
        if not ends:
            return float(start)
        return max(ends, key=lambda row: row[1])[2]

    def energy_summary(self) -> list[dict[str, Any]]:
        """One row per braking event: phase, event, energy per brake [J], kinetic energy [J], share.

        Returns
        -------
        list of dict
            Keys ``phase``, ``event``, ``energy_per_brake`` [J], ``kinetic_energy`` [J] and
            ``brake_share`` [-], one dict per event.
        """
        return [
            {
                "phase": phase.name,
                "event": event.name,
                "energy_per_brake": event.energy_per_brake,
                "kinetic_energy": event.kinetic_energy,
                "brake_share": event.brake_share,
            }
            for phase in self.phases
            for event in phase.events
        ]

    def stop_accounts(self) -> list[dict[str, Any]]:
        """The energy accounts of every event built from the equation of motion, in SI with units in the keys.

        Returns
        -------
        list of dict
            Per ground-roll event: ``phase``, ``event``, ``brake_on_speed_m_per_s``, ``stopping_distance_m``,
            ``stopping_time_s``, ``energy_per_brake_J`` (one per braked wheel) and each account of
            :class:`~heatstack.operations.ground_roll.EnergyAccounts` [J] with its closure.
        """
        rows = []
        for phase in self.phases:
            for event in phase.events:
                roll = getattr(event, "ground_roll", None)
                if roll is None:
                    continue
                accounts = {f"{name}_J": float(value) for name, value in vars(roll.accounts).items()}
                rows.append(
                    {
                        "phase": phase.name,
                        "event": event.name,
                        "brake_on_speed_m_per_s": float(roll.brake_on_speed),
                        "stopping_distance_m": float(roll.stopping_distance),
                        "stopping_time_s": float(roll.stopping_time),
                        "energy_per_brake_J": [float(e) for e in roll.energy_per_brake],
                        **accounts,
                        "closure_J": float(roll.accounts.closure),
                    }
                )
        return rows

    def schedule(
        self,
        surfaces: Sequence[SurfaceGroup],
        start: float = 0.0,
        extra_breakpoints: Sequence[float] = (),
        reference_event: str | None = None,
    ) -> Schedule:
        """The solver's schedule for this cycle beginning at ``start`` [s].

        Parameters
        ----------
        surfaces : sequence of SurfaceGroup
            Characteristic length [m] and orientation of every exposed-surface group
            (the assembly's ``surfaces``, e.g. ``built.assembly.surfaces``); every group
            gets a law in every phase.
        start : float
            Start time [s], e.g. the time of a saved state a chained run begins from.
        extra_breakpoints : sequence of float
            More times [s] to land on.
        reference_event : str, optional
            The braking event whose end is the end of braking (see :meth:`end_of_braking`).

        Returns
        -------
        Schedule
            Power history, phases with their cooling laws and clamping, extra breakpoints and
            end of braking.
        """
        phases = []
        for phase, t0 in zip(self.phases, self.phase_starts(start), strict=True):
            laws = phase.environment.laws(surfaces, self.rolling_radius)
            phases.append(Phase(phase.name, float(t0), float(t0 + phase.duration), laws, phase.is_clamped))
        end = self.end_of_braking(reference_event, start)
        return Schedule(self.power(start), phases, tuple(extra_breakpoints), end_of_braking=end)


def _surface_records(surfaces: Sequence[SurfaceGroup]) -> tuple[SurfaceGroup, ...]:
    if isinstance(surfaces, Mapping | str):
        raise ScheduleError(
            "surfaces: expected SurfaceGroup records (an assembly's 'surfaces'), not a mapping of lengths"
        )
    records = tuple(surfaces)
    for surface in records:
        if not isinstance(surface, SurfaceGroup):
            raise ScheduleError(f"surfaces: expected SurfaceGroup records, got {type(surface).__name__}")
    return records
