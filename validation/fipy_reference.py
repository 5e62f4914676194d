"""FiPy twin of a heatstack stack model, on the identical r-z grid.

The reference library is FiPy 4.0.3 (Guyer, Wheeler & Warren, "FiPy: Partial
Differential Equations with Python", Computing in Science & Engineering 11(3), 2009;
https://pages.nist.gov/fipy/). The twin shares with heatstack only the *inputs*: the
grid lines (``model.grid.r_edges``, ``z_edges``), the parts and their materials, the
friction power table, the convection coefficients and the time steps. Everything else
is FiPy's own or written here independently of the engine:

* mesh and metric: ``fipy.CylindricalGrid2D(dx=dr_array, dy=dz_array, origin=...)``,
  which for spacing arrays builds a ``CylindricalNonUniformGrid2D`` whose cell volumes
  are ``r_c dr dz`` and face areas ``r_f dz`` / ``r_c dr`` (per radian; FiPy docs,
  ``fipy.meshes.factoryMeshes.CylindricalGrid2D`` and
  ``fipy.meshes.cylindricalNonUniformGrid2D``). The cell volume is exact; the radial
  face conductance is FiPy's ``k r_f dz / (r_c,b - r_c,a)`` against heatstack's exact
  ``2 pi k dz / ln(r_c,b / r_c,a)``: they differ by a relative ``(dr / 2 r_f)^2 / 3``
  (see :func:`radial_metric_difference`);
* diffusion: ``fipy.DiffusionTerm`` with a face coefficient equal to FiPy's
  ``harmonicFaceValue`` of the cell conductivity (radial conductivity on faces normal
  to r, axial on faces normal to z). FiPy weights the harmonic mean by the distances
  from the cell centres to the face, which on a non-uniform grid is the series sum of
  the two half-cell resistances;
* time stepping: ``fipy.TransientTerm`` with an implicit ``DiffusionTerm`` and
  implicit sources, i.e. backward Euler (FiPy docs, "Solving a PDE" /
  ``fipy.terms.transientTerm``);
* convection: FiPy's documented Robin route (FiPy docs, "Using FiPy - Applying Robin
  boundary conditions"): the diffusive flux on the cooled exterior faces is zero
  (FiPy's default no-flux exterior) and the flux ``h_eff (T_P - T_inf)`` is added as the
  divergence of a face vector ``h_eff n`` (implicit part through
  ``ImplicitSourceTerm``), with ``h_eff = 1 / (1/h + d_Pf / k)`` the film in series with
  FiPy's own cell-centre-to-face distance ``d_Pf``;
* friction heat: recomputed here from the assembly, not read from the engine: the
  power of each step is the exact integral of the piecewise-linear table over the
  step divided by the step; it is shared equally between the rubbing interfaces
  (rotor against stator / pressure plate / end plate, touching axially), spread over
  each annulus with a flux proportional to r ("uniform pressure": the heat of a face is
  proportional to ``r_e^3 - r_w^3``) and divided between the two touching cells in the
  ratio of their effusivities ``sqrt(k_z rho c_p)`` at the current iterate.

Two forms of the equation are offered:

``form="temperature"``
    ``TransientTerm(coeff=rho c_p, var=T) == DiffusionTerm(k_f, var=T) + sources`` —
    exact for constant properties (``TransientTerm(coeff=c)`` means d(cT)/dt), the
    multi-material reference.
``form="enthalpy"``
    ``TransientTerm(var=H) == DiffusionTerm(coeff=k_f / c_f, var=H) + sources`` with
    ``H`` the volumetric enthalpy, ``T`` recovered after every sweep by the exact inverse of each
    material's enthalpy (:class:`TableEnthalpy`), sweeping until the largest change
    of T between sweeps is below the sweep tolerance. Inside one material the face
    capacity ``c_f`` is the chord ``(H_b - H_a) / (T_b - T_a)`` between the two cells
    (``rho c_p`` at the mean temperature when they are within 1e-9 K), so that at
    convergence the face flux ``(k_f / c_f)(H_b - H_a)`` is exactly ``k_f (T_b - T_a)``:
    conservative in H and the same flux law as a temperature-form scheme.
    Between two materials H jumps at equal temperatures, so no chord can stand for the
    flux there: the face takes ``c_f`` = the mean of the two cells' ``rho c_p`` and an
    explicit deferred correction, the divergence of the face vector
    ``[k_f (T_b - T_a) - (k_f / c_f)(H_b - H_a)] / d n`` at the current sweep, is added to
    the sources (FiPy's own ``FaceVariable.divergence`` over its ``faceNormals``); at
    convergence the face flux is again exactly ``k_f (T_b - T_a)`` (deferred correction:
    Ferziger & Peric, Computational Methods for Fluid Dynamics, 3rd ed., sec. 5.6, from
    memory). With one material the correction is zero and is not formed.

Material properties are read by the twin itself from the rows of each material's tables
(the input data, ``PropertyTable.temperature`` / ``.value``): linear interpolation with
``numpy.interp``, and the volumetric enthalpy integrated and inverted here in closed form
(:class:`TableEnthalpy`), not through heatstack's property or enthalpy code.

Only fully active rectangular grids are supported (no void cells); contacts must be
perfect. Surfaces not listed in ``convection`` are adiabatic.
"""

from __future__ import annotations

import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import fipy as fp
import numpy as np

__all__ = [
    "FIPY_VERSION",
    "FipyRun",
    "FipyTwin",
    "TableEnthalpy",
    "radial_metric_difference",
    "rubbing_interfaces",
    "step_power",
]

FIPY_VERSION = fp.__version__

_ROTOR = "rotor"
_NON_ROTATING = ("stator", "pressure_plate", "end_plate")
_TWO_PI = 2.0 * np.pi


def step_power(times: np.ndarray, powers: np.ndarray, t0: float, t1: float) -> float:
    """Mean power over [t0, t1] of a piecewise-linear table that is zero outside it [W]."""
    times, powers = np.asarray(times, float), np.asarray(powers, float)
    knots = times[(times > t0) & (times < t1)]
    t = np.concatenate(([t0], knots, [t1]))
    p = np.interp(t, times, powers, left=0.0, right=0.0)
    return float(np.sum(0.5 * (p[1:] + p[:-1]) * np.diff(t)) / (t1 - t0))


def rubbing_interfaces(parts: Sequence) -> list[tuple[float, float, float]]:
    """(z, r_low, r_high) of every rotor / non-rotating-part face pair touching axially."""
    found = []
    for a in parts:
        for b in parts:
            if not (a.role == _ROTOR and b.role in _NON_ROTATING):
                continue
            for z_a, z_b in ((a.z_max, b.z_min), (a.z_min, b.z_max)):
                if abs(z_a - z_b) <= 1e-12 * max(1.0, abs(z_a)):
                    low, high = max(a.r_inner, b.r_inner), min(a.r_outer, b.r_outer)
                    if high > low:
                        found.append((z_a, low, high))
    return sorted(found)


def radial_metric_difference(r_edges: np.ndarray) -> float:
    """Largest relative difference of FiPy's radial face conductance from the exact log form.

    FiPy: ``r_f / (r_b - r_a)``; exact: ``1 / ln(r_b / r_a)`` (both times ``k dz``).
    """
    rc = 0.5 * (r_edges[1:] + r_edges[:-1])
    ra, rb, rf = rc[:-1], rc[1:], r_edges[1:-1]
    return float(np.max(np.abs(rf * np.log(rb / ra) / (rb - ra) - 1.0))) if rf.size else 0.0


class TableEnthalpy:
    """Volumetric enthalpy of a piecewise-linear specific-heat table, and its inverse.

    ``H(T) = rho * integral of cp dT`` from the first row, a quadratic on each piece
    between two rows; the inverse solves that quadratic, ``x = 2 dh / (b + sqrt(b^2 + 4 a dh))``
    (the form without cancellation as the slope ``a`` goes to zero). Beyond the table's ends
    the end pieces are continued (the checks stay inside the tables).

    Parameters
    ----------
    material : heatstack Material
        Its ``density`` [kg/m^3] and the rows of its ``specific_heat`` table [K], [J/(kg K)].
    """

    def __init__(self, material):
        self.rho = float(material.density)
        self.t = np.asarray(material.specific_heat.temperature, float)
        self.cp = np.asarray(material.specific_heat.value, float)
        self.slope = np.diff(self.cp) / np.diff(self.t)
        pieces = self.rho * 0.5 * (self.cp[1:] + self.cp[:-1]) * np.diff(self.t)
        self.h = np.concatenate(([0.0], np.cumsum(pieces)))

    def enthalpy(self, T: np.ndarray) -> np.ndarray:
        """H [J/m^3] at ``T`` [K]."""
        T = np.asarray(T, float)
        k = np.clip(np.searchsorted(self.t, T, side="right") - 1, 0, self.t.size - 2)
        x = T - self.t[k]
        return self.h[k] + self.rho * (self.cp[k] * x + 0.5 * self.slope[k] * x * x)

    def temperature(self, H: np.ndarray) -> np.ndarray:
        """T [K] at ``H`` [J/m^3]."""
        H = np.asarray(H, float)
        k = np.clip(np.searchsorted(self.h, H, side="right") - 1, 0, self.t.size - 2)
        dh = (H - self.h[k]) / self.rho
        b = self.cp[k]
        return self.t[k] + 2.0 * dh / (b + np.sqrt(b * b + 2.0 * self.slope[k] * dh))


def _table(table, T: np.ndarray) -> np.ndarray:
    """Linear interpolation in the rows of a property table (clamped at its ends)."""
    return np.interp(T, np.asarray(table.temperature, float), np.asarray(table.value, float))


@dataclass
class FipyRun:
    """Histories of a FiPy twin run."""

    times: np.ndarray
    probes: dict[str, np.ndarray]
    snapshots: dict[float, np.ndarray]
    sweeps: list[int] = field(default_factory=list)
    wall_time: float = 0.0
    largest_last_change: float = 0.0

    @property
    def steps(self) -> int:
        return len(self.sweeps)


class FipyTwin:
    """The FiPy model of a fully active stack grid.

    Parameters
    ----------
    r_edges, z_edges : ndarray
        Grid lines [m] (take them from the heatstack model: the identical grid).
    parts : sequence of heatstack Part
        The parts; every cell centre must lie in exactly one.
    materials : mapping of str to Material
        Material of each part, by the part's material name.
    power_times, power_powers : array_like
        The piecewise-linear friction power table [s], [W] (zero outside it).
    convection : mapping of str to (h, T_inf)
        Film coefficient [W/(m^2 K)] and air temperature [K] on the exterior sides
        ``"bottom"``, ``"top"``, ``"inner"``, ``"outer"`` of the domain.
    form : {"temperature", "enthalpy"}
        See the module docstring.
    solver : {"lu", "cg"}
        FiPy's SciPy direct solver (``LinearLUSolver``), or its conjugate-gradient solver
        (``LinearPCGSolver``, unpreconditioned) to the relative residual ``cg_tolerance``
        (the matrix is symmetric positive definite).
    cg_tolerance : float
        Relative residual of the conjugate-gradient solves.
    """

    def __init__(
        self,
        r_edges: np.ndarray,
        z_edges: np.ndarray,
        parts: Sequence,
        materials: Mapping[str, object],
        power_times: Sequence[float],
        power_powers: Sequence[float],
        convection: Mapping[str, tuple[float, float]],
        form: str = "temperature",
        solver: str = "lu",
        cg_tolerance: float = 1e-10,
    ):
        if form not in ("temperature", "enthalpy"):
            raise ValueError(f"form must be 'temperature' or 'enthalpy', got {form!r}")
        if solver not in ("lu", "cg"):
            raise ValueError(f"solver must be 'lu' or 'cg', got {solver!r}")
        self.form = form
        self.r_edges, self.z_edges = np.asarray(r_edges, float), np.asarray(z_edges, float)
        self.nr, self.nz = self.r_edges.size - 1, self.z_edges.size - 1
        self.mesh = fp.CylindricalGrid2D(
            dx=np.diff(self.r_edges),
            dy=np.diff(self.z_edges),
            origin=((self.r_edges[0],), (self.z_edges[0],)),
        )
        mesh = self.mesh
        self.n = mesh.numberOfCells
        self.power_times = np.asarray(power_times, float)
        self.power_powers = np.asarray(power_powers, float)
        rc, zc = (np.asarray(v) for v in mesh.cellCenters.value)
        self.volume = _TWO_PI * np.asarray(mesh.cellVolumes)  # full-circumference [m^3]

        # ---- materials of the cells (from the part extents, not the engine's part map)
        owner = np.full(self.n, -1)
        for k, p in enumerate(parts):
            inside = (rc > p.r_inner) & (rc < p.r_outer) & (zc > p.z_min) & (zc < p.z_max)
            if np.any(owner[inside] >= 0):
                raise ValueError(f"part {p.name!r} overlaps another part on the grid")
            owner[inside] = k
        if np.any(owner < 0):
            raise ValueError("the FiPy twin needs a fully active rectangular grid (found void cells)")
        names = sorted({p.material for p in parts})
        self.blocks = [
            (
                materials[name],
                np.flatnonzero(np.isin(owner, [k for k, p in enumerate(parts) if p.material == name])),
            )
            for name in names
        ]
        self.enthalpies = [TableEnthalpy(material) for material, _ in self.blocks]
        self.cell_block = np.empty(self.n, dtype=int)
        for k, (_, cells) in enumerate(self.blocks):
            self.cell_block[cells] = k

        # ---- face geometry
        ids = np.asarray(mesh.faceCellIDs.filled(-1))
        self.id1 = ids[0]
        self.id2 = np.where(ids[1] < 0, ids[0], ids[1])
        self.interior = np.asarray(mesh.interiorFaces.value, bool)
        normal = np.asarray(mesh.faceNormals)
        self.axial_face = np.abs(normal[1]) > 0.5  # faces normal to z
        fr, fz = (np.asarray(v) for v in mesh.faceCenters.value)
        # centre-to-centre distance; on exterior faces, cell centre to face (unit scale: metres)
        self.face_distance = np.asarray(mesh.scaledCellDistances)
        self.material_face = self.interior & (self.cell_block[self.id1] != self.cell_block[self.id2])
        self.correction = fp.FaceVariable(mesh=mesh, value=0.0)
        self.correction_source = (self.correction * mesh.faceNormals).divergence  # [W/m^3]

        # ---- convection: exterior faces per side, as FiPy face masks
        sides = {
            "bottom": mesh.facesBottom,
            "top": mesh.facesTop,
            "inner": mesh.facesLeft,
            "outer": mesh.facesRight,
        }
        self.h = np.zeros(mesh.numberOfFaces)
        self.t_inf = np.zeros(mesh.numberOfFaces)
        for side, (h, t_inf) in convection.items():
            mask = np.asarray(sides[side].value, bool)
            self.h[mask], self.t_inf[mask] = h, t_inf
        self.cooled = self.h > 0
        self.h_eff = fp.FaceVariable(mesh=mesh, value=0.0)
        self.h_eff_tinf = fp.FaceVariable(mesh=mesh, value=0.0)
        self.robin = (self.h_eff * mesh.faceNormals).divergence  # sum h_eff A / V [W/(m^3 K)]
        self.robin_t = (self.h_eff_tinf * mesh.faceNormals).divergence  # sum h_eff T_inf A / V

        # ---- rubbing faces and their share of the power (independent of the engine)
        interfaces = rubbing_interfaces(parts)
        if not interfaces:
            raise ValueError("no rubbing interface in the parts")
        vertex = np.asarray(mesh.vertexCoords)
        fv = np.asarray(mesh.faceVertexIDs)
        r_lo = np.minimum(vertex[0][fv[0]], vertex[0][fv[1]])
        r_hi = np.maximum(vertex[0][fv[0]], vertex[0][fv[1]])
        below, above, weight = [], [], []
        for z, low, high in interfaces:
            sel = np.flatnonzero(
                self.axial_face & self.interior & (np.abs(fz - z) <= 1e-9 * max(1.0, abs(z))) & (fr > low) & (fr < high)
            )
            w = r_hi[sel] ** 3 - r_lo[sel] ** 3
            w = w / w.sum() / len(interfaces)
            a, b = self.id1[sel], self.id2[sel]
            lower = zc[a] < zc[b]
            below.append(np.where(lower, a, b))
            above.append(np.where(lower, b, a))
            weight.append(w)
        self.fric_below = np.concatenate(below)
        self.fric_above = np.concatenate(above)
        self.fric_weight = np.concatenate(weight)

        # ---- FiPy variables and the equation
        self.var = fp.CellVariable(mesh=mesh, value=0.0, hasOld=True)  # T or H
        self.coeff = fp.FaceVariable(mesh=mesh, value=1.0)  # k_f or k_f / c_f
        self.capacity = fp.CellVariable(mesh=mesh, value=1.0)  # rho c_p (temperature form)
        self.sink = fp.CellVariable(mesh=mesh, value=0.0)  # implicit coefficient
        self.source = fp.CellVariable(mesh=mesh, value=0.0)  # explicit [W/m^3]
        self.kr = fp.CellVariable(mesh=mesh, value=1.0)
        self.kz = fp.CellVariable(mesh=mesh, value=1.0)
        transient = (
            fp.TransientTerm(coeff=self.capacity, var=self.var)
            if form == "temperature"
            else fp.TransientTerm(var=self.var)
        )
        self.equation = transient == (
            fp.DiffusionTerm(coeff=self.coeff, var=self.var)
            + self.source
            - fp.ImplicitSourceTerm(coeff=self.sink, var=self.var)
        )
        if solver == "lu":
            self.solver = fp.LinearLUSolver(tolerance=1e-12, iterations=10)
        else:
            self.solver = fp.LinearPCGSolver(tolerance=cg_tolerance, iterations=10000)
        self.rc, self.zc = rc, zc

    # ------------------------------------------------------------------ properties
    def _cell(self, what: str, T: np.ndarray) -> np.ndarray:
        out = np.empty(self.n)
        for (material, cells), enthalpy in zip(self.blocks, self.enthalpies, strict=True):
            t = T[cells]
            if what == "kr":
                out[cells] = _table(material.conductivity_in_plane, t)
            elif what == "kz":
                out[cells] = _table(material.conductivity_through_thickness, t)
            elif what == "c":
                out[cells] = material.density * _table(material.specific_heat, t)
            else:  # enthalpy
                out[cells] = enthalpy.enthalpy(t)
        return out

    def _update(self, T: np.ndarray, power: float) -> None:
        """Set every coefficient from the current temperature iterate."""
        kr, kz, c = self._cell("kr", T), self._cell("kz", T), self._cell("c", T)
        self.kr.setValue(kr)
        self.kz.setValue(kz)
        k_face = np.where(self.axial_face, np.asarray(self.kz.harmonicFaceValue), np.asarray(self.kr.harmonicFaceValue))
        # film in series with the half cell: 1 / (1/h + d / k_normal), k of the face's cell
        k_n = np.where(self.axial_face, kz[self.id1], kr[self.id1])
        h_eff = np.zeros_like(self.h)
        h_eff[self.cooled] = 1.0 / (1.0 / self.h[self.cooled] + self.face_distance[self.cooled] / k_n[self.cooled])
        self.h_eff.setValue(h_eff)
        self.h_eff_tinf.setValue(h_eff * self.t_inf)
        robin, robin_t = np.asarray(self.robin), np.asarray(self.robin_t)
        # friction heat [W] per cell, effusivity split at the current iterate
        q = power * self.fric_weight
        e_lo = np.sqrt(kz[self.fric_below] * c[self.fric_below])
        e_hi = np.sqrt(kz[self.fric_above] * c[self.fric_above])
        share = e_lo / (e_lo + e_hi)
        heat = np.bincount(self.fric_below, q * share, self.n) + np.bincount(self.fric_above, q * (1.0 - share), self.n)
        friction = heat / self.volume
        if self.form == "temperature":
            self.capacity.setValue(c)
            self.coeff.setValue(k_face)
            self.sink.setValue(robin)
            self.source.setValue(friction + robin_t)
        else:
            H = np.asarray(self.var.value)
            Ta, Tb = T[self.id1], T[self.id2]
            dT = Tb - Ta
            chord = np.abs(dT) > 1e-9
            c_face = self._cell_mean_capacity(Ta, Tb)
            c_face[chord] = (H[self.id2][chord] - H[self.id1][chord]) / dT[chord]
            correction = 0.0
            if len(self.blocks) > 1:
                jump = self.material_face
                c_face[jump] = 0.5 * (c[self.id1][jump] + c[self.id2][jump])
                flux = np.zeros_like(self.h)
                dH = H[self.id2][jump] - H[self.id1][jump]
                flux[jump] = (k_face[jump] * dT[jump] - k_face[jump] / c_face[jump] * dH) / self.face_distance[jump]
                self.correction.setValue(flux)
                correction = np.asarray(self.correction_source)
            self.coeff.setValue(k_face / c_face)
            # -h_eff A (T - T_inf) linearised in H at the iterate: T ~ T* + (H - H*) / c
            self.sink.setValue(robin / c)
            self.source.setValue(friction + robin_t - robin * T + robin * H / c + correction)

    def _cell_mean_capacity(self, Ta: np.ndarray, Tb: np.ndarray) -> np.ndarray:
        """rho c_p at the mean temperature of each face's two cells, with the material of cell a."""
        out = np.empty(Ta.size)
        mean = 0.5 * (Ta + Tb)
        for k, (material, _) in enumerate(self.blocks):
            faces = self.cell_block[self.id1] == k
            out[faces] = material.density * _table(material.specific_heat, mean[faces])
        return out

    def _temperature(self) -> np.ndarray:
        value = np.asarray(self.var.value, float)
        if self.form == "temperature":
            return value.copy()
        out = np.empty(self.n)
        for (_, cells), enthalpy in zip(self.blocks, self.enthalpies, strict=True):
            out[cells] = enthalpy.temperature(value[cells])
        return out

    # ------------------------------------------------------------------ output
    def field(self, T: np.ndarray) -> np.ndarray:
        """Cell values as an (nz, nr) array (FiPy numbers cells r fastest)."""
        return np.asarray(T).reshape(self.nz, self.nr)

    def cell_at(self, r: float, z: float) -> int:
        """The cell whose centre is nearest to (r, z)."""
        return int(np.argmin((self.rc - r) ** 2 + (self.zc - z) ** 2))

    # ------------------------------------------------------------------ run
    def run(
        self,
        times: Sequence[float],
        initial_temperature: float,
        probes: Mapping[str, tuple[float, float]] = (),
        snapshot_times: Sequence[float] = (),
        sweep_tolerance: float = 1e-6,
        max_sweeps: int = 100,
        fixed_sweeps: int | None = None,
    ) -> FipyRun:
        """Step through ``times`` (``times[0]`` is the start) with backward Euler.

        Each step sweeps until the largest change of T between two sweeps is below
        ``sweep_tolerance`` [K] (at least two sweeps, so that the last one confirms
        the converged coefficients), or exactly ``fixed_sweeps`` sweeps if given.
        """
        start = time.perf_counter()
        times = np.asarray(times, float)
        T = np.full(self.n, float(initial_temperature))
        self.var.setValue(self._cell("H", T) if self.form == "enthalpy" else T)
        self.var.updateOld()
        probe_cells = {name: self.cell_at(r, z) for name, (r, z) in dict(probes).items()}
        histories = {name: [T[c]] for name, c in probe_cells.items()}
        wanted = [float(t) for t in snapshot_times]
        snapshots = {}
        if any(abs(times[0] - t) < 1e-9 for t in wanted):
            snapshots[float(times[0])] = self.field(T).copy()
        sweeps, last = [], 0.0
        for t0, t1 in zip(times[:-1], times[1:], strict=True):
            dt = float(t1 - t0)
            power = step_power(self.power_times, self.power_powers, float(t0), float(t1))
            self.var.updateOld()
            for sweep in range(1, max_sweeps + 1):
                self._update(T, power)
                self.equation.sweep(var=self.var, dt=dt, solver=self.solver)
                T_new = self._temperature()
                last = float(np.max(np.abs(T_new - T)))
                T = T_new
                if fixed_sweeps is not None:
                    if sweep >= fixed_sweeps:
                        break
                elif sweep >= 2 and last <= sweep_tolerance:
                    break
            else:
                raise RuntimeError(f"FiPy sweeps did not converge at t = {t1} s (last change {last:.3g} K)")
            sweeps.append(sweep)
            for name, c in probe_cells.items():
                histories[name].append(T[c])
            for t in wanted:
                if abs(t1 - t) < 1e-9:
                    snapshots[t] = self.field(T).copy()
        return FipyRun(
            times=times,
            probes={name: np.asarray(v) for name, v in histories.items()},
            snapshots=snapshots,
            sweeps=sweeps,
            wall_time=time.perf_counter() - start,
            largest_last_change=last,
        )
