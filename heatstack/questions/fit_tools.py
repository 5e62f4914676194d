"""Fit tools of the energy fit: the surrogate of the sensor response and the covariance of the fitted parameters.

The method (surrogate from a few full runs, linearised least-squares covariance) is
described in :mod:`heatstack.questions.inverse`, which is the only user of these helpers.

References
----------
.. [1] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
   Wiley, 1988, ch. 2 (linear approximation inference: ``s^2 (J^T J)^-1``).
.. [2] Press, W.H., Teukolsky, S.A., Vetterling, W.T., Flannery, B.P., Numerical Recipes,
   3rd ed., Cambridge University Press, 2007, ch. 15 (modeling of data; covariance of the
   fitted parameters).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["Surrogate", "parameter_covariance"]


class Surrogate:
    """``s(t; p) = Q(t; E) + S_T (T0 - T0_g) + S_c (c - c_g) + D``: see :mod:`heatstack.questions.inverse`.

    Parameters
    ----------
    names : tuple of str
        The fitted parameters: ``"energy"`` and optionally ``"initial_temperature"`` and
        ``"convection_multiplier"``.
    t0_ref : float or None
        Initial temperature of the reference runs ``T0_g`` [K].
    c_ref : float
        Convection multiplier of the reference runs ``c_g`` [-].
    """

    def __init__(self, names: tuple[str, ...], t0_ref: float | None, c_ref: float):
        self.names, self.t0_ref, self.c_ref = names, t0_ref, c_ref
        self.energy_runs: list[tuple[float, np.ndarray]] = []
        self.s_t: np.ndarray | None = None
        self.s_c: np.ndarray | None = None
        self.defect_at: tuple[np.ndarray, np.ndarray] | None = None  # (p, y_full(p))

    def basis(self, energy: float) -> list[tuple[float, np.ndarray]]:
        """The (at most three) energy runs nearest ``energy``, in increasing energy.

        Parameters
        ----------
        energy : float
            Energy estimate [J].

        Returns
        -------
        list of (float, ndarray)
            Energy [J] and sensor response [K] of each run.
        """
        ordered = sorted(self.energy_runs, key=lambda run: abs(run[0] - energy))
        return sorted(ordered[:3], key=lambda run: run[0])

    @staticmethod
    def lagrange(points: list[tuple[float, np.ndarray]], energy: float) -> tuple[np.ndarray, np.ndarray]:
        """Interpolated response and its derivative in energy at ``energy``.

        Parameters
        ----------
        points : list of (float, ndarray)
            Energy [J] and response [K] of each run.
        energy : float
            Energy to interpolate at [J].

        Returns
        -------
        value : ndarray
            Lagrange-interpolated response [K].
        slope : ndarray
            Its derivative in energy [K/J].
        """
        xs = [e for e, _ in points]
        value = np.zeros_like(points[0][1])
        slope = np.zeros_like(points[0][1])
        for k, (xk, yk) in enumerate(points):
            others = [x for j, x in enumerate(xs) if j != k]
            denominator = math.prod(xk - x for x in others)
            weight = math.prod(energy - x for x in others) / denominator
            if len(others) == 1:
                derivative = 1.0 / denominator
            else:
                derivative = sum(energy - x for x in others) / denominator
            value += weight * yk
            slope += derivative * yk
        return value, slope

    def split(self, p: np.ndarray) -> tuple[float, float | None, float]:
        """The energy, initial temperature and convection multiplier of a parameter vector.

        Parameters
        ----------
        p : ndarray
            Parameter values in ``names`` order [SI].

        Returns
        -------
        energy : float
            [J].
        initial_temperature : float or None
            [K]; ``t0_ref`` when it is not fitted.
        convection_multiplier : float
            [-]; ``c_ref`` when it is not fitted.
        """
        values = dict(zip(self.names, p, strict=True))
        return (
            float(values["energy"]),
            float(values["initial_temperature"]) if "initial_temperature" in values else self.t0_ref,
            float(values.get("convection_multiplier", self.c_ref)),
        )

    def evaluate(self, p: np.ndarray, points: list[tuple[float, np.ndarray]]) -> tuple[np.ndarray, np.ndarray]:
        """Surrogate response (without defect) and Jacobian (n, len(p)) at ``p``.

        Parameters
        ----------
        p : ndarray
            Parameter values in ``names`` order [SI].
        points : list of (float, ndarray)
            The energy runs to interpolate (see :meth:`basis`).

        Returns
        -------
        value : ndarray, shape (n,)
            Surrogate response [K].
        jacobian : ndarray, shape (n, len(p))
            Its derivatives in each parameter [K per SI unit].
        """
        energy, t0, c = self.split(p)
        value, slope = self.lagrange(points, energy)
        columns = [slope]
        if "initial_temperature" in self.names:
            value = value + self.s_t * (t0 - self.t0_ref)
            columns.append(self.s_t)
        if "convection_multiplier" in self.names:
            value = value + self.s_c * (c - self.c_ref)
            columns.append(self.s_c)
        return value, np.column_stack(columns)

    def defect(self, points: list[tuple[float, np.ndarray]]) -> np.ndarray:
        """The defect ``D = y_full(p) - s(p)`` at the last check run (0 before there is one).

        Parameters
        ----------
        points : list of (float, ndarray)
            The energy runs to interpolate.

        Returns
        -------
        ndarray or float
            Defect of each sample [K], or 0.0 when ``defect_at`` is unset.
        """
        if self.defect_at is None:
            return 0.0
        p, y = self.defect_at
        return y - self.evaluate(p, points)[0]


def parameter_covariance(jacobian: np.ndarray, residual: np.ndarray) -> tuple[np.ndarray, float]:
    """``s^2 (J^T J)^-1`` and ``s`` (Bates & Watts 1988, ch. 2), via column scaling.

    Parameters
    ----------
    jacobian : ndarray, shape (n, m)
        Jacobian of the residuals in the parameters.
    residual : ndarray, shape (n,)
        Residuals at the estimate.

    Returns
    -------
    covariance : ndarray, shape (m, m)
        Parameter covariance (all infinite when a column is zero or ``J^T J`` is
        ill-conditioned, condition number above 1e12).
    s : float
        Residual standard deviation ``sqrt(r.r / (n - m))``, in the residuals' unit.

    References
    ----------
    .. [1] Bates, D.M., Watts, D.G., 1988, Nonlinear Regression Analysis and Its
       Applications, Wiley, ch. 2.
    """
    n, m = jacobian.shape
    s2 = float(np.dot(residual, residual)) / (n - m)
    norms = np.linalg.norm(jacobian, axis=0)
    if np.any(norms <= 0):
        return np.full((m, m), np.inf), math.sqrt(s2)
    scaled = jacobian / norms
    gram = scaled.T @ scaled
    if np.linalg.cond(gram) > 1e12:
        return np.full((m, m), np.inf), math.sqrt(s2)
    return s2 * np.linalg.inv(gram) / np.outer(norms, norms), math.sqrt(s2)
