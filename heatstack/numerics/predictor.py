"""Initial guess of a step: polynomial extrapolation of the accepted states.

The Newton iteration of a step starts from this guess, so a better guess means fewer
iterations. Within a stretch of the schedule where the sources and the cooling laws
are smooth, the accepted temperatures lie on a smooth curve and a quadratic through
the last three states is one order more accurate than a straight line. At a schedule
breakpoint (a corner of the power table, a change of phase) the solution has a kink:
a polynomial through points on both sides of it overshoots, so after a breakpoint
only the states from the breakpoint on are used, with the last state before it as a
straight-line start.
"""

from __future__ import annotations

import numpy as np

__all__ = ["Extrapolator"]


class Extrapolator:
    """Accepted states of the current smooth stretch and the guess for the next one.

    Parameters
    ----------
    order : int
        Highest polynomial degree used (0 constant, 1 straight line, 2 quadratic, 3 cubic).

    Raises
    ------
    ValueError
        If ``order`` is not 0, 1, 2 or 3.
    """

    def __init__(self, order: int = 3):
        if order not in (0, 1, 2, 3):
            raise ValueError(f"extrapolation order must be 0, 1, 2 or 3, got {order}")
        self.order = order
        self._times: list[float] = []
        self._states: list[np.ndarray] = []
        self._since_kink = 0

    def accept(self, time: float, state: np.ndarray) -> None:
        """Record an accepted state.

        Parameters
        ----------
        time : float
            Time of the state [s].
        state : ndarray, shape (n,)
            Accepted cell temperatures [K].
        """
        self._times.append(float(time))
        self._states.append(state)
        self._since_kink += 1
        if len(self._times) > self.order + 1:
            del self._times[0], self._states[0]

    def kink(self) -> None:
        """The schedule has a breakpoint at the last accepted state."""
        self._since_kink = 1

    def restart(self) -> None:
        """Forget everything (after a failed step or when heating starts from rest)."""
        self._times.clear()
        self._states.clear()
        self._since_kink = 0

    def guess(self, time: float) -> np.ndarray:
        """Extrapolated state at ``time`` (a copy of the last state if only one is known).

        Parameters
        ----------
        time : float
            Time to extrapolate to [s].

        Returns
        -------
        ndarray, shape (n,)
            Guessed cell temperatures [K].

        Raises
        ------
        ValueError
            If no state has been accepted yet.

        References
        ----------
        .. [1] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential
           Equations I, 2nd ed., Springer, 1993, sec. II.4 (Lagrange interpolation through
           past solution values as the starting guess of an implicit step).
        """
        if not self._states:
            raise ValueError("no accepted state to extrapolate from")
        # the states from the last breakpoint on; just after one, a line through the
        # state before it (a constant guess would miss by the whole step's change)
        wanted = 2 if self._since_kink == 1 else self._since_kink
        usable = max(1, min(len(self._states), wanted, self.order + 1))
        times, states = self._times[-usable:], self._states[-usable:]
        if usable == 1:
            return states[0].copy()
        weights = _lagrange_weights(np.asarray(times), float(time))
        guess = weights[0] * states[0]
        for w, s in zip(weights[1:], states[1:], strict=True):
            guess = guess + w * s
        return guess


def _lagrange_weights(nodes: np.ndarray, x: float) -> np.ndarray:
    """Weights ``w`` with ``p(x) = sum w_k y_k`` for the polynomial through ``(nodes, y)``."""
    weights = np.ones(nodes.size)
    for k in range(nodes.size):
        for m in range(nodes.size):
            if m != k:
                weights[k] *= (x - nodes[m]) / (nodes[k] - nodes[m])
    return weights
