"""Variable-step BDF2 on the enthalpy form: its coefficients, its ledger, its error estimate.

With ``w = dt_n / dt_{n-1}`` the variable-step two-step backward differentiation formula,
multiplied through by ``(1 + w) / (1 + 2 w)``, reads per cell of volume ``V``::

    V [H^{n+1} - H^n - b (H^n - H^{n-1})] = a dt_n F(T^{n+1}),
    a = (1 + w) / (1 + 2 w),   b = w^2 / (1 + 2 w),

where ``F`` is the net heat flow into the cell [W]. It is the backward-Euler step with
``dt`` replaced by ``a dt`` and the start enthalpy by ``H^n + b (H^n - H^{n-1})``; ``a = 1,
b = 0`` is backward Euler itself. :class:`StepHistory` is what one accepted step hands to
the next: its length, its start and end enthalpies, the enthalpy rate at its end and its
energy accounts. :func:`local_error` is the predictor-corrector estimate of a step's
local error that the step control (``stepping.py``) measures against the tolerance.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .accounts import StepAccounts

__all__ = ["StepHistory", "bdf2_coefficients", "book", "error_constant", "local_error"]


def bdf2_coefficients(ratio: float) -> tuple[float, float]:
    """The coefficients ``a`` and ``b`` of the variable-step BDF2 step.

    Parameters
    ----------
    ratio : float
        ``w = dt_n / dt_{n-1}``, this step over the previous one (``0`` gives backward Euler).

    Returns
    -------
    a : float
        Multiplier of ``dt_n F(T^{n+1})``: ``(1 + w) / (1 + 2 w)``.
    b : float
        Weight of the history term ``H^n - H^{n-1}``: ``w^2 / (1 + 2 w)``.

    Notes
    -----
    The standard form is ``(1 + 2w)/(1 + w) y^{n+1} - (1 + w) y^n + w^2/(1 + w) y^{n-1}
    = dt_n f(y^{n+1})``; multiplied by ``(1 + w)/(1 + 2w)``, and with ``(1 + w)^2/(1 + 2w)
    = 1 + b``, it becomes ``y^{n+1} - y^n - b (y^n - y^{n-1}) = a dt_n f(y^{n+1})``. It is
    zero-stable for ``w < 1 + sqrt(2)``.

    References
    ----------
    .. [1] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential Equations I,
       2nd ed., Springer, 1993, sec. III.5 (variable-step BDF, its stability bound on the
       step ratio); from memory.
    """
    w = float(ratio)
    return (1.0 + w) / (1.0 + 2.0 * w), w * w / (1.0 + 2.0 * w)


def book(scale: float, flow: float | np.ndarray, weight: float, previous: float | np.ndarray) -> float | np.ndarray:
    """One account's booking for a step: ``a dt`` times its flow plus ``b`` times its last booking.

    Parameters
    ----------
    scale : float
        ``a dt_n`` [s].
    flow : float or ndarray
        The account's heat flow at the end of the step [W].
    weight : float
        The history weight ``b``.
    previous : float or ndarray
        The same account's booking of the previous step [J] (ignored when ``weight`` is 0).

    Returns
    -------
    float or ndarray
        The booking [J].

    Notes
    -----
    Summed over the accounts, the flows give ``F`` and the previous bookings the previous
    step's stored-energy change (its ledger closed), so by the step equation the bookings
    sum to ``V (H^{n+1} - H^n)`` to round-off: the ledger closes every step.

    References
    ----------
    .. [1] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential Equations I,
       2nd ed., Springer, 1993, sec. III.5 (the variable-step BDF2 formula); from memory.
    """
    if weight == 0.0:
        return scale * flow
    return scale * flow + weight * previous


@dataclass(frozen=True, eq=False)
class StepHistory:
    """An accepted step, as the next step's multistep history and error estimate need it.

    Attributes
    ----------
    dt : float
        The step's length [s].
    start_enthalpy, enthalpy : ndarray
        Cell volumetric enthalpies at its start and end [J/m^3].
    rate : ndarray
        ``dH/dt`` at its end, ``F / V`` from its step equation [W/m^3].
    accounts : StepAccounts
        Its energy bookings [J].
    friction_energy : float
        The schedule's friction energy over the step [J].
    """

    dt: float
    start_enthalpy: np.ndarray
    enthalpy: np.ndarray
    rate: np.ndarray
    accounts: StepAccounts
    friction_energy: float


def error_constant(ratio: float | None) -> float:
    """Factor turning the predictor-corrector difference into the local error estimate.

    Parameters
    ----------
    ratio : float or None
        ``w = dt_n / dt_{n-1}`` of a BDF2 step; None for a backward-Euler step.

    Returns
    -------
    float
        ``(1 + w) / (2 + 3 w)`` for BDF2 (``2/5`` at constant step), ``1/2`` for backward
        Euler.

    Notes
    -----
    BDF2 is compared with the explicit quadratic through ``H^{n-1}``, ``H^n`` with slope
    ``dH/dt`` at ``t_n``. For a cubic ``y = g s^3`` about ``t_n`` that predictor misses by
    ``g dt^3 (1 + w)/w`` and BDF2 by ``-g dt^3 (1 + w)^2 / (w (1 + 2w))`` (``-(2/9) dt^3
    y'''`` at ``w = 1``), so the BDF2 error is ``(1 + w)/(2 + 3w)`` of their difference.
    Backward Euler is compared with the explicit Euler step (errors ``-dt^2 y''/2`` and
    ``+dt^2 y''/2``). ``tests/unit/test_multistep.py`` checks both constants on
    polynomials.

    References
    ----------
    .. [1] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential Equations I,
       2nd ed., Springer, 1993, sec. III.7 (error estimation by the difference of predictor
       and corrector, Milne's device); from memory.
    """
    if ratio is None:
        return 0.5
    return (1.0 + ratio) / (2.0 + 3.0 * ratio)


def local_error(
    enthalpy: np.ndarray,
    heat_capacity: np.ndarray,
    dt: float,
    start: np.ndarray,
    rate: np.ndarray,
    last: StepHistory | None = None,
) -> np.ndarray:
    """Estimated local temperature error of a step [K], per cell.

    Parameters
    ----------
    enthalpy : ndarray, shape (n,)
        The step's new enthalpies [J/m^3].
    heat_capacity : ndarray, shape (n,)
        Volumetric heat capacity at the new state [J/(m^3 K)].
    dt : float
        The step's length [s].
    start : ndarray, shape (n,)
        Enthalpies at the start of the step [J/m^3].
    rate : ndarray, shape (n,)
        ``dH/dt`` at the start of the step [W/m^3].
    last : StepHistory, optional
        The step before (a BDF2 step): the predictor is the quadratic through its start
        and ``start`` with slope ``rate``; None (backward Euler): the explicit Euler step.

    Returns
    -------
    ndarray, shape (n,)
        ``C |H - H_predicted| / c`` [K], with ``C`` of :func:`error_constant`.

    References
    ----------
    .. [1] Hairer, E., Norsett, S.P., Wanner, G., Solving Ordinary Differential Equations I,
       2nd ed., Springer, 1993, sec. III.7 (predictor-corrector error estimate); from memory.
    """
    predicted = start + dt * rate
    if last is not None:
        h1 = last.dt
        curvature = (last.start_enthalpy - start + h1 * rate) / (h1 * h1)
        predicted = predicted + curvature * dt * dt
    constant = error_constant(None if last is None else dt / last.dt)
    return constant * np.abs(enthalpy - predicted) / heat_capacity
