"""Models of the measuring instrument applied to a recorded local temperature."""

from __future__ import annotations

import numpy as np

__all__ = ["first_order_lag"]


def first_order_lag(
    times: np.ndarray, values: np.ndarray, time_constant: float, initial: float | None = None
) -> np.ndarray:
    """Reading of a first-order instrument ``tau dy/dt = x - y`` driven by ``x(t)``.

    ``x`` is taken as piecewise linear between the recorded points and the ODE is
    integrated exactly over each interval; the instrument starts from ``initial``, or in
    equilibrium (``y(t0) = x(t0)``) when none is given.

    Parameters
    ----------
    times : ndarray
        Increasing record times [s].
    values : ndarray
        Local temperature ``x`` at those times [K].
    time_constant : float
        Instrument time constant ``tau`` [s]; 0 returns ``values`` unchanged.
    initial : float, optional
        Reading at ``times[0]`` [K] (e.g. where an earlier run left the instrument).

    Returns
    -------
    ndarray
        The reading ``y`` at ``times`` [K].

    Notes
    -----
    Over an interval of length ``h`` with slope ``s = (x1 - x0) / h`` the exact solution is
    ``y1 = x1 - tau s + (y0 - x0 + tau s) exp(-h / tau)``.
    """
    values = np.asarray(values, dtype=float)
    if time_constant <= 0 or values.size == 0:
        return values.copy()
    h = np.diff(np.asarray(times, dtype=float))
    slope = np.diff(values) / np.where(h > 0, h, 1.0)
    decay = np.exp(-h / time_constant)
    out = np.empty_like(values)
    out[0] = values[0] if initial is None else float(initial)
    tau = time_constant
    for k in range(h.size):
        out[k + 1] = values[k + 1] - tau * slope[k] + (out[k] - values[k] + tau * slope[k]) * decay[k]
    return out
