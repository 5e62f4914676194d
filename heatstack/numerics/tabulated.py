"""Tabulated convection coefficients for the solver's hot loop.

A cooling law that does not depend on time (``time_dependent = False``) is evaluated on
a uniform grid of surface temperatures once and interpolated linearly afterwards. The
table covers only the temperatures met so far and grows (by whole blocks) when a
surface leaves it, so a correlation is never evaluated far outside the range a run uses.
"""

from __future__ import annotations

import numpy as np

from .schedule import BoundaryLaw

__all__ = ["TabulatedLaw", "SPACING"]

#: Spacing of the surface-temperature grid [K].
SPACING = 2.0
_BLOCK = 50.0  # the table grows in blocks of this width [K]


class TabulatedLaw:
    """Linear interpolation of ``law.convection_coefficient`` over surface temperature.

    Parameters
    ----------
    law : BoundaryLaw
        A law whose coefficient does not depend on time.
    """

    def __init__(self, law: BoundaryLaw):
        self.law = law
        self.low = np.inf
        self.high = -np.inf
        self.temperature = np.zeros(0)
        self.h = np.zeros(0)

    def _extend(self, low: float, high: float, time: float) -> None:
        low = min(self.low, np.floor(low / _BLOCK) * _BLOCK)
        high = max(self.high, np.ceil(high / _BLOCK) * _BLOCK)
        low = max(low, SPACING)
        grid = np.arange(low, high + 0.5 * SPACING, SPACING)
        self.h = np.asarray(self.law.convection_coefficient(grid, time), dtype=float)
        self.temperature, self.low, self.high = grid, low, grid[-1]

    def __call__(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Coefficient [W/(m^2 K)] at each surface temperature [K]."""
        if surface_temperature.size == 0:
            return np.zeros(0)
        t_min, t_max = float(surface_temperature.min()), float(surface_temperature.max())
        if t_min < self.low or t_max > self.high or not np.isfinite(t_min + t_max):
            if not np.isfinite(t_min + t_max):
                return self.law.convection_coefficient(surface_temperature, time)
            self._extend(t_min, t_max, time)
        return np.interp(surface_temperature, self.temperature, self.h)


def evaluator(law: BoundaryLaw):
    """A fast callable ``(surface_temperature, time) -> h`` for ``law``.

    Parameters
    ----------
    law : BoundaryLaw
        A cooling law; one that declares ``time_dependent = False`` is tabulated.

    Returns
    -------
    callable
        ``law.convection_coefficient`` itself for a time-dependent law, else a
        :class:`TabulatedLaw` interpolating it; both give h [W/(m^2 K)].
    """
    if getattr(law, "time_dependent", True):
        return law.convection_coefficient
    return TabulatedLaw(law)
