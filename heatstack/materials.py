"""Materials: temperature-dependent property tables and the exact enthalpy they imply.

A :class:`Material` holds a density and four :class:`PropertyTable` objects
(specific heat, in-plane and through-thickness conductivity, emissivity). Each
table is piecewise linear in temperature between its rows. The solver works in
volumetric enthalpy, so :meth:`Material.enthalpy` integrates the piecewise-linear
specific heat exactly (a piecewise quadratic) and
:meth:`Material.temperature_from_enthalpy` inverts it exactly.

Mass is fixed by the density at the reference temperature 293.15 K: the geometry
is given cold and thermal expansion is neglected, so each cell keeps the mass
``density * cold volume`` at every temperature.

Materials live in ``materials/<name>.toml`` files (one material a file, units
named in the file, a source beside every table); see :func:`load_material`.
Inside this module every quantity is SI: K, J, kg, m, W.
"""

from __future__ import annotations

import difflib
import functools
import numbers
import tomllib
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cache
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .errors import HeatstackWarning, MaterialError, PropertyRangeError, UnitError
from .units import to_si_array

__all__ = [
    "REFERENCE_TEMPERATURE",
    "PropertyTable",
    "Material",
    "load_material",
    "available_materials",
    "material_from_mapping",
    "materials_directory",
    "simple_material",
]

#: Temperature [K] at which the density is given and the enthalpy is zero.
REFERENCE_TEMPERATURE = 293.15

_EXTRAPOLATIONS = ("error", "clamp")

#: (material, property) pairs that have already warned about clamping.
_clamp_warned: set[tuple[str, str]] = set()


def _warn_once(material: str, prop: str, message: str, stacklevel: int) -> None:
    if (material, prop) not in _clamp_warned:
        _clamp_warned.add((material, prop))
        warnings.warn(message, HeatstackWarning, stacklevel=stacklevel + 1)


def _is_number(value: Any) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def _as_float_array(values: ArrayLike, what: str) -> np.ndarray:
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
        if self.extrapolation not in _EXTRAPOLATIONS:
            raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {self.extrapolation!r}")
        temperature = np.array(_as_float_array(self.temperature, f"{where}: temperature"))
        value = np.array(_as_float_array(self.value, f"{where}: value"))
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
        t = _as_float_array(temperature, f"{self._where()}: temperature")
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
        _warn_once(
            self.material,
            self.name,
            f"{self._where()}: temperature {worst:.6g} K is outside the table ({table}); "
            "clamping to the end value (warned once per material and property)",
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


def _first_row_outside(table: PropertyTable, low: float, high: float) -> int | None:
    """Index of the first row whose value is not in (low, high], or None."""
    bad = np.flatnonzero((table.value <= low) | (table.value > high))
    return int(bad[0]) if bad.size else None


@dataclass(frozen=True, eq=False)
class Material:
    """A solid with temperature-dependent thermal properties.

    Parameters
    ----------
    name : str
        Material name, e.g. ``"carbon-carbon"``.
    description : str
        What the material is and where it is used.
    density : float
        Density [kg/m^3] at the reference temperature 293.15 K. It fixes each cell's
        mass: the geometry is given cold and thermal expansion is neglected.
    specific_heat : PropertyTable
        Specific heat capacity [J/(kg K)], > 0.
    conductivity_in_plane : PropertyTable
        Thermal conductivity in the plane of a disc [W/(m K)], > 0; acts radially.
    conductivity_through_thickness : PropertyTable
        Thermal conductivity through a disc's thickness [W/(m K)], > 0; acts axially.
        The same table as ``conductivity_in_plane`` for an isotropic material.
    emissivity : PropertyTable
        Total hemispherical emissivity [-], in (0, 1].
    extrapolation : {"error", "clamp"}
        The range policy the tables were loaded with.
    source_file : str
        Path of the file the material was read from, or ``"<inline>"``.

    Raises
    ------
    MaterialError
        If a value is non-positive (emissivity outside (0, 1]) or the reference
        temperature lies outside the specific-heat table while it does not clamp.
    """

    name: str
    description: str
    density: float
    specific_heat: PropertyTable
    conductivity_in_plane: PropertyTable
    conductivity_through_thickness: PropertyTable
    emissivity: PropertyTable
    extrapolation: str = "error"
    source_file: str = "<inline>"
    _knot_energy: np.ndarray = field(init=False, repr=False)
    _reference_energy: float = field(init=False, repr=False)
    _enthalpy_range: tuple[float, float] = field(init=False, repr=False)

    def __post_init__(self) -> None:
        where = f"material {self.name!r}"
        if self.extrapolation not in _EXTRAPOLATIONS:
            raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {self.extrapolation!r}")
        density = self.density
        if not (_is_number(density) and np.isfinite(density) and density > 0.0):
            raise MaterialError(f"{where}, property 'density': must be > 0 kg/m^3, got {density!r}")
        object.__setattr__(self, "density", float(density))
        checks = (
            (self.specific_heat, np.inf, "> 0"),
            (self.conductivity_in_plane, np.inf, "> 0"),
            (self.conductivity_through_thickness, np.inf, "> 0"),
            (self.emissivity, 1.0, "in (0, 1]"),
        )
        for table, high, wanted in checks:
            if not isinstance(table, PropertyTable):
                raise MaterialError(f"{where}: expected a PropertyTable, got {type(table).__name__}")
            row = _first_row_outside(table, 0.0, high)
            if row is not None:
                raise MaterialError(
                    f"{where}, property {table.name!r}: table row {row + 1} "
                    f"(T = {table.temperature[row]:g} K) has value {table.value[row]:g}, "
                    f"which must be {wanted}"
                )
        cp = self.specific_heat
        low, high = cp.temperature_range
        if cp.extrapolation != "clamp" and not low <= REFERENCE_TEMPERATURE <= high:
            raise MaterialError(
                f"{where}, property 'specific_heat': the table ({low:g} K to {high:g} K) must "
                f"contain the reference temperature {REFERENCE_TEMPERATURE} K, or use "
                "extrapolation = 'clamp'"
            )
        # Specific energy [J/kg] at each knot, counted from the first knot. The same
        # expression as in _specific_energy, so a knot gives back its value bit for bit.
        steps = np.diff(cp.temperature)
        increments = steps * (cp.value[:-1] + 0.5 * cp._slope * steps)
        knot_energy = np.concatenate(([0.0], np.cumsum(increments)))
        knot_energy.setflags(write=False)
        object.__setattr__(self, "_knot_energy", knot_energy)
        reference = float(self._specific_energy(np.asarray(REFERENCE_TEMPERATURE)))
        object.__setattr__(self, "_reference_energy", reference)
        enthalpy_range = (
            self.density * (0.0 - reference),
            self.density * (float(knot_energy[-1]) - reference),
        )
        object.__setattr__(self, "_enthalpy_range", enthalpy_range)

    @property
    def anisotropic(self) -> bool:
        """Whether in-plane and through-thickness conductivities differ."""
        a, b = self.conductivity_in_plane, self.conductivity_through_thickness
        if a is b:
            return False
        same = np.array_equal(a.temperature, b.temperature) and np.array_equal(a.value, b.value)
        return not same

    def conductivity_radial(self, temperature: ArrayLike) -> np.ndarray:
        """Radial conductivity [W/(m K)] (the in-plane table) at ``temperature`` [K]."""
        return self.conductivity_in_plane(temperature)

    def conductivity_axial(self, temperature: ArrayLike) -> np.ndarray:
        """Axial conductivity [W/(m K)] (the through-thickness table) at ``temperature`` [K]."""
        return self.conductivity_through_thickness(temperature)

    def volumetric_heat_capacity(self, temperature: ArrayLike) -> np.ndarray:
        """Volumetric heat capacity ``density * cp(T)`` [J/(m^3 K)].

        Parameters
        ----------
        temperature : array_like
            Temperature [K], any shape.

        Returns
        -------
        ndarray
            Volumetric heat capacity [J/(m^3 K)], same shape as ``temperature``.
        """
        return self.density * self.specific_heat(temperature)

    def _specific_energy(self, t: np.ndarray) -> np.ndarray:
        """Integral of cp [J/kg] from the first table row to ``t``; no range check."""
        cp = self.specific_heat
        knots, values, slopes = cp.temperature, cp.value, cp._slope
        inside = np.clip(t, knots[0], knots[-1])
        k = np.clip(np.searchsorted(knots, inside, side="right") - 1, 0, knots.size - 2)
        dt = inside - knots[k]
        energy = self._knot_energy[k] + dt * (values[k] + 0.5 * slopes[k] * dt)
        if cp.extrapolation == "clamp":  # cp is constant beyond the ends
            energy = energy + (t - inside) * np.where(t < knots[0], values[0], values[-1])
        return energy

    def thermal_properties(self, temperature: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Radial and axial conductivity, volumetric heat capacity and enthalpy in one pass.

        The solver's hot loop: one interval search on the union of all table knots (on
        which every property is still exactly piecewise linear, and the enthalpy exactly
        piecewise quadratic) instead of one search and one range check per property.
        Temperatures outside the common range of the tables fall back to the
        per-property methods, which apply each table's range policy.

        Parameters
        ----------
        temperature : ndarray
            Temperature [K].

        Returns
        -------
        (k_radial [W/(m K)], k_axial [W/(m K)], rho cp [J/(m^3 K)], H [J/m^3])
        """
        knots, low, high = self._fused_knots
        t = np.asarray(temperature, dtype=float)
        t_min, t_max = (t.min(), t.max()) if t.size else (low, high)
        if not (t_min >= low and t_max <= high):  # also catches NaN
            return (
                self.conductivity_radial(t),
                self.conductivity_axial(t),
                self.volumetric_heat_capacity(t),
                self.enthalpy(t),
            )
        k = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, knots.size - 2)
        dt = t - knots[k]
        (kr0, kr1), (kz0, kz1), (c0, c1), h0 = self._fused_values
        c = c0[k] + c1[k] * dt
        return kr0[k] + kr1[k] * dt, kz0[k] + kz1[k] * dt, c, h0[k] + dt * (c0[k] + 0.5 * c1[k] * dt)

    @functools.cached_property
    def _fused_knots(self) -> tuple[np.ndarray, float, float]:
        tables = (self.specific_heat, self.conductivity_in_plane, self.conductivity_through_thickness)
        low = max(tab.temperature[0] for tab in tables)
        high = min(tab.temperature[-1] for tab in tables)
        knots = np.unique(np.concatenate([tab.temperature for tab in tables]))
        return knots[(knots >= low) & (knots <= high)], float(low), float(high)

    @functools.cached_property
    def _fused_values(self):
        knots = self._fused_knots[0]

        def pieces(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            return values[:-1], np.diff(values) / np.diff(knots)

        return (
            pieces(self.conductivity_in_plane(knots)),
            pieces(self.conductivity_through_thickness(knots)),
            pieces(self.volumetric_heat_capacity(knots)),
            self.enthalpy(knots)[:-1],
        )

    def enthalpy(self, temperature: ArrayLike) -> np.ndarray:
        """Volumetric enthalpy ``density * integral of cp from 293.15 K to T`` [J/m^3].

        The integral of the piecewise-linear specific heat is exact. Where the table
        clamps, cp is constant beyond its ends, so the enthalpy is linear there.

        Parameters
        ----------
        temperature : array_like
            Temperature [K], any shape.

        Returns
        -------
        ndarray
            Volumetric enthalpy [J/m^3], zero at 293.15 K, same shape as ``temperature``.

        Raises
        ------
        PropertyRangeError
            If a temperature is NaN, or outside a specific-heat table that does not clamp.
        """
        t = self.specific_heat._checked(temperature)
        return self.density * (self._specific_energy(t) - self._reference_energy)

    def temperature_from_enthalpy(self, enthalpy: ArrayLike) -> np.ndarray:
        """Temperature at a given volumetric enthalpy: the exact inverse of :meth:`enthalpy`.

        Parameters
        ----------
        enthalpy : array_like
            Volumetric enthalpy relative to 293.15 K [J/m^3], any shape.

        Returns
        -------
        ndarray
            Temperature [K], same shape as ``enthalpy``.

        Raises
        ------
        PropertyRangeError
            If an enthalpy is NaN, or outside the table's enthalpy range when the
            specific-heat table does not clamp.
        """
        cp = self.specific_heat
        h = _as_float_array(enthalpy, f"material {self.name!r}: enthalpy")
        if h.size:
            self._check_enthalpy(h)
        knots, values, slopes = cp.temperature, cp.value, cp._slope
        energy = h / self.density + self._reference_energy
        inside = np.clip(energy, 0.0, self._knot_energy[-1])
        k = np.clip(np.searchsorted(self._knot_energy, inside, side="right") - 1, 0, knots.size - 2)
        # Solve values[k] x + slopes[k] x^2 / 2 = r for x >= 0 in the stable form
        # x = 2 r / (b + sqrt(b^2 + 2 s r)); b + sqrt(...) = cp(T_k) + cp(T) > 0.
        r = inside - self._knot_energy[k]
        b = values[k]
        root = np.sqrt(np.maximum(b * b + 2.0 * slopes[k] * r, 0.0))
        t = knots[k] + 2.0 * r / (b + root)
        if cp.extrapolation == "clamp":
            t = t + (energy - inside) / np.where(energy < 0.0, values[0], values[-1])
        else:  # the enthalpy is in range: only rounding can leave the table
            t = np.clip(t, knots[0], knots[-1])
        return np.asarray(t)

    def _check_enthalpy(self, h: np.ndarray) -> None:
        low, high = self._enthalpy_range
        h_min, h_max = h.min(), h.max()
        if h_min >= low and h_max <= high:
            return
        t_low, t_high = self.specific_heat.temperature_range
        where = f"material {self.name!r}, property 'specific_heat'"
        table = f"the table covers {low:.6g} to {high:.6g} J/m^3, i.e. {t_low:g} K to {t_high:g} K"
        if np.isnan(h_min) or np.isnan(h_max):
            raise PropertyRangeError(f"{where}: enthalpy is NaN ({table})")
        worst = h_min if h_min < low else h_max
        if self.specific_heat.extrapolation == "error":
            raise PropertyRangeError(
                f"{where}: enthalpy {worst:.6g} J/m^3 is outside the table ({table}; extrapolation = 'error')"
            )
        _warn_once(
            self.name,
            "specific_heat",
            f"{where}: enthalpy {worst:.6g} J/m^3 is outside the table ({table}); "
            "extrapolating with the end specific heat (warned once per material and property)",
            stacklevel=3,
        )


# --------------------------------------------------------------------------- loading

_TOP_KEYS = (
    "name",
    "description",
    "extrapolation",
    "density",
    "specific_heat",
    "conductivity",
    "conductivity_in_plane",
    "conductivity_through_thickness",
    "emissivity",
)
_DENSITY_KEYS = ("value", "unit", "source")
_TABLE_KEYS = ("unit", "temperature_unit", "source", "table")
_TABLE_DIMENSIONS = {
    "specific_heat": "specific_heat",
    "conductivity": "conductivity",
    "conductivity_in_plane": "conductivity",
    "conductivity_through_thickness": "conductivity",
    "emissivity": "dimensionless",
}


def _section(data: Mapping[str, Any], key: str, allowed: tuple[str, ...], where: str) -> Mapping:
    section = data[key]
    if not isinstance(section, Mapping):
        raise MaterialError(f"{where}: [{key}] must be a table of keys, got {section!r}")
    for sub in section:
        if sub not in allowed:
            raise MaterialError(f"{where}: unknown key {sub!r} in [{key}] (allowed: {', '.join(allowed)})")
    for sub in allowed:
        if sub not in section:
            raise MaterialError(f"{where}: [{key}] is missing the key {sub!r}")
    for sub in ("unit", "temperature_unit", "source"):
        if sub in section and not isinstance(section[sub], str):
            raise MaterialError(f"{where}: [{key}] {sub} must be a string, got {section[sub]!r}")
    if not section["source"].strip():
        raise MaterialError(f"{where}: [{key}] source must name where the values come from")
    return section


def _one_line(text: str) -> str:
    """Collapse the line breaks and indentation of a multi-line TOML string."""
    return " ".join(text.split())


def _convert(values: Any, unit: str, dimension: str, field_name: str) -> np.ndarray:
    try:
        return to_si_array(values, unit, dimension, field_name)
    except UnitError as exc:
        raise MaterialError(str(exc)) from exc


def _read_density(data: Mapping[str, Any], where: str) -> float:
    section = _section(data, "density", _DENSITY_KEYS, where)
    if not _is_number(section["value"]):
        raise MaterialError(f"{where}: [density] value must be a number, got {section['value']!r}")
    return float(_convert(section["value"], section["unit"], "density", f"{where}: [density] unit"))


def _read_table(
    data: Mapping[str, Any], key: str, prop: str, name: str, extrapolation: str, where: str
) -> PropertyTable:
    section = _section(data, key, _TABLE_KEYS, where)
    rows = section["table"]
    if not isinstance(rows, list | tuple) or len(rows) < 2:
        raise MaterialError(f"{where}: [{key}] table must be a list of at least 2 rows, got {rows!r}")
    for i, row in enumerate(rows, start=1):
        if not (isinstance(row, list | tuple) and len(row) == 2 and all(map(_is_number, row))):
            raise MaterialError(f"{where}: [{key}] table row {i} must be [temperature, value] numbers, got {row!r}")
    temperature = _convert(
        [row[0] for row in rows],
        section["temperature_unit"],
        "temperature",
        f"{where}: [{key}] temperature_unit",
    )
    value = _convert([row[1] for row in rows], section["unit"], _TABLE_DIMENSIONS[key], f"{where}: [{key}] unit")
    return PropertyTable(prop, name, temperature, value, extrapolation, _one_line(section["source"]))


def _build(data: Any, origin: str, source_file: str) -> Material:
    """Validate a parsed material mapping and build the :class:`Material`."""
    if not isinstance(data, Mapping):
        raise MaterialError(f"{origin}: a material must be a table of keys, got {type(data).__name__}")
    name = data.get("name")
    if not isinstance(name, str) or not name.strip():
        raise MaterialError(f"{origin}: the key 'name' must be a non-empty string, got {name!r}")
    where = f"{origin}: material {name!r}"
    for key in data:
        if key not in _TOP_KEYS:
            close = difflib.get_close_matches(str(key), _TOP_KEYS, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise MaterialError(f"{where}: unknown key {key!r}{hint} (allowed: {', '.join(_TOP_KEYS)})")
    description = data.get("description", "")
    if not isinstance(description, str):
        raise MaterialError(f"{where}: description must be a string, got {description!r}")
    extrapolation = data.get("extrapolation", "error")
    if extrapolation not in _EXTRAPOLATIONS:
        raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {extrapolation!r}")
    for key in ("density", "specific_heat", "emissivity"):
        if key not in data:
            raise MaterialError(f"{where}: missing the section [{key}]")
    split = ("conductivity_in_plane", "conductivity_through_thickness")
    given = [key for key in split if key in data]
    if "conductivity" in data and given:
        raise MaterialError(
            f"{where}: give either [conductivity] (isotropic) or [conductivity_in_plane] and "
            f"[conductivity_through_thickness], not both (found also {', '.join(given)})"
        )
    if "conductivity" not in data and len(given) != 2:
        missing = [key for key in split if key not in data]
        raise MaterialError(
            f"{where}: missing [conductivity], or [{'] and ['.join(missing)}] for an anisotropic material"
        )
    try:
        density = _read_density(data, where)

        def table(key: str, prop: str) -> PropertyTable:
            return _read_table(data, key, prop, name, extrapolation, where)

        if "conductivity" in data:
            in_plane = through = table("conductivity", "conductivity")
        else:
            in_plane = table("conductivity_in_plane", "conductivity_in_plane")
            through = table("conductivity_through_thickness", "conductivity_through_thickness")
        return Material(
            name=name,
            description=_one_line(description),
            density=density,
            specific_heat=table("specific_heat", "specific_heat"),
            conductivity_in_plane=in_plane,
            conductivity_through_thickness=through,
            emissivity=table("emissivity", "emissivity"),
            extrapolation=extrapolation,
            source_file=source_file,
        )
    except MaterialError as exc:
        message = str(exc)
        if not message.startswith(origin):
            message = f"{origin}: {message}"
        raise MaterialError(message) from exc


def material_from_mapping(data: Mapping[str, Any], origin: str) -> Material:
    """Build a material from a mapping with the layout of a material file.

    Used for materials written inline in a case file.

    Parameters
    ----------
    data : Mapping
        The keys of a material file: ``name``, ``density``, ``specific_heat`` ...
    origin : str
        Where the mapping comes from (e.g. ``"case.toml [materials.pad]"``); every
        error message starts with it.

    Returns
    -------
    Material
        The validated material, with ``source_file = "<inline>"``.

    Raises
    ------
    MaterialError
        If a key is unknown or missing, a unit has the wrong dimension, a row is
        malformed or out of order, or a value is out of its physical range.
    """
    return _build(data, origin, "<inline>")


def materials_directory() -> Path:
    """Directory of the shipped material files.

    Returns
    -------
    Path
        ``_materials`` beside this module if it exists (an installed wheel), otherwise
        ``materials`` at the top of the source tree (a checkout or editable install).
    """
    packaged = Path(__file__).parent / "_materials"
    if packaged.is_dir():
        return packaged
    return Path(__file__).resolve().parents[1] / "materials"


def _directory(directory: str | Path | None) -> Path:
    path = materials_directory() if directory is None else Path(directory)
    if not path.is_dir():
        raise MaterialError(f"materials directory {path} does not exist")
    return path


def available_materials(directory: str | Path | None = None) -> list[str]:
    """Names of the materials in a directory (its ``*.toml`` files, without suffix).

    Parameters
    ----------
    directory : str or Path, optional
        Directory to list; defaults to :func:`materials_directory`.

    Returns
    -------
    list of str
        Sorted material names.

    Raises
    ------
    MaterialError
        If the directory does not exist.
    """
    return sorted(path.stem for path in _directory(directory).glob("*.toml") if path.is_file())


def load_material(name: str, directory: str | Path | None = None) -> Material:
    """Load ``<directory>/<name>.toml``; each resolved path is read once and cached.

    Parameters
    ----------
    name : str
        Material name, e.g. ``"carbon-carbon"``.
    directory : str or Path, optional
        Directory holding the files; defaults to :func:`materials_directory`.

    Returns
    -------
    Material
        The material. Repeated calls return the same object.

    Raises
    ------
    MaterialError
        If the material is unknown (the message lists the available ones and the
        closest match) or its file is malformed.
    """
    folder = _directory(directory)
    valid = isinstance(name, str) and name and Path(name).name == name and not name.startswith(".")
    path = folder / f"{name}.toml" if valid else None
    if path is None or not path.is_file():
        names = available_materials(folder)
        close = difflib.get_close_matches(str(name), names, n=1, cutoff=0.0)
        hint = f" Did you mean {close[0]!r}?" if close else ""
        raise MaterialError(
            f"unknown material {name!r} in {folder}.{hint} Available: {', '.join(names) if names else '(none)'}"
        )
    return _load_file(path.resolve())


@cache
def _load_file(path: Path) -> Material:
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise MaterialError(f"{path}: cannot read the material file: {exc}") from exc
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise MaterialError(f"{path}: not valid TOML: {exc}") from exc
    material = _build(data, str(path), str(path))
    if material.name != path.stem:
        raise MaterialError(f"{path}: name = {material.name!r} does not match the file name {path.stem!r}")
    return material


def simple_material(
    name: str,
    density: float,
    specific_heat: float | tuple[float, float],
    conductivity: float | tuple[float, float],
    emissivity: float = 0.8,
    conductivity_axial: float | tuple[float, float] | None = None,
    temperature_range: tuple[float, float] = (50.0, 3000.0),
) -> Material:
    """A material whose properties are constant or linear in temperature.

    For verification against closed-form solutions and for quick studies.

    Parameters
    ----------
    name : str
        Material name.
    density : float
        [kg/m^3].
    specific_heat : float or (float, float)
        [J/(kg K)]: a constant, or the values at the two ends of ``temperature_range``.
    conductivity : float or (float, float)
        [W/(m K)], radial (in-plane): constant or end values.
    emissivity : float
        Total hemispherical emissivity [-].
    conductivity_axial : float or (float, float), optional
        [W/(m K)], axial (through-thickness); defaults to ``conductivity``.
    temperature_range : (float, float)
        Range of the tables [K]; temperatures outside it raise an error.

    Returns
    -------
    Material
    """
    temperatures = np.asarray(temperature_range, dtype=float)

    def table(prop: str, value: float | tuple[float, float]) -> PropertyTable:
        ends = np.broadcast_to(np.asarray(value, dtype=float), (2,))
        return PropertyTable(prop, name, temperatures, ends.copy(), "error", "user-defined")

    in_plane = table("conductivity_in_plane", conductivity)
    axial = in_plane if conductivity_axial is None else table("conductivity_through_thickness", conductivity_axial)
    return Material(
        name=name,
        description="user-defined material with constant or linear properties",
        density=density,
        specific_heat=table("specific_heat", specific_heat),
        conductivity_in_plane=in_plane,
        conductivity_through_thickness=axial,
        emissivity=table("emissivity", emissivity),
    )
