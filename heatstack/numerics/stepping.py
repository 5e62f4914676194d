"""Step-size control: how long the next step is, and what happens when one fails.

A step lands on every breakpoint of the schedule (halving the approach so the last
step before it is not a sliver), grows or shrinks towards the target temperature
change per step with a hysteresis band that keeps the step (and with it the
factorisation), is rejected and shortened when it changed a temperature by more than
twice the target, and is cut in half when Newton fails; after too many cuts the run
stops with an error that names the part and the place.
"""

from __future__ import annotations

import logging
from typing import TYPE_CHECKING

import numpy as np

from ..errors import SolverError
from .boundaries import SurfaceTemperatures
from .network import Network
from .newton import NewtonStep, StepFailed, StepOutcome
from .schedule import Schedule

if TYPE_CHECKING:
    from .options import SolverOptions

__all__ = ["StepControl"]

log = logging.getLogger(__name__)


class StepControl:
    """Chooses the step sizes of one run and retries failed steps.

    Parameters
    ----------
    network : Network
    schedule : Schedule
    options : SolverOptions
        The step-size controls (target change, step limits, growth, fixed step, cuts).
    newton : NewtonStep
        Takes the steps.
    stats : dict
        Run statistics, counted in place (rejected steps).
    """

    def __init__(self, network: Network, schedule: Schedule, options: SolverOptions, newton: NewtonStep, stats: dict):
        self.net, self.schedule, self.opt = network, schedule, options
        self.newton, self.stats = newton, stats

    def land(self, t: float, dt: float, target: float) -> float:
        """The step to take from ``t`` towards the breakpoint ``target``.

        Parameters
        ----------
        t : float
            Current time [s].
        dt : float
            Proposed step [s].
        target : float
            Next breakpoint [s].

        Returns
        -------
        float
            The step [s]: the remaining time when ``dt`` reaches it, half of it when ``dt`` would
            leave a sliver (adaptive stepping only), else ``dt``.
        """
        remaining = target - t
        if dt >= remaining:
            return remaining
        if dt > 0.5 * remaining and self.opt.fixed_step is None:
            return 0.5 * remaining
        return dt

    def advance(
        self, t: float, dt: float, T: np.ndarray, H: np.ndarray, guess: np.ndarray, surfaces: SurfaceTemperatures
    ) -> tuple[StepOutcome, float]:
        """One accepted step from ``t`` and its length, cutting ``dt`` as needed.

        Parameters
        ----------
        t : float
            Time at the start of the step [s].
        dt : float
            Proposed step [s].
        T : ndarray, shape (n,)
            Cell temperatures at ``t`` [K].
        H : ndarray, shape (n,)
            Cell volumetric enthalpies at ``t`` [J/m^3].
        guess : ndarray, shape (n,)
            Starting guess of the temperatures at the end of the step [K].
        surfaces : SurfaceTemperatures
            Surface temperatures at ``t``, the start of the boundary linearisation.

        Returns
        -------
        outcome : StepOutcome
            The accepted step's temperatures, enthalpies, surfaces and accounts.
        taken : float
            The length of the accepted step [s].

        Raises
        ------
        SolverError
            If the step fails after the allowed number of cuts or below the minimum step.
        """
        opt = self.opt
        cut = 0
        while cut <= opt.max_step_cuts:
            try:
                outcome = self.newton.step(t, dt, T, H, guess, surfaces)
            except StepFailed as failure:
                if failure.at_guess and not np.array_equal(guess, T):
                    guess = T  # the extrapolated guess left a property table: start from the last state
                    continue
                self._fail_or_cut(failure, t, dt, cut)
                self.newton.drop_factors()
                dt, guess, cut = 0.5 * dt, T, cut + 1
                continue
            change = float(np.max(np.abs(outcome.temperature - T))) if T.size else 0.0
            if opt.fixed_step is None and change > 2.0 * opt.target_change and dt > opt.min_step:
                self.stats["rejected_steps"] += 1
                dt = max(opt.min_step, dt * max(0.2, 0.9 * opt.target_change / change))
                # the retry starts from the rejected step's surface temperatures
                guess, cut, surfaces = T, cut + 1, outcome.surfaces
                continue
            return outcome, dt
        raise SolverError(f"at t = {t:.6g} s the step could not be completed")

    def _fail_or_cut(self, failure: StepFailed, t: float, dt: float, cut: int) -> None:
        """Count the failure; return if the step may be cut again, else raise SolverError."""
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

    def next_step(self, dt: float, change: np.ndarray) -> float:
        """The next step after a step of ``dt`` that changed the cells by ``change``.

        Parameters
        ----------
        dt : float
            The step just taken [s].
        change : ndarray, shape (n,)
            Change of each cell's temperature over that step [K].

        Returns
        -------
        float
            Next step [s]: the fixed step if one is set, else ``dt`` scaled towards the target
            change and clipped to the step bounds.
        """
        opt = self.opt
        if opt.fixed_step is not None:
            return opt.fixed_step
        largest = float(np.max(np.abs(change))) if change.size else 0.0
        factor = opt.growth if largest <= 0 else min(opt.growth, max(0.2, 0.9 * opt.target_change / largest))
        if 0.8 <= factor <= 1.25:
            factor = 1.0  # hysteresis: keep the step, and with it the factorisation
        return float(np.clip(dt * factor, opt.min_step, opt.max_step))

    def heating_starts(self, time: float) -> bool:
        """Whether the friction power switches on at ``time``.

        Parameters
        ----------
        time : float
            Time [s].

        Returns
        -------
        bool
            True when the power is zero just before ``time`` and positive just after.
        """
        power = self.schedule.power
        eps = 1e-9 * max(1.0, abs(time))
        return float(power.power(time - eps)) <= 0.0 < float(power.power(time + eps))
