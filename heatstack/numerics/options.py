"""The controls of the time integration: step sizes, tolerances and snapshot times (:class:`SolverOptions`)."""

from __future__ import annotations

from dataclasses import dataclass

from ..units import convert_declared, declared

__all__ = ["SolverOptions"]


@dataclass(frozen=True)
class SolverOptions:
    """Controls of the time integration.

    Every quantity may be SI or carry a unit (``max_step="2 min"``, ``target_change="4 degC"``).

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

    target_change: float = declared("temperature_difference", 4.0, positive=True)
    initial_step: float = declared("time", 0.05, positive=True)
    max_step: float = declared("time", 120.0, positive=True)
    min_step: float = declared("time", 1e-5, positive=True)
    growth: float = declared("dimensionless", 1.5, minimum=1.0)
    fixed_step: float | None = declared("time", None, positive=True)
    tolerance: float = declared("temperature_difference", 1e-3, positive=True)
    max_iterations: int = 30
    max_step_cuts: int = 10
    snapshot_times: tuple[float, ...] = declared("time", ())

    def __post_init__(self) -> None:
        convert_declared(self, "solver option")
