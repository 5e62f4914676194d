"""Implicit, energy-conserving time integration of the conduction network.

Per cell ``i`` of volume ``V_i`` the scheme is backward Euler on enthalpy::

    V_i [H_i(T^{n+1}) - H_i(T^n)] / dt = sum_links G (T_j - T_i) - U_i (T_i - T_eq,i) + S_i

with every conductance, boundary coefficient and source partition evaluated at the
current iterate (so the system stays symmetric positive definite). A step starts from
the extrapolation of the last accepted states (``predictor.py``). Each Newton
iteration solves ``J d = -F`` with the factors of a recent ``J`` (one triangular
solve); the iterates are Anderson-accelerated. When the correction is below the
tolerance, the new enthalpy is set *from the fluxes at* ``T + d`` and the temperature by
the exact inverse of ``H``, so every accepted step conserves energy to round-off; the
step is accepted only if that moves no temperature by more than ten tolerances.

References
----------
.. [1] Voller, V.R., Swaminathan, C.R., 1991, General source-based method for
   solidification phase change, Numerical Heat Transfer B 19, 175-189 (enthalpy update
   followed by the inverse temperature-enthalpy relation).
"""

from __future__ import annotations

import logging
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..errors import HeatstackError, InputError, PropertyRangeError, SolverError
from ..result import Result, State
from .network import Network
from .predictor import Extrapolator
from .recording import Recorder
from .schedule import Phase, Schedule
from .tabulated import evaluator

__all__ = ["SolverOptions", "integrate", "STEFAN_BOLTZMANN"]

log = logging.getLogger(__name__)

#: Stefan-Boltzmann constant [W/(m^2 K^4)] (CODATA 2018, exact in the SI).
STEFAN_BOLTZMANN = 5.670374419e-8


@dataclass(frozen=True)
class SolverOptions:
    """Controls of the time integration.

    Parameters
    ----------
    target_change : float
        Largest temperature change per step the step-size control aims at [K].
    initial_step, max_step, min_step : float
        Step sizes [s].
    growth : float
        Largest factor by which a step may grow over the previous one.
    fixed_step : float, optional
        Use this step [s] throughout (still landing on every breakpoint).
    tolerance : float
        Newton stops when the estimated remaining temperature error is below this [K].
    max_iterations : int
        Newton iterations before the step is cut.
    max_step_cuts : int
        Successive cuts of one step before the run stops with an error.
    snapshot_times : tuple of float
        Times [s] at which whole fields are stored (the start and end always are).
    """

    target_change: float = 4.0
    initial_step: float = 0.05
    max_step: float = 120.0
    min_step: float = 1e-5
    growth: float = 1.5
    fixed_step: float | None = None
    tolerance: float = 1e-3
    max_iterations: int = 30
    max_step_cuts: int = 10
    snapshot_times: tuple[float, ...] = field(default=())

    def __post_init__(self) -> None:
        for name in ("target_change", "initial_step", "max_step", "min_step", "tolerance"):
            value = getattr(self, name)
            if not (np.isfinite(value) and value > 0):
                raise InputError(f"solver option {name} must be > 0, got {value}")
        if self.fixed_step is not None and not self.fixed_step > 0:
            raise InputError(f"solver option fixed_step must be > 0, got {self.fixed_step}")
        if self.growth < 1.0:
            raise InputError(f"solver option growth must be >= 1, got {self.growth}")


class _StepFailed(Exception):
    def __init__(self, reason: str, cell: int | None = None, at_guess: bool = False):
        super().__init__(reason)
        self.reason, self.cell, self.at_guess = reason, cell, at_guess


def _csc_pattern(n: int, rows: np.ndarray, cols: np.ndarray) -> tuple[sp.csc_matrix, np.ndarray]:
    """A CSC matrix with the union pattern of (rows, cols) and each entry's data position."""
    key = cols.astype(np.int64) * n + rows
    unique, position = np.unique(key, return_inverse=True)
    indices = (unique % n).astype(np.int32)
    indptr = np.searchsorted(unique // n, np.arange(n + 1)).astype(np.int32)
    matrix = sp.csc_matrix((np.zeros(unique.size), indices, indptr), shape=(n, n))
    return matrix, position


class _Integrator:
    """Holds the precomputed index arrays and work state of one run."""

    def __init__(
        self,
        network: Network,
        schedule: Schedule,
        options: SolverOptions,
        progress: Callable[[float], None] | None = None,
    ):
        self.net, self.schedule, self.opt = network, schedule, options
        self.progress = progress
        net, n = network, network.n_cells
        self.n = n
        self.k_link_a = net.link_a + n * net.link_dir
        self.k_link_b = net.link_b + n * net.link_dir
        self.k_face = net.face_cell + n * net.face_dir
        self.k_gap_a = net.gap_a + n * net.gap_dir_a
        self.k_gap_b = net.gap_b + n * net.gap_dir_b
        diag = np.arange(n)
        m, q = net.link_a.size, net.gap_a.size
        rows = np.concatenate((diag, net.link_a, net.link_b, net.gap_a, net.gap_b))
        cols = np.concatenate((diag, net.link_b, net.link_a, net.gap_b, net.gap_a))
        self.matrix, self.position = _csc_pattern(n, rows, cols)
        self.unique_positions = np.unique(self.position).size == self.position.size
        cuts = np.cumsum([n, m, m, q])
        self.pos_diag, self.pos_ab, self.pos_ba, self.pos_gap_ab, self.pos_gap_ba = np.split(self.position, cuts)
        link_ends = np.concatenate((net.link_a, net.link_b, net.gap_a, net.gap_b))
        # each cell's sum of the conductances of its links and gap pairs, as one mat-vec
        ends = np.arange(m + q)
        self.incidence = sp.csr_matrix(
            (np.ones(2 * (m + q)), (link_ends, np.concatenate((ends[:m], ends[:m], ends[m:], ends[m:])))),
            shape=(n, m + q),
        )
        self.face_blocks = [
            np.flatnonzero(net.cell_material[net.face_cell] == k) for k in range(len(net.material_blocks))
        ]
        self.gap_blocks_a = [np.flatnonzero(net.cell_material[net.gap_a] == k) for k in range(len(net.material_blocks))]
        self.gap_blocks_b = [np.flatnonzero(net.cell_material[net.gap_b] == k) for k in range(len(net.material_blocks))]
        self.group_faces = [np.flatnonzero(net.face_group == g) for g in range(len(net.groups))]
        self.mass = net.mass()
        j, i = net.grid.cell_ij[:, 0], net.grid.cell_ij[:, 1]
        self.cell_r, self.cell_z = net.grid.r_centres[i], net.grid.z_centres[j]
        self.lu = None
        self.lu_dt = None
        self.lu_phase: Phase | None = None
        self.rate_estimate: float | None = None
        self.stats = {"steps": 0, "rejected_steps": 0, "iterations": 0, "factorisations": 0}
        self._phase_cache: tuple[Phase | None, dict] = (None, {})
        self._evaluators: dict[int, tuple] = {}
        self.k_stack = np.empty(2 * n)

    # ---------------------------------------------------------------- properties
    def properties(self, T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Fill ``k_stack`` (radial then axial conductivity) and return (c, H) [J/m^3/K, J/m^3]."""
        n = self.n
        c, H = np.empty(n), np.empty(n)
        for material, block in self.net.material_blocks:
            k_r, k_z, c[block], H[block] = material.thermal_properties(T[block])
            self.k_stack[block] = k_r
            self.k_stack[n + block.start : n + block.stop] = k_z
        return c, H

    def enthalpy(self, T: np.ndarray) -> np.ndarray:
        H = np.empty(self.n)
        for material, block in self.net.material_blocks:
            H[block] = material.enthalpy(T[block])
        return H

    def temperature(self, H: np.ndarray) -> np.ndarray:
        T = np.empty(self.n)
        for material, block in self.net.material_blocks:
            T[block] = material.temperature_from_enthalpy(H[block])
        return T

    def emissivity(self, blocks: list[np.ndarray], surface_t: np.ndarray) -> np.ndarray:
        eps = np.empty(surface_t.size)
        for (material, _), faces in zip(self.net.material_blocks, blocks, strict=True):
            if faces.size:
                eps[faces] = material.emissivity(surface_t[faces])
        return eps

    # ---------------------------------------------------------------- boundaries
    def phase_arrays(self, phase: Phase) -> dict:
        cached_phase, arrays = self._phase_cache
        if cached_phase is phase:
            return arrays
        nf = self.net.face_cell.size
        laws = [phase.law(group) for group in self.net.groups]
        arrays = {
            "laws": [self._evaluator(law) for law in laws],
            "ambient": np.empty(nf),
            "surroundings": np.empty(nf),
            "radiates": np.empty(nf),
        }
        for law, faces in zip(laws, self.group_faces, strict=True):
            arrays["ambient"][faces] = law.ambient_temperature
            arrays["surroundings"][faces] = law.surroundings_temperature
            arrays["radiates"][faces] = 1.0 if law.radiation else 0.0
        arrays["radiates"] *= self.net.face_radiates
        self._phase_cache = (phase, arrays)
        return arrays

    def assemble(self, diagonal: np.ndarray, G: np.ndarray, G_gap: np.ndarray) -> None:
        """Write the step matrix in place: ``diagonal`` plus the conductances of every link."""
        data = self.matrix.data
        diagonal = diagonal + self.incidence @ (np.concatenate((G, G_gap)) if G_gap.size else G)
        if self.unique_positions:
            data[self.pos_diag] = diagonal
            negative = -G
            data[self.pos_ab] = negative
            data[self.pos_ba] = negative
            if G_gap.size:
                data[self.pos_gap_ab] = -G_gap
                data[self.pos_gap_ba] = -G_gap
        else:  # a link and a gap pair share cells: sum the duplicates
            values = np.concatenate((diagonal, -G, -G, -G_gap, -G_gap))
            data[:] = np.bincount(self.position, weights=values, minlength=data.size)

    def _evaluator(self, law):
        """One (possibly tabulated) evaluator per law object, shared by the phases using it."""
        key = id(law)
        if key not in self._evaluators:
            self._evaluators[key] = (law, evaluator(law))
        return self._evaluators[key][1]

    def boundary(self, phase: Phase, time: float, surface_t: np.ndarray) -> dict:
        net = self.net
        env = self.phase_arrays(phase)
        h_conv = np.empty(surface_t.size)
        for coefficient, faces in zip(env["laws"], self.group_faces, strict=True):
            h_conv[faces] = coefficient(surface_t[faces], time)
        # grey radiation linearised on its tangent at the iterate's surface temperature:
        # q = eps sigma (Ts^4 - Tsur^4) ~ h_rad (T - t_rad) with h_rad = 4 eps sigma Ts^3
        eps = env["radiates"] * self.emissivity(self.face_blocks, surface_t)
        h_rad = 4.0 * eps * STEFAN_BOLTZMANN * surface_t**3
        q_rad = eps * STEFAN_BOLTZMANN * (surface_t**4 - env["surroundings"] ** 4)
        t_rad = surface_t - q_rad / np.where(h_rad > 0, h_rad, 1.0)
        h = h_conv + h_rad
        r_half = net.face_g / self.k_stack[self.k_face]
        hA = h * net.face_area
        U = hA / (1.0 + hA * r_half)
        t_eq = np.where(h > 0, (h_conv * env["ambient"] + h_rad * t_rad) / np.where(h > 0, h, 1.0), env["ambient"])
        return {
            "U": U,
            "t_eq": t_eq,
            "h_conv": h_conv,
            "h_rad": h_rad,
            "t_rad": t_rad,
            "r_half": r_half,
            **env,
        }

    def gaps(self, ts_a: np.ndarray, ts_b: np.ndarray) -> dict:
        net = self.net
        eps_a = self.emissivity(self.gap_blocks_a, ts_a)
        eps_b = self.emissivity(self.gap_blocks_b, ts_b)
        exchange = 1.0 / (1.0 / eps_a + net.gap_area_ratio * (1.0 / eps_b - 1.0))
        hA = STEFAN_BOLTZMANN * net.gap_area_a * exchange * (ts_a**2 + ts_b**2) * (ts_a + ts_b)
        r_a = net.gap_ga / self.k_stack[self.k_gap_a]
        r_b = net.gap_gb / self.k_stack[self.k_gap_b]
        G = 1.0 / (r_a + r_b + 1.0 / np.maximum(hA, 1e-300))
        return {"G": G, "r_a": r_a, "r_b": r_b}

    # ---------------------------------------------------------------- one step
    def step(self, t0: float, dt: float, T_n: np.ndarray, H_n: np.ndarray, guess: np.ndarray, surf: dict) -> dict:
        """Advance one step; raises _StepFailed. ``surf`` holds surface temperatures (updated)."""
        net, n, opt = self.net, self.n, self.opt
        phase = self.schedule.phase_at(t0 + 0.5 * dt)
        power = self.schedule.energy(t0, t0 + dt) / dt
        t1 = t0 + dt
        contact = net.link_contact_clamped if phase.clamped else net.link_contact_released
        inv_dt_v = net.volume / dt
        volume_source = self.volume_source(t1)
        T = guess.copy()
        previous_change = None
        # surface temperatures of the last step, moved with their cells to the initial guess
        shift = guess - T_n
        face_ts = surf["face"] + shift[net.face_cell]
        gap_ta = surf["gap_a"] + shift[net.gap_a]
        gap_tb = surf["gap_b"] + shift[net.gap_b]
        # fresh factors when the step size or the phase (cooling laws, contact state) changes
        refactor = self.lu is None or self.lu_phase is not phase or not (0.75 <= dt / self.lu_dt <= 1.35)
        fresh = False
        history: list[tuple[np.ndarray, np.ndarray]] = []
        for iteration in range(opt.max_iterations):
            try:
                c, H = self.properties(T)
                bnd = self.boundary(phase, t1, face_ts)
                gap = self.gaps(gap_ta, gap_tb)
            except PropertyRangeError as exc:
                raise _StepFailed(str(exc), self._out_of_range_cell(T), at_guess=iteration == 0) from None
            k = self.k_stack
            G = 1.0 / (net.link_ga / k[self.k_link_a] + net.link_gb / k[self.k_link_b] + contact)
            U_cell = np.bincount(net.face_cell, weights=bnd["U"], minlength=n)
            b = np.bincount(net.face_cell, weights=bnd["U"] * bnd["t_eq"], minlength=n)
            face_a, face_b = self.friction_sources(power, k, c)
            b += np.bincount(net.friction_a, weights=face_a, minlength=n)
            b += np.bincount(net.friction_b, weights=face_b, minlength=n)
            if volume_source is not None:
                b += volume_source
            capacity = c * inv_dt_v
            self.assemble(capacity + U_cell, G, gap["G"])
            residual = self.matrix @ T - capacity * T + inv_dt_v * (H - H_n) - b
            if refactor:
                self.factorise(dt)
                self.lu_phase = phase
                refactor, fresh = False, True
            correction = self.lu.solve(-residual)
            T_star = T + correction
            change = np.abs(correction)
            largest = float(change.max()) if change.size else 0.0
            if not np.isfinite(largest):  # max propagates NaN and inf
                bad = int(np.flatnonzero(~np.isfinite(T_star))[0])
                raise _StepFailed("non-finite temperature", bad)
            self.stats["iterations"] += 1
            if self._converged(largest, previous_change):
                T_new, H_new = self._conservative_update(T_star, H_n, b, capacity, inv_dt_v)
                adjustment = float(np.max(np.abs(T_new - T_star))) if T_new.size else 0.0
                if adjustment <= max(10.0 * opt.tolerance, 1e-6):
                    heat_in = power * dt + (dt * float(np.sum(volume_source)) if volume_source is not None else 0.0)
                    self.stats["largest_finish_adjustment"] = max(
                        self.stats.get("largest_finish_adjustment", 0.0), adjustment
                    )
                    return self._finish(
                        T_star, T_new, H_new, H_n, dt, heat_in, bnd, gap, face_a, face_b, surf, iteration
                    )
                # the fluxes at T_star do not yet balance the cells: iterate on from the
                # balanced state, with factors of the current coefficients
                refactor, fresh, previous_change = True, False, None
                history.clear()
                T_star = T_new
            else:
                T_star = self._accelerate(history, T, correction)
            T = T_star
            face_ts, gap_ta, gap_tb = self._surface_temperatures(T, bnd, gap)
            if iteration >= 2 and previous_change is not None and largest > 0.3 * previous_change and not fresh:
                refactor = True  # slow contraction with old factors: refactorise once this step
            previous_change = largest
        cell = int(np.argmax(change))
        raise _StepFailed(
            f"Newton did not converge in {opt.max_iterations} iterations (last update {largest:.3g} K)", cell
        )

    def _conservative_update(self, T_star, H_n, b, capacity, inv_dt_v) -> tuple[np.ndarray, np.ndarray]:
        """Enthalpy from the fluxes at ``T_star`` and the temperature by the exact inverse of H.

        The new enthalpy is set so that every cell's balance holds exactly with the
        step's coefficients and the fluxes at the last Newton iterate, so energy is
        conserved to round-off; the step is accepted only when ``T_new - T_star`` is of
        the order of the Newton tolerance.
        """
        outflow = self.matrix @ T_star - capacity * T_star
        H_new = H_n + (b - outflow) / inv_dt_v
        try:
            return self.temperature(H_new), H_new
        except PropertyRangeError as exc:
            raise _StepFailed(str(exc), self._out_of_range_cell(T_star)) from None

    @staticmethod
    def _accelerate(history: list, T: np.ndarray, correction: np.ndarray, depth: int = 2) -> np.ndarray:
        """Anderson-accelerated next iterate of the fixed point ``T -> T + correction(T)``.

        References
        ----------
        .. [1] Walker, H.F., Ni, P., 2011, Anderson acceleration for fixed-point
           iterations, SIAM J. Numer. Anal. 49(4), 1715-1735 (type II, depth ``depth``).
        """
        history.append((T, correction))
        if len(history) > depth + 1:
            del history[0]
        if len(history) < 2:
            return T + correction
        d_T = np.column_stack([b[0] - a[0] for a, b in zip(history[:-1], history[1:], strict=True)])
        d_f = np.column_stack([b[1] - a[1] for a, b in zip(history[:-1], history[1:], strict=True)])
        gram = d_f.T @ d_f
        try:
            gamma = np.linalg.solve(gram + 1e-14 * np.trace(gram) * np.eye(gram.shape[0]), d_f.T @ correction)
        except np.linalg.LinAlgError:
            history.clear()
            return T + correction
        return T + correction - (d_T + d_f) @ gamma

    def _surface_temperatures(self, T: np.ndarray, bnd: dict, gap: dict) -> tuple[np.ndarray, ...]:
        """Surface temperatures [K] of exposed faces and of both sides of each gap pair, from
        the cell temperatures ``T`` and the fluxes through their half-cell resistances."""
        net = self.net
        q_face = bnd["U"] * (T[net.face_cell] - bnd["t_eq"])
        q_gap = gap["G"] * (T[net.gap_a] - T[net.gap_b])
        return (
            T[net.face_cell] - q_face * bnd["r_half"],
            T[net.gap_a] - q_gap * gap["r_a"],
            T[net.gap_b] + q_gap * gap["r_b"],
        )

    def _finish(self, T_star, T_new, H_new, H_n, dt, heat_in, bnd, gap, face_a, face_b, surf, iteration) -> dict:
        """Accounts of an accepted step and the surface temperatures for the next one."""
        net = self.net
        face_ts, gap_ta, gap_tb = self._surface_temperatures(T_star, bnd, gap)
        surf.update(face=face_ts, gap_a=gap_ta, gap_b=gap_tb)
        area = net.face_area
        return {
            "T": T_new,
            "H": H_new,
            "heat_in": heat_in,
            "convected": dt * float(np.sum(bnd["h_conv"] * area * (face_ts - bnd["ambient"]))),
            "radiated": dt * float(np.sum(bnd["h_rad"] * area * (face_ts - bnd["t_rad"]))),
            "stored": float(np.sum(net.volume * (H_new - H_n))),
            "friction": (face_a * dt, face_b * dt),
            "iterations": iteration + 1,
        }

    def _out_of_range_cell(self, T: np.ndarray) -> int | None:
        """The cell lying furthest outside its material's common table range."""
        excess = np.zeros(self.n)
        for material, block in self.net.material_blocks:
            tables = (
                material.specific_heat,
                material.conductivity_in_plane,
                material.conductivity_through_thickness,
            )
            low = max(t.temperature[0] for t in tables)
            high = min(t.temperature[-1] for t in tables)
            excess[block] = np.maximum(low - T[block], T[block] - high)
        excess[~np.isfinite(excess)] = np.inf
        return int(np.argmax(excess)) if self.n else None

    def volume_source(self, time: float) -> np.ndarray | None:
        """Heat [W] from the schedule's volumetric source into each cell at ``time``."""
        source = self.schedule.volumetric_source
        if source is None:
            return None
        density = np.asarray(source(self.cell_r, self.cell_z, time), dtype=float)
        if density.shape != (self.n,) or not np.all(np.isfinite(density)):
            raise InputError(f"volumetric source at t = {time} s must give one finite value per cell")
        return density * self.net.volume

    def _converged(self, largest: float, previous: float | None) -> bool:
        """Whether the estimated remaining error ``rate / (1 - rate) * |last correction|`` is
        below the tolerance; the contraction rate is measured from the last two
        corrections, or on a step's first iteration taken (doubled, for safety) from the
        previous step. The conservative end-of-step check still guards the result."""
        tol = self.opt.tolerance
        if largest <= tol:
            return True
        if previous is None or previous <= 0:
            rate = self.rate_estimate
            return rate is not None and rate < 0.25 and 2.0 * rate / (1.0 - 2.0 * rate) * largest <= tol
        rate = largest / previous
        self.rate_estimate = rate
        return rate < 0.9 and rate / (1.0 - rate) * largest <= tol

    def friction_sources(self, power: float, k: np.ndarray, c: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Heat [W] into the cell on each side of every rubbing face (effusivity partition).

        References
        ----------
        .. [1] Carslaw, H.S., Jaeger, J.C., Conduction of Heat in Solids, 2nd ed., Oxford,
           1959, sec. 2.9 (two semi-infinite solids in contact: the flux divides in the
           ratio of the effusivities sqrt(k rho c)).
        """
        net, n = self.net, self.n
        fa, fb = net.friction_a, net.friction_b
        q = power * net.friction_weight
        e_a = np.sqrt(k[n + fa] * c[fa])
        e_b = np.sqrt(k[n + fb] * c[fb])
        share_a = e_a / (e_a + e_b)
        return q * share_a, q * (1.0 - share_a)

    def factorise(self, dt: float) -> None:
        self.lu = spla.splu(
            self.matrix.copy(),
            permc_spec="MMD_AT_PLUS_A",
            diag_pivot_thresh=0.0,
            options={"SymmetricMode": True},
        )
        self.lu_dt = dt
        self.stats["factorisations"] += 1

    # ---------------------------------------------------------------- the run
    def run(
        self,
        T0: np.ndarray,
        t_start: float,
        start_readings: dict[str, float] | None = None,
        first_step: float | None = None,
    ) -> Result:
        net, opt, schedule = self.net, self.opt, self.schedule
        breakpoints = np.unique(np.concatenate((schedule.breakpoints(), np.asarray(opt.snapshot_times, float))))
        breakpoints = breakpoints[(breakpoints > t_start) & (breakpoints <= schedule.end)]
        snapshot_times = set(float(t) for t in opt.snapshot_times)
        T = T0.copy()
        H = self.enthalpy(T)
        self.properties(T)
        surf = {"face": T[net.face_cell].copy(), "gap_a": T[net.gap_a].copy(), "gap_b": T[net.gap_b].copy()}
        rec = Recorder(net, self.mass)
        rec.record(t_start, T, None, surf["face"])
        rec.snapshot(t_start, T)
        t = t_start
        dt = opt.fixed_step or opt.initial_step
        if opt.fixed_step is None and first_step and not self._heating_starts(t_start):
            dt = min(max(float(first_step), opt.min_step), opt.max_step)  # as the run in one piece would step on
        kinks = set(float(b) for b in schedule.breakpoints())
        predictor = Extrapolator()
        predictor.accept(t, T)
        for target in breakpoints:
            while t < target - 1e-9 * max(1.0, abs(target)):
                step = self._land(t, dt, target)
                out, taken = self._advance(t, step, T, H, predictor.guess(t + step), surf)
                T_prev = T
                T, H = out["T"], out["H"]
                t = target if abs(t + taken - target) <= 1e-9 * max(1.0, abs(target)) else t + taken
                predictor.accept(t, T)
                rec.record(t, T, out, surf["face"])
                if self.progress is not None:
                    self.progress(t)
                self.stats["steps"] += 1
                # a step shortened only to land on a breakpoint does not shrink the next one
                dt = self._next_step(dt if taken == step and step < dt else taken, T - T_prev)
            if float(target) in snapshot_times:
                rec.snapshot(t, T)
            if float(target) in kinks:
                predictor.kink()
            if self.opt.fixed_step is None and self._heating_starts(target):
                dt = self.opt.initial_step
                predictor.restart()
                predictor.accept(t, T)
        rec.snapshot(t, T)
        return rec.result(schedule, State(time=t, temperature=T.copy(), step=float(dt)), self.stats, start_readings)

    def _heating_starts(self, time: float) -> bool:
        power = self.schedule.power
        eps = 1e-9 * max(1.0, abs(time))
        return float(power.power(time - eps)) <= 0.0 < float(power.power(time + eps))

    def _land(self, t: float, dt: float, target: float) -> float:
        remaining = target - t
        if dt >= remaining:
            return remaining
        if dt > 0.5 * remaining and self.opt.fixed_step is None:
            return 0.5 * remaining
        return dt

    def _advance(self, t, dt, T, H, guess, surf) -> tuple[dict, float]:
        opt = self.opt
        cut = 0
        while cut <= opt.max_step_cuts:
            try:
                out = self.step(t, dt, T, H, guess, surf)
            except _StepFailed as failure:
                if failure.at_guess and not np.array_equal(guess, T):
                    guess = T  # the extrapolated guess left a property table: start from the last state
                    continue
                self._fail_or_cut(failure, t, dt, cut)
                dt, guess, self.lu, cut = 0.5 * dt, T, None, cut + 1
                continue
            change = float(np.max(np.abs(out["T"] - T))) if T.size else 0.0
            if opt.fixed_step is None and change > 2.0 * opt.target_change and dt > opt.min_step:
                self.stats["rejected_steps"] += 1
                dt = max(opt.min_step, dt * max(0.2, 0.9 * opt.target_change / change))
                guess, cut = T, cut + 1
                continue
            return out, dt
        raise SolverError(f"at t = {t:.6g} s the step could not be completed")

    def _fail_or_cut(self, failure: _StepFailed, t: float, dt: float, cut: int) -> None:
        self.stats["rejected_steps"] += 1
        if cut < self.opt.max_step_cuts and 0.5 * dt >= self.opt.min_step:
            log.debug("step at t=%g s, dt=%g s failed (%s); cutting", t, dt, failure.reason)
            return
        where = ""
        if failure.cell is not None:
            k = int(self.net.grid.cell_part()[failure.cell])
            j, i = self.net.grid.cell_ij[failure.cell]
            r, z = self.net.grid.r_centres[i], self.net.grid.z_centres[j]
            where = f" in part {self.net.assembly.parts[k].name!r} near r={r:.4g} m, z={z:.4g} m"
        raise SolverError(
            f"at t = {t:.6g} s the step failed{where}: {failure.reason} (after {cut} step cuts, last step {dt:.3g} s)"
        ) from None

    def _next_step(self, dt: float, change: np.ndarray) -> float:
        opt = self.opt
        if opt.fixed_step is not None:
            return opt.fixed_step
        largest = float(np.max(np.abs(change))) if change.size else 0.0
        factor = opt.growth if largest <= 0 else min(opt.growth, max(0.2, 0.9 * opt.target_change / largest))
        if 0.8 <= factor <= 1.25:
            factor = 1.0  # hysteresis: keep the step, and with it the factorisation
        return float(np.clip(dt * factor, opt.min_step, opt.max_step))


def initial_field(network: Network, initial: float | Mapping[str, float] | State | np.ndarray) -> np.ndarray:
    """Per-cell initial temperature [K] from a uniform value, per-part values or a saved state."""
    n = network.n_cells
    if isinstance(initial, State):
        initial = initial.temperature
    if isinstance(initial, Mapping):
        T = np.full(n, np.nan)
        names = [p.name for p in network.assembly.parts]
        default = initial.get("*")
        for name, block in zip(names, network.grid.part_slices, strict=True):
            value = initial.get(name, default)
            if value is None:
                raise InputError(f"initial temperature: no value for part {name!r} and no default '*'")
            T[block] = float(value)
        unknown = set(initial) - set(names) - {"*"}
        if unknown:
            raise InputError(f"initial temperature: no part named {sorted(unknown)[0]!r}")
    elif np.ndim(initial) == 0:
        T = np.full(n, float(initial))
    else:
        T = np.asarray(initial, dtype=float).copy()
        if T.shape != (n,):
            raise InputError(f"initial state has {T.size} cells; this model has {n}")
    if not np.all(np.isfinite(T)) or np.any(T <= 0):
        raise InputError("initial temperature must be finite and > 0 K everywhere")
    return T


def integrate(
    network: Network,
    schedule: Schedule,
    initial: float | Mapping[str, float] | State | np.ndarray,
    options: SolverOptions | None = None,
    progress: Callable[[float], None] | None = None,
) -> Result:
    """Run the schedule from ``initial`` and return the histories.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    initial : float, mapping, State or ndarray
        Initial temperature [K]: uniform, per part name (``"*"`` as default), or a
        saved state of the same model.
    options : SolverOptions, optional
    progress : callable, optional
        Called with the simulated time [s] after every accepted step.

    Returns
    -------
    Result

    Raises
    ------
    SolverError
        If a step diverges or Newton fails after repeated step cuts; the message gives
        the time and the part.
    """
    options = options or SolverOptions()
    T0 = initial_field(network, initial)
    start = initial.time if isinstance(initial, State) else schedule.start
    if start < schedule.start - 1e-9 or start >= schedule.end:
        raise InputError(f"initial state time {start} s is outside the schedule {schedule.start}..{schedule.end} s")
    readings = _start_readings(initial) if isinstance(initial, State) else None
    step = initial.step if isinstance(initial, State) else None
    try:
        return _Integrator(network, schedule, options, progress).run(T0, max(start, schedule.start), readings, step)
    except HeatstackError:
        raise
    except (FloatingPointError, ValueError, RuntimeError) as exc:
        raise SolverError(f"integration failed: {exc}") from exc


def _start_readings(state: State) -> dict[str, float]:
    """The instrument readings [K] a saved state carries, checked."""
    readings = {}
    for name, value in dict(state.readings).items():
        try:
            value = float(value)
        except (TypeError, ValueError):
            value = float("nan")
        if not (np.isfinite(value) and value > 0):
            raise InputError(f"initial state: reading of probe {name!r} must be finite and > 0 K, got {value!r}")
        readings[str(name)] = value
    return readings
