"""ICAO / ISO 2533 standard atmosphere (troposphere) and airspeed conversions.

Pressure altitude is the geopotential altitude [m] at which the standard atmosphere
has the actual static pressure. A temperature offset (ISA + dT) or an actual outside
air temperature changes temperature and density, never the pressure. Airspeeds use
the subsonic isentropic (St Venant) pitot relations: calibrated airspeed gives the
impact pressure as at sea level, the impact pressure and the actual static pressure
give the Mach number, and the true airspeed is the Mach number times the local speed
of sound.

All functions are SI: altitudes [m], temperatures [K], pressures [Pa], speeds [m/s].

References
----------
ISO 2533:1975, Standard Atmosphere, International Organization for Standardization.
ICAO Doc 7488/3, 1993, Manual of the ICAO Standard Atmosphere, 3rd ed.
Anderson, J.D., 2016, Introduction to Flight, 8th ed., McGraw-Hill, ch. 3 and
sect. 4.12 (measurement of airspeed, compressible subsonic flow).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

__all__ = [
    "G0",
    "R_ISA",
    "GAMMA",
    "T0",
    "P0",
    "RHO0",
    "LAPSE_RATE",
    "ALTITUDE_MIN",
    "ALTITUDE_MAX",
    "isa_temperature",
    "isa_pressure",
    "isa_density",
    "air_temperature_at",
    "speed_of_sound",
    "impact_pressure",
    "mach_from_calibrated",
    "true_airspeed",
    "ground_speed",
]

G0 = 9.80665  # standard gravity [m/s^2]
R_ISA = 287.05287  # gas constant of ISO 2533 air [J/(kg K)]
GAMMA = 1.4  # ratio of specific heats [-]
T0 = 288.15  # sea-level temperature [K]
P0 = 101325.0  # sea-level pressure [Pa]
RHO0 = P0 / (R_ISA * T0)  # sea-level density, 1.225 kg/m^3
LAPSE_RATE = 0.0065  # tropospheric temperature gradient [K/m]
ALTITUDE_MIN = -2000.0  # lowest altitude of the ISO 2533 tables [m]
ALTITUDE_MAX = 11000.0  # tropopause [m]
_A0 = float(np.sqrt(GAMMA * R_ISA * T0))  # sea-level speed of sound [m/s]
_EXPONENT = G0 / (R_ISA * LAPSE_RATE)  # pressure-temperature exponent, about 5.2559


def _check_altitude(altitude: float | np.ndarray) -> np.ndarray:
    h = np.asarray(altitude, dtype=float)
    if np.any(~np.isfinite(h)) or np.any(h < ALTITUDE_MIN) or np.any(h > ALTITUDE_MAX):
        raise InputError(
            f"pressure_altitude: {altitude} m is outside the troposphere model "
            f"({ALTITUDE_MIN:.0f} to {ALTITUDE_MAX:.0f} m)"
        )
    return h


def isa_temperature(pressure_altitude: float | np.ndarray, temperature_offset: float = 0.0) -> np.ndarray:
    """Standard-atmosphere temperature plus an offset.

    Parameters
    ----------
    pressure_altitude : float or ndarray
        Geopotential pressure altitude [m], -2000 to 11000 m.
    temperature_offset : float
        ISA deviation dT [K] (ISA + dT).

    Returns
    -------
    ndarray
        ``T0 - L h + dT`` [K].

    Raises
    ------
    InputError
        If the altitude is outside -2000 to 11000 m.
    """
    return T0 - LAPSE_RATE * _check_altitude(pressure_altitude) + temperature_offset


def isa_pressure(pressure_altitude: float | np.ndarray) -> np.ndarray:
    """Standard-atmosphere static pressure, ``p0 (T_std/T0)^(g0/(R L))``.

    Parameters
    ----------
    pressure_altitude : float or ndarray
        Geopotential pressure altitude [m], -2000 to 11000 m.

    Returns
    -------
    ndarray
        Static pressure [Pa].
    """
    t_std = T0 - LAPSE_RATE * _check_altitude(pressure_altitude)
    return P0 * (t_std / T0) ** _EXPONENT


def isa_density(pressure_altitude: float | np.ndarray, temperature_offset: float = 0.0) -> np.ndarray:
    """Ideal-gas density at a pressure altitude and temperature offset.

    Parameters
    ----------
    pressure_altitude : float or ndarray
        Geopotential pressure altitude [m], -2000 to 11000 m.
    temperature_offset : float
        ISA deviation dT [K].

    Returns
    -------
    ndarray
        Density ``p / (R (T_std + dT))`` [kg/m^3].
    """
    return isa_pressure(pressure_altitude) / (R_ISA * isa_temperature(pressure_altitude, temperature_offset))


def air_temperature_at(
    pressure_altitude: float,
    air_temperature: float | None = None,
    temperature_offset: float | None = None,
) -> float:
    """Outside air temperature [K] from an actual value or an ISA offset (not both).

    Parameters
    ----------
    pressure_altitude : float
        Pressure altitude [m].
    air_temperature : float, optional
        Actual outside air temperature [K].
    temperature_offset : float, optional
        ISA deviation [K]; ISA itself if neither is given.

    Returns
    -------
    float
        Outside air temperature [K].

    Raises
    ------
    InputError
        If both are given or the temperature is not positive.
    """
    if air_temperature is not None and temperature_offset is not None:
        raise InputError("air_temperature and temperature_offset: give one or the other, not both")
    if air_temperature is None:
        temperature = float(isa_temperature(pressure_altitude, temperature_offset or 0.0))
    else:
        _check_altitude(pressure_altitude)
        temperature = float(air_temperature)
    if not (np.isfinite(temperature) and temperature > 0):
        raise InputError(f"air_temperature: must be > 0 K, got {temperature}")
    return temperature


def speed_of_sound(temperature: float | np.ndarray) -> np.ndarray:
    """Speed of sound in air, ``sqrt(gamma R T)``.

    Parameters
    ----------
    temperature : float or ndarray
        Air temperature [K].

    Returns
    -------
    ndarray
        Speed of sound [m/s].
    """
    return np.sqrt(GAMMA * R_ISA * np.asarray(temperature, dtype=float))


def impact_pressure(calibrated_airspeed: float | np.ndarray) -> np.ndarray:
    """Pitot impact pressure ``qc`` of a calibrated airspeed (subsonic).

    ``qc = p0 [(1 + (gamma-1)/2 (V_c/a0)^2)^(gamma/(gamma-1)) - 1]``.

    Parameters
    ----------
    calibrated_airspeed : float or ndarray
        Calibrated airspeed [m/s].

    Returns
    -------
    ndarray
        Impact pressure [Pa].

    Raises
    ------
    InputError
        If the speed is negative or not below the sea-level speed of sound.
    """
    v = np.asarray(calibrated_airspeed, dtype=float)
    if np.any(~np.isfinite(v)) or np.any(v < 0) or np.any(v >= _A0):
        raise InputError(f"calibrated_airspeed: {calibrated_airspeed} m/s must be >= 0 and subsonic (< {_A0:.1f} m/s)")
    k = GAMMA / (GAMMA - 1.0)
    return P0 * ((1.0 + 0.5 * (GAMMA - 1.0) * (v / _A0) ** 2) ** k - 1.0)


def mach_from_calibrated(calibrated_airspeed: float | np.ndarray, pressure_altitude: float) -> np.ndarray:
    """Mach number of a calibrated airspeed at ``pressure_altitude``.

    ``M = sqrt(2/(gamma-1) [(qc/p + 1)^((gamma-1)/gamma) - 1])``.

    Parameters
    ----------
    calibrated_airspeed : float or ndarray
        Calibrated airspeed [m/s].
    pressure_altitude : float
        Pressure altitude [m].

    Returns
    -------
    ndarray
        Mach number [-].

    Raises
    ------
    InputError
        If the flow would be supersonic (the relation holds for M < 1 only).
    """
    qc = impact_pressure(calibrated_airspeed)
    p = isa_pressure(pressure_altitude)
    mach = np.sqrt(2.0 / (GAMMA - 1.0) * ((qc / p + 1.0) ** ((GAMMA - 1.0) / GAMMA) - 1.0))
    if np.any(mach >= 1.0):
        raise InputError(f"calibrated_airspeed: {calibrated_airspeed} m/s at {pressure_altitude} m is supersonic")
    return mach


def true_airspeed(
    calibrated_airspeed: float | np.ndarray,
    pressure_altitude: float,
    air_temperature: float | None = None,
    temperature_offset: float | None = None,
) -> np.ndarray:
    """True airspeed [m/s] from calibrated airspeed [m/s].

    Parameters
    ----------
    calibrated_airspeed : float or ndarray
        Calibrated airspeed [m/s], subsonic.
    pressure_altitude : float
        Pressure altitude [m].
    air_temperature : float, optional
        Actual outside air temperature [K].
    temperature_offset : float, optional
        ISA deviation [K]; ISA if neither temperature input is given.

    Returns
    -------
    ndarray
        True airspeed ``M a(T)`` [m/s].
    """
    temperature = air_temperature_at(pressure_altitude, air_temperature, temperature_offset)
    return mach_from_calibrated(calibrated_airspeed, pressure_altitude) * speed_of_sound(temperature)


def ground_speed(true_airspeed: float | np.ndarray, headwind: float = 0.0) -> np.ndarray:
    """Ground speed [m/s] along the runway: true airspeed minus the headwind component.

    Parameters
    ----------
    true_airspeed : float or ndarray
        True airspeed [m/s].
    headwind : float
        Headwind component [m/s]; a tailwind is negative.

    Returns
    -------
    ndarray
        Ground speed [m/s].
    """
    return np.asarray(true_airspeed, dtype=float) - headwind
