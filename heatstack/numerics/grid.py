"""Non-uniform tensor r-z grid with a line on every part boundary.

Cells that lie in no part are inactive and carry no unknown. Active cells are
numbered part by part, parts grouped by material, so the cells of one part and of one
material are contiguous.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..assembly import Assembly
from ..errors import GeometryError

__all__ = ["Grid", "build_grid"]


@dataclass(frozen=True, eq=False)
class Grid:
    """A tensor r-z grid over an assembly.

    Attributes
    ----------
    r_edges : ndarray, shape (nr + 1,)
        Radial cell edges [m].
    z_edges : ndarray, shape (nz + 1,)
        Axial cell edges [m].
    part_map : ndarray of int, shape (nz, nr)
        Index of the part owning each cell, -1 for void.
    cell_index : ndarray of int, shape (nz, nr)
        Unknown number of each active cell, -1 for void.
    cell_ij : ndarray of int, shape (n, 2)
        (row j, column i) of each active cell.
    part_slices : tuple of slice
        Range of unknown numbers belonging to each part.
    """

    r_edges: np.ndarray
    z_edges: np.ndarray
    part_map: np.ndarray
    cell_index: np.ndarray
    cell_ij: np.ndarray
    part_slices: tuple[slice, ...]

    @property
    def shape(self) -> tuple[int, int]:
        """(nz, nr)."""
        return self.part_map.shape

    @property
    def n_cells(self) -> int:
        """Number of active cells (unknowns)."""
        return int(self.cell_ij.shape[0])

    @property
    def r_centres(self) -> np.ndarray:
        """Radial cell centres [m] (arithmetic mid-points)."""
        return 0.5 * (self.r_edges[1:] + self.r_edges[:-1])

    @property
    def z_centres(self) -> np.ndarray:
        """Axial cell centres [m]."""
        return 0.5 * (self.z_edges[1:] + self.z_edges[:-1])

    def cell_volumes(self) -> np.ndarray:
        """Volume of each active cell over the full circumference.

        Returns
        -------
        ndarray, shape (n,)
            Cell volumes [m^3], in unknown order.
        """
        ring = np.pi * (self.r_edges[1:] ** 2 - self.r_edges[:-1] ** 2)
        dz = np.diff(self.z_edges)
        j, i = self.cell_ij[:, 0], self.cell_ij[:, 1]
        return ring[i] * dz[j]

    def cell_part(self) -> np.ndarray:
        """Part index of each active cell.

        Returns
        -------
        ndarray of int, shape (n,)
            Index into the assembly's parts of the part owning each active cell.
        """
        j, i = self.cell_ij[:, 0], self.cell_ij[:, 1]
        return self.part_map[j, i]

    def to_field(self, values: np.ndarray) -> np.ndarray:
        """Scatter per-cell values into an (nz, nr) array with NaN in void cells.

        Parameters
        ----------
        values : ndarray, shape (n,)
            One value per active cell, in unknown order (any unit; the field keeps it).

        Returns
        -------
        ndarray, shape (nz, nr)
            The values on the tensor grid, NaN where no part lies.
        """
        out = np.full(self.shape, np.nan)
        out[self.cell_ij[:, 0], self.cell_ij[:, 1]] = values
        return out


def _subdivide(lines: np.ndarray, target: float, minimum_for_interval: np.ndarray) -> np.ndarray:
    edges = [lines[:1]]
    for k in range(lines.size - 1):
        length = lines[k + 1] - lines[k]
        n = max(int(np.ceil(length / target - 1e-9)), int(minimum_for_interval[k]), 1)
        edges.append(np.linspace(lines[k], lines[k + 1], n + 1)[1:])
    return np.concatenate(edges)


def _merged_lines(values: list[float], tolerance: float) -> np.ndarray:
    lines = np.unique(np.asarray(values, dtype=float))
    keep = np.concatenate(([True], np.diff(lines) > tolerance))
    return lines[keep]


def _minimum_cells(lines: np.ndarray, spans: list[tuple[float, float]], cells: int) -> np.ndarray:
    """Cells per interval so that each span (a part's extent) gets at least ``cells``."""
    need = np.ones(lines.size - 1, dtype=int)
    mids = 0.5 * (lines[1:] + lines[:-1])
    lengths = np.diff(lines)
    for low, high in spans:
        inside = (mids > low) & (mids < high)
        share = np.ceil(cells * lengths[inside] / (high - low) - 1e-9).astype(int)
        need[inside] = np.maximum(need[inside], share)
    return need


def build_grid(
    assembly: Assembly,
    cell_size: float | tuple[float, float] = 0.004,
    min_cells: int = 3,
) -> Grid:
    """Mesh an assembly with a tensor grid.

    Parameters
    ----------
    assembly : Assembly
        The parts to mesh.
    cell_size : float or (float, float)
        Target cell size [m], or (radial, axial) sizes.
    min_cells : int
        Minimum number of cells across each part in each direction.

    Returns
    -------
    Grid

    Raises
    ------
    GeometryError
        If a cell size is not positive or ``min_cells`` is below 1.
    """
    dr, dz = (cell_size, cell_size) if np.isscalar(cell_size) else cell_size
    if not (dr > 0 and dz > 0):
        raise GeometryError(f"cell_size must be positive, got {cell_size}")
    if int(min_cells) < 1:
        raise GeometryError(f"min_cells must be >= 1, got {min_cells}")
    parts = assembly.parts
    scale = max(max(p.r_outer for p in parts), max(abs(p.z_max) for p in parts), 1e-3)
    r_lines = _merged_lines([v for p in parts for v in (p.r_inner, p.r_outer)], 1e-9 * scale)
    z_lines = _merged_lines([v for p in parts for v in (p.z_min, p.z_max)], 1e-9 * scale)
    r_need = _minimum_cells(r_lines, [(p.r_inner, p.r_outer) for p in parts], int(min_cells))
    z_need = _minimum_cells(z_lines, [(p.z_min, p.z_max) for p in parts], int(min_cells))
    r_edges = _subdivide(r_lines, dr, r_need)
    z_edges = _subdivide(z_lines, dz, z_need)

    rc = 0.5 * (r_edges[1:] + r_edges[:-1])
    zc = 0.5 * (z_edges[1:] + z_edges[:-1])
    part_map = np.full((zc.size, rc.size), -1, dtype=int)
    for k, p in enumerate(parts):
        cols = (rc > p.r_inner) & (rc < p.r_outer)
        rows = (zc > p.z_min) & (zc < p.z_max)
        part_map[np.ix_(rows, cols)] = k

    cell_index = np.full(part_map.shape, -1, dtype=int)
    blocks, slices, start = [], [None] * len(parts), 0
    # number parts grouped by material so one material's cells are contiguous
    for k in sorted(range(len(parts)), key=lambda k: parts[k].material):
        jj, ii = np.nonzero(part_map == k)
        cell_index[jj, ii] = np.arange(start, start + jj.size)
        blocks.append(np.column_stack((jj, ii)))
        slices[k] = slice(start, start + jj.size)
        start += jj.size
    return Grid(
        r_edges=r_edges,
        z_edges=z_edges,
        part_map=part_map,
        cell_index=cell_index,
        cell_ij=np.concatenate(blocks),
        part_slices=tuple(slices),
    )
