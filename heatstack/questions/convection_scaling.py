"""Convection scaling: a schedule whose cooling laws have every convective coefficient multiplied by a factor."""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..errors import InputError
from ..numerics.schedule import BoundaryLaw, Phase, Schedule

__all__ = ["ScaledConvection", "scale_convection"]


@dataclass(frozen=True)
class ScaledConvection:
    """A cooling law whose convective coefficient is multiplied by a constant.

    Satisfies :class:`~heatstack.numerics.schedule.BoundaryLaw`; radiation (on or off,
    and its surroundings) is that of the wrapped law, unchanged.

    Parameters
    ----------
    law : BoundaryLaw
        The law wrapped.
    multiplier : float
        Factor on ``h`` [-], finite and >= 0.
    """

    law: BoundaryLaw
    multiplier: float

    def __post_init__(self) -> None:
        if not isinstance(self.law, BoundaryLaw):
            raise InputError("scaled convection: the wrapped object is not a boundary law")
        if not (math.isfinite(self.multiplier) and self.multiplier >= 0):
            raise InputError(f"convection multiplier must be finite and >= 0, got {self.multiplier}")

    @property
    def ambient_temperature(self) -> float:
        """Air temperature of the wrapped law [K]."""
        return self.law.ambient_temperature

    @property
    def surroundings_temperature(self) -> float:
        """Radiation surroundings of the wrapped law [K]."""
        return self.law.surroundings_temperature

    @property
    def radiation(self) -> bool:
        """Whether the wrapped law radiates."""
        return self.law.radiation

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """``multiplier`` times the wrapped law's coefficient.

        Parameters
        ----------
        surface_temperature : ndarray
            Surface temperatures [K].
        time : float
            Time [s].

        Returns
        -------
        ndarray
            Convection coefficients [W/(m^2 K)].
        """
        return self.multiplier * np.asarray(self.law.convection_coefficient(surface_temperature, time))


def scale_convection(schedule: Schedule, multiplier: float) -> Schedule:
    """A copy of ``schedule`` with every convective coefficient of every phase multiplied.

    Parameters
    ----------
    schedule : Schedule
    multiplier : float
        Factor on every ``h`` [-]; 1 returns ``schedule`` itself.

    Returns
    -------
    Schedule
        The schedule with every phase's laws wrapped in :class:`ScaledConvection`.
    """
    if multiplier == 1.0:
        return schedule
    phases = [
        Phase(
            p.name,
            p.start,
            p.end,
            {group: ScaledConvection(law, float(multiplier)) for group, law in p.laws.items()},
            p.clamped,
        )
        for p in schedule.phases
    ]
    return replace(schedule, phases=phases)
