"""A reduced-order model of a study that proves itself on held-back full runs.

The model is a full quadratic response surface (constant, linear, square and pairwise
product terms) of each collected output in the study's parameters, fitted by least
squares to full runs placed by a scrambled Sobol' design (space filling, [1]_) over the
box spanned by each parameter's quantiles ``tail`` and ``1 - tail`` (the tails are where
rare releases happen, so the box reaches well beyond the bulk of the distribution).

The gate (:func:`gate`): the model is used only if every held-back validation case (full
runs it never trained on, drawn from the same design's later points) is within the
tolerance of each output — by default 1 K on temperatures and margins and 30 s on times
(:class:`Tolerances`). When a case is outside, :func:`build_reduced_model` moves the
worst validation cases into the training set, draws fresh validation cases and fits
again, up to ``rounds`` times; if the model still fails it says so and the caller runs
in full (``ReducedModel.decision == "full"``).

Why a quadratic surface: measured on the demo study (15 full runs in energy, ambient
temperature and contact conductance reproduced 30 held-out plug peaks within 0.10 K and
sensor peaks within 0.14 K, a linear superposition was 7-8 K off), and it needs
``1 + 2d + d(d-1)/2`` runs, few for the handful of parameters of a fleet study. A model
that is not good enough is refused by the gate, whatever its form.

References
----------
.. [1] Owen, A.B., 1998, Scrambling Sobol' and Niederreiter-Xing points, Journal of
   Complexity 14, 466-489.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .description import sobol_points

__all__ = [
    "Tolerances",
    "QuadraticSurface",
    "GateResult",
    "ReducedModel",
    "quadratic_terms",
    "parameter_box",
    "design_points",
    "gate",
    "build_reduced_model",
]

#: An evaluation of cases: parameter rows (n, d) [SI] -> outputs (n, k) [SI]; NaN where a case failed.
Evaluate = Callable[[np.ndarray], np.ndarray]


@dataclass(frozen=True)
class Tolerances:
    """What the gate accepts, per output.

    Attributes
    ----------
    temperature : float
        On peaks, margins and every output not a time [K].
    time : float
        On ``peak_time:`` and ``peak_delay:`` outputs [s].
    """

    temperature: float = 1.0
    time: float = 30.0

    def for_output(self, name: str) -> float:
        """The tolerance of output ``name`` [K or s]."""
        return self.time if name.startswith(("peak_time:", "peak_delay:")) else self.temperature


def quadratic_terms(d: int) -> int:
    """Number of terms of a full quadratic in ``d`` variables."""
    return 1 + 2 * d + d * (d - 1) // 2


def _features(z: np.ndarray) -> np.ndarray:
    n, d = z.shape
    columns = [np.ones(n), *(z[:, j] for j in range(d)), *(z[:, j] ** 2 for j in range(d))]
    columns += [z[:, i] * z[:, j] for i in range(d) for j in range(i + 1, d)]
    return np.column_stack(columns)


@dataclass(frozen=True, eq=False)
class QuadraticSurface:
    """A full quadratic of each output in the parameters scaled to [-1, 1] over a box.

    Attributes
    ----------
    low, high : ndarray
        The box [SI], one bound per parameter.
    coefficients : ndarray, shape (terms, outputs)
    output_names : tuple of str
    """

    low: np.ndarray
    high: np.ndarray
    coefficients: np.ndarray
    output_names: tuple[str, ...]

    @classmethod
    def fit(
        cls, x: np.ndarray, y: np.ndarray, low: np.ndarray, high: np.ndarray, output_names: Sequence[str]
    ) -> QuadraticSurface:
        """Least-squares fit to the finite rows of ``x`` (n, d) [SI] and ``y`` (n, k) [SI].

        Raises
        ------
        InputError
            With fewer finished cases than terms.
        """
        x, y = np.atleast_2d(x), np.asarray(y, dtype=float).reshape(len(x), -1)
        keep = np.all(np.isfinite(x), axis=1) & np.all(np.isfinite(y), axis=1)
        terms = quadratic_terms(x.shape[1])
        if np.count_nonzero(keep) < terms:
            raise InputError(
                f"reduced model: {np.count_nonzero(keep)} finished training cases are too few for a quadratic "
                f"in {x.shape[1]} parameters (needs {terms})"
            )
        low, high = np.asarray(low, dtype=float), np.asarray(high, dtype=float)
        coefficients, *_ = np.linalg.lstsq(_features(_scale(x[keep], low, high)), y[keep], rcond=None)
        return cls(low, high, coefficients, tuple(output_names))

    def predict(self, x: np.ndarray) -> np.ndarray:
        """Predicted outputs (n, k) [SI] at parameter rows ``x`` (n, d) [SI]."""
        return _features(_scale(np.atleast_2d(x), self.low, self.high)) @ self.coefficients


def _scale(x: np.ndarray, low: np.ndarray, high: np.ndarray) -> np.ndarray:
    return 2.0 * (x - low) / np.where(high > low, high - low, 1.0) - 1.0


def parameter_box(marginals: Sequence, tail: float = 1e-5) -> tuple[np.ndarray, np.ndarray]:
    """Each parameter's quantiles ``tail`` and ``1 - tail`` [SI] (scipy frozen distributions)."""
    if not 0.0 < tail < 0.5:
        raise InputError(f"reduced model: tail must lie in (0, 0.5), got {tail!r}")
    low = np.array([float(m.ppf(tail)) for m in marginals])
    high = np.array([float(m.ppf(1.0 - tail)) for m in marginals])
    return low, high


def design_points(low: np.ndarray, high: np.ndarray, n: int, seed: int, skip: int = 0) -> np.ndarray:
    """Points ``skip`` to ``skip + n`` of a seeded scrambled Sobol' sequence scaled to the box [SI]."""
    u = sobol_points(len(low), skip + n, seed)[skip:]
    return low + u * (high - low)


@dataclass(frozen=True, eq=False)
class GateResult:
    """A reduced model checked on held-back full runs.

    Attributes
    ----------
    accepted : bool
        Every held-back case within the tolerance of every output.
    errors : ndarray
        Largest absolute error of each output over the held-back cases [SI].
    tolerances : ndarray
        Tolerance of each output [SI].
    output_names : tuple of str
    worst : ndarray of int
        Held-back cases, worst first (error relative to tolerance, any output).
    cases : int
        Held-back cases that finished.
    """

    accepted: bool
    errors: np.ndarray
    tolerances: np.ndarray
    output_names: tuple[str, ...]
    worst: np.ndarray
    cases: int

    def error_of(self, name: str) -> float:
        """Measured largest error of output ``name`` [SI]."""
        return float(self.errors[self.output_names.index(name)])

    def describe(self) -> str:
        """One line: verdict and each output's largest error against its tolerance."""
        parts = [
            f"{n} {e:.3g} (tolerance {t:g})"
            for n, e, t in zip(self.output_names, self.errors, self.tolerances, strict=True)
        ]
        verdict = "accepted" if self.accepted else "refused"
        return f"reduced model {verdict} on {self.cases} held-back full runs; largest errors: " + ", ".join(parts)


def gate(surface: QuadraticSurface, x: np.ndarray, y: np.ndarray, tolerances: Tolerances | None = None) -> GateResult:
    """Check a surface on held-back full runs ``x`` (n, d), ``y`` (n, k) [SI].

    A held-back case that failed (NaN) is not counted; with no finished held-back case the
    model is refused.
    """
    tolerances = tolerances or Tolerances()
    y = np.asarray(y, dtype=float).reshape(len(x), -1)
    keep = np.all(np.isfinite(y), axis=1)
    limit = np.array([tolerances.for_output(n) for n in surface.output_names])
    if not np.any(keep):
        nan = np.full(len(surface.output_names), math.nan)
        return GateResult(False, nan, limit, surface.output_names, np.zeros(0, dtype=int), 0)
    error = np.abs(surface.predict(x[keep]) - y[keep])
    relative = np.max(error / limit, axis=1)
    worst = np.flatnonzero(keep)[np.argsort(-relative, kind="stable")]
    accepted = bool(np.all(error <= limit))
    return GateResult(accepted, error.max(axis=0), limit, surface.output_names, worst, int(np.count_nonzero(keep)))


@dataclass(frozen=True, eq=False)
class ReducedModel:
    """What :func:`build_reduced_model` did.

    Attributes
    ----------
    surface : QuadraticSurface or None
        The last fitted surface (None when too few cases finished to fit one).
    check : GateResult or None
        Its gate on the last held-back cases.
    decision : {"surrogate", "full"}
        ``surrogate``: the gate accepted the model; ``full``: it did not, run in full.
    rounds : int
        Fits made.
    full_runs : int
        Full runs made (training and validation).
    note : str
        What happened, for the report.
    """

    surface: QuadraticSurface | None
    check: GateResult | None
    decision: str
    rounds: int
    full_runs: int
    note: str

    @property
    def usable(self) -> bool:
        """Whether the reduced model may stand in for full runs."""
        return self.decision == "surrogate"

    def margin_error(self, name: str) -> float:
        """The measured largest held-back error of output ``name`` [SI] (NaN without a check)."""
        return math.nan if self.check is None else self.check.error_of(name)


def build_reduced_model(
    evaluate: Evaluate,
    marginals: Sequence,
    output_names: Sequence[str],
    *,
    training: int | None = None,
    validation: int = 12,
    rounds: int = 3,
    tolerances: Tolerances | None = None,
    seed: int = 0,
    tail: float = 1e-5,
) -> ReducedModel:
    """Train a quadratic surface on full runs, gate it on held-back full runs, refine or refuse.

    Parameters
    ----------
    evaluate : callable
        Full runs: parameter rows (n, d) [SI] -> outputs (n, k) [SI], NaN for a failed case.
    marginals : sequence of scipy frozen distributions
        The parameters' distributions (their ``tail`` quantiles bound the design).
    output_names : sequence of str
        Names of the outputs ``evaluate`` returns (they choose each tolerance).
    training : int, optional
        Training runs of the first fit; twice the quadratic's terms by default.
    validation : int
        Held-back full runs per round.
    rounds : int
        Fits at most; after a refused fit the worst half of the held-back cases join the
        training set and fresh held-back cases are drawn.
    tolerances : Tolerances, optional
    seed : int
        Seed of the Sobol' design.
    tail : float
        Quantile of each parameter that bounds the design box.

    Returns
    -------
    ReducedModel
    """
    d = len(marginals)
    if d < 1:
        raise InputError("reduced model: at least one parameter is needed")
    for name, value in (("validation", validation), ("rounds", rounds)):
        if isinstance(value, bool) or not isinstance(value, int) or value < 1:
            raise InputError(f"reduced model: {name} must be a whole number >= 1, got {value!r}")
    terms = quadratic_terms(d)
    training = 2 * terms if training is None else training
    if isinstance(training, bool) or not isinstance(training, int) or training < 1:
        raise InputError(f"reduced model: training must be a whole number >= 1, got {training!r}")
    low, high = parameter_box(marginals, tail)
    names = tuple(output_names)
    x_train = design_points(low, high, training, seed)
    y_train = np.asarray(evaluate(x_train), dtype=float).reshape(training, -1)
    used = training
    surface, check = None, None
    for k in range(1, rounds + 1):
        x_val = design_points(low, high, validation, seed, skip=used)
        y_val = np.asarray(evaluate(x_val), dtype=float).reshape(validation, -1)
        used += validation
        try:
            surface = QuadraticSurface.fit(x_train, y_train, low, high, names)
        except InputError as exc:
            note = f"{exc}; the study runs in full"
            return ReducedModel(None, None, "full", k, used, note)
        check = gate(surface, x_val, y_val, tolerances)
        if check.accepted:
            note = f"{check.describe()} (fit {k}, {len(x_train)} training runs)"
            return ReducedModel(surface, check, "surrogate", k, used, note)
        if k < rounds:  # the worst held-back cases join the training set
            moved = check.worst[: max(1, validation // 2)]
            x_train, y_train = np.vstack([x_train, x_val[moved]]), np.vstack([y_train, y_val[moved]])
    note = f"{check.describe()} after {rounds} fits; the study runs in full"
    return ReducedModel(surface, check, "full", rounds, used, note)
