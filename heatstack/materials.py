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

The tables themselves are :class:`PropertyTable` objects
(:mod:`heatstack.property_table`); reading a material from a file or a mapping is
done in :mod:`heatstack.material_files`.

Materials live in ``materials/<name>.toml`` files (one material a file, units
named in the file, a source beside every table); see :func:`load_material`.
Inside this module every quantity is SI: K, J, kg, m, W.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .errors import MaterialError, PropertyRangeError
from .property_table import EXTRAPOLATIONS, PropertyTable, as_float_array, is_real_number, warn_once

__all__ = ["REFERENCE_TEMPERATURE", "Material", "simple_material"]

#: Temperature [K] at which the density is given and the enthalpy is zero.
REFERENCE_TEMPERATURE = 293.15


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
        if self.extrapolation not in EXTRAPOLATIONS:
            raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {self.extrapolation!r}")
        density = self.density
        if not (is_real_number(density) and np.isfinite(density) and density > 0.0):
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
        """Radial conductivity (the in-plane table) at ``temperature``.

        Parameters
        ----------
        temperature : array_like
            Temperature [K].

        Returns
        -------
        ndarray
            Conductivity [W/(m K)].
        """
        return self.conductivity_in_plane(temperature)

    def conductivity_axial(self, temperature: ArrayLike) -> np.ndarray:
        """Axial conductivity (the through-thickness table) at ``temperature``.

        Parameters
        ----------
        temperature : array_like
            Temperature [K].

        Returns
        -------
        ndarray
            Conductivity [W/(m K)].
        """
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

    def property_pieces(self) -> tuple[np.ndarray, np.ndarray]:
        """The thermal properties as polynomial pieces over the union of the table knots.

        On each interval ``[knots[k], knots[k + 1]]`` of the common range of the
        specific-heat and conductivity tables, with ``x = T - knots[k]`` [K]:
        ``k_r = a[0] + a[3] x``, ``k_z = a[1] + a[4] x``, ``rho cp = a[2] + a[5] x`` and
        ``H = a[6] + x (a[2] + a[5] x / 2)``, ``a = coefficients[:, k]`` — the same
        expressions as :meth:`thermal_properties`, for the solver's merged tables.

        Returns
        -------
        knots : ndarray
            (K,) knot temperatures [K].
        coefficients : ndarray
            (7, K - 1): k_r [W/(m K)], k_z, rho cp [J/(m^3 K)] at each interval's start,
            their slopes per kelvin, and H [J/m^3] at the start.
        """
        knots = self._fused_knots[0]
        (kr0, kr1), (kz0, kz1), (c0, c1), h0 = self._fused_values
        return knots, np.array([kr0, kz0, c0, kr1, kz1, c1, h0])

    def enthalpy_pieces(self) -> tuple[np.ndarray, np.ndarray]:
        """The specific heat table as it enters the exact inverse of the enthalpy.

        Returns
        -------
        knot_energy : ndarray
            (K,) specific energy [J/kg] at each specific-heat knot, counted from the first.
        coefficients : ndarray
            (3, K - 1): cp [J/(kg K)] and its slope [J/(kg K^2)] at each interval's
            start, and the knot temperature [K], as used by :meth:`temperature_from_enthalpy`.
        """
        cp = self.specific_heat
        return self._knot_energy, np.array([cp.value[:-1], cp._slope, cp.temperature[:-1]])

    @property
    def reference_energy(self) -> float:
        """Specific energy [J/kg] from the first specific-heat knot to 293.15 K."""
        return self._reference_energy

    @property
    def enthalpy_range(self) -> tuple[float, float]:
        """Volumetric enthalpy [J/m^3] at the first and last specific-heat knots."""
        return self._enthalpy_range

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
        h = as_float_array(enthalpy, f"material {self.name!r}: enthalpy")
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
        warn_once(
            self.name,
            "specific_heat",
            f"{where}: enthalpy {worst:.6g} J/m^3 is outside the table ({table}); "
            "extrapolating with the end specific heat (warned once per material and property in a run)",
            stacklevel=3,
        )


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

    Raises
    ------
    MaterialError
        If a property is not positive (the emissivity not in (0, 1]), the temperature
        range is not increasing, or it does not contain the reference temperature 293.15 K.
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
