"""Everything the solver needs, precomputed as arrays: cells, links, boundary faces, sources.

A *link* joins two active cells: a face shared by two cells (of one part, or of two
touching parts through a contact conductance) or a pair of facing surfaces that
exchange radiation across a void. The conductance of a link is the inverse of the sum
of its series resistances; each half-cell resistance is stored as a geometric factor
``g`` such that ``R = g / k`` [K/W] with ``k`` the cell's conductivity in the link's
direction.

References
----------
.. [1] Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat
   and Mass Transfer, 6th ed., Wiley, 2007: eq. 3.33 (radial resistance ln(r2/r1)/(2 pi k L))
   and eq. 13.23 (two-surface grey enclosure).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace

import numpy as np

from ..assembly import Assembly
from ..errors import GeometryError, MaterialError
from ..geometry import Part
from ..material_files import load_material
from ..materials import Material
from .grid import Grid
from .probe_stencil import ProbeStencils, SideFaces, probe_stencils
from .tabulated import CellTables

__all__ = ["Network", "build_network", "with_contacts", "contact_free", "RADIAL", "AXIAL"]

RADIAL, AXIAL = 0, 1
_TWO_PI = 2.0 * np.pi


@dataclass(frozen=True, eq=False)
class Network:
    """Precomputed arrays of a meshed assembly. All indices refer to active cells.

    Attributes
    ----------
    grid : Grid
        The tensor r-z grid the network was built on.
    assembly : Assembly
        The assembly that was meshed.
    volume : ndarray, shape (n,)
        Cell volumes [m^3].
    material_blocks : tuple of (Material, slice)
        Contiguous cells of one material.
    cell_material : ndarray of int, shape (n,)
        Index into ``materials`` of each cell's material.
    link_a, link_b : ndarray of int, shape (m,)
        Cells joined by each conduction link.
    link_dir : ndarray, shape (m,)
        RADIAL or AXIAL: which conductivity each half-cell uses.
    link_ga, link_gb : ndarray, shape (m,)
        Half-cell geometric factors [1/m].
    link_contact_clamped, link_contact_released : ndarray, shape (m,)
        Interface resistances with the stack clamped and released [K/W].
    gap_a, gap_b : ndarray of int, shape (q,)
        Cells exchanging radiation across a void.
    gap_dir_a, gap_dir_b, gap_ga, gap_gb : ndarray, shape (q,)
        Direction and half-cell geometric factor [1/m] of each gap face.
    gap_area_a : ndarray, shape (q,)
        Area of the face of cell a [m^2].
    gap_area_ratio : ndarray, shape (q,)
        Area ratio A_a / A_b [-].
    face_cell, face_dir, face_g, face_area, face_group : ndarray, shape (f,)
        Every exposed face: its cell, direction, half-cell geometric factor [1/m], area [m^2] and
        index into ``groups``.
    face_radiates : ndarray of bool, shape (f,)
        Whether the face radiates to the surroundings (False for a face in a gap pair, which
        radiates to its partner instead).
    groups : tuple of str
        The exposed-surface group names (``face_group`` indexes it).
    friction_a, friction_b : ndarray of int, shape (s,)
        Cells on either side of each rubbing face.
    friction_link : ndarray of int, shape (s,)
        The conduction link of each rubbing face (its side a is the link's side a).
    friction_weight : ndarray, shape (s,)
        Share of the total friction power of each rubbing face [-] (sums to 1).
    friction_interface : ndarray of int, shape (s,)
        Index into ``friction_labels`` of each rubbing face's interface.
    friction_labels : tuple of str
        The rubbing interfaces' names.
    cell_group_masks : tuple of ndarray of bool, shape (n,)
        The cells of each of ``assembly.cell_groups``.
    probe_names : tuple of str
        Probe names.
    probe_stencils : ProbeStencils
        The weights each probe reads cell and exposed-face temperatures with.
    probe_time_constants : ndarray, shape (p,)
        Each probe's sensor time constant [s] (0 for none).
    tables : CellTables
        Every material's tables merged, as read by each cell, face and gap side (one
        vectorised pass per Newton iteration).
    """

    grid: Grid
    assembly: Assembly
    volume: np.ndarray
    material_blocks: tuple[tuple[Material, slice], ...]
    cell_material: np.ndarray
    link_a: np.ndarray
    link_b: np.ndarray
    link_dir: np.ndarray
    link_ga: np.ndarray
    link_gb: np.ndarray
    link_contact_clamped: np.ndarray
    link_contact_released: np.ndarray
    gap_a: np.ndarray
    gap_b: np.ndarray
    gap_dir_a: np.ndarray
    gap_dir_b: np.ndarray
    gap_ga: np.ndarray
    gap_gb: np.ndarray
    gap_area_a: np.ndarray
    gap_area_ratio: np.ndarray
    face_cell: np.ndarray
    face_dir: np.ndarray
    face_g: np.ndarray
    face_area: np.ndarray
    face_group: np.ndarray
    face_radiates: np.ndarray
    groups: tuple[str, ...]
    friction_a: np.ndarray
    friction_b: np.ndarray
    friction_link: np.ndarray
    friction_weight: np.ndarray
    friction_interface: np.ndarray
    friction_labels: tuple[str, ...]
    cell_group_masks: tuple[np.ndarray, ...]
    probe_names: tuple[str, ...]
    probe_stencils: ProbeStencils
    probe_time_constants: np.ndarray
    tables: CellTables

    @property
    def n_cells(self) -> int:
        """Number of unknowns."""
        return int(self.volume.size)

    @property
    def materials(self) -> tuple[Material, ...]:
        """The distinct materials, in block order."""
        return tuple(m for m, _ in self.material_blocks)

    def mass(self) -> np.ndarray:
        """Mass of each cell (reference density times cell volume).

        Returns
        -------
        ndarray, shape (n,)
            Cell masses [kg].
        """
        density = np.empty(self.n_cells)
        for material, block in self.material_blocks:
            density[block] = material.density
        return density * self.volume


def _resolve_materials(assembly: Assembly, materials: Mapping[str, Material] | None) -> dict[str, Material]:
    known = dict(materials or {})
    for part in assembly.parts:
        if part.material not in known:
            try:
                known[part.material] = load_material(part.material)
            except MaterialError as exc:
                raise MaterialError(f"part {part.name!r}: {exc}") from exc
    return known


def _radial_factors(r_a: np.ndarray, r_f: np.ndarray, dz: np.ndarray, on_axis: np.ndarray | bool = False) -> np.ndarray:
    """Radial half-cell resistance times k [1/m].

    ``|ln(r_f / r_a)| / (2 pi dz)`` from the cell centre ``r_a`` to the face ``r_f``: exact
    for the logarithmic profile of an annulus. A cell on the axis (a solid disc) has no
    logarithmic profile; its temperature is the mean over the disc, and for the
    parabolic profile of a solid cylinder the mean lies ``Q / (8 pi k dz)`` above the
    rim (Incropera 6th ed. sec. 3.5.2, solid cylinder with uniform generation:
    T(r) = T_s + q R^2 (1 - r^2/R^2) / (4k), whose disc mean is T_s + q R^2 / (8k)).
    """
    log_form = np.abs(np.log(r_f / r_a)) / (_TWO_PI * dz)
    return np.where(on_axis, 1.0 / (8.0 * np.pi * dz), log_form)


class _Builder:
    """Collects the arrays of a Network from a grid (one pass per kind of face)."""

    def __init__(self, assembly: Assembly, grid: Grid, materials: dict[str, Material]):
        self.assembly, self.grid, self.materials = assembly, grid, materials
        self.rc, self.zc = grid.r_centres, grid.z_centres
        self.re, self.ze = grid.r_edges, grid.z_edges
        self.dz = np.diff(grid.z_edges)
        self.ring = np.pi * (self.re[1:] ** 2 - self.re[:-1] ** 2)
        self.pm, self.ci = grid.part_map, grid.cell_index

    def part(self, k: int) -> Part:
        return self.assembly.parts[k]

    def links(self) -> dict[str, np.ndarray]:
        pm, ci = self.pm, self.ci
        # radial neighbours (j, i) - (j, i+1)
        jr, ir = np.nonzero((pm[:, :-1] >= 0) & (pm[:, 1:] >= 0))
        rf = self.re[ir + 1]
        ga_r = _radial_factors(self.rc[ir], rf, self.dz[jr], self.re[ir] == 0.0)
        gb_r = _radial_factors(self.rc[ir + 1], rf, self.dz[jr])
        area_r = _TWO_PI * rf * self.dz[jr]
        # axial neighbours (j, i) - (j+1, i)
        jz, iz = np.nonzero((pm[:-1, :] >= 0) & (pm[1:, :] >= 0))
        area_z = self.ring[iz]
        ga_z = 0.5 * self.dz[jz] / area_z
        gb_z = 0.5 * self.dz[jz + 1] / area_z
        a = np.concatenate((ci[jr, ir], ci[jz, iz]))
        b = np.concatenate((ci[jr, ir + 1], ci[jz + 1, iz]))
        pa = np.concatenate((pm[jr, ir], pm[jz, iz]))
        pb = np.concatenate((pm[jr, ir + 1], pm[jz + 1, iz]))
        area = np.concatenate((area_r, area_z))
        clamped, released = self._contact_resistances(pa, pb, area)
        return {
            "link_a": a,
            "link_b": b,
            "link_dir": np.concatenate((np.full(jr.size, RADIAL), np.full(jz.size, AXIAL))),
            "link_ga": np.concatenate((ga_r, ga_z)),
            "link_gb": np.concatenate((gb_r, gb_z)),
            "link_contact_clamped": clamped,
            "link_contact_released": released,
            "_link_parts": np.column_stack((pa, pb)),
            "_link_area": area,
        }

    def _contact_resistances(self, pa: np.ndarray, pb: np.ndarray, area: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        clamped = np.zeros(area.size)
        released = np.zeros(area.size)
        differ = np.flatnonzero(pa != pb)
        pairs = {(int(x), int(y)) for x, y in zip(pa[differ], pb[differ], strict=True)}
        for x, y in pairs:
            h_clamped, h_released = self.assembly.contact_conductance(self.part(x), self.part(y))
            sel = differ[(pa[differ] == x) & (pb[differ] == y)]
            if h_clamped is not None:
                clamped[sel] = 1.0 / (h_clamped * area[sel])
            if h_released is not None:
                released[sel] = 1.0 / (h_released * area[sel])
        return clamped, released

    def exposed_faces(self) -> list[dict]:
        """Every exposed face as a dict (cell, side, dir, g, area, j, i)."""
        pm = self.pm
        nz, nr = pm.shape
        padded = np.full((nz + 2, nr + 2), -1)
        padded[1:-1, 1:-1] = pm
        active = pm >= 0
        faces = []
        neighbours = {
            "inner": padded[1:-1, :-2],
            "outer": padded[1:-1, 2:],
            "bottom": padded[:-2, 1:-1],
            "top": padded[2:, 1:-1],
        }
        for side, neighbour in neighbours.items():
            jj, ii = np.nonzero(active & (neighbour < 0))
            if side == "inner":
                keep = self.re[ii] > 0.0
                jj, ii = jj[keep], ii[keep]
            for j, i in zip(jj, ii, strict=True):
                faces.append(self._face(side, int(j), int(i)))
        return faces

    def _face(self, side: str, j: int, i: int) -> dict:
        if side in ("inner", "outer"):
            r_f = self.re[i] if side == "inner" else self.re[i + 1]
            g = float(_radial_factors(self.rc[i], r_f, self.dz[j], side == "outer" and self.re[i] == 0.0))
            area, direction = _TWO_PI * r_f * self.dz[j], RADIAL
        else:
            area, direction = self.ring[i], AXIAL
            g = 0.5 * self.dz[j] / area
        return {
            "cell": int(self.ci[j, i]),
            "part": int(self.pm[j, i]),
            "side": side,
            "dir": direction,
            "g": g,
            "area": float(area),
            "j": j,
            "i": i,
        }

    def gap_pairs(self, faces: list[dict]) -> list[tuple[dict, dict]]:
        """Facing exposed faces of different parts across a void (auto and declared)."""
        by_position = {(f["side"], f["j"], f["i"]): f for f in faces}
        pairs: list[tuple[dict, dict]] = []
        if self.assembly.gap_radiation:
            pairs += self._auto_gaps(by_position)
        pairs += self._declared_gaps(faces)
        seen: set[tuple[int, int]] = set()
        unique = []
        for fa, fb in pairs:
            key = (id(fa), id(fb))
            if key not in seen and (id(fb), id(fa)) not in seen:
                seen.add(key)
                unique.append((fa, fb))
        return unique

    def _auto_gaps(self, by_position: dict) -> list[tuple[dict, dict]]:
        pm = self.pm
        pairs = []
        for j in range(pm.shape[0]):
            pairs += self._runs(pm[j, :], lambda i0, i1, j=j: (("outer", j, i0), ("inner", j, i1)), by_position)
        for i in range(pm.shape[1]):
            pairs += self._runs(pm[:, i], lambda j0, j1, i=i: (("top", j0, i), ("bottom", j1, i)), by_position)
        return pairs

    @staticmethod
    def _runs(line: np.ndarray, keys, by_position: dict) -> list[tuple[dict, dict]]:
        active = np.flatnonzero(line >= 0)
        if active.size < 2:
            return []
        gaps = np.flatnonzero(np.diff(active) > 1)
        pairs = []
        for g in gaps:
            ka, kb = keys(int(active[g]), int(active[g + 1]))
            if ka in by_position and kb in by_position:
                pairs.append((by_position[ka], by_position[kb]))
        return pairs

    def _declared_gaps(self, faces: list[dict]) -> list[tuple[dict, dict]]:
        pairs = []
        for gap in self.assembly.gap_pairs:
            pairs += self._facing(faces, gap, f"gap pair {gap.part_a}:{gap.side_a} / {gap.part_b}:{gap.side_b}")
        return pairs

    def _facing(self, faces: list[dict], pair, label: str) -> list[tuple[dict, dict]]:
        """Exposed faces of ``pair.side_a`` of ``pair.part_a`` matched with those of part b."""
        names = [p.name for p in self.assembly.parts]
        ka, kb = names.index(pair.part_a), names.index(pair.part_b)
        fa = [f for f in faces if f["part"] == ka and f["side"] == pair.side_a]
        fb = [f for f in faces if f["part"] == kb and f["side"] == pair.side_b]
        along = "j" if pair.side_a in ("inner", "outer") else "i"
        lookup = {f[along]: f for f in fb}
        matched = [(f, lookup[f[along]]) for f in fa if f[along] in lookup]
        if not matched:
            raise GeometryError(f"{label}: no exposed faces of the two sides face each other")
        return matched

    def thermal_links(self, faces: list[dict]) -> dict[str, np.ndarray]:
        """Conduction links of the declared thermal links, as extra link rows."""
        rows: dict[str, list] = {k: [] for k in ("a", "b", "dir", "ga", "gb", "r")}
        for link in self.assembly.links:
            matched = self._facing(faces, link, f"thermal link {link.name!r}")
            area = np.array([fa["area"] for fa, _ in matched])
            conductance = link.conductance * area / area.sum()
            for (fa, fb), g_link in zip(matched, conductance, strict=True):
                rows["a"].append(fa["cell"])
                rows["b"].append(fb["cell"])
                rows["dir"].append(fa["dir"])
                rows["ga"].append(fa["g"])
                rows["gb"].append(fb["g"])
                rows["r"].append(1.0 / g_link)
        return {k: np.asarray(v, dtype=int if k in ("a", "b", "dir") else float) for k, v in rows.items()}

    def _rubbing_links(self, links: dict) -> np.ndarray:
        """Indices of the axial links between the parts of a declared rubbing pair."""
        parts = self.assembly.parts
        n_parts = len(parts)
        index = {p.name: k for k, p in enumerate(parts)}
        pa, pb = links["_link_parts"][:, 0], links["_link_parts"][:, 1]
        link_key = np.minimum(pa, pb) * n_parts + np.maximum(pa, pb)
        axial = (links["link_dir"] == AXIAL) & (pa != pb)
        rubbing = np.zeros(pa.size, dtype=bool)
        for pair in self.assembly.rubbing_pairs:
            x, y = index[pair.part_a], index[pair.part_b]
            faces = axial & (link_key == min(x, y) * n_parts + max(x, y))
            if not faces.any():
                raise GeometryError(f"rubbing pair {pair.label!r}: the two parts share no axial face on the grid")
            rubbing |= faces
        return np.flatnonzero(rubbing)

    def friction(self, links: dict) -> dict:
        parts = self.assembly.parts
        settings = self.assembly.friction
        pa, pb = links["_link_parts"][:, 0], links["_link_parts"][:, 1]
        idx = self._rubbing_links(links)
        if idx.size == 0:
            return self._no_friction()
        ij = self.grid.cell_ij[links["link_a"][idx]]
        r1, r2 = self.re[ij[:, 1]], self.re[ij[:, 1] + 1]
        if settings.r_min is not None:
            r1 = np.maximum(r1, settings.r_min)
        if settings.r_max is not None:
            r2 = np.minimum(r2, settings.r_max)
        r2 = np.maximum(r2, r1)
        if settings.distribution == "uniform_pressure":
            weight = _TWO_PI / 3.0 * (r2**3 - r1**3)  # integral of r * 2 pi r dr
        else:
            weight = np.pi * (r2**2 - r1**2)
        labels = [f"{parts[x].name} / {parts[y].name}" for x, y in zip(pa[idx], pb[idx], strict=True)]
        unique = tuple(dict.fromkeys(labels))
        interface = np.array([unique.index(label) for label in labels])
        share = self._shares(unique)
        totals = np.bincount(interface, weights=weight, minlength=len(unique))
        if np.any(totals[share > 0] <= 0):
            bad = unique[int(np.flatnonzero((totals <= 0) & (share > 0))[0])]
            raise GeometryError(f"rubbing interface {bad!r} has no area inside the friction radii")
        keep = weight > 0
        return {
            "friction_a": links["link_a"][idx][keep],
            "friction_b": links["link_b"][idx][keep],
            "friction_link": idx[keep],
            "friction_weight": (share[interface] * weight / np.where(totals > 0, totals, 1.0)[interface])[keep],
            "friction_interface": interface[keep],
            "friction_labels": unique,
        }

    def _shares(self, labels: tuple[str, ...]) -> np.ndarray:
        given = self.assembly.friction.shares
        if given is None:
            return np.full(len(labels), 1.0 / len(labels))
        unknown = sorted(set(given) - set(labels))
        if unknown:
            raise GeometryError(f"friction share for unknown interface {unknown[0]!r}; interfaces are {list(labels)}")
        share = np.array([float(given.get(label, 0.0)) for label in labels])
        if share.sum() <= 0:
            raise GeometryError("friction shares sum to zero")
        return share / share.sum()

    @staticmethod
    def _no_friction() -> dict:
        empty = np.zeros(0, dtype=int)
        names = ("friction_a", "friction_b", "friction_link", "friction_interface")
        return {**dict.fromkeys(names, empty), "friction_weight": np.zeros(0), "friction_labels": ()}

    def probes(self, faces: list[dict], in_gap: set[int]) -> dict:
        """Probe names, stencils and time constants; ``faces`` are the exposed faces in order,
        ``in_gap`` the ids of those that radiate across a void (read as held flat)."""
        names = {p.name: k for k, p in enumerate(self.assembly.parts)}
        sides = SideFaces(
            cell_index=self.ci,
            part_map=self.pm,
            r_centres=self.rc,
            z_centres=self.zc,
            r_edges=self.re,
            z_edges=self.ze,
            face_of={(f["cell"], f["side"]): k for k, f in enumerate(faces) if id(f) not in in_gap},
        )
        located = [(names[self.assembly.owner_of(p).name], p.r, p.z) for p in self.assembly.probes]
        return {
            "probe_names": tuple(p.name for p in self.assembly.probes),
            "probe_stencils": probe_stencils(sides, located),
            "probe_time_constants": np.array([p.time_constant for p in self.assembly.probes]),
        }


def build_network(assembly: Assembly, grid: Grid, materials: Mapping[str, Material] | None = None) -> Network:
    """Precompute every array the solver needs.

    Parameters
    ----------
    assembly : Assembly
    grid : Grid
        A grid built from ``assembly``.
    materials : mapping of str to Material, optional
        Materials by name; names not given are loaded from the materials directory.

    Returns
    -------
    Network
    """
    known = _resolve_materials(assembly, materials)
    builder = _Builder(assembly, grid, known)
    links = builder.links()
    faces = builder.exposed_faces()
    pairs = builder.gap_pairs(faces)
    extra = builder.thermal_links(faces)
    # every exposed face convects to its group's air; a face in a gap pair radiates to
    # its partner instead of to the surroundings
    in_gap = {id(f) for pair in pairs for f in pair}
    open_faces = faces

    groups = tuple(dict.fromkeys(assembly.surface_group(assembly.parts[f["part"]], f["side"]) for f in open_faces))
    face_group = np.array(
        [groups.index(assembly.surface_group(assembly.parts[f["part"]], f["side"])) for f in open_faces],
        dtype=int,
    )

    part_of_cell = grid.cell_part()
    part_index = {p.name: k for k, p in enumerate(assembly.parts)}
    cell_group_masks = tuple(
        np.isin(part_of_cell, [part_index[name] for name in group.parts]) for group in assembly.cell_groups
    )
    blocks = _material_blocks(assembly, grid, known)
    cell_material = np.empty(grid.n_cells, dtype=int)
    for k, (_, block) in enumerate(blocks):
        cell_material[block] = k

    def column(items, key, dtype=float):
        return np.array([item[key] for item in items], dtype=dtype)

    fa = [p[0] for p in pairs]
    fb = [p[1] for p in pairs]
    face_cell = column(open_faces, "cell", int)
    gap_a, gap_b = column(fa, "cell", int), column(fb, "cell", int)
    return Network(
        grid=grid,
        assembly=assembly,
        volume=grid.cell_volumes(),
        material_blocks=blocks,
        cell_material=cell_material,
        link_a=np.concatenate((links["link_a"], extra["a"])),
        link_b=np.concatenate((links["link_b"], extra["b"])),
        link_dir=np.concatenate((links["link_dir"], extra["dir"])),
        link_ga=np.concatenate((links["link_ga"], extra["ga"])),
        link_gb=np.concatenate((links["link_gb"], extra["gb"])),
        link_contact_clamped=np.concatenate((links["link_contact_clamped"], extra["r"])),
        link_contact_released=np.concatenate((links["link_contact_released"], extra["r"])),
        gap_a=gap_a,
        gap_b=gap_b,
        gap_dir_a=column(fa, "dir", int),
        gap_dir_b=column(fb, "dir", int),
        gap_ga=column(fa, "g"),
        gap_gb=column(fb, "g"),
        gap_area_a=column(fa, "area"),
        gap_area_ratio=column(fa, "area") / np.maximum(column(fb, "area"), 1e-300) if pairs else np.zeros(0),
        face_cell=face_cell,
        face_dir=column(open_faces, "dir", int),
        face_g=column(open_faces, "g"),
        face_area=column(open_faces, "area"),
        face_group=face_group,
        face_radiates=np.array([id(f) not in in_gap for f in faces], dtype=bool),
        groups=groups,
        **builder.friction(links),
        cell_group_masks=cell_group_masks,
        **builder.probes(open_faces, in_gap),
        tables=CellTables.of(tuple(m for m, _ in blocks), cell_material, face_cell, gap_a, gap_b),
    )


def _material_blocks(assembly: Assembly, grid: Grid, known: dict[str, Material]) -> tuple[tuple[Material, slice], ...]:
    spans: dict[str, list[int]] = {}
    for part, block in zip(assembly.parts, grid.part_slices, strict=True):
        if block.stop > block.start:
            lo, hi = spans.get(part.material, [block.start, block.stop])
            spans[part.material] = [min(lo, block.start), max(hi, block.stop)]
    ordered = sorted(spans.items(), key=lambda item: item[1][0])
    return tuple((known[name], slice(lo, hi)) for name, (lo, hi) in ordered)


def contact_free(assembly: Assembly) -> Assembly:
    """``assembly`` with every contact conductance blanked: all that its mesh and network depend on but those.

    Parameters
    ----------
    assembly : Assembly

    Returns
    -------
    Assembly
        The same parts, probes, groups and contacts (which of them touch), every
        contact's conductances and the default contact conductance set to None.
    """
    contacts = tuple(replace(c, clamped=None, released=None) for c in assembly.contacts)
    return replace(assembly, contacts=contacts, default_contact_conductance=None)


def with_contacts(network: Network, assembly: Assembly) -> Network:
    """``network`` with the contact resistances of ``assembly``, which differs from its own only in those.

    Only the contact resistances of the conduction links depend on the contact
    conductances, so a study that varies a conductance re-meshes nothing: the links'
    resistances are recomputed on the same grid (the declared thermal links after them
    are kept) and every other array is shared.

    Parameters
    ----------
    network : Network
        A network built by :func:`build_network`.
    assembly : Assembly
        The assembly to take the contact conductances from.

    Returns
    -------
    Network
        Equal, array by array, to ``build_network(assembly, network.grid, ...)``.

    Raises
    ------
    GeometryError
        If ``assembly`` differs from ``network.assembly`` in anything but contact conductances.
    """
    if contact_free(assembly) != contact_free(network.assembly):
        raise GeometryError("assembly: differs from the meshed one in more than its contact conductances")
    links = _Builder(assembly, network.grid, {}).links()
    m = links["link_a"].size
    clamped, released = network.link_contact_clamped.copy(), network.link_contact_released.copy()
    clamped[:m], released[:m] = links["link_contact_clamped"], links["link_contact_released"]
    return replace(network, assembly=assembly, link_contact_clamped=clamped, link_contact_released=released)
