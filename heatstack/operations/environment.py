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
from ..numerics.schedule import BoundaryLaw
from ..unit_declarations import convert_declared, declared
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
]

Shape = Literal["vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down"]
_SHAPES = ("vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down")


def _ambient(law: Any, temperature: str = "ambient_temperature", surroundings: bool = True) -> None:
    """Convert the declared fields of ``law`` to SI, check its air state, default its surroundings."""
    convert_declared(law, "")
    t = getattr(law, temperature)
    if not T_MIN <= t <= T_MAX:
        raise InputError(f"{temperature}: {t} K is outside the {T_MIN:.0f}-{T_MAX:.0f} K range of the air fits")
    if surroundings and law.surroundings_temperature is None:
        object.__setattr__(law, "surroundings_temperature", t)
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
    length: float = declared("length", positive=True)
    ambient_temperature: float = declared("temperature", positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, positive=True)
    surroundings_temperature: float | None = declared("temperature", None, positive=True)
    radiation: bool = True

    def __post_init__(self) -> None:
        if self.shape not in _SHAPES:
            raise InputError(f"shape: {self.shape!r} is not one of {', '.join(_SHAPES)}")
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

    diameter: float = declared("length", positive=True)
    air_speed: float = declared("speed", minimum=0.0)
    ambient_temperature: float = declared("temperature", positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, positive=True)
    surroundings_temperature: float | None = declared("temperature", None, positive=True)
    radiation: bool = True

    def __post_init__(self) -> None:
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

    radius: float = declared("length", positive=True)
    angular_speed: float = declared("angular_speed", minimum=0.0)
    ambient_temperature: float = declared("temperature", positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, positive=True)
    surroundings_temperature: float | None = declared("temperature", None, positive=True)
    radiation: bool = True

    def __post_init__(self) -> None:
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

    length: float = declared("length", positive=True)
    air_speed: float = declared("speed", minimum=0.0)
    ambient_temperature: float = declared("temperature", positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, positive=True)
    surroundings_temperature: float | None = declared("temperature", None, positive=True)
    radiation: bool = True

    def __post_init__(self) -> None:
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

    Attributes
    ----------
    ambient_temperature : float
        Ambient air temperature [K], the natural law's.
    surroundings_temperature : float
        Radiation surroundings temperature [K], the natural law's.
    radiation : bool
        Whether the surfaces radiate, as in the natural law.

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
    exponent: float = declared("dimensionless", 3.0, positive=True)
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
        convert_declared(self, "")
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
    length: float = declared("length", positive=True)
    air_temperature: float = declared("temperature", positive=True)
    wall_temperature: float = declared("temperature", positive=True)
    pressure: float = declared("pressure", 101325.0, positive=True)
    radiation: bool = True
    _still_air: NaturalConvection = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        _ambient(self, "air_temperature", surroundings=False)
        wall = self.wall_temperature
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
