"""Inputs of the ground roll: the aircraft, the runway, the wind and air, the braking effort.

Frozen records whose constructors accept SI numbers or strings with a unit (``"70 t"``,
``"40 kN"``, ``"10 kt"``) through :func:`heatstack.units.to_si`; every error names the
key (``aircraft.mass``, ``runway.braking_friction``, ...). Used by :mod:`.ground_roll`.
"""

from __future__ import annotations

from bisect import bisect_right
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..unit_declarations import convert_declared, declared
from ..units import quantity
from . import atmosphere

__all__ = [
    "AIRCRAFT_MASS_RANGE",
    "GROUND_SPEED_MAX",
    "MAX_BRAKED_WHEELS",
    "MAX_REVERSERS",
    "RUNWAY_AIR_TEMPERATURE_RANGE",
    "RUNWAY_PRESSURE_ALTITUDE_RANGE",
    "WIND_SPEED_MAX",
    "BRAKING_LEVELS",
    "Aircraft",
    "Runway",
    "Conditions",
    "SpeedTable",
    "brake_on_ground_speed",
    "deceleration_target",
    "non_negative",
]

#: Our own names for target decelerations of the aircraft [m/s^2]; "maximum" is the
#: friction limit and "none" no braking.
BRAKING_LEVELS: dict[str, float] = {"gentle": 1.5, "medium": 2.0, "firm": 3.0, "hard": 4.0}

#: Aircraft masses a ground roll is computed for [kg]: a light aircraft to well above the heaviest
#: aircraft flown (about 640 t); outside, the roll has no meaning (common practice, no source).
AIRCRAFT_MASS_RANGE = (100.0, 2.0e6)
#: The most braked wheels and thrust reversers of an aircraft [-]: above any aircraft built (the
#: largest have about 30 braked wheels and at most 8 engines; common practice, no source).
MAX_BRAKED_WHEELS = 64
MAX_REVERSERS = 8
#: The fastest ground speed of a rolling wheel [m/s] (150 m/s, 292 kt): above every aircraft tyre's
#: speed rating; beyond it no correlation or tyre model means anything (common practice, no source).
GROUND_SPEED_MAX = 150.0
#: The strongest wind (or headwind, or fan air speed) accepted [m/s]: above any sustained wind
#: measured at the ground (common practice, no source).
WIND_SPEED_MAX = 100.0
#: Runway air temperatures accepted [K]: -90 degC to +70 degC, beyond the coldest and hottest air
#: recorded at the ground (common practice, no source).
RUNWAY_AIR_TEMPERATURE_RANGE = (183.15, 343.15)
#: Runway pressure altitudes accepted [m]: from below the lowest to above the highest airfield
#: (common practice, no source).
RUNWAY_PRESSURE_ALTITUDE_RANGE = (-1000.0, 10000.0)


def non_negative(value: Any, dimension: str, field: str, positive: bool = False) -> float:
    """An SI float >= 0 (> 0 if ``positive``) from a number or a quantity, through :func:`heatstack.units.quantity`.

    Parameters
    ----------
    value : float, str or pint.Quantity
        The value; a plain number is taken as SI.
    dimension : str
        The physical dimension expected, e.g. ``"speed"``.
    field : str
        Name of the field in error messages.
    positive : bool, optional
        Whether zero is refused too.

    Returns
    -------
    float
        The value in SI units.

    Raises
    ------
    UnitError
        If the unit is unknown or of the wrong dimension.
    InputError
        If the value is negative (or zero when ``positive``) or not finite.
    """
    return quantity(value, dimension, field, minimum=0.0, exclusive_minimum=positive)


def _table(rows: Any, dimension: str, field: str, speed_field: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Rows (speed, value) -> strictly increasing speeds [m/s] and values (SI)."""
    if isinstance(rows, str) or not isinstance(rows, Sequence) or len(rows) < 1:
        raise InputError(f"{field}: expected rows of ({speed_field}, value), e.g. [['0 kt', '40 kN'], ...]")
    speeds, values = [], []
    for k, row in enumerate(rows):
        if isinstance(row, str) or not isinstance(row, Sequence) or len(row) != 2:
            raise InputError(f"{field}[{k}]: expected a pair ({speed_field}, value), got {row!r}")
        speeds.append(quantity(row[0], "speed", f"{field}[{k}] speed"))
        values.append(non_negative(row[1], dimension, f"{field}[{k}] value"))
    if any(b <= a for a, b in zip(speeds, speeds[1:], strict=False)):
        raise InputError(f"{field}: the speeds must increase strictly, got {speeds} m/s")
    return tuple(speeds), tuple(values)


class SpeedTable:
    """A table over speed interpolated at one plain float: exactly what ``np.interp`` gives.

    Linear between the speeds, held beyond the ends (0 for an empty table), without the
    cost of a numpy call on a scalar; for a right-hand side evaluated thousands of times.

    Parameters
    ----------
    speeds : sequence of float
        Strictly increasing speeds [m/s].
    values : sequence of float
        Values at the speeds (SI).
    """

    def __init__(self, speeds: Sequence[float], values: Sequence[float]):
        self.speeds, self.values = [float(x) for x in speeds], [float(f) for f in values]
        xs, fs = self.speeds, self.values
        self.slopes = [(fs[j + 1] - fs[j]) / (xs[j + 1] - xs[j]) for j in range(len(xs) - 1)]

    def __call__(self, speed: float) -> float:
        """The value at ``speed`` [m/s] (SI)."""
        xs = self.speeds
        if not xs:
            return 0.0
        if speed >= xs[-1]:
            return self.values[-1]
        j = bisect_right(xs, speed) - 1
        if j < 0:
            return self.values[0]
        if xs[j] == speed:
            return self.values[j]
        return self.slopes[j] * (speed - xs[j]) + self.values[j]


@dataclass(frozen=True)
class Aircraft:
    """The aircraft on the ground. Every quantity accepts a number (SI) or a string with a unit.

    Parameters
    ----------
    mass : float or str
        Aircraft mass [kg], from :data:`AIRCRAFT_MASS_RANGE` (100 kg to 2000 t: below or above, the
        ground roll has no meaning; common practice, no source).
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
        Number of serviceable thrust reversers, 0 to :data:`MAX_REVERSERS`.
    reverse_cancel_speed : float or str
        Air speed below which reverse thrust is cancelled [m/s], >= 0.
    braked_wheels : int
        Number of braked wheels, 1 to :data:`MAX_BRAKED_WHEELS`.
    brake_shares : sequence of float, optional
        Share of the total brake force of each brake (``braked_wheels`` entries, each
        >= 0, summing to 1): e.g. 0 for an inoperative brake, more for a dragging one.
        Equal shares when not given.
    braked_weight_fraction : float
        Share of the weight on the wheels carried by the braked wheels (0, 1].
    """

    mass: float = declared("mass", minimum=AIRCRAFT_MASS_RANGE[0], maximum=AIRCRAFT_MASS_RANGE[1])
    drag_area: float = declared("area", 0.0, minimum=0.0)
    lift_area: float = declared("area", 0.0, minimum=0.0)
    lift_area_dumped: float = declared("area", 0.0, minimum=0.0)
    spoiler_time: float = declared("time", 0.0, minimum=0.0)
    idle_thrust: float = declared("force", 0.0, minimum=0.0)
    takeoff_thrust: float = declared("force", 0.0, minimum=0.0)
    reverse_thrust: Any = ()
    reversers: int = 0
    reverse_cancel_speed: float = declared("speed", 0.0, minimum=0.0)
    braked_wheels: int = 1
    brake_shares: Any = None
    braked_weight_fraction: Any = 1.0

    def __post_init__(self) -> None:
        put = object.__setattr__
        convert_declared(self, "aircraft")
        for name, minimum, maximum in (("reversers", 0, MAX_REVERSERS), ("braked_wheels", 1, MAX_BRAKED_WHEELS)):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or not minimum <= value <= maximum:
                raise InputError(f"aircraft.{name}: expected a whole number from {minimum} to {maximum}, got {value!r}")
        if self.reverse_thrust is None or len(self.reverse_thrust) == 0:
            if self.reversers:
                raise InputError("aircraft.reverse_thrust: a table is needed when reversers > 0")
            put(self, "reverse_thrust", ((), ()))
        else:
            put(self, "reverse_thrust", _table(self.reverse_thrust, "force", "aircraft.reverse_thrust", "air speed"))
        fraction = non_negative(self.braked_weight_fraction, "dimensionless", "aircraft.braked_weight_fraction")
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
        values = tuple(non_negative(s, "dimensionless", f"aircraft.brake_shares[{k}]") for k, s in enumerate(shares))
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
    slope: float = declared("dimensionless", 0.0)
    rolling_friction: float = declared("dimensionless", 0.02, minimum=0.0)

    def __post_init__(self) -> None:
        put = object.__setattr__
        if isinstance(self.braking_friction, Sequence) and not isinstance(self.braking_friction, str):
            table = _table(self.braking_friction, "dimensionless", "runway.braking_friction", "ground speed")
        else:
            value = non_negative(self.braking_friction, "dimensionless", "runway.braking_friction")
            table = ((0.0,), (value,))
        put(self, "braking_friction", table)
        if not isinstance(self.surface, str):
            raise InputError(f"runway.surface: expected a label such as 'dry' or 'wet', got {self.surface!r}")
        convert_declared(self, "runway")

    def friction(self, ground_speed: np.ndarray) -> np.ndarray:
        """Braking friction coefficient at ground speed.

        Parameters
        ----------
        ground_speed : ndarray
            Ground speed [m/s].

        Returns
        -------
        ndarray
            Friction coefficient [-], interpolated in ``braking_friction``.
        """
        speeds, values = self.braking_friction
        return np.interp(ground_speed, speeds, values)


@dataclass(frozen=True)
class Conditions:
    """Wind and air at the runway.

    Parameters
    ----------
    headwind : float or str
        Headwind component [m/s]; a tailwind is negative; at most :data:`WIND_SPEED_MAX` either way.
    pressure_altitude : float or str
        Pressure altitude of the runway [m], within :data:`RUNWAY_PRESSURE_ALTITUDE_RANGE`.
    air_temperature : float or str, optional
        Outside air temperature [K]; or ``temperature_offset`` (ISA + dT) [K]; ISA if neither.
        Either way within :data:`RUNWAY_AIR_TEMPERATURE_RANGE` (-90 to +70 degC).
    temperature_offset : float or str, optional
        ISA deviation [K].
    """

    headwind: float = declared("speed", 0.0, minimum=-WIND_SPEED_MAX, maximum=WIND_SPEED_MAX)
    pressure_altitude: float = declared(
        "length", 0.0, minimum=RUNWAY_PRESSURE_ALTITUDE_RANGE[0], maximum=RUNWAY_PRESSURE_ALTITUDE_RANGE[1]
    )
    air_temperature: float | None = declared("temperature", None, positive=True)
    temperature_offset: float | None = declared("temperature_difference", None)

    def __post_init__(self) -> None:
        put = object.__setattr__
        convert_declared(self, "conditions")
        temperature = atmosphere.air_temperature_at(
            self.pressure_altitude, self.air_temperature, self.temperature_offset
        )
        low, high = RUNWAY_AIR_TEMPERATURE_RANGE
        if not low <= temperature <= high:
            raise InputError(
                f"conditions: air_temperature: {temperature - 273.15:.4g} degC is outside the "
                f"{low - 273.15:.0f} to {high - 273.15:.0f} degC of air at a runway"
            )
        put(self, "air_temperature", temperature)
        put(self, "temperature_offset", None)

    @property
    def density(self) -> float:
        """Air density [kg/m^3]: ISO 2533 static pressure over ``R T``."""
        return float(atmosphere.isa_pressure(self.pressure_altitude)) / (atmosphere.R_ISA * self.air_temperature)


def brake_on_ground_speed(speed: Any, speed_kind: str, conditions: Conditions, field: str = "brake_on_speed") -> float:
    """Ground speed from a speed of kind ``"ground"``, ``"true"`` or ``"calibrated"`` (airspeeds).

    Airspeeds become ground speed through the headwind; a calibrated airspeed becomes a
    true airspeed through the ISO 2533 atmosphere at the conditions' pressure altitude
    and temperature.

    Parameters
    ----------
    speed : float, str or pint.Quantity
        The speed [m/s].
    speed_kind : {"ground", "true", "calibrated"}
        What the speed is.
    conditions : Conditions
        Headwind [m/s], pressure altitude [m] and air temperature [K].
    field : str, optional
        Name of the field in error messages.

    Returns
    -------
    float
        Ground speed [m/s].

    Raises
    ------
    InputError
        If the speed is not positive, the kind is unknown, the headwind leaves no positive
        ground speed, or the ground speed is above :data:`GROUND_SPEED_MAX`.
    """
    value = non_negative(speed, "speed", field, positive=True)
    if speed_kind == "ground":
        return _at_most_ground_speed_max(value, field)
    if speed_kind == "true":
        tas = value
    elif speed_kind == "calibrated":
        tas = float(atmosphere.true_airspeed(value, conditions.pressure_altitude, conditions.air_temperature))
    else:
        raise InputError(f"speed_kind: {speed_kind!r} is not 'ground', 'calibrated' or 'true'")
    ground = float(atmosphere.ground_speed(tas, conditions.headwind))
    if ground <= 0:
        raise InputError(f"{field}: the headwind leaves a ground speed of {ground:.3g} m/s")
    return _at_most_ground_speed_max(ground, field)


def _at_most_ground_speed_max(ground: float, field: str) -> float:
    if ground > GROUND_SPEED_MAX:
        raise InputError(
            f"{field}: a ground speed of {ground:.4g} m/s ({ground / 0.514444:.4g} kt) is above the "
            f"{GROUND_SPEED_MAX:g} m/s ({GROUND_SPEED_MAX / 0.514444:.0f} kt) of any aircraft tyre"
        )
    return ground


def deceleration_target(braking: Any) -> float | None | str:
    """A target deceleration from a level name or a quantity, or ``"maximum"`` / ``"none"``.

    Parameters
    ----------
    braking : str, float or pint.Quantity
        ``"maximum"``, ``"none"``, a level name of ``BRAKING_LEVELS`` or a deceleration [m/s^2].

    Returns
    -------
    float or str
        The deceleration [m/s^2], or ``"maximum"`` / ``"none"`` unchanged.

    Raises
    ------
    InputError
        If a name is not a known level, or the deceleration is not positive.
    """
    if isinstance(braking, str) and braking in ("maximum", "none"):
        return braking
    if isinstance(braking, str) and braking in BRAKING_LEVELS:
        return BRAKING_LEVELS[braking]
    if isinstance(braking, str) and not any(ch.isdigit() for ch in braking):
        names = ", ".join([*BRAKING_LEVELS, "maximum", "none"])
        raise InputError(
            f"braking: unknown level {braking!r}; use one of {names} or a deceleration such as '2.5 m/s^2'"
        )
    return non_negative(braking, "acceleration", "braking", positive=True)
