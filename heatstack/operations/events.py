"""The braking-event record and the sum of several power histories.

:class:`BrakingEvent` holds one brake's friction power history [W] versus time [s]
with its energy bookkeeping; :func:`combine` sums several histories (or events) into
one, replacing each step by a short energy-conserving ramp.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import InputError
from ..numerics.schedule import PowerHistory

if TYPE_CHECKING:
    from .ground_roll import StopResult

__all__ = ["BrakingEvent", "combine"]

_RAMP = 1e-3  # width of the ramp replacing a power step when histories are combined [s]


@dataclass(frozen=True)
class BrakingEvent:
    """One braking event and its energy bookkeeping.

    Attributes
    ----------
    name : str
        Label of the event.
    power : PowerHistory
        Friction power of one brake [W] versus time [s].
    energy_per_brake : float
        Energy into one brake [J], the integral of ``power``.
    kinetic_energy : float
        Kinetic energy removed from the aircraft (or wheel) by the event [J].
    brake_share : float
        Fraction of ``kinetic_energy`` absorbed by all braked wheels [-]; for a
        speed-dependent share, the energy-weighted mean.
    notes : str
        How the event was built.
    ground_roll : StopResult or None
        The integrated ground roll (energy accounts, distance, time) when the event
        comes from the equation of motion (:mod:`heatstack.operations.stops`).
    """

    name: str
    power: PowerHistory
    energy_per_brake: float
    kinetic_energy: float
    brake_share: float
    notes: str = ""
    ground_roll: StopResult | None = None

    @property
    def start(self) -> float:
        """First time of the power history [s]."""
        return float(self.power.times[0])

    @property
    def end(self) -> float:
        """Last time of the power history [s]."""
        return float(self.power.times[-1])


def combine(*histories: PowerHistory | BrakingEvent) -> PowerHistory:
    """Sum several power histories into one, on the union of their times.

    A history is zero outside its table, so it may start or end with a step. Where
    the sum steps at an inner time ``t`` (left value ``L``, right value ``R``), the
    step is replaced by knots ``t - w/2``, ``t`` and ``t + w/2`` with values the true
    sum, ``(L + R)/2`` and the true sum: this conserves the energy exactly, and
    ``w = min(1 ms, a quarter of the smallest time spacing)``.

    Parameters
    ----------
    *histories : PowerHistory or BrakingEvent
        The histories [W]; events contribute their ``power``.

    Returns
    -------
    PowerHistory
        The summed power [W].

    Raises
    ------
    InputError
        If no history is given or an argument is neither kind.
    """
    if not histories:
        raise InputError("combine: no power histories given")
    parts = [h.power if isinstance(h, BrakingEvent) else h for h in histories]
    for index, part in enumerate(parts):
        if not isinstance(part, PowerHistory):
            raise InputError(f"combine: argument {index + 1} is not a power history or braking event")
    knots = np.unique(np.concatenate([p.times for p in parts]))
    left = sum(_side_value(p, knots, before=True) for p in parts)
    right = sum(_side_value(p, knots, before=False) for p in parts)
    scale = max(float(np.max(np.abs(left))), float(np.max(np.abs(right))), 1e-300)
    inner = np.zeros(knots.size, dtype=bool)
    inner[1:-1] = np.abs(left[1:-1] - right[1:-1]) > 1e-12 * scale
    values = np.where(inner, 0.5 * (left + right), right)
    values[-1] = left[-1]
    if not np.any(inner):
        return PowerHistory(knots, values)
    width = min(_RAMP, 0.25 * float(np.min(np.diff(knots))))
    ramps = np.concatenate((knots[inner] - 0.5 * width, knots[inner] + 0.5 * width))
    ramp_values = sum(p.power(ramps) for p in parts)
    order = np.argsort(np.concatenate((knots, ramps)), kind="stable")
    return PowerHistory(np.concatenate((knots, ramps))[order], np.concatenate((values, ramp_values))[order])


def _side_value(history: PowerHistory, knots: np.ndarray, before: bool) -> np.ndarray:
    """Value of ``history`` just before (or after) each knot; zero outside its table."""
    t = history.times
    inside = (knots > t[0]) & (knots <= t[-1]) if before else (knots >= t[0]) & (knots < t[-1])
    return np.where(inside, np.interp(knots, t, history.powers), 0.0)
