"""The records of one implicit step: its fixed frame, its linearisation, its outcome, its failure.

:class:`~heatstack.numerics.newton.NewtonStep` builds a :class:`StepFrame` once per step,
a :class:`Linearisation` at every iterate, and returns a :class:`StepOutcome` or raises
:class:`StepFailed`, which the step controller answers by cutting the step.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .accounts import StepAccounts
from .boundaries import FaceExchange, GapExchange, SurfaceTemperatures
from .multistep import StepHistory
from .schedule import Phase

__all__ = ["Linearisation", "StepFailed", "StepFrame", "StepOutcome"]


class StepFailed(Exception):
    """A step that did not converge or left a property table; the caller cuts the step.

    Parameters
    ----------
    reason : str
    cell : int, optional
        The cell where it went wrong.
    at_guess : bool
        Whether it failed at the extrapolated initial guess.
    """

    def __init__(self, reason: str, cell: int | None = None, at_guess: bool = False):
        super().__init__(reason)
        self.reason, self.cell, self.at_guess = reason, cell, at_guess


@dataclass(frozen=True, eq=False)
class StepOutcome:
    """An accepted step: the new state, its surfaces and its energy accounts.

    Attributes
    ----------
    temperature : ndarray
        [K] per cell.
    enthalpy : ndarray
        [J/m^3] per cell.
    surfaces : SurfaceTemperatures
        Surface temperatures [K] at the last Newton iterate, the next step's start.
    accounts : StepAccounts
    iterations : int
        Newton iterations taken.
    history : StepHistory
        The step as the next one's multistep history.
    heat_capacity : ndarray
        Volumetric heat capacity [J/(m^3 K)] at the last iterate.
    conductivity : ndarray
        Cell conductivities [W/(m K)] at the last iterate, radial for all cells then axial.
    friction_a, friction_b : ndarray
        Friction heat [W] made on either side of every rubbing face in the step equation.
    ambient : float
        Mean ambient temperature of the exposed faces in the step's phase [K] (the lowest
        cell temperature when nothing is exposed).
    bdf2 : bool
        Whether the step was BDF2 (else backward Euler).
    """

    temperature: np.ndarray
    enthalpy: np.ndarray
    surfaces: SurfaceTemperatures
    accounts: StepAccounts
    iterations: int
    history: StepHistory
    heat_capacity: np.ndarray
    conductivity: np.ndarray
    friction_a: np.ndarray
    friction_b: np.ndarray
    ambient: float
    bdf2: bool


@dataclass(frozen=True, eq=False)
class StepFrame:
    """What stays fixed during one step's iteration.

    Attributes
    ----------
    phase : Phase
        The schedule phase at the middle of the step.
    time, dt : float
        End of the step and its length [s].
    scale : float
        ``a dt`` [s]: ``dt`` for backward Euler, ``dt (1 + w)/(1 + 2w)`` for BDF2.
    weight : float
        The history weight ``b`` (0 for backward Euler).
    power : float
        Friction power of the step equation [W]: the mean over the step for backward Euler,
        ``(E_n - b E_{n-1}) / (a dt)`` for BDF2.
    friction_energy : float
        The schedule's friction energy over the step [J].
    contact : ndarray
        Contact resistance [K/W] of every link in this phase.
    volume_rate : ndarray
        ``V / (a dt)`` of every cell [m^3/s].
    volume_source : ndarray or None
        Volumetric source heat [W] per cell at the end of the step.
    start_enthalpy : ndarray
        Enthalpy [J/m^3] at the start of the step.
    enthalpy : ndarray
        The step equation's base enthalpy ``H^n + b (H^n - H^{n-1})`` [J/m^3].
    previous : StepAccounts or None
        The previous step's bookings (None for backward Euler).
    """

    phase: Phase
    time: float
    dt: float
    scale: float
    weight: float
    power: float
    friction_energy: float
    contact: np.ndarray
    volume_rate: np.ndarray
    volume_source: np.ndarray | None
    start_enthalpy: np.ndarray
    enthalpy: np.ndarray
    previous: StepAccounts | None


@dataclass(frozen=True, eq=False)
class Linearisation:
    """The step's linear system at one iterate (the matrix itself is in :class:`StepMatrix`).

    Attributes
    ----------
    enthalpy : ndarray
        [J/m^3] at the iterate.
    capacity : ndarray
        ``c V / (a dt)`` [W/K] per cell.
    source : ndarray
        Right-hand side [W]: boundary inflow at the equivalent temperatures and heat sources.
    faces : FaceExchange
    gaps : GapExchange
    friction_a, friction_b : ndarray
        Friction heat [W] into each side of every rubbing face.
    conductivity : ndarray
        Cell conductivities [W/(m K)] at the iterate, radial for all cells then axial.
    """

    enthalpy: np.ndarray
    capacity: np.ndarray
    source: np.ndarray
    faces: FaceExchange
    gaps: GapExchange
    friction_a: np.ndarray
    friction_b: np.ndarray
    conductivity: np.ndarray
