"""One implicit step on enthalpy (backward Euler or variable-step BDF2), solved by Newton.

Per cell ``i`` of volume ``V_i``::

    V_i [H_i(T^{n+1}) - H_i(T^n) - b (H_i^n - H_i^{n-1})] / (a dt)
        = sum_links G (T_j - T_i) - U_i (T_i - T_eq,i) + S_i

with ``a = 1, b = 0`` for backward Euler and the variable-step BDF2 coefficients of
:func:`~heatstack.numerics.multistep.bdf2_coefficients` otherwise: the BDF2 step is the
backward-Euler step over ``a dt`` from the start enthalpy ``H^n + b (H^n - H^{n-1})``, so
one assembly and factorisation path serves both. The friction source of a BDF2 step is
``(E_n - b E_{n-1}) / (a dt)`` with ``E`` the schedule's exact energy of a step (a
second-order value of the power at the step's end), so every step books exactly the
friction energy the schedule delivers over it.

Every conductance, boundary coefficient and source partition is evaluated at the
current iterate (:meth:`NewtonStep.linearise`), so the system stays symmetric positive
definite. Each iteration solves ``J d = -F`` with the factors of a recent ``J`` (one
triangular solve); the iterates are Anderson-accelerated
(:func:`~heatstack.numerics.anderson.accelerate`). When the correction is below
the tolerance, the new enthalpy is set *from the fluxes at* ``T + d`` and the
temperature by the exact inverse of ``H``, so every accepted step conserves energy to
round-off; the step is accepted only if that moves no temperature by more than ten
tolerances. The step closes with its :class:`~heatstack.numerics.accounts.StepAccounts`: each
account is booked as ``a dt`` times its flow plus ``b`` times its booking of the previous
step (:func:`~heatstack.numerics.multistep.book`), so the accounts sum to the stored
enthalpy change to round-off also for BDF2.

References
----------
.. [1] Voller, V.R., Swaminathan, C.R., 1991, General source-based method for
   solidification phase change, Numerical Heat Transfer B 19, 175-189 (enthalpy update
   followed by the inverse temperature-enthalpy relation).
.. [2] Walker, H.F., Ni, P., 2011, Anderson acceleration for fixed-point iterations,
   SIAM J. Numer. Anal. 49(4), 1715-1735.
.. [3] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential Equations I,
   2nd ed., Springer, 1993, sec. III.5 (variable-step BDF); from memory.
.. [4] Hindmarsh, A.C. et al., 2005, SUNDIALS: suite of nonlinear and
   differential/algebraic equation solvers, ACM Trans. Math. Softw. 31(3), 363-396
   (CVODE re-evaluates its Newton matrix at least every 20 steps); from memory.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse.linalg as spla

from ..errors import PropertyRangeError
from .accounts import StepAccounts
from .anderson import accelerate
from .boundaries import Boundaries, SurfaceTemperatures
from .multistep import StepHistory, bdf2_coefficients, book
from .network import Network
from .schedule import Phase, Schedule
from .step_matrix import HeatSources, StepMatrix, cell_properties, cell_temperature, out_of_range_cell
from .step_records import Linearisation, StepFailed, StepFrame, StepOutcome

__all__ = ["MAX_FACTOR_AGE", "NewtonStep", "REFACTOR_BAND"]

#: The factors of a step matrix are reused while the step's ``a dt`` stays within this
#: band of the ``a dt`` they were made for (and the phase is the same).
REFACTOR_BAND = (0.75, 1.35)
#: ... and for at most this many accepted steps: the properties drift as the field heats,
#: and stale factors contract the iteration slowly. 20 is the Jacobian age limit of
#: CVODE [4]_; on validation/bench_fipy.py's fixed steps it took 419 iterations to 315
#: (3 factorisations to 6).
MAX_FACTOR_AGE = 20


class NewtonStep:
    """Takes backward-Euler and BDF2 steps of one network under one schedule, keeping its factors.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    tolerance : float
        Newton stops when the estimated remaining temperature error is below this [K]
        (in a cell at ambient; see ``relative``).
    relative : float
        Growth of a cell's tolerance with its rise above ambient [1/K]: the cell's tolerance
        is ``tolerance (1 + relative |T_n - T_ambient|)``, with ``T_n`` its temperature at
        the step's start. 0 (the default) for one absolute tolerance.
    max_iterations : int
        Newton iterations before the step fails.
    stats : dict
        Run statistics, counted in place (iterations, factorisations, largest finish adjustment).
    """

    def __init__(
        self,
        network: Network,
        schedule: Schedule,
        *,
        tolerance: float,
        max_iterations: int,
        stats: dict,
        relative: float = 0.0,
    ):
        self.net, self.schedule = network, schedule
        self.tolerance, self.max_iterations, self.stats = tolerance, max_iterations, stats
        self.relative = relative
        self.system = StepMatrix(network)
        self.boundaries = Boundaries(network)
        self.sources = HeatSources(network, schedule)
        self.lu: spla.SuperLU | None = None
        self.lu_dt: float | None = None
        self.lu_phase: Phase | None = None
        self.lu_step = 0  # accepted steps counted when the factors were made
        self.rate_estimate: float | None = None

    def drop_factors(self) -> None:
        """Forget the factors, so the next step factorises afresh."""
        self.lu = None

    def frame(self, t0: float, dt: float, H_n: np.ndarray, last: StepHistory | None = None) -> StepFrame:
        """The fixed data of the step from ``t0`` over ``dt`` starting at enthalpy ``H_n``.

        Parameters
        ----------
        t0 : float
            Time at the start of the step [s].
        dt : float
            Step length [s].
        H_n : ndarray, shape (n,)
            Cell volumetric enthalpies at ``t0`` [J/m^3].
        last : StepHistory, optional
            The previous step, for a BDF2 step; None for backward Euler.

        Returns
        -------
        StepFrame
            The phase at the step's midpoint, the end time [s], the BDF2 scale [s] and weight,
            the friction power of the step equation [W], the contact resistances in force
            [K/W] and the volumetric sources [W].
        """
        net = self.net
        phase = self.schedule.phase_at(t0 + 0.5 * dt)
        t1 = t0 + dt
        energy = self.schedule.energy(t0, t1)
        if last is None:
            a, b, base, power, previous = 1.0, 0.0, H_n, energy / dt, None
        else:
            a, b = bdf2_coefficients(dt / last.dt)
            base = H_n + b * (H_n - last.start_enthalpy)
            power, previous = (energy - b * last.friction_energy) / (a * dt), last.accounts
        return StepFrame(
            phase=phase,
            time=t1,
            dt=dt,
            scale=a * dt,
            weight=b,
            power=power,
            friction_energy=energy,
            contact=net.link_contact_clamped if phase.clamped else net.link_contact_released,
            volume_rate=net.volume / (a * dt),
            volume_source=self.sources.volumetric(t1),
            start_enthalpy=H_n,
            enthalpy=base,
            previous=previous,
        )

    def step(
        self,
        t0: float,
        dt: float,
        T_n: np.ndarray,
        H_n: np.ndarray,
        guess: np.ndarray,
        surfaces: SurfaceTemperatures,
        last: StepHistory | None = None,
    ) -> StepOutcome:
        """Advance one step from ``T_n``, ``H_n`` at ``t0`` (BDF2 when ``last`` is given).

        Parameters
        ----------
        t0 : float
            Time at the start of the step [s].
        dt : float
            Step length [s].
        T_n : ndarray, shape (n,)
            Cell temperatures at ``t0`` [K].
        H_n : ndarray, shape (n,)
            Cell volumetric enthalpies at ``t0`` [J/m^3].
        guess : ndarray, shape (n,)
            Initial iterate [K].
        surfaces : SurfaceTemperatures
            The last step's surface temperatures, moved here with their cells to the guess.
        last : StepHistory, optional
            The previous accepted step: given, the step is variable-step BDF2 over it; None,
            backward Euler.

        Returns
        -------
        StepOutcome
            Temperatures [K], enthalpies [J/m^3], surface temperatures and accounts of the step.

        Raises
        ------
        StepFailed
            If an iterate is not finite, leaves a property table, or Newton does not converge in
            ``max_iterations``.
        """
        frame = self.frame(t0, dt, H_n, last)
        weight = self.weights(frame, T_n)
        T = guess.copy()
        previous_change = None
        surfaces = surfaces.moved(self.net, guess - T_n)
        # fresh factors when the step size or the phase (cooling laws, contact state) changes,
        # or after MAX_FACTOR_AGE steps
        refactor = (
            self.lu is None
            or self.lu_phase is not frame.phase
            or not (REFACTOR_BAND[0] <= frame.scale / self.lu_dt <= REFACTOR_BAND[1])
            or self.stats.get("steps", 0) - self.lu_step >= MAX_FACTOR_AGE
        )
        fresh = False
        history: list[tuple[np.ndarray, np.ndarray]] = []
        for iteration in range(self.max_iterations):
            system = self.linearise(frame, T, surfaces, iteration)
            residual = (
                self.system.product(T)
                - system.capacity * T
                + frame.volume_rate * (system.enthalpy - frame.enthalpy)
                - system.source
            )
            if refactor:
                self.factorise(frame)
                refactor, fresh = False, True
            correction = self.lu.solve(-residual)
            T_star = T + correction
            change = np.abs(correction)
            if weight is not None:
                change *= weight
            largest = float(change.max()) if change.size else 0.0
            if not np.isfinite(largest):  # max propagates NaN and inf
                bad = int(np.flatnonzero(~np.isfinite(T_star))[0])
                raise StepFailed("non-finite temperature", bad)
            self.stats["iterations"] += 1
            if self.converged(largest, previous_change):
                T_new, H_new = self.conservative_update(T_star, frame, system)
                moved = np.abs(T_new - T_star)
                adjustment = float(np.max(moved if weight is None else moved * weight)) if T_new.size else 0.0
                if adjustment <= max(10.0 * self.tolerance, 1e-6):
                    self.stats["largest_finish_adjustment"] = max(  # in kelvin, unweighted
                        self.stats.get("largest_finish_adjustment", 0.0), float(moved.max(initial=0.0))
                    )
                    return self.finish(frame, system, T_star, T_new, H_new, iteration)
                # the fluxes at T_star do not yet balance the cells: iterate on from the
                # balanced state, with factors of the current coefficients
                refactor, fresh, previous_change = True, False, None
                history.clear()
                T_star = T_new
            else:
                T_star = accelerate(history, T, correction)
            T = T_star
            surfaces = self.boundaries.surface_temperatures(T, system.faces, system.gaps)
            if iteration >= 2 and previous_change is not None and largest > 0.3 * previous_change and not fresh:
                refactor = True  # slow contraction with old factors: refactorise once this step
            previous_change = largest
        cell = int(np.argmax(change))
        raise StepFailed(
            f"Newton did not converge in {self.max_iterations} iterations "
            f"(last update {abs(float(correction[cell])):.3g} K)",
            cell,
        )

    def weights(self, frame: StepFrame, T_n: np.ndarray) -> np.ndarray | None:
        """Each cell's absolute tolerance over its own, ``1 / (1 + relative |T_n - T_ambient|)``.

        Parameters
        ----------
        frame : StepFrame
            The step's fixed data (its phase gives the ambient temperature).
        T_n : ndarray, shape (n,)
            Cell temperatures at the step's start [K].

        Returns
        -------
        ndarray or None
            The weights [-] by which corrections are multiplied before the convergence test;
            None for one absolute tolerance.
        """
        if self.relative <= 0.0:
            return None
        reference = self.boundaries.surroundings(frame.phase).mean_ambient
        if reference is None:
            reference = float(np.min(T_n, initial=0.0))
        return 1.0 / (1.0 + self.relative * np.abs(T_n - reference))

    def start_rate(
        self, t0: float, dt: float, T_n: np.ndarray, H_n: np.ndarray, surfaces: SurfaceTemperatures
    ) -> np.ndarray:
        """``dH/dt`` at the start of a backward-Euler step, under that step's sources and laws.

        The explicit-Euler predictor of the step's error estimate: after a breakpoint the
        rate at the end of the previous step belongs to the old laws and power.

        Parameters
        ----------
        t0 : float
            Time at the start of the step [s].
        dt : float
            Step length [s] (the friction power is the step's mean).
        T_n : ndarray, shape (n,)
            Cell temperatures at ``t0`` [K].
        H_n : ndarray, shape (n,)
            Cell volumetric enthalpies at ``t0`` [J/m^3].
        surfaces : SurfaceTemperatures
            Surface temperatures at ``t0``.

        Returns
        -------
        ndarray, shape (n,)
            Net heat flow into each cell over its volume [W/m^3].

        Raises
        ------
        StepFailed
            If a temperature lies outside a property table.
        """
        frame = self.frame(t0, dt, H_n)
        system = self.linearise(frame, T_n, surfaces, 1)
        outflow = self.system.product(T_n) - system.capacity * T_n
        return (system.source - outflow) / self.net.volume

    def linearise(
        self, frame: StepFrame, T: np.ndarray, surfaces: SurfaceTemperatures, iteration: int
    ) -> Linearisation:
        """Coefficients and sources at the iterate ``T``, assembled into the step matrix.

        Parameters
        ----------
        frame : StepFrame
            The step's fixed data.
        T : ndarray, shape (n,)
            The iterate's cell temperatures [K].
        surfaces : SurfaceTemperatures
            The iterate's surface temperatures.
        iteration : int
            Iteration number (0 for the first, whose failure is blamed on the guess).

        Returns
        -------
        Linearisation
            Enthalpy [J/m^3], capacity term [W/K], source [W], face and gap exchange and the
            friction heat on either side of each rubbing face [W].

        Raises
        ------
        StepFailed
            If a temperature falls outside a property table.
        """
        net, n = self.net, self.net.n_cells
        try:
            properties = cell_properties(net, T)
            eps_faces, eps_a, eps_b = self.boundaries.emissivities(surfaces)
            faces = self.boundaries.faces(frame.phase, frame.time, surfaces.face, properties.conductivity, eps_faces)
            gaps = self.boundaries.gaps(surfaces.gap_a, surfaces.gap_b, properties.conductivity, (eps_a, eps_b))
        except PropertyRangeError as exc:
            raise StepFailed(str(exc), out_of_range_cell(net, T), at_guess=iteration == 0) from None
        G = self.system.link_conductances(properties.conductivity, frame.contact)
        U_cell = np.bincount(net.face_cell, weights=faces.transfer, minlength=n)
        b = np.bincount(net.face_cell, weights=faces.transfer * faces.equivalent_temperature, minlength=n)
        friction_a, friction_b = self.sources.friction(frame.power, properties)
        b += np.bincount(net.friction_a, weights=friction_a, minlength=n)
        b += np.bincount(net.friction_b, weights=friction_b, minlength=n)
        if frame.volume_source is not None:
            b += frame.volume_source
        capacity = properties.heat_capacity * frame.volume_rate
        self.system.set_coefficients(capacity + U_cell, G, gaps.conductance)
        return Linearisation(
            enthalpy=properties.enthalpy,
            capacity=capacity,
            source=b,
            faces=faces,
            gaps=gaps,
            friction_a=friction_a,
            friction_b=friction_b,
            conductivity=properties.conductivity,
        )

    def factorise(self, frame: StepFrame) -> None:
        """Factorise the step matrix as it stands, for this step's size and phase.

        Parameters
        ----------
        frame : StepFrame
            The step whose scale ``a dt`` [s] and phase the factors are kept for.
        """
        self.lu = self.system.factorise()
        self.lu_dt = frame.scale
        self.lu_phase = frame.phase
        self.lu_step = self.stats.get("steps", 0)
        self.stats["factorisations"] += 1

    def converged(self, largest: float, previous: float | None) -> bool:
        """Whether the estimated remaining error ``rate / (1 - rate) * |last correction|`` is below the tolerance.

        The contraction rate is measured from the last two corrections, or on a step's first
        iteration taken (doubled, for safety) from the previous step. The conservative
        end-of-step check still guards the result.

        Parameters
        ----------
        largest : float
            Largest absolute correction of this iteration [K].
        previous : float or None
            Largest absolute correction of the previous iteration [K] (None on the first).

        Returns
        -------
        bool
            True when the iteration has converged.
        """
        tol = self.tolerance
        if largest <= tol:
            return True
        if previous is None or previous <= 0:
            rate = self.rate_estimate
            return rate is not None and rate < 0.25 and 2.0 * rate / (1.0 - 2.0 * rate) * largest <= tol
        rate = largest / previous
        self.rate_estimate = rate
        return rate < 0.9 and rate / (1.0 - rate) * largest <= tol

    def conservative_update(
        self, T_star: np.ndarray, frame: StepFrame, system: Linearisation
    ) -> tuple[np.ndarray, np.ndarray]:
        """Enthalpy from the fluxes at ``T_star`` and the temperature by the exact inverse of H.

        The new enthalpy is set so that every cell's balance holds exactly with the
        step's coefficients and the fluxes at the last Newton iterate, so energy is
        conserved to round-off; the step is accepted only when ``T_new - T_star`` is of
        the order of the Newton tolerance.

        Parameters
        ----------
        T_star : ndarray, shape (n,)
            The last Newton iterate [K].
        frame : StepFrame
            The step's fixed data.
        system : Linearisation
            The step's coefficients and sources.

        Returns
        -------
        T_new : ndarray, shape (n,)
            Cell temperatures from the new enthalpy [K].
        H_new : ndarray, shape (n,)
            New cell volumetric enthalpies [J/m^3].

        Raises
        ------
        StepFailed
            If the new enthalpy lies outside a property table.
        """
        outflow = self.system.product(T_star) - system.capacity * T_star
        H_new = frame.enthalpy + (system.source - outflow) / frame.volume_rate
        try:
            return cell_temperature(self.net, H_new), H_new
        except PropertyRangeError as exc:
            raise StepFailed(str(exc), out_of_range_cell(self.net, T_star)) from None

    def finish(
        self,
        frame: StepFrame,
        system: Linearisation,
        T_star: np.ndarray,
        T_new: np.ndarray,
        H_new: np.ndarray,
        iteration: int,
    ) -> StepOutcome:
        """Accounts of an accepted step and the surface temperatures for the next one.

        Parameters
        ----------
        frame : StepFrame
            The step's fixed data.
        system : Linearisation
            The step's coefficients and sources.
        T_star : ndarray, shape (n,)
            The last Newton iterate [K], at which the surface temperatures are taken.
        T_new : ndarray, shape (n,)
            Accepted cell temperatures [K].
        H_new : ndarray, shape (n,)
            Accepted cell volumetric enthalpies [J/m^3].
        iteration : int
            Index of the last iteration (the count is one more).

        Returns
        -------
        StepOutcome
            The accepted state and its accounts (heat in, convected, radiated, stored, friction
            on either side) [J].
        """
        net, scale, weight, faces = self.net, frame.scale, frame.weight, system.faces
        previous = frame.previous
        surfaces = self.boundaries.surface_temperatures(T_star, faces, system.gaps)
        volume_heat = float(np.sum(frame.volume_source)) if frame.volume_source is not None else 0.0
        area = net.face_area

        def booked(name: str, flow: float | np.ndarray) -> float | np.ndarray:
            return book(scale, flow, weight, None if previous is None else getattr(previous, name))

        accounts = StepAccounts(
            heat_in=booked("heat_in", frame.power + volume_heat),
            convected=booked("convected", float(np.sum(faces.convection * area * (surfaces.face - faces.ambient)))),
            radiated=booked(
                "radiated", float(np.sum(faces.radiation * area * (surfaces.face - faces.radiation_temperature)))
            ),
            stored=float(np.sum(net.volume * (H_new - frame.start_enthalpy))),
            friction_a=booked("friction_a", system.friction_a),
            friction_b=booked("friction_b", system.friction_b),
        )
        history = StepHistory(
            dt=frame.dt,
            start_enthalpy=frame.start_enthalpy,
            enthalpy=H_new,
            rate=(H_new - frame.enthalpy) / scale,
            accounts=accounts,
            friction_energy=frame.friction_energy,
        )
        ambient = self.boundaries.surroundings(frame.phase).mean_ambient
        if ambient is None:
            ambient = float(np.min(T_new, initial=0.0))
        return StepOutcome(
            temperature=T_new,
            enthalpy=H_new,
            surfaces=surfaces,
            accounts=accounts,
            iterations=iteration + 1,
            history=history,
            heat_capacity=system.capacity / frame.volume_rate,
            conductivity=system.conductivity,
            friction_a=system.friction_a,
            friction_b=system.friction_b,
            ambient=ambient,
            bdf2=previous is not None,
        )
