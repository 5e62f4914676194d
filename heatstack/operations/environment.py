"""Cooling laws for exposed-surface groups: they satisfy the solver's ``BoundaryLaw``.

Each law is a frozen dataclass holding one length scale and the ambient state: the
air temperature ``ambient_temperature`` [K], its pressure ``ambient_pressure`` [Pa],
the radiation ``surroundings_temperature`` [K] (the air temperature if not given)
and the ``radiation`` flag. Fields accept SI numbers or strings with a unit
(``"15 degC"``, ``"3 in"``), converted once on construction.

``convection_coefficient`` evaluates air properties at the film temperature
``(T_s + T_amb)/2`` and the ambient pressure, for a whole array of surface
temperatures at once. Film temperatures outside the 200-1500 K range of the air
fits are clamped with a :class:`~heatstack.errors.HeatstackWarning` (see
:func:`heatstack.operations.air.air_properties`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, ClassVar, Literal

import numpy as np

from ..errors import InputError
from ..numerics.schedule import BoundaryLaw, FixedConvection
from ..units import to_si
from . import convection as nu
from .air import T_MAX, T_MIN, AirProperties, air_properties
from .atmosphere import G0

__all__ = [
    "NaturalConvection",
    "CrossFlow",
    "RotatingDisc",
    "FanCooling",
    "MixedConvection",
    "WheelWell",
    "FixedH",
]

Shape = Literal["vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down"]
_SHAPES = ("vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down")


def _quantity(law: Any, name: str, dimension: str) -> float:
    """Convert field ``name`` of ``law`` to an SI float and store it back."""
    raw = getattr(law, name)
    value = to_si(raw, None, dimension, name) if isinstance(raw, str) or hasattr(raw, "units") else raw
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a number, got {raw!r}") from None
    if not np.isfinite(value):
        raise InputError(f"{name}: must be finite, got {raw!r}")
    object.__setattr__(law, name, value)
    return value


def _positive(law: Any, name: str, dimension: str, allow_zero: bool = False) -> float:
    value = _quantity(law, name, dimension)
    if value < 0 or (value == 0 and not allow_zero):
        bound = ">= 0" if allow_zero else "> 0"
        raise InputError(f"{name}: must be {bound}, got {value}")
    return value


def _ambient(
    law: Any,
    temperature: str = "ambient_temperature",
    pressure: str = "ambient_pressure",
    surroundings: bool = True,
) -> None:
    """Validate and convert the ambient-state fields of ``law`` in place."""
    t = _positive(law, temperature, "temperature")
    if not T_MIN <= t <= T_MAX:
        raise InputError(f"{temperature}: {t} K is outside the {T_MIN:.0f}-{T_MAX:.0f} K range of the air fits")
    _positive(law, pressure, "pressure")
    if surroundings and getattr(law, "surroundings_temperature", None) is None:
        object.__setattr__(law, "surroundings_temperature", t)
    elif surroundings:
        _positive(law, "surroundings_temperature", "temperature")
    object.__setattr__(law, "radiation", bool(law.radiation))


def _film(law: Any, surface_temperature: np.ndarray) -> AirProperties:
    ts = np.asarray(surface_temperature, dtype=float)
    return air_properties(0.5 * (ts + law.ambient_temperature), law.ambient_pressure, clamp=True)


@dataclass(frozen=True)
class NaturalConvection:
    """Free convection in still air from a plate or cylinder.

    Parameters
    ----------
    shape : {"vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down"}
        Geometry of the surface group; ``horizontal_plate_up`` faces upward.
    length : float
        Length scale [m]: height of a vertical plate, diameter of a cylinder,
        area / perimeter of a horizontal plate.
    ambient_temperature : float
        Still-air temperature [K].
    ambient_pressure : float
        Air pressure [Pa].
    surroundings_temperature : float, optional
        Radiation surroundings [K]; the air temperature by default.
    radiation : bool
        Whether the surfaces radiate.

    Notes
    -----
    ``Ra = g beta |T_s - T_amb| L^3 / (nu alpha)`` with ``beta = 1/T_film``. A cold
    horizontal surface facing up behaves as a hot one facing down, and conversely.

    With film-temperature properties, in the turbulent regime (``h`` independent of
    ``L``, ``Nu ~ Ra^(1/3)``) ``h`` varies as ``dT^(1/3) T_film^(-0.7)`` and so has a
    maximum near ``T_film ~ 1.9 T_amb`` (surface about 820 K in 290 K air), falling
    slowly beyond; below that ``h`` rises with the surface temperature.

    References
    ----------
    Churchill, S.W. and Chu, H.H.S., 1975, Int. J. Heat Mass Transfer 18, 1323-1329
    (vertical plate) and 1049-1053 (horizontal cylinder).
    McAdams, W.H., 1954, Heat Transmission, 3rd ed., McGraw-Hill (horizontal plates).
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    shape: Shape
    length: float
    ambient_temperature: float
    ambient_pressure: float = 101325.0
    surroundings_temperature: float | None = None
    radiation: bool = True

    def __post_init__(self) -> None:
        if self.shape not in _SHAPES:
            raise InputError(f"shape: {self.shape!r} is not one of {', '.join(_SHAPES)}")
        _positive(self, "length", "length")
        _ambient(self)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        ts = np.asarray(surface_temperature, dtype=float)
        air = _film(self, ts)
        dt = np.abs(ts - self.ambient_temperature)
        ra = G0 * air.expansion * dt * self.length**3 / (air.kinematic_viscosity * air.diffusivity)
        if self.shape == "vertical_plate":
            nusselt = nu.nu_vertical_plate(ra, air.prandtl)
        elif self.shape == "horizontal_cylinder":
            nusselt = nu.nu_horizontal_cylinder(ra, air.prandtl)
        else:
            hot = ts > self.ambient_temperature
            nusselt = nu.nu_horizontal_plate(ra, hot == (self.shape == "horizontal_plate_up"))
        return nusselt * air.conductivity / self.length


@dataclass(frozen=True)
class CrossFlow:
    """Forced convection from a cylinder in cross-flow (wheel rolling, or wind).

    Parameters
    ----------
    diameter : float
        Cylinder diameter [m].
    air_speed : float
        Air speed relative to the surface [m/s], >= 0.
    ambient_temperature, ambient_pressure, surroundings_temperature, radiation
        Ambient state, as for :class:`NaturalConvection`.

    References
    ----------
    Churchill, S.W. and Bernstein, M., 1977, J. Heat Transfer 99, 300-306.
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    diameter: float
    air_speed: float
    ambient_temperature: float
    ambient_pressure: float = 101325.0
    surroundings_temperature: float | None = None
    radiation: bool = True

    def __post_init__(self) -> None:
        _positive(self, "diameter", "length")
        _positive(self, "air_speed", "speed", allow_zero=True)
        _ambient(self)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        air = _film(self, surface_temperature)
        re = self.air_speed * self.diameter / air.kinematic_viscosity
        return nu.nu_cylinder_crossflow(re, air.prandtl) * air.conductivity / self.diameter


@dataclass(frozen=True)
class RotatingDisc:
    """Forced convection from the faces of a disc spinning in still air.

    Parameters
    ----------
    radius : float
        Outer radius of the face [m].
    angular_speed : float
        Rotation speed [rad/s], >= 0 (for a wheel, ground speed / rolling radius).
    ambient_temperature, ambient_pressure, surroundings_temperature, radiation
        Ambient state, as for :class:`NaturalConvection`.

    Notes
    -----
    ``Re = omega R^2 / nu``; laminar below 2.4e5, laminar core and turbulent rim
    above (:func:`heatstack.operations.convection.nu_rotating_disc`). A disc at rest
    gives zero; combine with :class:`NaturalConvection` through
    :class:`MixedConvection` for slow rotation.

    References
    ----------
    Cobb, E.C. and Saunders, O.A., 1956, Proc. R. Soc. Lond. A 236, 343-351.
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    radius: float
    angular_speed: float
    ambient_temperature: float
    ambient_pressure: float = 101325.0
    surroundings_temperature: float | None = None
    radiation: bool = True

    def __post_init__(self) -> None:
        _positive(self, "radius", "length")
        _positive(self, "angular_speed", "angular_speed", allow_zero=True)
        _ambient(self)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        air = _film(self, surface_temperature)
        re = self.angular_speed * self.radius**2 / air.kinematic_viscosity
        return nu.nu_rotating_disc(re) * air.conductivity / self.radius


@dataclass(frozen=True)
class FanCooling:
    """Forced parallel flow over a surface (cooling fan, ground cart): flat-plate average.

    Parameters
    ----------
    length : float
        Length of the surface in the flow direction [m].
    air_speed : float
        Free-stream air speed [m/s], >= 0.
    ambient_temperature, ambient_pressure, surroundings_temperature, radiation
        Ambient state, as for :class:`NaturalConvection`.

    References
    ----------
    Incropera, F.P., DeWitt, D.P., Bergman, T.L. and Lavine, A.S., 2007,
    Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, ch. 7.
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    length: float
    air_speed: float
    ambient_temperature: float
    ambient_pressure: float = 101325.0
    surroundings_temperature: float | None = None
    radiation: bool = True

    def __post_init__(self) -> None:
        _positive(self, "length", "length")
        _positive(self, "air_speed", "speed", allow_zero=True)
        _ambient(self)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        air = _film(self, surface_temperature)
        re = self.air_speed * self.length / air.kinematic_viscosity
        return nu.nu_flat_plate_forced(re, air.prandtl) * air.conductivity / self.length


@dataclass(frozen=True)
class MixedConvection:
    """Natural and forced convection combined: ``h^n = h_N^n + h_F^n``.

    Parameters
    ----------
    natural : BoundaryLaw
        The free-convection law; its ambient state is the combined law's.
    forced : BoundaryLaw
        The forced-convection law, with the same ambient air temperature.
    exponent : float
        Blending exponent n [-], 3 for assisting or transverse flow.

    Notes
    -----
    The rule is applied on ``h``, which equals the rule on ``Nu`` when both laws use
    the same length scale.

    References
    ----------
    Churchill, S.W., 1977, A comprehensive correlating equation for laminar,
    assisting, forced and free convection, AIChE J. 23, 10-16.
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    natural: BoundaryLaw
    forced: BoundaryLaw
    exponent: float = 3.0
    ambient_temperature: float = field(init=False)
    surroundings_temperature: float = field(init=False)
    radiation: bool = field(init=False)

    def __post_init__(self) -> None:
        for name in ("natural", "forced"):
            if not isinstance(getattr(self, name), BoundaryLaw):
                raise InputError(f"{name}: is not a cooling law")
        if not np.isclose(self.natural.ambient_temperature, self.forced.ambient_temperature, rtol=1e-12):
            raise InputError(
                f"forced: ambient_temperature {self.forced.ambient_temperature} K differs from the "
                f"natural law's {self.natural.ambient_temperature} K"
            )
        _positive(self, "exponent", "dimensionless")
        object.__setattr__(self, "ambient_temperature", self.natural.ambient_temperature)
        object.__setattr__(self, "surroundings_temperature", self.natural.surroundings_temperature)
        object.__setattr__(self, "radiation", self.natural.radiation)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        h_n = self.natural.convection_coefficient(surface_temperature, time)
        h_f = self.forced.convection_coefficient(surface_temperature, time)
        return nu.nu_mixed(h_f, h_n, self.exponent)


@dataclass(frozen=True)
class WheelWell:
    """Natural convection inside a closed wheel well with its own air and walls.

    Parameters
    ----------
    shape : str
        Geometry of the surface group, as for :class:`NaturalConvection`.
    length : float
        Length scale [m], as for :class:`NaturalConvection`.
    air_temperature : float
        Temperature of the air in the well [K]; the convection sink.
    wall_temperature : float
        Temperature of the well walls [K]; the radiation surroundings.
    pressure : float
        Air pressure in the well [Pa] (cabin-unpressurised wells follow altitude).
    radiation : bool
        Whether the surfaces radiate to the walls.

    Notes
    -----
    No forced flow: the well is closed. The enclosure is treated as large compared
    to the surfaces, so the free-convection correlations of an unbounded medium apply.

    References
    ----------
    As :class:`NaturalConvection`: Churchill, S.W. and Chu, H.H.S., 1975, Int. J. Heat
    Mass Transfer 18, 1323-1329 and 1049-1053; McAdams, W.H., 1954, Heat
    Transmission, 3rd ed., McGraw-Hill.
    """

    time_dependent: ClassVar[bool] = False  # lets the solver tabulate h(T_s)

    shape: Shape
    length: float
    air_temperature: float
    wall_temperature: float
    pressure: float = 101325.0
    radiation: bool = True
    _still_air: NaturalConvection = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        _ambient(self, "air_temperature", "pressure", surroundings=False)
        wall = _positive(self, "wall_temperature", "temperature")
        inner = NaturalConvection(self.shape, self.length, self.air_temperature, self.pressure, wall, self.radiation)
        object.__setattr__(self, "length", inner.length)
        object.__setattr__(self, "_still_air", inner)

    @property
    def ambient_temperature(self) -> float:
        """Well air temperature [K] (the ``BoundaryLaw`` sink)."""
        return self.air_temperature

    @property
    def surroundings_temperature(self) -> float:
        """Well wall temperature [K] (the ``BoundaryLaw`` radiation surroundings)."""
        return self.wall_temperature

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient at each surface temperature.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Simulated time [s] (not used: the law is steady).

        Returns
        -------
        ndarray
            Coefficient [W/(m^2 K)], shape of ``surface_temperature``.
        """
        return self._still_air.convection_coefficient(surface_temperature, time)


@dataclass(frozen=True)
class FixedH(FixedConvection):
    """A constant coefficient, as :class:`~heatstack.numerics.schedule.FixedConvection`.

    Accepts numbers in SI or strings with a unit, e.g. ``FixedH("25 W/(m**2*K)", "20 degC")``.

    Parameters
    ----------
    h : float
        Convective coefficient [W/(m^2 K)], >= 0.
    ambient_temperature : float
        Air temperature [K].
    surroundings_temperature : float, optional
        Radiation surroundings [K]; the air temperature by default.
    radiation : bool
        Whether the surfaces radiate.
    """

    def __post_init__(self) -> None:
        _quantity(self, "h", "heat_transfer_coefficient")
        _quantity(self, "ambient_temperature", "temperature")
        if self.surroundings_temperature is not None:
            _quantity(self, "surroundings_temperature", "temperature")
        super().__post_init__()
