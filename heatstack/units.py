"""Units at the edges: user quantities converted to SI floats with range checks, and SI back for display.

Inside heatstack every quantity is a plain float in SI (K, s, m, W, J, kg, Pa). Only
public constructors, the case file and the command line call the unit path:
:func:`quantity` (and :func:`quantity_array`) here for values; the strings they are given
are read by the safe parser of :mod:`heatstack.unit_parser` (``unit`` for unit strings
given on their own); dataclass fields and function arguments declare their dimension
once through :mod:`heatstack.unit_declarations`.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pint

from .errors import InputError, UnitError
from .unit_parser import QUOTE_LIMIT, parse_quantity, quote_text, registry, unit

__all__ = [
    "quantity",
    "quantity_array",
    "to_si",
    "to_si_array",
    "from_si",
    "SI_UNITS",
]

#: The SI unit heatstack uses internally for each dimension name it accepts.
SI_UNITS: dict[str, str] = {
    "temperature": "K",
    "temperature_difference": "K",
    "time": "s",
    "length": "m",
    "area": "m**2",
    "volume": "m**3",
    "thermal_conductance": "W/K",
    "mass": "kg",
    "energy": "J",
    "power": "W",
    "pressure": "Pa",
    "force": "N",
    "speed": "m/s",
    "acceleration": "m/s**2",
    "density": "kg/m**3",
    "specific_heat": "J/(kg*K)",
    "conductivity": "W/(m*K)",
    "heat_transfer_coefficient": "W/(m**2*K)",
    "heat_flux": "W/m**2",
    "moment_of_inertia": "kg*m**2",
    "angular_speed": "rad/s",
    "dimensionless": "",
}


def _as_difference(value: pint.Quantity) -> pint.Quantity:
    """Treat degC / degF as temperature differences (1 degC = 1 K)."""
    text = f"{value.units}"
    if "degree_Celsius" in text:
        return registry().Quantity(value.magnitude, "delta_degC")
    if "degree_Fahrenheit" in text:
        return registry().Quantity(value.magnitude, "delta_degF")
    return value


def _convert(value: Any, given_unit: str | None, dimension: str, field: str, allow_nonfinite: bool) -> np.ndarray:
    """One value (number, string or pint Quantity) or a numeric array -> SI array."""
    if dimension not in SI_UNITS:
        raise UnitError(f"{field}: unknown dimension {dimension!r}")
    target = SI_UNITS[dimension]
    reg = registry()
    if isinstance(value, str):
        if given_unit is not None:
            raise UnitError(f"{field}: {quote_text(value)} carries a unit; do not also give unit={given_unit!r}")
        value = parse_quantity(value, field, allow_nonfinite)
    elif isinstance(value, pint.Quantity):
        if given_unit is not None:
            raise UnitError(f"{field}: {value!r} carries a unit; do not also give unit={given_unit!r}")
    else:
        if isinstance(value, bool | np.bool_) or value is None:
            raise InputError(f"{field}: expected a number or a quantity such as '20 mm', got {value!r}")
        try:
            magnitude = np.asarray(value, dtype=float)
        except (TypeError, ValueError, OverflowError) as exc:
            raise InputError(f"{field}: expected a number or a quantity such as '20 mm', got {value!r}") from exc
        if given_unit is None:
            return magnitude
        value = reg.Quantity(magnitude, unit(given_unit, f"{field} unit"))
    if dimension == "temperature_difference":
        value = _as_difference(value)
    try:
        converted = value.to(target) if target else value.to("dimensionless")
    except pint.DimensionalityError as exc:
        raise UnitError(
            f"{field}: expected {dimension.replace('_', ' ')} (e.g. in {target or 'no unit'}), got {value.units:~}"
        ) from exc
    except pint.PintError as exc:  # e.g. an offset unit (degC) inside a product
        raise UnitError(f"{field}: cannot convert {value.units:~} to {target or 'no unit'}: {exc}") from exc
    try:
        return np.asarray(converted.magnitude, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{field}: expected numbers, got {value!r}") from exc


def _check_range(
    values: np.ndarray,
    field: str,
    minimum: float | None,
    exclusive_minimum: bool,
    maximum: float | None,
    allow_nonfinite: bool,
    error: type[InputError],
    unit: str = "",
) -> None:
    if not allow_nonfinite and not np.all(np.isfinite(values)):
        raise error(f"{field}: must be finite, got {_shown(values)}")
    finite = values[np.isfinite(values)] if allow_nonfinite else values
    if minimum is not None:
        low = finite <= minimum if exclusive_minimum else finite < minimum
        if np.any(low):
            sign = ">" if exclusive_minimum else ">="
            raise error(f"{field}: must be {sign} {minimum:g}{unit}, got {_shown(values)}{unit}")
    if maximum is not None and np.any(finite > maximum):
        raise error(f"{field}: must be <= {maximum:g}{unit}, got {_shown(values)}{unit}")


def _si_text(dimension: str) -> str:
    """`` <SI unit>`` of ``dimension`` for messages (empty for none or an unknown dimension)."""
    unit = SI_UNITS.get(dimension, "") if isinstance(dimension, str) else ""
    return f" {unit}" if unit else ""


def _shown(values: np.ndarray) -> str:
    text = f"{float(values):g}" if values.ndim == 0 else np.array2string(values, threshold=6, precision=6)
    return text if len(text) <= QUOTE_LIMIT else text[: QUOTE_LIMIT - 3] + "..."


def quantity(
    value: Any,
    dimension: str,
    field: str,
    *,
    unit: str | None = None,
    minimum: float | None = None,
    exclusive_minimum: bool = False,
    maximum: float | None = None,
    allow_nonfinite: bool = False,
    error: type[InputError] = InputError,
) -> float:
    """The one way a user value becomes an SI float: parse, check dimension and range.

    Parameters
    ----------
    value : float or str or pint.Quantity
        A bare number (already SI, or in ``unit``), a string such as ``"20 degC"`` or
        ``"3.5 MJ"``, or a pint Quantity.
    dimension : str
        A key of :data:`SI_UNITS` (e.g. ``"temperature"``, ``"energy"``).
    field : str
        Name or key path of the input field; every error message starts with it.
    unit : str, optional
        Unit of a bare number (e.g. ``"kt"``); checked like any unit string.
    minimum, maximum : float, optional
        Bounds in SI.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.
    allow_nonfinite : bool
        Accept ``nan`` and ``inf`` (bounds then apply to the finite values only).
    error : type of InputError
        Class raised for a value out of range or not finite (e.g. ``GeometryError``).

    Returns
    -------
    float
        The value in the SI unit of ``dimension``.

    Raises
    ------
    UnitError
        If the text cannot be read, the unit is unknown or has the wrong dimension.
    InputError
        (or ``error``) if the value is not a number, not one value, not finite or out of range.
    """
    if unit is None and type(value) in (float, int) and dimension in SI_UNITS and abs(value) < 1e300:
        # the common case (a bare SI number, e.g. from a study's overrides): plain float
        # checks; any value they refuse takes the full path below for its message
        number = float(value)
        if (
            math.isfinite(number)
            and (minimum is None or (number > minimum if exclusive_minimum else number >= minimum))
            and (maximum is None or number <= maximum)
        ):
            return number
    values = _convert(value, unit, dimension, field, allow_nonfinite)
    if values.ndim != 0:
        raise InputError(f"{field}: expected one value, got {_shown(values)}")
    _check_range(values, field, minimum, exclusive_minimum, maximum, allow_nonfinite, error, _si_text(dimension))
    return float(values)


def quantity_array(
    values: Any,
    dimension: str,
    field: str,
    *,
    unit: str | None = None,
    minimum: float | None = None,
    exclusive_minimum: bool = False,
    maximum: float | None = None,
    allow_nonfinite: bool = False,
    error: type[InputError] = InputError,
) -> np.ndarray:
    """Array form of :func:`quantity`.

    Accepts a numeric array, an array Quantity, or a sequence whose items are numbers,
    strings or Quantities (each read alone; ``field[i]`` in errors).

    Parameters
    ----------
    values : array_like, pint.Quantity or sequence
        The values.
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name or key path of the input field.
    unit : str, optional
        Unit of bare numbers.
    minimum, maximum : float, optional
        Bounds in SI, applied to every value.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.
    allow_nonfinite : bool
        Accept ``nan`` and ``inf``.
    error : type of InputError
        Class raised for a value out of range or not finite.

    Returns
    -------
    numpy.ndarray
        Float array in the SI unit of ``dimension``.

    Raises
    ------
    UnitError
        If a value cannot be read or has the wrong dimension.
    InputError
        (or ``error``) if a value is not finite or out of range.
    """
    if isinstance(values, list | tuple) and any(isinstance(v, str | pint.Quantity) for v in values):
        out = np.array(
            [_convert(v, unit, dimension, f"{field}[{i}]", allow_nonfinite) for i, v in enumerate(values)],
            dtype=float,
        )
    else:
        out = np.asarray(_convert(values, unit, dimension, field, allow_nonfinite), dtype=float)
    _check_range(out, field, minimum, exclusive_minimum, maximum, allow_nonfinite, error, _si_text(dimension))
    return out


def to_si(value: Any, unit: str | None, dimension: str, field: str) -> float:
    """Convert a value to an SI float with no range check (see :func:`quantity`).

    Non-finite numbers pass; text is read by the same safe tokeniser.

    Parameters
    ----------
    value : float or str or pint.Quantity
        The value.
    unit : str or None
        Unit of a bare number (None: SI).
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    float
        The value in SI.

    Raises
    ------
    UnitError
        If the value cannot be read or has the wrong dimension.
    """
    return quantity(value, dimension, field, unit=unit, allow_nonfinite=True)


def to_si_array(value: Any, unit: str | None, dimension: str, field: str) -> np.ndarray:
    """Array version of :func:`to_si`.

    Parameters
    ----------
    value : array_like, pint.Quantity or sequence
        The values.
    unit : str or None
        Unit of bare numbers (None: SI).
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    numpy.ndarray
        The values in SI.

    Raises
    ------
    UnitError
        If a value cannot be read or has the wrong dimension.
    """
    return quantity_array(value, dimension, field, unit=unit, allow_nonfinite=True)


# ---------------------------------------------------------------------------- display


def from_si(value: Any, dimension: str, unit_text: str) -> np.ndarray | float:
    """Convert an SI value (or array) of ``dimension`` to ``unit_text`` for display.

    Parameters
    ----------
    value : float or array_like
        The value in the SI unit of ``dimension``.
    dimension : str
        A key of :data:`SI_UNITS`.
    unit_text : str
        The output unit, e.g. ``"degC"``.

    Returns
    -------
    float or ndarray
        The value in ``unit_text``.

    Raises
    ------
    UnitError
        If the unit is unknown or not of ``dimension``.
    """
    reg = registry()
    value_si = reg.Quantity(np.asarray(value, dtype=float), SI_UNITS[dimension] or "dimensionless")
    try:
        out = value_si.to(unit(unit_text, "output unit")).magnitude
    except pint.DimensionalityError as exc:
        raise UnitError(f"output unit {unit_text!r} is not a {dimension.replace('_', ' ')}") from exc
    return float(out) if np.ndim(out) == 0 else np.asarray(out)
