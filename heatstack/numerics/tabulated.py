"""Merged tables for the solver's hot loop: one interpolation per quantity per iteration.

Every piecewise-polynomial table the Newton iteration reads — each material's
conductivities, heat capacity and enthalpy, the inverse of its enthalpy and its
emissivity — is laid end to end with the others of its kind on one shifted axis
(:class:`MergedPieces`), and
every cell or face knows its table's shift and pieces (:class:`PieceLookup`). One
interval search over the merged knots then evaluates all materials or all groups in
a single pass, with no Python loop over materials or groups; the values are those of
the per-table evaluation to round-off (the same expressions on the same data).
Values outside a table's range are left to the per-table methods, which apply the
table's range policy (:class:`CellTables` returns None for them).

A cooling law that does not depend on time (``time_dependent = False``) is evaluated on
a uniform grid of surface temperatures once and interpolated linearly afterwards
(:class:`TabulatedLaw`). The table covers only the temperatures met so far and grows (by
whole blocks of 100 K, evaluating only the new points) when a surface leaves it, so a
correlation is never evaluated more than a block outside the range a run uses.
:class:`MergedConvection` interpolates every tabulated group of a phase at once, finding
each face's interval on the uniform grid by arithmetic rather than by a search, and calls
the time-dependent laws on their own faces.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..materials import Material
from .schedule import BoundaryLaw

__all__ = [
    "SPACING",
    "CellTables",
    "MergedConvection",
    "MergedPieces",
    "PieceLookup",
    "TabulatedLaw",
    "evaluator",
    "merge_pieces",
]

#: Spacing of the surface-temperature grid [K].
SPACING = 2.0
_BLOCK = 100.0  # the table grows in blocks of this width [K] (so at most this far past a surface)


@dataclass(frozen=True, eq=False)
class MergedPieces:
    """Piecewise polynomials of several tables laid end to end on one shifted axis.

    Attributes
    ----------
    knots : ndarray
        (K,) the knots of every table, in table order, unshifted.
    shifted : ndarray
        (K,) each knot plus its table's shift: strictly increasing over all tables.
    coefficients : ndarray
        (r, K) coefficients of the piece that starts at each knot (zero at a table's
        last knot, where no piece starts).
    first, last : ndarray
        (t,) index of each table's first and last piece.
    shift : ndarray
        (t,) shift added to an abscissa of each table.
    """

    knots: np.ndarray
    shifted: np.ndarray
    coefficients: np.ndarray
    first: np.ndarray
    last: np.ndarray
    shift: np.ndarray

    def lookup(self, table: np.ndarray, low: np.ndarray, high: np.ndarray) -> PieceLookup:
        """A lookup for items that read the tables ``table`` (one index per item) within
        the ranges ``low``..``high`` (one per table).

        Parameters
        ----------
        table : ndarray of int
            The merged table each item reads.
        low, high : array_like
            The abscissa range of each table (e.g. [K]).

        Returns
        -------
        PieceLookup
            Each item's shift, piece range and abscissa range.
        """
        table = np.asarray(table, dtype=np.intp)
        return PieceLookup(
            pieces=self,
            shift=self.shift[table],
            first=self.first[table],
            last=self.last[table],
            low=np.asarray(low, dtype=float)[table],
            high=np.asarray(high, dtype=float)[table],
        )


def merge_pieces(knots: Sequence[np.ndarray], coefficients: Sequence[np.ndarray]) -> MergedPieces:
    """Lay the tables ``(knots[t], coefficients[t])`` end to end.

    Parameters
    ----------
    knots : sequence of ndarray
        Strictly increasing knots of each table, at least two.
    coefficients : sequence of ndarray
        (r, K_t - 1) coefficients of each table's pieces; r the same for all.

    Returns
    -------
    MergedPieces
    """
    rows = coefficients[0].shape[0]
    span = sum(float(k[-1] - k[0]) for k in knots)
    gap = 1.0 + span  # any positive gap works: a rounded shifted abscissa is clipped to its table
    shifts, start = [], 0.0
    for k in knots:
        shifts.append(start - float(k[0]))
        start += float(k[-1] - k[0]) + gap
    sizes = np.array([k.size for k in knots])
    first = np.concatenate(([0], np.cumsum(sizes)[:-1]))
    padded = [np.concatenate((c, np.zeros((rows, 1))), axis=1) for c in coefficients]
    return MergedPieces(
        knots=np.concatenate(knots),
        shifted=np.concatenate([k + s for k, s in zip(knots, shifts, strict=True)]),
        coefficients=np.ascontiguousarray(np.concatenate(padded, axis=1)),
        first=first,
        last=first + sizes - 2,
        shift=np.array(shifts),
    )


@dataclass(frozen=True, eq=False)
class PieceLookup:
    """The merged tables as read by a set of items (cells or faces), one table each.

    Attributes
    ----------
    pieces : MergedPieces
    shift, first, last : ndarray
        Each item's table shift and first and last piece index.
    low, high : ndarray
        Each item's valid abscissa range.
    """

    pieces: MergedPieces
    shift: np.ndarray
    first: np.ndarray
    last: np.ndarray
    low: np.ndarray
    high: np.ndarray

    @functools.cached_property
    def _common(self) -> tuple[float, float, bool]:
        """The range inside every item's range, and whether all items read one table."""
        if self.low.size == 0:
            return -np.inf, np.inf, True
        one_table = bool(np.all(self.first == self.first[0]))
        return float(self.low.max()), float(self.high.min()), one_table

    def inside(self, x: np.ndarray) -> bool:
        """Whether every item's abscissa lies in its table's range (false for NaN).

        Parameters
        ----------
        x : ndarray
            One abscissa per item (e.g. a temperature [K]).

        Returns
        -------
        bool
            True when every item is inside its table.
        """
        if x.size == 0:
            return True
        low, high, _ = self._common
        if x.min() >= low and x.max() <= high:  # the usual case, in two reductions
            return True
        return bool(((x >= self.low) & (x <= self.high)).all())

    def locate(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The coefficients (r, n) of each item's piece at ``x`` and the offset ``x - knot``.

        Parameters
        ----------
        x : ndarray, shape (n,)
            One abscissa per item (e.g. a temperature [K]).

        Returns
        -------
        coefficients : ndarray, shape (r, n)
            The polynomial coefficients of each item's piece.
        offset : ndarray, shape (n,)
            ``x`` minus the piece's left knot.
        """
        # ndarray methods and ufuncs rather than the numpy functions: this runs several
        # times per Newton iteration on arrays small enough for call overhead to count
        pieces = self.pieces
        if self._common[2] and x.size:  # one table: no shift, scalar bounds
            shift = self.shift[0]
            k = pieces.shifted.searchsorted(x + shift if shift else x, side="right")
            k -= 1
            np.minimum(np.maximum(k, self.first[0], out=k), self.last[0], out=k)
        else:
            k = pieces.shifted.searchsorted(x + self.shift, side="right")
            k -= 1
            np.minimum(np.maximum(k, self.first, out=k), self.last, out=k)
        return pieces.coefficients.take(k, axis=1), x - pieces.knots.take(k)


@dataclass(frozen=True, eq=False)
class CellTables:
    """All materials' tables merged, as read by every cell and every radiating surface.

    Build with :meth:`of`. Each method returns None when a value lies outside its
    table, so that the caller falls back to the per-material methods (which raise or
    clamp by the table's policy).

    Attributes
    ----------
    properties : PieceLookup
        Conductivities, heat capacity and enthalpy per cell (:meth:`Material.property_pieces`).
    inverse : PieceLookup
        The specific-heat pieces on the specific-energy axis, per cell.
    density, reference_energy : ndarray
        Per cell [kg/m^3], [J/kg].
    enthalpy_low, enthalpy_high : ndarray
        Per cell, the volumetric enthalpy range of its specific-heat table [J/m^3].
    temperature_low, temperature_high : ndarray
        Per cell, the temperature range of its specific-heat table [K].
    emissivity_faces, emissivity_gap_a, emissivity_gap_b : PieceLookup
        Emissivity (value and slope) per exposed face and per gap side.
    emissivity_surfaces : PieceLookup
        The same for all of them at once, in that order (faces, gap sides a, gap sides b).
    """

    properties: PieceLookup
    inverse: PieceLookup
    density: np.ndarray
    reference_energy: np.ndarray
    enthalpy_low: np.ndarray
    enthalpy_high: np.ndarray
    temperature_low: np.ndarray
    temperature_high: np.ndarray
    emissivity_faces: PieceLookup
    emissivity_gap_a: PieceLookup
    emissivity_gap_b: PieceLookup
    emissivity_surfaces: PieceLookup

    @classmethod
    def of(
        cls,
        materials: Sequence[Material],
        cell_material: np.ndarray,
        face_cell: np.ndarray,
        gap_a: np.ndarray,
        gap_b: np.ndarray,
    ) -> CellTables:
        """Merge the tables of ``materials``; ``cell_material`` indexes them per cell.

        Parameters
        ----------
        materials : sequence of Material
            The materials of the network.
        cell_material : ndarray of int, shape (n,)
            Index into ``materials`` of each cell.
        face_cell : ndarray of int, shape (f,)
            The cell of each exposed face (for its emissivity).
        gap_a, gap_b : ndarray of int, shape (q,)
            The cells on either side of each radiating gap pair.

        Returns
        -------
        CellTables
            The merged lookups for cells, faces and gap sides.
        """
        props = [m.property_pieces() for m in materials]
        merged = merge_pieces([k for k, _ in props], [c for _, c in props])
        properties = merged.lookup(cell_material, [k[0] for k, _ in props], [k[-1] for k, _ in props])
        inverse_pieces = [m.enthalpy_pieces() for m in materials]
        energy = merge_pieces([e for e, _ in inverse_pieces], [c for _, c in inverse_pieces])
        inverse = energy.lookup(cell_material, [0.0] * len(materials), [e[-1] for e, _ in inverse_pieces])
        tables = [m.emissivity for m in materials]
        emissivity = merge_pieces(
            [t.temperature for t in tables],
            [np.array([t.value[:-1], np.diff(t.value) / np.diff(t.temperature)]) for t in tables],
        )
        low = [t.temperature[0] for t in tables]
        high = [t.temperature[-1] for t in tables]

        def per_cell(values) -> np.ndarray:
            return np.asarray(values, dtype=float)[cell_material]

        return cls(
            properties=properties,
            inverse=inverse,
            density=per_cell([m.density for m in materials]),
            reference_energy=per_cell([m.reference_energy for m in materials]),
            enthalpy_low=per_cell([m.enthalpy_range[0] for m in materials]),
            enthalpy_high=per_cell([m.enthalpy_range[1] for m in materials]),
            temperature_low=per_cell([m.specific_heat.temperature[0] for m in materials]),
            temperature_high=per_cell([m.specific_heat.temperature[-1] for m in materials]),
            emissivity_faces=emissivity.lookup(cell_material[face_cell], low, high),
            emissivity_gap_a=emissivity.lookup(cell_material[gap_a], low, high),
            emissivity_gap_b=emissivity.lookup(cell_material[gap_b], low, high),
            emissivity_surfaces=emissivity.lookup(cell_material[np.concatenate((face_cell, gap_a, gap_b))], low, high),
        )

    def thermal_properties(self, T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
        """Conductivity (radial then axial, (2 n,)) [W/(m K)], volumetric heat capacity
        [J/(m^3 K)] and enthalpy [J/m^3] of every cell at ``T`` [K], or None if a cell
        lies outside its material's tables.

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].

        Returns
        -------
        tuple of ndarray or None
            Conductivity (2 n,) [W/(m K)], heat capacity (n,) [J/(m^3 K)] and enthalpy (n,) [J/m^3];
            None when a cell is outside its tables.
        """
        lookup = self.properties
        if not lookup.inside(T):
            return None
        a, x = lookup.locate(T)
        linear = a[:3] + a[3:6] * x  # k_r, k_z, rho cp
        enthalpy = a[6] + x * (a[2] + 0.5 * a[5] * x)
        return linear[:2].reshape(-1), linear[2], enthalpy

    def temperature(self, H: np.ndarray) -> np.ndarray | None:
        """Temperature [K] of every cell from its volumetric enthalpy ``H`` [J/m^3] (the
        exact inverse, as :meth:`Material.temperature_from_enthalpy`), or None if a cell
        lies outside its specific-heat table.

        Parameters
        ----------
        H : ndarray, shape (n,)
            Cell volumetric enthalpies [J/m^3].

        Returns
        -------
        ndarray or None
            Cell temperatures [K], or None when a cell is outside its table.
        """
        if not ((H >= self.enthalpy_low) & (H <= self.enthalpy_high)).all():
            return None
        lookup = self.inverse
        energy = H / self.density + self.reference_energy
        np.minimum(np.maximum(energy, lookup.low, out=energy), lookup.high, out=energy)
        a, r = lookup.locate(energy)
        b = a[0]
        root = np.sqrt(np.maximum(b * b + 2.0 * a[1] * r, 0.0))
        T = a[2] + 2.0 * r / (b + root)
        return np.minimum(np.maximum(T, self.temperature_low, out=T), self.temperature_high, out=T)

    def emissivity(self, lookup: PieceLookup, surface_t: np.ndarray) -> np.ndarray | None:
        """Emissivity [-] of each surface of ``lookup`` at ``surface_t`` [K], or None if a
        surface lies outside its material's emissivity table.

        Parameters
        ----------
        lookup : PieceLookup
            The merged emissivity tables as read by these surfaces.
        surface_t : ndarray
            Surface temperatures [K].

        Returns
        -------
        ndarray or None
            Emissivity of each surface [-], or None when one is outside its table.
        """
        if not lookup.inside(surface_t):
            return None
        a, x = lookup.locate(surface_t)
        return a[0] + a[1] * x


class TabulatedLaw:
    """Linear interpolation of ``law.convection_coefficient`` over surface temperature.

    Parameters
    ----------
    law : BoundaryLaw
        A law whose coefficient does not depend on time.

    Attributes
    ----------
    temperature : ndarray
        The tabulated surface temperatures [K], :data:`SPACING` apart.
    h : ndarray
        The coefficient at each [W/(m^2 K)].
    slope : ndarray
        The slope of the interval that starts at each temperature [W/(m^2 K^2)] (0 at the last).
    low, high : float
        The first and last tabulated temperature [K].
    """

    def __init__(self, law: BoundaryLaw):
        self.law = law
        self.low = np.inf
        self.high = -np.inf
        self.temperature = np.zeros(0)
        self.h = np.zeros(0)
        self.slope = np.zeros(0)

    def cover(self, low: float, high: float, time: float) -> None:
        """Grow the table (by whole blocks) to cover ``low``..``high`` [K].

        Parameters
        ----------
        low, high : float
            The surface temperatures to cover [K].
        time : float
            Time at which the law is evaluated [s].
        """
        if low >= self.low and high <= self.high:
            return
        low = min(self.low, np.floor(low / _BLOCK) * _BLOCK)
        high = max(self.high, np.ceil(high / _BLOCK) * _BLOCK)
        low = max(low, SPACING)
        high = max(high, low + _BLOCK)
        if self.temperature.size == 0:
            grid = np.arange(low, high + 0.5 * SPACING, SPACING)
            self.h = np.asarray(self.law.convection_coefficient(grid, time), dtype=float)
            self.temperature, self.low, self.high = grid, low, grid[-1]
            self.slope = np.append(np.diff(self.h) / SPACING, 0.0)
            return
        # only the new blocks are evaluated: the points already tabulated keep their values
        # (the law is pointwise in the surface temperature, so the table is the same)
        below = self.low - SPACING * np.arange(round((self.low - low) / SPACING), 0, -1)
        above = self.high + SPACING * np.arange(1, round((high - self.high) / SPACING) + 1)
        new = np.concatenate((below, above))
        h_new = np.asarray(self.law.convection_coefficient(new, time), dtype=float)
        self.temperature = np.concatenate((below, self.temperature, above))
        self.h = np.concatenate((h_new[: below.size], self.h, h_new[below.size :]))
        self.low, self.high = float(self.temperature[0]), float(self.temperature[-1])
        self.slope = np.append(np.diff(self.h) / SPACING, 0.0)

    def __call__(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Coefficient [W/(m^2 K)] at each surface temperature [K]."""
        if surface_temperature.size == 0:
            return np.zeros(0)
        t_min, t_max = float(surface_temperature.min()), float(surface_temperature.max())
        if not np.isfinite(t_min + t_max):
            return self.law.convection_coefficient(surface_temperature, time)
        self.cover(t_min, t_max, time)
        return np.interp(surface_temperature, self.temperature, self.h)


def evaluator(law: BoundaryLaw):
    """A fast callable ``(surface_temperature, time) -> h`` for ``law``.

    Parameters
    ----------
    law : BoundaryLaw
        A cooling law; one that declares ``time_dependent = False`` is tabulated.

    Returns
    -------
    callable
        ``law.convection_coefficient`` itself for a time-dependent law, else a
        :class:`TabulatedLaw` interpolating it; both give h [W/(m^2 K)].
    """
    if getattr(law, "time_dependent", True):
        return law.convection_coefficient
    return TabulatedLaw(law)


class MergedConvection:
    """The convection coefficient of every exposed face of one phase, in one pass.

    The tables of the tabulated laws share one uniform spacing (:data:`SPACING`), so a
    face's interval is found by arithmetic, ``i = floor((T - T_low) / SPACING)`` in its
    own table, with no search; the tables' values and slopes lie end to end in two flat
    arrays, and every tabulated face is interpolated linearly (as :class:`TabulatedLaw`)
    in a handful of array operations. A law that depends on time is called on its own faces.

    Parameters
    ----------
    evaluators : sequence
        One evaluator per surface group (:func:`evaluator`): a :class:`TabulatedLaw` or
        a callable ``(surface_temperature, time) -> h``.
    face_group : ndarray
        The group of every face.
    """

    def __init__(self, evaluators: Sequence, face_group: np.ndarray):
        tabulated = [g for g, e in enumerate(evaluators) if isinstance(e, TabulatedLaw)]
        self.tables = [evaluators[g] for g in tabulated]
        self.direct = [
            (np.flatnonzero(face_group == g), e) for g, e in enumerate(evaluators) if not isinstance(e, TabulatedLaw)
        ]
        is_tabulated = np.isin(face_group, tabulated)
        self.all_tabulated = bool(is_tabulated.all())
        self.tabulated_faces = np.flatnonzero(is_tabulated)
        table_of_group = np.full(len(evaluators), -1)
        table_of_group[tabulated] = np.arange(len(tabulated))
        self.face_table = table_of_group[face_group[self.tabulated_faces]]
        self.table_faces = [np.flatnonzero(self.face_table == t) for t in range(len(self.tables))]
        # the faces grouped table by table, for every table's lowest and highest surface in one pass
        self.by_table = np.concatenate(self.table_faces) if self.table_faces else np.zeros(0, dtype=np.intp)
        counts = np.array([faces.size for faces in self.table_faces], dtype=np.intp)
        self.table_first = np.concatenate(([0], np.cumsum(counts)[:-1])).astype(np.intp)
        self.has_faces = counts > 0
        self.merged = False

    def _merge(self) -> None:
        """Lay the tables' values and slopes end to end; each face's table start, lowest
        temperature [K] and last interval."""
        sizes = np.array([t.temperature.size for t in self.tables])
        start = np.concatenate(([0], np.cumsum(sizes)[:-1]))
        self.values = np.concatenate([t.h for t in self.tables])
        # the slope of the interval that starts at each point (zero at a table's last point)
        self.slopes = np.concatenate([t.slope for t in self.tables])
        face = self.face_table
        self.face_start = start[face]
        self.face_low = np.array([t.low for t in self.tables])[face]
        self.face_last = (sizes - 2)[face]  # the last interval of the face's table
        self.face_high = np.array([t.high for t in self.tables])[face]
        self.merged = True

    def _cover(self, surface_t: np.ndarray, time: float) -> None:
        """Grow the tables to the surface temperatures of their faces and merge them again."""
        if self.by_table.size:
            grouped = surface_t[self.by_table]
            first = self.table_first[self.has_faces]
            lows, highs = np.minimum.reduceat(grouped, first), np.maximum.reduceat(grouped, first)
            tables = [t for t, has in zip(self.tables, self.has_faces, strict=True) if has]
            for table, low, high in zip(tables, lows.tolist(), highs.tolist(), strict=True):
                table.cover(low, high, time)
        self._merge()

    def __call__(self, surface_t: np.ndarray, time: float) -> np.ndarray:
        """Coefficient [W/(m^2 K)] of every face at its surface temperature [K]."""
        if self.all_tabulated:
            h = self._tabulated(surface_t, time)
        else:
            h = np.empty(surface_t.size)
            if self.tables:
                h[self.tabulated_faces] = self._tabulated(surface_t[self.tabulated_faces], time)
            for faces, law in self.direct:
                h[faces] = law(surface_t[faces], time)
        return h

    def _tabulated(self, surface_t: np.ndarray, time: float) -> np.ndarray:
        if surface_t.size == 0:
            return np.zeros(0)
        if not self.merged or not self._inside(surface_t):
            if not np.all(np.isfinite(surface_t)):
                return self._per_table(surface_t, time)
            self._cover(surface_t, time)
        interval = np.floor((surface_t - self.face_low) * (1.0 / SPACING))
        np.minimum(np.maximum(interval, 0.0, out=interval), self.face_last, out=interval)
        point = self.face_start + interval.astype(np.intp)
        offset = surface_t - (self.face_low + SPACING * interval)
        return self.values[point] + self.slopes[point] * offset

    def _inside(self, surface_t: np.ndarray) -> bool:
        """Whether every face lies within its table (false for NaN)."""
        return bool(((surface_t >= self.face_low) & (surface_t <= self.face_high)).all())

    def _per_table(self, surface_t: np.ndarray, time: float) -> np.ndarray:
        """Each table's law called directly (for temperatures that are not finite)."""
        h = np.empty(surface_t.size)
        for table, faces in zip(self.tables, self.table_faces, strict=True):
            h[faces] = table.law.convection_coefficient(surface_t[faces], time)
        return h
