"""The step matrix and what goes into it: cell properties, link conductances, heat sources.

The matrix of one backward-Euler step has a fixed sparsity pattern (every cell, every
conduction link and every gap-radiation pair), built once per run by
:func:`csc_pattern`; :class:`StepMatrix` writes the capacities, boundary coefficients
and conductances of the current iterate into it in place and factorises it. The matrix
is symmetric positive definite, so it is factorised as ``P A P^T = L D L^T`` by QDLDL
(the optional ``qdldl`` package, ``pip install heatstack[fast]``) with the fill-reducing
order and the elimination tree of the first factorisation reused by every later one
(``validation/bench_fipy.py`` measures it against the alternatives); without that
package, by SuperLU (``scipy.sparse.linalg.splu``) in its symmetric mode. The cell
material properties (:func:`cell_properties`) and the friction and volumetric heat
(:class:`HeatSources`) are what the assembly reads.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..errors import InputError

try:  # the optional [fast] extra: a lean LDL^T factorisation with reusable symbolic analysis
    import qdldl
except ImportError:  # pragma: no cover - depends on the environment
    qdldl = None
from .network import Network
from .schedule import Schedule

__all__ = [
    "CellProperties",
    "HeatSources",
    "StepMatrix",
    "cell_enthalpy",
    "cell_properties",
    "cell_properties_by_material",
    "cell_temperature",
    "cell_temperature_by_material",
    "csc_pattern",
    "out_of_range_cell",
]


@dataclass(frozen=True, eq=False)
class CellProperties:
    """Material properties of every cell at one temperature field.

    Attributes
    ----------
    conductivity : ndarray
        Radial conductivity of every cell, then axial [W/(m K)], shape (2 n,).
    heat_capacity : ndarray
        Volumetric heat capacity [J/(m^3 K)].
    enthalpy : ndarray
        Volumetric enthalpy [J/m^3].
    """

    conductivity: np.ndarray
    heat_capacity: np.ndarray
    enthalpy: np.ndarray


def cell_properties(network: Network, T: np.ndarray) -> CellProperties:
    """Conductivity, heat capacity and enthalpy of every cell at temperatures ``T`` [K].

    One pass over the network's merged tables; a field with a cell outside its
    material's tables goes material by material, which applies each table's range
    policy (raise, or clamp and warn).

    Parameters
    ----------
    network : Network
        The meshed assembly.
    T : ndarray, shape (n,)
        Cell temperatures [K].

    Returns
    -------
    CellProperties
        Conductivities [W/(m K)] (radial for all cells, then axial), volumetric heat
        capacities [J/(m^3 K)] and volumetric enthalpies [J/m^3].

    Raises
    ------
    PropertyRangeError
        If a temperature lies outside a property table that allows no extrapolation.
    """
    merged = network.tables.thermal_properties(T)
    if merged is not None:
        return CellProperties(conductivity=merged[0], heat_capacity=merged[1], enthalpy=merged[2])
    return cell_properties_by_material(network, T)


def cell_properties_by_material(network: Network, T: np.ndarray) -> CellProperties:
    """:func:`cell_properties` evaluated material by material (each table's range policy applies).

    Parameters
    ----------
    network : Network
        The meshed assembly.
    T : ndarray, shape (n,)
        Cell temperatures [K].

    Returns
    -------
    CellProperties
        Conductivities [W/(m K)] (radial for all cells, then axial), volumetric heat
        capacities [J/(m^3 K)] and volumetric enthalpies [J/m^3].

    Raises
    ------
    PropertyRangeError
        If a temperature lies outside a property table that allows no extrapolation.
    """
    n = network.n_cells
    conductivity, c, H = np.empty(2 * n), np.empty(n), np.empty(n)
    for material, block in network.material_blocks:
        k_r, k_z, c[block], H[block] = material.thermal_properties(T[block])
        conductivity[block] = k_r
        conductivity[n + block.start : n + block.stop] = k_z
    return CellProperties(conductivity=conductivity, heat_capacity=c, enthalpy=H)


def cell_enthalpy(network: Network, T: np.ndarray) -> np.ndarray:
    """Volumetric enthalpy of every cell at temperatures ``T``.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    T : ndarray, shape (n,)
        Cell temperatures [K].

    Returns
    -------
    ndarray, shape (n,)
        Volumetric enthalpies [J/m^3].
    """
    H = np.empty(network.n_cells)
    for material, block in network.material_blocks:
        H[block] = material.enthalpy(T[block])
    return H


def cell_temperature(network: Network, H: np.ndarray) -> np.ndarray:
    """Temperature [K] of every cell from its volumetric enthalpy ``H`` [J/m^3] (exact inverse).

    One pass over the merged tables, or material by material when a cell lies outside
    its specific-heat table (so the table's range policy applies).

    Parameters
    ----------
    network : Network
        The meshed assembly.
    H : ndarray, shape (n,)
        Cell volumetric enthalpies [J/m^3].

    Returns
    -------
    ndarray, shape (n,)
        Cell temperatures [K].
    """
    merged = network.tables.temperature(H)
    return merged if merged is not None else cell_temperature_by_material(network, H)


def cell_temperature_by_material(network: Network, H: np.ndarray) -> np.ndarray:
    """:func:`cell_temperature` evaluated material by material.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    H : ndarray, shape (n,)
        Cell volumetric enthalpies [J/m^3].

    Returns
    -------
    ndarray, shape (n,)
        Cell temperatures [K].
    """
    T = np.empty(network.n_cells)
    for material, block in network.material_blocks:
        T[block] = material.temperature_from_enthalpy(H[block])
    return T


def out_of_range_cell(network: Network, T: np.ndarray) -> int | None:
    """The cell lying furthest outside its material's common table range.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    T : ndarray, shape (n,)
        Cell temperatures [K].

    Returns
    -------
    int or None
        Index of the cell (a non-finite temperature counts as furthest), None for no cells.
    """
    n = network.n_cells
    excess = np.zeros(n)
    for material, block in network.material_blocks:
        tables = (
            material.specific_heat,
            material.conductivity_in_plane,
            material.conductivity_through_thickness,
        )
        low = max(t.temperature[0] for t in tables)
        high = min(t.temperature[-1] for t in tables)
        excess[block] = np.maximum(low - T[block], T[block] - high)
    excess[~np.isfinite(excess)] = np.inf
    return int(np.argmax(excess)) if n else None


def csc_pattern(n: int, rows: np.ndarray, cols: np.ndarray) -> tuple[sp.csc_matrix, np.ndarray]:
    """A CSC matrix with the union pattern of (rows, cols) and each entry's data position.

    Parameters
    ----------
    n : int
        Matrix size.
    rows, cols : ndarray of int
        Row and column of every entry (duplicates allowed).

    Returns
    -------
    matrix : scipy.sparse.csc_matrix, shape (n, n)
        Zero-valued matrix with the pattern.
    position : ndarray of int
        Position in ``matrix.data`` of each (row, col) entry.
    """
    key = cols.astype(np.int64) * n + rows
    unique, position = np.unique(key, return_inverse=True)
    indices = (unique % n).astype(np.int32)
    indptr = np.searchsorted(unique // n, np.arange(n + 1)).astype(np.int32)
    matrix = sp.csc_matrix((np.zeros(unique.size), indices, indptr), shape=(n, n))
    return matrix, position


class StepMatrix:
    """The matrix of one step, ``diag(capacity + U) + sum over links of G (e_a - e_b)(e_a - e_b)^T``.

    Parameters
    ----------
    network : Network
    """

    def __init__(self, network: Network):
        net, n = network, network.n_cells
        self.net = network
        # positions of each link end's conductivity in the radial-then-axial stack
        self.link_a_conductivity = net.link_a + n * net.link_dir
        self.link_b_conductivity = net.link_b + n * net.link_dir
        diag = np.arange(n)
        m, q = net.link_a.size, net.gap_a.size
        rows = np.concatenate((diag, net.link_a, net.link_b, net.gap_a, net.gap_b))
        cols = np.concatenate((diag, net.link_b, net.link_a, net.gap_b, net.gap_a))
        self.matrix, self.position = csc_pattern(n, rows, cols)
        cuts = np.cumsum([n, m, m, q])
        self.pos_diag, self.pos_ab, self.pos_ba, self.pos_gap_ab, self.pos_gap_ba = np.split(self.position, cuts)
        # the matrix data from (diagonal, link conductances, gap conductances) as one mat-vec:
        # each diagonal entry gathers its cell's diagonal and the conductances of its links
        # and gap pairs, each off-diagonal entry minus its link's (duplicates summed)
        values = np.arange(n + m + q)
        link_values = values[n : n + m]
        gap_values = values[n + m :]
        self.assembly = sp.csr_matrix(
            (
                np.concatenate((np.ones(n + 2 * (m + q)), -np.ones(2 * (m + q)))),
                (
                    np.concatenate(
                        (
                            self.pos_diag,
                            self.pos_diag[net.link_a],
                            self.pos_diag[net.link_b],
                            self.pos_diag[net.gap_a],
                            self.pos_diag[net.gap_b],
                            self.pos_ab,
                            self.pos_ba,
                            self.pos_gap_ab,
                            self.pos_gap_ba,
                        )
                    ),
                    np.concatenate(
                        (
                            values[:n],
                            link_values,
                            link_values,
                            gap_values,
                            gap_values,
                            link_values,
                            link_values,
                            gap_values,
                            gap_values,
                        )
                    ),
                ),
            ),
            shape=(self.matrix.data.size, n + m + q),
        )
        # the upper triangle (diagonal included) of the fixed pattern, as LDL^T reads it
        column = np.repeat(np.arange(n), np.diff(self.matrix.indptr))
        self.upper_positions = np.flatnonzero(self.matrix.indices <= column)
        upper_counts = np.bincount(column[self.upper_positions], minlength=n)
        self.upper = sp.csc_matrix(
            (
                np.zeros(self.upper_positions.size),
                self.matrix.indices[self.upper_positions],
                np.concatenate(([0], np.cumsum(upper_counts))).astype(np.int32),
            ),
            shape=(n, n),
        )
        self.ldl = None
        self._coefficients: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None

    def link_conductances(self, conductivity: np.ndarray, contact: np.ndarray) -> np.ndarray:
        """Conductance of every link: two half-cell resistances and the contact resistance.

        Parameters
        ----------
        conductivity : ndarray, shape (2 n,)
            Cell conductivities [W/(m K)], radial for all cells then axial.
        contact : ndarray, shape (m,)
            Contact resistance of each link in force [K/W].

        Returns
        -------
        ndarray, shape (m,)
            Link conductances [W/K].
        """
        net = self.net
        return 1.0 / (
            net.link_ga / conductivity[self.link_a_conductivity]
            + net.link_gb / conductivity[self.link_b_conductivity]
            + contact
        )

    def assemble(self, diagonal: np.ndarray, G: np.ndarray, G_gap: np.ndarray) -> None:
        """Write the step matrix in place: ``diagonal`` plus the conductances of every link.

        Parameters
        ----------
        diagonal : ndarray, shape (n,)
            Each cell's own term (capacity over step plus face transfer) [W/K].
        G : ndarray, shape (m,)
            Conductance of each conduction link [W/K].
        G_gap : ndarray, shape (q,)
            Conductance of each radiating gap pair [W/K].
        """
        self.matrix.data[:] = self.assembly @ np.concatenate((diagonal, G, G_gap))
        self._coefficients = None

    def set_coefficients(self, diagonal: np.ndarray, G: np.ndarray, G_gap: np.ndarray) -> None:
        """Take the step's coefficients; the matrix is assembled from them only when it is factorised.

        A Newton iteration that reuses older factors needs only the product of the current
        matrix with a vector (:meth:`product`), which the coefficients give directly.

        Parameters
        ----------
        diagonal : ndarray, shape (n,)
            Each cell's own term (capacity over step plus face transfer) [W/K].
        G : ndarray, shape (m,)
            Conductance of each conduction link [W/K].
        G_gap : ndarray, shape (q,)
            Conductance of each radiating gap pair [W/K].
        """
        self._coefficients = (diagonal, G, G_gap)

    def product(self, T: np.ndarray) -> np.ndarray:
        """The current step matrix times ``T``: each cell's own term plus the net flow out through its links [W].

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].

        Returns
        -------
        ndarray, shape (n,)
            ``A @ T`` with ``A`` the matrix of the last coefficients given.
        """
        if self._coefficients is None:
            return self.matrix @ T
        diagonal, G, G_gap = self._coefficients
        net, n = self.net, self.net.n_cells
        flow = G * (T[net.link_a] - T[net.link_b])
        out = diagonal * T
        out += np.bincount(net.link_a, weights=flow, minlength=n)
        out -= np.bincount(net.link_b, weights=flow, minlength=n)
        if G_gap.size:
            gap_flow = G_gap * (T[net.gap_a] - T[net.gap_b])
            out += np.bincount(net.gap_a, weights=gap_flow, minlength=n)
            out -= np.bincount(net.gap_b, weights=gap_flow, minlength=n)
        return out

    def assembled(self) -> sp.csc_matrix:
        """The step matrix of the last coefficients given, assembled.

        Returns
        -------
        scipy.sparse.csc_matrix
            The matrix (kept in place: its data change with the next assembly).
        """
        if self._coefficients is not None:
            self.assemble(*self._coefficients)
        return self.matrix

    def factorise(self):
        """Factors of the matrix as it stands, with a ``solve(rhs)`` method.

        With ``qdldl`` installed: its LDL^T solver, whose fill-reducing order (AMD) and
        symbolic factorisation are made by the first call and reused by every later one,
        which only refactorises numerically, in place (so the factors of an earlier call
        are those of the latest matrix). Without it, or if it fails: SuperLU factors
        (symmetric mode, fill-reducing order).

        References
        ----------
        .. [1] Stellato, B., Banjac, G., Goulart, P., Bemporad, A., Boyd, S., 2020, OSQP: an
           operator splitting solver for quadratic programs, Math. Prog. Comp. 12, 637-672
           (QDLDL, the LDL^T factorisation it uses).

        Returns
        -------
        qdldl.Solver or scipy.sparse.linalg.SuperLU
            The factors, with a ``solve(rhs)`` method.
        """
        self.assembled()
        if qdldl is not None:
            self.upper.data[:] = self.matrix.data[self.upper_positions]
            try:
                if self.ldl is None:
                    self.ldl = qdldl.Solver(self.upper, upper=True)
                else:
                    self.ldl.update(self.upper, upper=True)
                return self.ldl
            except (ValueError, RuntimeError):  # e.g. a zero pivot: fall back to LU with pivoting
                self.ldl = None
        return self.factorise_lu()

    def factorise_lu(self) -> spla.SuperLU:
        """Sparse LU factors of the matrix as it stands (symmetric mode, fill-reducing order).

        Returns
        -------
        scipy.sparse.linalg.SuperLU
            The factors, with a ``solve`` method.
        """
        return spla.splu(
            self.assembled().copy(),
            permc_spec="MMD_AT_PLUS_A",
            diag_pivot_thresh=0.0,
            options={"SymmetricMode": True},
        )


class HeatSources:
    """Friction heat at the rubbing faces and the schedule's volumetric heat, per cell.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    """

    def __init__(self, network: Network, schedule: Schedule):
        self.net, self.schedule = network, schedule
        j, i = network.grid.cell_ij[:, 0], network.grid.cell_ij[:, 1]
        self.cell_r, self.cell_z = network.grid.r_centres[i], network.grid.z_centres[j]

    def volumetric(self, time: float) -> np.ndarray | None:
        """Heat from the schedule's volumetric source into each cell at ``time``.

        Parameters
        ----------
        time : float
            Time [s].

        Returns
        -------
        ndarray, shape (n,) or None
            Heat into each cell [W] (source density times cell volume), None without a source.

        Raises
        ------
        InputError
            If the source does not give one finite value per cell.
        """
        source = self.schedule.volumetric_source
        if source is None:
            return None
        density = np.asarray(source(self.cell_r, self.cell_z, time), dtype=float)
        if density.shape != (self.net.n_cells,) or not np.all(np.isfinite(density)):
            raise InputError(f"volumetric source at t = {time} s must give one finite value per cell")
        return density * self.net.volume

    def friction(self, power: float, properties: CellProperties) -> tuple[np.ndarray, np.ndarray]:
        """Heat into the cell on each side of every rubbing face (effusivity partition).

        Parameters
        ----------
        power : float
            Friction power of the whole model [W].
        properties : CellProperties
            Properties of the current iterate (axial conductivity and heat capacity).

        Returns
        -------
        heat_a, heat_b : ndarray, shape (s,)
            Heat into the side-a and side-b cell of each rubbing face [W].

        References
        ----------
        .. [1] Carslaw, H.S., Jaeger, J.C., Conduction of Heat in Solids, 2nd ed., Oxford,
           1959, sec. 2.9 (two semi-infinite solids in contact: the flux divides in the
           ratio of the effusivities sqrt(k rho c)).
        """
        net, n = self.net, self.net.n_cells
        k, c = properties.conductivity, properties.heat_capacity
        fa, fb = net.friction_a, net.friction_b
        q = power * net.friction_weight
        e_a = np.sqrt(k[n + fa] * c[fa])
        e_b = np.sqrt(k[n + fb] * c[fb])
        share_a = e_a / (e_a + e_b)
        return q * share_a, q * (1.0 - share_a)
