"""Units at the edges: parse user quantities into SI floats, and format them back.

Inside heatstack every quantity is a plain float in SI (K, s, m, W, J, kg, Pa).
Only public constructors, the case file and the command line call this module.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any

import numpy as np
import pint

from .errors import UnitError

__all__ = ["registry", "to_si", "to_si_array", "from_si", "SI_UNITS"]

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


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """Return heatstack's shared pint unit registry (created once)."""
    reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    reg.define("kt = knot")
    return reg


def _parse_unit(unit: str, field: str) -> Any:
    try:
        return registry().Unit(unit)
    except Exception as exc:  # pint raises several unrelated exception types
        raise UnitError(f"{field}: unknown unit {unit!r}") from exc


def to_si(value: Any, unit: str | None, dimension: str, field: str) -> float:
    """Convert a user value with its unit to a float in heatstack's SI unit.

    Parameters
    ----------
    value : float or str or pint.Quantity
        The number; a string such as ``"20 degC"`` or ``"3.5 MJ"`` carries its own unit.
    unit : str or None
        Unit of a bare number (e.g. ``"kt"``). ``None`` means the number is already SI.
    dimension : str
        A key of :data:`SI_UNITS` (e.g. ``"temperature"``, ``"energy"``).
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    float
        The value in the SI unit of ``dimension``.

    Raises
    ------
    UnitError
        If the unit is unknown or has the wrong dimension for ``field``.
    """
    return float(to_si_array(value, unit, dimension, field))


def to_si_array(value: Any, unit: str | None, dimension: str, field: str) -> np.ndarray:
    """Array version of :func:`to_si`: convert a sequence of numbers sharing one unit."""
    if dimension not in SI_UNITS:
        raise UnitError(f"{field}: unknown dimension {dimension!r}")
    target = SI_UNITS[dimension]
    reg = registry()
    if isinstance(value, str):
        try:
            quantity = reg.Quantity(value)
        except Exception as exc:
            raise UnitError(f"{field}: cannot read {value!r} as a quantity with a unit") from exc
        if unit is not None:
            raise UnitError(f"{field}: {value!r} carries a unit; do not also give unit={unit!r}")
    elif isinstance(value, pint.Quantity):
        quantity = value
    else:
        try:
            magnitude = np.asarray(value, dtype=float)
        except (TypeError, ValueError) as exc:
            raise UnitError(f"{field}: expected a number, got {value!r}") from exc
        if unit is None:
            return magnitude
        quantity = reg.Quantity(magnitude, _parse_unit(unit, field))
    if dimension == "temperature_difference":
        quantity = _as_difference(quantity)
    try:
        converted = quantity.to(target) if target else quantity.to("dimensionless")
    except pint.DimensionalityError as exc:
        raise UnitError(
            f"{field}: expected {dimension.replace('_', ' ')} (e.g. in {target or 'no unit'}), got {quantity.units:~}"
        ) from exc
    return np.asarray(converted.magnitude, dtype=float)


def _as_difference(quantity: pint.Quantity) -> pint.Quantity:
    """Treat degC / degF as temperature differences (1 degC = 1 K)."""
    reg = registry()
    text = f"{quantity.units}"
    if "degree_Celsius" in text:
        return reg.Quantity(quantity.magnitude, "delta_degC")
    if "degree_Fahrenheit" in text:
        return reg.Quantity(quantity.magnitude, "delta_degF")
    return quantity


def from_si(value: Any, dimension: str, unit: str) -> np.ndarray | float:
    """Convert an SI value (or array) of ``dimension`` to ``unit`` for display."""
    reg = registry()
    quantity = reg.Quantity(np.asarray(value, dtype=float), SI_UNITS[dimension] or "dimensionless")
    try:
        out = quantity.to(_parse_unit(unit, "output unit")).magnitude
    except pint.DimensionalityError as exc:
        raise UnitError(f"output unit {unit!r} is not a {dimension.replace('_', ' ')}") from exc
    return float(out) if np.ndim(out) == 0 else np.asarray(out)
