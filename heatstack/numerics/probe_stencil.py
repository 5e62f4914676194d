"""Probe stencils: precomputed weights that read a point temperature from cells and surfaces.

A probe lies in one part. Between the centres of that part's cells it is read by
bilinear interpolation of the cell-centre temperatures. Between the outermost cell
centre and an exposed face of the part it interpolates towards that face's own surface
temperature (the boundary condition the solver imposed there, from
:class:`~heatstack.numerics.boundaries.SurfaceTemperatures`), rather than holding the
last cell-centre value flat up to the face: next to a cooled face the field is steep, and
the flat hold misses by the gradient times the distance from the centre.

Where the side of the part is not an exposed face with a surface temperature of its
own, the stencil holds the outermost cell-centre value flat up to the part's edge:

* a face in contact with another part (the contact-face temperatures are not recorded;
  a probe never reads across parts);
* a face that exchanges radiation with a facing part across a void (the recorded face
  temperature there accounts for its convection only);
* the axis of a solid part (the field is even in r there, so flat is the symmetric
  reading).

In a corner between two exposed faces the corner value is taken as
``T_face1 + T_face2 - T_cell``, exact for a field linear in r and z.

The stencil of each probe is a weighted sum ``sum_k w_k T[cell_k] + sum_k v_k Ts[face_k]``
over cell temperatures ``T`` and exposed-face temperatures ``Ts``; the weights sum to one.

References
----------
.. [1] Ferziger, J.H., Peric, M., Computational Methods for Fluid Dynamics, 3rd ed.,
   Springer, 2002, sec. 4.4 (linear interpolation between nodes; at a boundary the
   boundary value is the node; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["ProbeStencils", "SideFaces", "probe_stencils"]

# the sides of a cell, named as the network's exposed faces are
_LOW_R, _HIGH_R, _LOW_Z, _HIGH_Z = "inner", "outer", "bottom", "top"


@dataclass(frozen=True, eq=False)
class SideFaces:
    """Where the exposed faces with a surface temperature of their own are.

    Attributes
    ----------
    cell_index : ndarray of int, shape (nz, nr)
        Unknown number of each grid cell, -1 for void.
    part_map : ndarray of int, shape (nz, nr)
        Part owning each grid cell, -1 for void.
    r_centres, z_centres : ndarray
        Cell centres [m].
    r_edges, z_edges : ndarray
        Cell edges [m].
    face_of : dict of (int, str) to int
        Index into the exposed faces of the face on side ``str`` ("inner", "outer",
        "bottom", "top") of cell ``int``, for the faces whose temperature a probe may use.
    """

    cell_index: np.ndarray
    part_map: np.ndarray
    r_centres: np.ndarray
    z_centres: np.ndarray
    r_edges: np.ndarray
    z_edges: np.ndarray
    face_of: dict


@dataclass(frozen=True, eq=False)
class ProbeStencils:
    """Weights of every probe over cell and exposed-face temperatures.

    Attributes
    ----------
    cells, cell_weights : ndarray, shape (p, m)
        Cells each probe reads and their weights [-] (padded with weight 0).
    faces, face_weights : ndarray, shape (p, k)
        Exposed faces each probe reads and their weights [-] (padded with weight 0).
    """

    cells: np.ndarray
    cell_weights: np.ndarray
    faces: np.ndarray
    face_weights: np.ndarray

    def evaluate(self, T: np.ndarray, face_temperature: np.ndarray) -> np.ndarray:
        """Every probe's temperature.

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].
        face_temperature : ndarray, shape (f,)
            Exposed-face temperatures [K].

        Returns
        -------
        ndarray, shape (p,)
            Probe temperatures [K].
        """
        from_cells = np.sum(T[self.cells] * self.cell_weights, axis=1)
        if self.faces.shape[1] == 0:
            return from_cells
        return from_cells + np.sum(face_temperature[self.faces] * self.face_weights, axis=1)


def _bracket(centres: np.ndarray, low_edge: float, high_edge: float, x: float) -> tuple[tuple, tuple, float]:
    """The two nodes around ``x`` and the linear weight of the upper one.

    A node is ``("centre", k)`` (the k-th centre) or ``("low", 0)`` / ``("high", last)``:
    the low or high edge of the part, next to centre 0 or the last one.
    """
    last = centres.size - 1
    if x <= centres[0]:
        if x <= low_edge or centres[0] <= low_edge:
            return ("low", 0), ("centre", 0), 0.0
        return ("low", 0), ("centre", 0), float((x - low_edge) / (centres[0] - low_edge))
    if x >= centres[last]:
        if x >= high_edge or high_edge <= centres[last]:
            return ("centre", last), ("high", last), 1.0
        return ("centre", last), ("high", last), float((x - centres[last]) / (high_edge - centres[last]))
    k = int(np.searchsorted(centres, x)) - 1
    return ("centre", k), ("centre", k + 1), float((x - centres[k]) / (centres[k + 1] - centres[k]))


class _Reader:
    """The value at one r-node / z-node pair as weights over cells and faces."""

    def __init__(self, sides: SideFaces, cols: np.ndarray, rows: np.ndarray):
        self.sides, self.cols, self.rows = sides, cols, rows

    def side_value(self, cell: int, side: str) -> dict:
        face = self.sides.face_of.get((cell, side))
        return {("cell", cell): 1.0} if face is None else {("face", face): 1.0}

    def value(self, r_node: tuple, z_node: tuple) -> dict:
        (r_kind, i), (z_kind, j) = r_node, z_node
        cell = int(self.sides.cell_index[self.rows[j], self.cols[i]])
        r_side = {"low": _LOW_R, "high": _HIGH_R}.get(r_kind)
        z_side = {"low": _LOW_Z, "high": _HIGH_Z}.get(z_kind)
        if r_side is None and z_side is None:
            return {("cell", cell): 1.0}
        if z_side is None:
            return self.side_value(cell, r_side)
        if r_side is None:
            return self.side_value(cell, z_side)
        # a corner: exact for a field linear in r and z
        corner = dict(self.side_value(cell, r_side))
        for key, w in self.side_value(cell, z_side).items():
            corner[key] = corner.get(key, 0.0) + w
        corner[("cell", cell)] = corner.get(("cell", cell), 0.0) - 1.0
        return {key: w for key, w in corner.items() if w != 0.0}


def _one_stencil(sides: SideFaces, part: int, r: float, z: float) -> dict:
    cols = np.flatnonzero(np.any(sides.part_map == part, axis=0))
    rows = np.flatnonzero(np.any(sides.part_map == part, axis=1))
    r_lo, r_hi = sides.r_edges[cols[0]], sides.r_edges[cols[-1] + 1]
    z_lo, z_hi = sides.z_edges[rows[0]], sides.z_edges[rows[-1] + 1]
    ra, rb, wr = _bracket(sides.r_centres[cols], r_lo, r_hi, r)
    za, zb, wz = _bracket(sides.z_centres[rows], z_lo, z_hi, z)
    reader = _Reader(sides, cols, rows)
    total: dict = {}
    for r_node, z_node, weight in (
        (ra, za, (1.0 - wr) * (1.0 - wz)),
        (rb, za, wr * (1.0 - wz)),
        (ra, zb, (1.0 - wr) * wz),
        (rb, zb, wr * wz),
    ):
        if weight == 0.0:
            continue
        for key, w in reader.value(r_node, z_node).items():
            total[key] = total.get(key, 0.0) + weight * w
    return total


def _pad(rows: list[list[tuple[int, float]]]) -> tuple[np.ndarray, np.ndarray]:
    width = max((len(row) for row in rows), default=0)
    index = np.zeros((len(rows), width), dtype=int)
    weight = np.zeros((len(rows), width))
    for p, row in enumerate(rows):
        for k, (where, w) in enumerate(row):
            index[p, k], weight[p, k] = where, w
    return index, weight


def probe_stencils(sides: SideFaces, probes: list[tuple[int, float, float]]) -> ProbeStencils:
    """Precompute the stencil of every probe.

    Parameters
    ----------
    sides : SideFaces
        The grid and the exposed faces whose temperatures a probe may use.
    probes : list of (int, float, float)
        Each probe's owning part index, radius [m] and axial position [m].

    Returns
    -------
    ProbeStencils
        Weights over cells and exposed faces, one row per probe.
    """
    cell_rows, face_rows = [], []
    for part, r, z in probes:
        stencil = _one_stencil(sides, part, r, z)
        cell_rows.append([(where, w) for (kind, where), w in stencil.items() if kind == "cell"])
        face_rows.append([(where, w) for (kind, where), w in stencil.items() if kind == "face"])
    cells, cell_weights = _pad(cell_rows)
    faces, face_weights = _pad(face_rows)
    return ProbeStencils(cells=cells, cell_weights=cell_weights, faces=faces, face_weights=face_weights)
