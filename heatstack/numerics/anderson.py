"""Anderson acceleration of the Newton iterates of a step (fixed point ``T -> T + correction(T)``).

References
----------
.. [1] Walker, H.F., Ni, P., 2011, Anderson acceleration for fixed-point iterations,
   SIAM J. Numer. Anal. 49(4), 1715-1735.
"""

from __future__ import annotations

import numpy as np

__all__ = ["accelerate"]


def accelerate(history: list, T: np.ndarray, correction: np.ndarray, depth: int = 2) -> np.ndarray:
    """Anderson-accelerated next iterate of the fixed point ``T -> T + correction(T)``.

    Parameters
    ----------
    history : list of (ndarray, ndarray)
        The last ``depth + 1`` pairs (iterate [K], correction [K]); updated in place, and
        cleared when the least-squares problem is singular.
    T : ndarray, shape (n,)
        Current iterate [K].
    correction : ndarray, shape (n,)
        Newton correction at ``T`` [K].
    depth : int, optional
        Number of past differences used.

    Returns
    -------
    ndarray, shape (n,)
        Next iterate [K] (plain ``T + correction`` with fewer than two pairs).

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
