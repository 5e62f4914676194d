"""Property tables: one material property tabulated over temperature, interpolated linearly.

A :class:`PropertyTable` holds the rows of one property of one material, checks
them, interpolates between them and applies the range policy (``"error"`` or
``"clamp"``) outside them. Every quantity is SI: K and the SI unit of the value.
"""

from __future__ import annotations

import numbers
import warnings
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .errors import HeatstackWarning, MaterialError, PropertyRangeError

__all__ = ["PropertyTable", "EXTRAPOLATIONS", "warn_once", "forget_warnings", "as_float_array", "is_real_number"]

#: What a table does outside its rows: raise an error, or clamp to the end row (and warn once).
EXTRAPOLATIONS = ("error", "clamp")

#: (material, property) pairs that have already warned about clamping.
_clamp_warned: set[tuple[str, str]] = set()


def warn_once(material: str, prop: str, message: str, stacklevel: int) -> None:
    """Warn with a :class:`~heatstack.errors.HeatstackWarning`, once per (material, property) pair.

    Parameters
    ----------
    material, prop : str
        Names of the material and of the property the warning is about.
    message : str
        The warning text.
    stacklevel : int
        Stack level of the caller, as for :func:`warnings.warn` (one is added here).
    """
    if (material, prop) not in _clamp_warned:
        _clamp_warned.add((material, prop))
        warnings.warn(message, HeatstackWarning, stacklevel=stacklevel + 1)


def forget_warnings() -> None:
    """Let every (material, property) pair warn again: called at the start of each run, so
    each run's report lists the materials that left their tables in that run."""
    _clamp_warned.clear()


def is_real_number(value: object) -> bool:
    """True for an int or float (a real number), false for a bool or anything else.

    Parameters
    ----------
    value : object
        The value to test.

    Returns
    -------
    bool
        Whether ``value`` is a real number other than a bool.
    """
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def as_float_array(values: ArrayLike, what: str) -> np.ndarray:
    """``values`` as a float array.

    Parameters
    ----------
    values : array_like
        Numbers to convert.
    what : str
        Name of the quantity, for the error message.

    Returns
    -------
    numpy.ndarray
        Float array of the same shape.

    Raises
    ------
    MaterialError
        If ``values`` are not numeric; the message names ``what``.
    """
    try:
        return np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise MaterialError(f"{what} must be numeric, got {values!r}") from exc


@dataclass(frozen=True, eq=False)
class PropertyTable:
    """One property of one material, piecewise linear in temperature.

    Parameters
    ----------
    name : str
        Property name, e.g. ``"specific_heat"``; used in messages.
    material : str
        Name of the material the table belongs to; used in messages.
    temperature : ndarray
        Table temperatures [K], strictly increasing, at least two rows.
    value : ndarray
        Property values at those temperatures, in SI units.
    extrapolation : {"error", "clamp"}
        Outside the table, ``"error"`` raises :class:`PropertyRangeError`;
        ``"clamp"`` uses the end value and warns once per (material, property).
    source : str
        Where the values come from (handbook, edition, table).

    Raises
    ------
    MaterialError
        If the rows are too few, not finite or not strictly increasing in temperature.
    """

    name: str
    material: str
    temperature: np.ndarray
    value: np.ndarray
    extrapolation: str = "error"
    source: str = ""
    _slope: np.ndarray = field(init=False, repr=False)

    def __post_init__(self) -> None:
        where = self._where()
        if self.extrapolation not in EXTRAPOLATIONS:
            raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {self.extrapolation!r}")
        temperature = np.array(as_float_array(self.temperature, f"{where}: temperature"))
        value = np.array(as_float_array(self.value, f"{where}: value"))
        if temperature.ndim != 1 or value.shape != temperature.shape:
            raise MaterialError(
                f"{where}: temperature and value must be 1-D arrays of equal length, "
                f"got shapes {temperature.shape} and {value.shape}"
            )
        if temperature.size < 2:
            raise MaterialError(f"{where}: a table needs at least 2 rows, got {temperature.size}")
        for row, (t, v) in enumerate(zip(temperature, value, strict=True), start=1):
            if not (np.isfinite(t) and np.isfinite(v)):
                raise MaterialError(f"{where}: table row {row} [{t:g}, {v:g}] is not finite")
        if temperature[0] <= 0.0:
            raise MaterialError(f"{where}: table row 1 temperature {temperature[0]:g} K is not > 0 K")
        steps = np.diff(temperature)
        bad = np.flatnonzero(steps <= 0.0)
        if bad.size:
            row = int(bad[0]) + 2
            raise MaterialError(
                f"{where}: table row {row} (T = {temperature[row - 1]:g} K) is not above "
                f"row {row - 1} (T = {temperature[row - 2]:g} K); temperatures must be "
                "strictly increasing"
            )
        slope = np.diff(value) / steps
        for array in (temperature, value, slope):
            array.setflags(write=False)
        object.__setattr__(self, "temperature", temperature)
        object.__setattr__(self, "value", value)
        object.__setattr__(self, "_slope", slope)

    def _where(self) -> str:
        return f"material {self.material!r}, property {self.name!r}"

    @property
    def temperature_range(self) -> tuple[float, float]:
        """First and last table temperatures [K]."""
        return float(self.temperature[0]), float(self.temperature[-1])

    def _checked(self, temperature: ArrayLike) -> np.ndarray:
        """Return ``temperature`` as a float array after the range policy has been applied."""
        t = as_float_array(temperature, f"{self._where()}: temperature")
        if t.size:
            low, high = self.temperature[0], self.temperature[-1]
            t_min, t_max = t.min(), t.max()
            if not (t_min >= low and t_max <= high):  # also true for NaN
                self._out_of_range(t, t_min, t_max)
        return t

    def _out_of_range(self, t: np.ndarray, t_min: float, t_max: float) -> None:
        low, high = self.temperature_range
        table = f"the table covers {low:g} K to {high:g} K"
        if np.isnan(t_min) or np.isnan(t_max):
            raise PropertyRangeError(f"{self._where()}: temperature is NaN ({table})")
        worst = t_min if t_min < low else t_max
        count = int(np.count_nonzero((t < low) | (t > high)))
        if self.extrapolation == "error":
            raise PropertyRangeError(
                f"{self._where()}: temperature {worst:.6g} K is outside the table "
                f"({table}; {count} value(s) outside, extrapolation = 'error')"
            )
        warn_once(
            self.material,
            self.name,
            f"{self._where()}: temperature {worst:.6g} K is outside the table ({table}); "
            "clamping to the end value (warned once per material and property in a run)",
            stacklevel=4,
        )

    def __call__(self, temperature: ArrayLike) -> np.ndarray:
        """Interpolate the table linearly.

        Parameters
        ----------
        temperature : array_like
            Temperature [K], any shape.

        Returns
        -------
        ndarray
            The property at each temperature, same shape as ``temperature``, SI units.

        Raises
        ------
        PropertyRangeError
            If a temperature is NaN, or outside the table when extrapolation is ``"error"``.
        """
        t = self._checked(temperature)
        return np.asarray(np.interp(t, self.temperature, self.value))

    def slope(self, temperature: ArrayLike) -> np.ndarray:
        """Derivative of the piecewise-linear table with respect to temperature.

        At an interior row the slope of the segment above it is returned; at the
        last row, that of the last segment. Where the table is clamped the slope is 0.

        Parameters
        ----------
        temperature : array_like
            Temperature [K], any shape.

        Returns
        -------
        ndarray
            d value / dT [SI unit of the value per K], same shape as ``temperature``.

        Raises
        ------
        PropertyRangeError
            As for :meth:`__call__`.
        """
        t = self._checked(temperature)
        knots = self.temperature
        k = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, knots.size - 2)
        slope = self._slope[k]
        if self.extrapolation == "clamp":
            slope = np.where((t < knots[0]) | (t > knots[-1]), 0.0, slope)
        return np.asarray(slope)
