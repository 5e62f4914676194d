"""Rare-event probabilities: importance sampling about a design point, and plain Monte Carlo as the check.

The event is that a margin (release temperature minus peak, limit minus peak) is <= 0.
The study's independent parameters are mapped to independent standard normal variables
``u_j = Phi^-1(F_j(x_j))`` (each marginal's CDF ``F_j``; the Rosenblatt transformation of
independent inputs, [1]_ sec. 7). In that space:

* :func:`find_design_point` finds the most likely point of the event, the point of the
  limit ``margin = 0`` nearest the origin (the design point of first-order reliability,
  Hasofer & Lind [2]_), by a crude search over widening normal clouds and a polish by
  SLSQP on ``min |u|^2 subject to margin(u) = 0``. It is meant for a cheap margin (the
  reduced model).
* :func:`importance_sampling` draws from the defensive mixture
  ``q(u) = a phi(u) + (1 - a)/K sum_k phi(u - u*_k)`` about one or more design points
  (Hesterberg [3]_: the share ``a`` at the input distribution bounds every weight
  ``phi/q`` by ``1/a``; one component per design point when the event is the union of
  several limits, such as any of two fuse plugs releasing, whose regions lie in different
  directions: a mixture about only the nearest leaves the others to the defensive share,
  and its estimate and interval then fall short, [1]_ sec. 3.5) and estimates
  ``p = E_q[1{margin <= 0} phi(u)/q(u)]`` by the sample mean, with the interval of the
  central limit theorem ``p_hat +- z s / sqrt(n)`` ([4]_ ch. 9; ``s`` the sample standard
  deviation of the weighted indicators). With no sample in the event the estimate is 0
  and the upper bound ``CP(0, n) / a``, ``CP`` the Clopper-Pearson bound of the number
  drawn from ``q`` in the event (each weight is at most ``1/a``).
* :func:`monte_carlo` draws from the input distribution itself and gives the Wilson
  interval of the binomial proportion (Wilson 1927; Clopper-Pearson 1934 alongside,
  :func:`heatstack.studies.analysis.binomial_intervals`).

Both take the margin as a function of parameter rows, so the same code serves a study's
reduced model with full-run confirmation and a closed-form check.

References
----------
.. [1] Melchers, R.E., Beck, A.T., 2018, Structural Reliability Analysis and Prediction,
   3rd ed., Wiley (transformation to standard normal space, sec. 7; importance sampling
   about the design point, sec. 3.5; from memory).
.. [2] Hasofer, A.M., Lind, N.C., 1974, Exact and invariant second-moment code format,
   Journal of the Engineering Mechanics Division ASCE 100(EM1), 111-121.
.. [3] Hesterberg, T., 1995, Weighted average importance sampling and defensive mixture
   distributions, Technometrics 37(2), 185-194.
.. [4] Owen, A.B., 2013, Monte Carlo theory, methods and examples, ch. 9 Importance
   sampling (eq. 9.3 and its interval; from memory).
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from ..errors import HeatstackWarning, InputError
from .analysis import binomial_intervals

__all__ = [
    "Margin",
    "RareEventEstimate",
    "to_standard_normal",
    "from_standard_normal",
    "find_design_point",
    "importance_sampling",
    "monte_carlo",
]

#: A margin of parameter rows: (n, d) [SI] -> (n,) [K]; the event is margin <= 0.
Margin = Callable[[np.ndarray], np.ndarray]

#: Standard normal values beyond which the mapping back is clipped (a CDF of 1 - 1e-16).
_U_LIMIT = 8.2


@dataclass(frozen=True, eq=False)
class RareEventEstimate:
    """A probability with its confidence interval and how it was reached.

    Attributes
    ----------
    method : str
        ``importance_sampling`` or ``monte_carlo``.
    estimate : float
        The probability [-].
    interval : (float, float)
        Its two-sided confidence interval [-].
    confidence : float
    interval_source : str
        Which interval (central limit theorem, Wilson, Clopper-Pearson).
    samples : int
        Samples drawn.
    events : int
        Samples in the event.
    coefficient_of_variation : float
        Standard error over the estimate [-] (NaN at zero).
    design_point : ndarray or None
        The design point in the parameters [SI] (importance sampling).
    reliability_index : float
        Distance of the design point from the origin in standard normal space [-] (NaN
        for Monte Carlo).
    rows : ndarray, shape (samples, d)
        The samples [SI].
    margins : ndarray, shape (samples,)
        The margin of each sample [K].
    weights : ndarray, shape (samples,)
        Likelihood ratio of each sample (1 for Monte Carlo) [-].
    design_points : int
        Components of the importance-sampling mixture about a design point (0 for Monte
        Carlo); ``design_point`` is the nearest of them.
    """

    method: str
    estimate: float
    interval: tuple[float, float]
    confidence: float
    interval_source: str
    samples: int
    events: int
    coefficient_of_variation: float
    design_point: np.ndarray | None
    reliability_index: float
    rows: np.ndarray
    margins: np.ndarray
    weights: np.ndarray
    design_points: int = 0

    def contains(self, probability: float) -> bool:
        """Whether ``probability`` lies inside the interval (bounds included).

        Parameters
        ----------
        probability : float
            A probability [-].

        Returns
        -------
        bool
            ``low <= probability <= high``.
        """
        return self.interval[0] <= probability <= self.interval[1]

    def describe(self) -> str:
        """One line: the estimate, its interval and how it was reached.

        Returns
        -------
        str
            E.g. ``1.02e-04 (95 % interval 9.1e-05 to 1.13e-04, central limit theorem), ...``.
        """
        low, high = self.interval
        text = (
            f"{self.estimate:.3g} ({100 * self.confidence:g} % interval {low:.3g} to {high:.3g}, "
            f"{self.interval_source}); {self.method.replace('_', ' ')}, {self.samples} samples, "
            f"{self.events} in the event"
        )
        if self.design_point is not None:
            text += f", design point at {self.reliability_index:.2f} standard deviations"
            if self.design_points > 1:
                text += f" (the nearest of {self.design_points}, one mixture component about each)"
        return text


def _check_marginals(marginals: Sequence) -> None:
    if not marginals:
        raise InputError("rare event: at least one parameter with a distribution is needed")
    for k, m in enumerate(marginals):
        if m is None or not hasattr(m, "ppf") or not hasattr(m, "cdf"):
            raise InputError(
                f"study.parameters[{k}]: a rare-event estimate needs a distribution for every parameter, "
                "not a list of values"
            )


def to_standard_normal(marginals: Sequence, x: np.ndarray) -> np.ndarray:
    """Map parameter rows to independent standard normal variables, ``u = Phi^-1(F(x))``.

    Parameters
    ----------
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    x : ndarray, shape (n, d)
        Parameter rows [SI].

    Returns
    -------
    ndarray, shape (n, d)
        The standard normal values [-], clipped to +-8.2.
    """
    x = np.atleast_2d(np.asarray(x, dtype=float))
    cdf = np.column_stack([m.cdf(x[:, j]) for j, m in enumerate(marginals)])
    return np.clip(stats.norm.ppf(cdf), -_U_LIMIT, _U_LIMIT)


def from_standard_normal(marginals: Sequence, u: np.ndarray) -> np.ndarray:
    """Map independent standard normal variables to parameter rows, ``x = F^-1(Phi(u))``.

    Parameters
    ----------
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    u : ndarray, shape (n, d)
        Standard normal values [-].

    Returns
    -------
    ndarray, shape (n, d)
        Parameter rows [SI].
    """
    u = np.clip(np.atleast_2d(np.asarray(u, dtype=float)), -_U_LIMIT, _U_LIMIT)
    # Phi(-u) taken from the upper tail keeps the precision of quantiles near 1
    columns = [
        np.where(u[:, j] > 0, m.isf(stats.norm.sf(u[:, j])), m.ppf(stats.norm.cdf(u[:, j])))
        for j, m in enumerate(marginals)
    ]
    return np.column_stack(columns)


def find_design_point(
    margin: Margin, marginals: Sequence, seed: int = 0, cloud: int = 20000
) -> tuple[np.ndarray, float]:
    """The point of the event nearest the origin in standard normal space.

    Parameters
    ----------
    margin : callable
        Margin of parameter rows, (n, d) [SI] -> (n,) [K] (cheap: it is called often).
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    seed : int, optional
        Seed of the crude search.
    cloud : int, optional
        Points per crude-search cloud.

    Returns
    -------
    u_star : ndarray, shape (d,)
        The design point in standard normal space [-].
    beta : float
        Its distance from the origin [-].

    Raises
    ------
    InputError
        If no point of the event is found within about 7 standard deviations.
    """
    _check_marginals(marginals)
    d = len(marginals)
    rng = np.random.default_rng([seed, 7919])

    def g(u: np.ndarray) -> np.ndarray:
        return np.asarray(margin(from_standard_normal(marginals, u)), dtype=float)

    origin = g(np.zeros((1, d)))[0]
    if origin <= 0:
        return np.zeros(d), 0.0
    best = None
    for spread in (1.0, 1.5, 2.0, 2.5, 3.0):
        u = rng.standard_normal((cloud, d)) * spread
        u = u[np.linalg.norm(u, axis=1) <= 7.0]
        inside = g(u) <= 0
        if np.any(inside):
            candidates = u[inside]
            best = candidates[np.argmin(np.linalg.norm(candidates, axis=1))]
            break
    if best is None:
        raise InputError("rare event: no point of the event within 7 standard deviations (probability below ~1e-12)")
    solution = optimize.minimize(
        lambda u: 0.5 * float(u @ u),
        best,
        jac=lambda u: u,
        method="SLSQP",
        constraints=[{"type": "eq", "fun": lambda u: g(u[None, :])[0]}],
        options={"maxiter": 200, "ftol": 1e-10},
    )
    u_star = best
    if solution.success and abs(g(solution.x[None, :])[0]) < 1e-3 * max(1.0, abs(origin)):
        if np.linalg.norm(solution.x) <= np.linalg.norm(best):
            u_star = solution.x
    return np.asarray(u_star, dtype=float), float(np.linalg.norm(u_star))


def _warn_failed(margins: np.ndarray) -> None:
    failed = int(np.count_nonzero(~np.isfinite(margins)))
    if failed:
        warnings.warn(
            f"rare event: {failed} of {margins.size} samples have no margin (a full run failed); "
            "importance sampling counts them outside the event, Monte Carlo leaves them out",
            HeatstackWarning,
            stacklevel=3,
        )


def _check_counts(samples: int, confidence: float) -> None:
    if isinstance(samples, bool) or not isinstance(samples, int | np.integer) or samples < 2:
        raise InputError(f"rare event: samples must be a whole number >= 2, got {samples!r}")
    if not 0.0 < confidence < 1.0:
        raise InputError(f"rare event: confidence must lie strictly between 0 and 1, got {confidence!r}")


def importance_sampling(
    margin: Margin,
    marginals: Sequence,
    u_star: np.ndarray,
    samples: int,
    seed: int = 0,
    confidence: float = 0.95,
    defensive: float = 0.1,
) -> RareEventEstimate:
    """Probability of ``margin <= 0`` by importance sampling from a defensive mixture about design point(s).

    Parameters
    ----------
    margin : callable
        Margin of parameter rows, (n, d) [SI] -> (n,) [K]; called once with every sample
        (the function a release decision rests on: full runs near the limit).
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    u_star : ndarray, shape (d,) or (K, d)
        The shift (design point) in standard normal space [-], or one per row for a
        mixture with one component about each (each shifted sample picks one at random).
    samples : int
        Number of samples.
    seed : int, optional
        Seed of the samples.
    confidence : float, optional
        Two-sided confidence level.
    defensive : float, optional
        Share ``a`` of the mixture at the input distribution, in (0, 1).

    Returns
    -------
    RareEventEstimate
        The estimate, its central-limit interval (clipped at 0), the samples, margins and weights.

    Raises
    ------
    InputError
        If the counts or shares are out of range or a parameter has no distribution.
    """
    _check_marginals(marginals)
    _check_counts(samples, confidence)
    if not 0.0 < defensive < 1.0:
        raise InputError(f"rare event: defensive must lie strictly between 0 and 1, got {defensive!r}")
    points = np.atleast_2d(np.asarray(u_star, dtype=float))
    if points.shape[1] != len(marginals) or points.shape[0] == 0:
        raise InputError(f"rare event: design points of shape {points.shape} for {len(marginals)} parameters")
    rng = np.random.default_rng([seed, 104729])
    shifted = rng.random(samples) >= defensive
    u = rng.standard_normal((samples, len(marginals)))
    component = rng.integers(len(points), size=samples)  # drawn after u: one point gives the same u
    u += np.where(shifted[:, None], points[component], 0.0)
    # log phi(u - u*_k) / phi(u) per component; the mixture's density ratio q / phi
    log_ratio = u @ points.T - 0.5 * np.einsum("kd,kd->k", points, points)
    ratio = np.exp(np.minimum(log_ratio, 700.0)).mean(axis=1)
    weights = 1.0 / (defensive + (1.0 - defensive) * ratio)
    rows = from_standard_normal(marginals, u)
    margins = np.asarray(margin(rows), dtype=float).reshape(samples)
    _warn_failed(margins)
    event = margins <= 0.0
    terms = np.where(event, weights, 0.0)
    estimate = float(terms.mean())
    z = float(stats.norm.ppf(0.5 + confidence / 2.0))
    events = int(np.count_nonzero(event))
    if events == 0:
        upper = binomial_intervals(0, samples, confidence)[1][1] / defensive
        interval, source = (0.0, float(min(1.0, upper))), "Clopper-Pearson bound over the weight bound (no event)"
        cov = math.nan
    else:
        error = float(terms.std(ddof=1)) / math.sqrt(samples)
        interval = (max(0.0, estimate - z * error), min(1.0, estimate + z * error))
        source, cov = "central limit theorem", error / estimate
    nearest = points[int(np.argmin(np.linalg.norm(points, axis=1)))]
    beta = float(np.linalg.norm(nearest))
    point = from_standard_normal(marginals, nearest[None, :])[0]
    return RareEventEstimate(
        "importance_sampling",
        estimate,
        interval,
        confidence,
        source,
        samples,
        events,
        cov,
        point,
        beta,
        rows,
        margins,
        weights,
        len(points),
    )


def monte_carlo(
    margin: Margin, marginals: Sequence, samples: int, seed: int = 0, confidence: float = 0.95
) -> RareEventEstimate:
    """Probability of ``margin <= 0`` by plain Monte Carlo, with the Wilson interval.

    Parameters
    ----------
    margin : callable
        Margin of parameter rows, (n, d) [SI] -> (n,) [K]; called once with every sample.
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    samples : int
        Number of samples.
    seed : int, optional
        Seed of the samples.
    confidence : float, optional
        Two-sided confidence level.

    Returns
    -------
    RareEventEstimate
        The fraction in the event and its Wilson interval (weights all 1).

    Raises
    ------
    InputError
        If the counts are out of range or a parameter has no distribution.
    """
    _check_marginals(marginals)
    _check_counts(samples, confidence)
    rng = np.random.default_rng([seed, 104723])
    rows = from_standard_normal(marginals, rng.standard_normal((samples, len(marginals))))
    margins = np.asarray(margin(rows), dtype=float).reshape(samples)
    _warn_failed(margins)
    finished = np.isfinite(margins)
    n = int(np.count_nonzero(finished))
    if n == 0:
        raise InputError("rare event: no sample finished")
    events = int(np.count_nonzero(margins[finished] <= 0.0))
    wilson, _ = binomial_intervals(events, n, confidence)
    p = events / n
    cov = math.sqrt((1.0 - p) / (p * n)) if events else math.nan
    return RareEventEstimate(
        "monte_carlo",
        p,
        wilson,
        confidence,
        "Wilson",
        n,
        events,
        cov,
        None,
        math.nan,
        rows,
        margins,
        np.ones(samples),
    )
