"""Dry air properties for convection correlations, valid 200-1500 K.

All functions take temperatures in [K] and pressures in [Pa] as floats or numpy
arrays and return SI values of the same shape. Density follows the ideal gas; the
transport properties and the specific heat depend on temperature only (the pressure
effect on them is below 0.5 % between 20 kPa and 1 atm over 200-1500 K).

Fits
----
Viscosity and conductivity use Sutherland's form with a free exponent,
``y = y_ref (T/300)^n (300 + S) / (T + S)``; the specific heat is a quartic in
``T/1000``. The coefficients were fitted here by least squares on the relative
error to CoolProp 8 air at 101 325 Pa, 261 points over 200-1500 K. Largest
deviation from those values: viscosity 0.22 %, conductivity 0.40 %, specific heat
0.12 %, Prandtl number 0.21 %.

References
----------
Sutherland, W., 1893, The viscosity of gases and molecular force, Phil. Mag.
Series 5, 36, 507-531.
Lemmon, E.W., Jacobsen, R.T., Penoncello, S.G. and Friend, D.G., 2000,
Thermodynamic properties of air and mixtures of nitrogen, argon and oxygen from
60 to 2000 K at pressures to 2000 MPa, J. Phys. Chem. Ref. Data 29, 331-385.
Lemmon, E.W. and Jacobsen, R.T., 2004, Viscosity and thermal conductivity
equations for nitrogen, oxygen, argon and air, Int. J. Thermophys. 25, 21-69.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import HeatstackWarning, InputError

__all__ = [
    "R_AIR",
    "T_MIN",
    "T_MAX",
    "AirProperties",
    "air_properties",
    "density",
    "viscosity",
    "conductivity",
    "specific_heat",
    "prandtl",
    "film_temperature",
    "check_temperature",
]

#: Specific gas constant of dry air [J/(kg K)].
R_AIR = 287.05
#: Lowest temperature of the fits [K].
T_MIN = 200.0
#: Highest temperature of the fits [K].
T_MAX = 1500.0

_MU_REF, _MU_S, _MU_N = 1.8537e-05, 69.529, 1.5878  # [Pa s], [K], [-]
_K_REF, _K_S, _K_N = 0.026362, 46.962, 1.7018  # [W/(m K)], [K], [-]
# cp [J/(kg K)] as a quartic in x = T/1000, highest power first (numpy.polyval order).
_CP_COEFFS = (197.445, -834.859, 1190.42, -473.136, 1061.43)

_CLAMP_MESSAGE = (
    "air film temperature outside the 200-1500 K range of the property fits: properties evaluated at the nearest limit"
)


def check_temperature(temperature: float | np.ndarray, field: str = "air temperature") -> np.ndarray:
    """Return ``temperature`` as an array, raising if any value is out of 200-1500 K.

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K].
    field : str
        Name used in the error message.

    Returns
    -------
    ndarray
        The temperatures as a float array [K].

    Raises
    ------
    InputError
        If a value is not finite or lies outside ``[T_MIN, T_MAX]``.
    """
    t = np.asarray(temperature, dtype=float)
    bad = ~np.isfinite(t) | (t < T_MIN) | (t > T_MAX)
    if np.any(bad):
        value = float(t[bad][0]) if t.ndim else float(t)
        raise InputError(f"{field}: {value} K is outside the {T_MIN:.0f}-{T_MAX:.0f} K range of the air property fits")
    return t


def _sutherland(t: np.ndarray, ref: float, s: float, n: float) -> np.ndarray:
    return ref * (t / 300.0) ** n * ((300.0 + s) / (t + s))


def viscosity(temperature: float | np.ndarray) -> np.ndarray:
    """Dynamic viscosity of dry air (fit of the module docstring).

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], 200-1500 K.

    Returns
    -------
    ndarray
        Dynamic viscosity [Pa s].

    Raises
    ------
    InputError
        If a temperature is outside 200-1500 K.
    """
    return _sutherland(check_temperature(temperature), _MU_REF, _MU_S, _MU_N)


def conductivity(temperature: float | np.ndarray) -> np.ndarray:
    """Thermal conductivity of dry air (fit of the module docstring).

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], 200-1500 K.

    Returns
    -------
    ndarray
        Thermal conductivity [W/(m K)].

    Raises
    ------
    InputError
        If a temperature is outside 200-1500 K.
    """
    return _sutherland(check_temperature(temperature), _K_REF, _K_S, _K_N)


def specific_heat(temperature: float | np.ndarray) -> np.ndarray:
    """Isobaric specific heat of dry air (fit of the module docstring).

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], 200-1500 K.

    Returns
    -------
    ndarray
        Isobaric specific heat [J/(kg K)].

    Raises
    ------
    InputError
        If a temperature is outside 200-1500 K.
    """
    return np.polyval(_CP_COEFFS, check_temperature(temperature) / 1000.0)


def prandtl(temperature: float | np.ndarray) -> np.ndarray:
    """Prandtl number of dry air (fit of the module docstring).

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], 200-1500 K.

    Returns
    -------
    ndarray
        Prandtl number [-].

    Raises
    ------
    InputError
        If a temperature is outside 200-1500 K.
    """
    t = check_temperature(temperature)
    return viscosity(t) * specific_heat(t) / conductivity(t)


def density(temperature: float | np.ndarray, pressure: float | np.ndarray = 101325.0) -> np.ndarray:
    """Ideal-gas density of dry air, ``p / (R T)`` with ``R = 287.05 J/(kg K)``.

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], 200-1500 K.
    pressure : float or ndarray
        Absolute pressure [Pa], > 0.

    Returns
    -------
    ndarray
        Density [kg/m^3].

    Raises
    ------
    InputError
        If the pressure is not finite and positive, or a temperature is outside the fits' range.
    """
    p = np.asarray(pressure, dtype=float)
    if np.any(~(p > 0)) or np.any(~np.isfinite(p)):
        raise InputError(f"air pressure: must be finite and > 0 Pa, got {pressure}")
    return p / (R_AIR * check_temperature(temperature))


def film_temperature(surface_temperature: float | np.ndarray, ambient_temperature: float) -> np.ndarray:
    """Film temperature, the mean of surface and ambient temperatures.

    Parameters
    ----------
    surface_temperature : float or ndarray
        Surface temperature [K].
    ambient_temperature : float
        Air temperature far from the surface [K].

    Returns
    -------
    ndarray
        ``(T_s + T_amb) / 2`` [K].
    """
    return 0.5 * (np.asarray(surface_temperature, dtype=float) + ambient_temperature)


@dataclass(frozen=True)
class AirProperties:
    """Dry air properties at one or more temperatures, all in SI.

    Attributes
    ----------
    temperature : ndarray
        Temperature the properties are evaluated at [K].
    density : ndarray
        Density [kg/m^3].
    viscosity : ndarray
        Dynamic viscosity [Pa s].
    conductivity : ndarray
        Thermal conductivity [W/(m K)].
    specific_heat : ndarray
        Isobaric specific heat [J/(kg K)].
    """

    temperature: np.ndarray
    density: np.ndarray
    viscosity: np.ndarray
    conductivity: np.ndarray
    specific_heat: np.ndarray

    @property
    def prandtl(self) -> np.ndarray:
        """Prandtl number ``mu cp / k`` [-]."""
        return self.viscosity * self.specific_heat / self.conductivity

    @property
    def kinematic_viscosity(self) -> np.ndarray:
        """Kinematic viscosity ``mu / rho`` [m^2/s]."""
        return self.viscosity / self.density

    @property
    def diffusivity(self) -> np.ndarray:
        """Thermal diffusivity ``k / (rho cp)`` [m^2/s]."""
        return self.conductivity / (self.density * self.specific_heat)

    @property
    def expansion(self) -> np.ndarray:
        """Volumetric expansion coefficient of an ideal gas ``1 / T`` [1/K]."""
        return 1.0 / self.temperature


def air_properties(temperature: float | np.ndarray, pressure: float = 101325.0, clamp: bool = False) -> AirProperties:
    """Dry air properties at ``temperature`` [K] and ``pressure`` [Pa].

    Parameters
    ----------
    temperature : float or ndarray
        Temperature [K], usually the film temperature, 200-1500 K.
    pressure : float
        Absolute pressure [Pa], > 0; only the density depends on it.
    clamp : bool
        If true, temperatures outside 200-1500 K are moved to the nearest limit and a
        :class:`HeatstackWarning` is issued instead of raising. The cooling laws use
        this, because a Newton iterate of the solver may briefly visit temperatures
        no real surface reaches, and stopping the run there would be worse than a
        few per cent of property error.

    Returns
    -------
    AirProperties
        The properties, arrays of the shape of ``temperature``.

    Raises
    ------
    InputError
        If ``clamp`` is false and a temperature is out of range, or the pressure is
        not positive.
    """
    t = np.asarray(temperature, dtype=float)
    if clamp:
        if not np.isfinite(t).all():
            raise InputError("air temperature: non-finite value")
        if (t < T_MIN).any() or (t > T_MAX).any():
            warnings.warn(_CLAMP_MESSAGE, HeatstackWarning, stacklevel=3)
            t = np.clip(t, T_MIN, T_MAX)
    else:
        check_temperature(t)
    if not (np.isfinite(pressure) and pressure > 0):
        raise InputError(f"air pressure: must be finite and > 0 Pa, got {pressure}")
    return AirProperties(
        temperature=t,
        density=pressure / (R_AIR * t),
        viscosity=_sutherland(t, _MU_REF, _MU_S, _MU_N),
        conductivity=_sutherland(t, _K_REF, _K_S, _K_N),
        specific_heat=np.polyval(_CP_COEFFS, t / 1000.0),
    )
