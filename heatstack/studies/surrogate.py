"""A reduced-order model of a study that proves itself on held-back full runs.

The design: full runs at the first points of a seeded scrambled Sobol' sequence (space
filling, [1]_) over the box spanned by each parameter's quantiles ``tail`` and
``1 - tail`` (the tails are where rare releases happen, so the box reaches well beyond the
bulk of the distribution). The first ``training`` points train the model, the next
``held_back`` check it.

The surface (:class:`ResponseSurface`) of each modelled output, in the parameters scaled
to [-1, 1] over the box, is either

* ``spline``: a thin-plate spline with a full quadratic trend that passes through every
  training run (scipy.interpolate.RBFInterpolator, [2]_); with exactly as many runs as a
  quadratic has terms it is the interpolating quadratic, and every further run makes it
  better where it is, so adding runs where the error is largest helps; or
* ``quadratic``: a least-squares full quadratic (constant, linear, square and pairwise
  product terms), measured on the demo study (15 full runs in energy, ambient temperature
  and contact conductance reproduced 30 held-out plug peaks within 0.10 K, a linear
  superposition was 7-8 K off) but unable to improve on its own best fit.

The gate (:func:`gate`): the model is used only if every held-back case is within the
tolerance of every modelled output (by default 1 K on temperatures and margins, 30 s on
times). When a case is outside, :func:`build_reduced_model` moves the worst half of the
held-back cases into the training set (training runs added where the error is largest),
draws fresh held-back cases from the design and fits again, up to ``rounds`` fits; if the
model still fails it says so (``ReducedModel.decision == "full"``) and the caller runs in
full. Every held-back case not moved stays held back, so the last check covers them all.

References
----------
.. [1] Owen, A.B., 1998, Scrambling Sobol' and Niederreiter-Xing points, Journal of
   Complexity 14, 466-489.
.. [2] Fasshauer, G.E., 2007, Meshfree Approximation Methods with MATLAB, World
   Scientific, ch. 6 and 8 (radial basis interpolation with a polynomial term; from memory).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.interpolate import RBFInterpolator

from ..errors import InputError
from .description import sobol_points
from .settings import ReducedModelSettings

__all__ = [
    "ResponseSurface",
    "GateResult",
    "ReducedModel",
    "RunFull",
    "quadratic_terms",
    "parameter_box",
    "design_points",
    "modelled_outputs",
    "gate",
    "build_reduced_model",
]

#: Full runs: parameter rows (n, d) [SI], a role name and optionally the rows to run (all by default) ->
#: outputs by name, (n,) each [SI], NaN where a case failed or was not run.
RunFull = Callable[..., Mapping[str, np.ndarray]]

#: Output name prefixes modelled by default.
MODELLED_PREFIXES = ("peak:", "peak_time:", "peak_delay:", "limit_margin:", "plug_peak:", "plug_margin:")


def quadratic_terms(d: int) -> int:
    """Number of terms of a full quadratic in ``d`` variables.

    Parameters
    ----------
    d : int
        Number of variables.

    Returns
    -------
    int
        ``1 + 2 d + d (d - 1) / 2``.
    """
    return 1 + 2 * d + d * (d - 1) // 2


def _features(z: np.ndarray) -> np.ndarray:
    n, d = z.shape
    columns = [np.ones(n), *(z[:, j] for j in range(d)), *(z[:, j] ** 2 for j in range(d))]
    columns += [z[:, i] * z[:, j] for i in range(d) for j in range(i + 1, d)]
    return np.column_stack(columns)


def _scale(x: np.ndarray, low: np.ndarray, high: np.ndarray) -> np.ndarray:
    return 2.0 * (x - low) / np.where(high > low, high - low, 1.0) - 1.0


@dataclass(frozen=True, eq=False)
class ResponseSurface:
    """A surface of each output in the parameters scaled to [-1, 1] over a box.

    Attributes
    ----------
    kind : {"spline", "quadratic"}
    low, high : ndarray
        The box [SI], one bound per parameter.
    output_names : tuple of str
    model : object
        The fitted model: quadratic coefficients (terms, outputs), or an RBFInterpolator.
    """

    kind: str
    low: np.ndarray
    high: np.ndarray
    output_names: tuple[str, ...]
    model: Any

    @classmethod
    def fit(
        cls,
        kind: str,
        x: np.ndarray,
        y: np.ndarray,
        low: np.ndarray,
        high: np.ndarray,
        output_names: Sequence[str],
    ) -> ResponseSurface:
        """Fit to the finished rows of ``x`` (n, d) [SI] and ``y`` (n, k) [SI].

        Parameters
        ----------
        kind : {"spline", "quadratic"}
            The surface's form (see the module notes).
        x : ndarray, shape (n, d)
            Training parameter rows [SI].
        y : ndarray, shape (n, k)
            Training outputs [SI]; rows with a NaN are left out.
        low, high : ndarray
            The box [SI].
        output_names : sequence of str
            Names of the ``k`` outputs.

        Returns
        -------
        ResponseSurface
            The fitted surface.

        Raises
        ------
        InputError
            With fewer finished cases than a quadratic has terms.
        """
        x = np.atleast_2d(np.asarray(x, dtype=float))
        y = np.asarray(y, dtype=float).reshape(len(x), -1)
        keep = np.all(np.isfinite(x), axis=1) & np.all(np.isfinite(y), axis=1)
        terms = quadratic_terms(x.shape[1])
        if np.count_nonzero(keep) < terms:
            raise InputError(
                f"reduced model: {np.count_nonzero(keep)} finished training runs are too few for a quadratic "
                f"in {x.shape[1]} parameters (needs {terms})"
            )
        low, high = np.asarray(low, dtype=float), np.asarray(high, dtype=float)
        z = _scale(x[keep], low, high)
        if kind == "quadratic":
            model, *_ = np.linalg.lstsq(_features(z), y[keep], rcond=None)
        elif kind == "spline":
            try:
                model = RBFInterpolator(z, y[keep], kernel="thin_plate_spline", degree=2)
            except (np.linalg.LinAlgError, ValueError) as exc:
                raise InputError(f"reduced model: the training runs do not determine a spline ({exc})") from None
        else:
            raise InputError(f"reduced model: unknown surface kind {kind!r} (spline or quadratic)")
        return cls(kind, low, high, tuple(output_names), model)

    def predict(self, x: np.ndarray) -> np.ndarray:
        """Predicted outputs at parameter rows ``x``.

        Parameters
        ----------
        x : ndarray, shape (n, d)
            Parameter rows [SI].

        Returns
        -------
        ndarray, shape (n, k)
            Predicted outputs [SI].
        """
        z = _scale(np.atleast_2d(np.asarray(x, dtype=float)), self.low, self.high)
        if self.kind == "quadratic":
            return _features(z) @ self.model
        out = np.empty((len(z), len(self.output_names)))
        for start in range(0, len(z), 20000):  # bounded memory for large samples
            out[start : start + 20000] = self.model(z[start : start + 20000])
        return out

    def inside(self, x: np.ndarray) -> np.ndarray:
        """Whether each row of ``x`` (n, d) [SI] lies in the box the surface was trained and checked on.

        Parameters
        ----------
        x : ndarray, shape (n, d)
            Parameter rows [SI].

        Returns
        -------
        ndarray of bool, shape (n,)
            True inside the box (bounds included).
        """
        x = np.atleast_2d(np.asarray(x, dtype=float))
        return np.all((x >= self.low) & (x <= self.high), axis=1)


def parameter_box(marginals: Sequence, tail: float = 1e-6) -> tuple[np.ndarray, np.ndarray]:
    """Each parameter's quantiles ``tail`` and ``1 - tail``.

    Parameters
    ----------
    marginals : sequence of scipy frozen distributions
        One per parameter, in SI.
    tail : float, optional
        Quantile of each end, in (0, 0.5).

    Returns
    -------
    low, high : ndarray
        The box's bounds [SI].

    Raises
    ------
    InputError
        If ``tail`` is out of range.
    """
    if not 0.0 < tail < 0.5:
        raise InputError(f"reduced model: tail must lie in (0, 0.5), got {tail!r}")
    low = np.array([float(m.ppf(tail)) for m in marginals])
    high = np.array([float(m.ppf(1.0 - tail)) for m in marginals])
    return low, high


def design_points(low: np.ndarray, high: np.ndarray, n: int, seed: int) -> np.ndarray:
    """The first ``n`` points of a seeded scrambled Sobol' sequence scaled to the box.

    Parameters
    ----------
    low, high : ndarray
        The box [SI].
    n : int
        Number of points (a longer draw with the same seed starts with the same points).
    seed : int
        Seed of the scrambling.

    Returns
    -------
    ndarray, shape (n, d)
        The points [SI].
    """
    return low + sobol_points(len(low), n, seed) * (high - low)


def modelled_outputs(names: Sequence[str], chosen: Sequence[str] | None = None) -> tuple[str, ...]:
    """The outputs the reduced model stands in for.

    Parameters
    ----------
    names : sequence of str
        The outputs the full runs return.
    chosen : sequence of str, optional
        The outputs asked for; by default every peak, peak time, delay and margin.

    Returns
    -------
    tuple of str
        The modelled outputs, in the order of ``names`` (or of ``chosen``).

    Raises
    ------
    InputError
        If a chosen output is not among ``names``, or nothing is left to model.
    """
    if chosen is None:
        out = tuple(n for n in names if n.startswith(MODELLED_PREFIXES))
    else:
        for k, name in enumerate(chosen):
            if name not in names:
                raise InputError(f"study.reduced_model.outputs[{k}]: the full runs have no output {name!r}")
        out = tuple(chosen)
    if not out:
        raise InputError("study.reduced_model: the full runs returned no peak or margin to model")
    return out


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
        Rows of the held-back cases given, worst first (error relative to tolerance, any output).
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
        """Measured largest error of one output.

        Parameters
        ----------
        name : str
            A modelled output.

        Returns
        -------
        float
            Its largest held-back error [SI].
        """
        return float(self.errors[self.output_names.index(name)])

    def describe(self) -> str:
        """One line: the verdict and each output's largest error against its tolerance.

        Returns
        -------
        str
            E.g. ``reduced model accepted on 12 held-back full runs; largest errors: ...``.
        """
        parts = [
            f"{n} {e:.3g} (tolerance {t:g})"
            for n, e, t in zip(self.output_names, self.errors, self.tolerances, strict=True)
        ]
        verdict = "accepted" if self.accepted else "refused"
        return f"reduced model {verdict} on {self.cases} held-back full runs; largest errors: " + ", ".join(parts)


def gate(surface: ResponseSurface, x: np.ndarray, y: np.ndarray, settings: ReducedModelSettings) -> GateResult:
    """Check a surface on held-back full runs.

    Parameters
    ----------
    surface : ResponseSurface
        The fitted surface.
    x : ndarray, shape (n, d)
        Held-back parameter rows [SI].
    y : ndarray, shape (n, k)
        Their full-run outputs [SI]; a case with a NaN (failed) is not counted.
    settings : ReducedModelSettings
        A checked copy (its tolerances in SI).

    Returns
    -------
    GateResult
        Accepted only if every finished held-back case is within tolerance; with no
        finished held-back case the model is refused.
    """
    y = np.asarray(y, dtype=float).reshape(len(x), -1)
    keep = np.all(np.isfinite(y), axis=1)
    limit = np.array([settings.tolerance_of(n) for n in surface.output_names])
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
    surface : ResponseSurface or None
        The last fitted surface (None when too few cases finished to fit one).
    check : GateResult or None
        Its gate on every held-back case.
    decision : {"surrogate", "full"}
        ``surrogate``: the gate accepted the model; ``full``: it did not, run in full.
    rounds : int
        Fits made.
    full_runs : int
        Full runs of the design (training and held back).
    training : int
        Training runs of the last fit.
    note : str
        What happened, for the report.
    """

    surface: ResponseSurface | None
    check: GateResult | None
    decision: str
    rounds: int
    full_runs: int
    training: int
    note: str

    @property
    def usable(self) -> bool:
        """Whether the reduced model may stand in for full runs (the gate accepted it)."""
        return self.decision == "surrogate"

    def error_of(self, name: str) -> float:
        """The measured largest held-back error of one output.

        Parameters
        ----------
        name : str
            A modelled output.

        Returns
        -------
        float
            [SI]; NaN without a check.
        """
        return math.nan if self.check is None else self.check.error_of(name)


def build_reduced_model(
    run_full: RunFull, marginals: Sequence, settings: ReducedModelSettings, seed: int = 0
) -> ReducedModel:
    """Train a surface on full runs, gate it on held-back full runs, refine or refuse.

    Parameters
    ----------
    run_full : callable
        ``run_full(x, "design")`` runs the rows ``x`` (n, d) [SI] in full and returns each
        output by name, (n,) [SI], NaN for a failed case. It is always called with the
        first points of one design, each call a longer prefix of the last, so a store
        behind it reuses every earlier run.
    marginals : sequence of scipy frozen distributions
        The parameters' distributions (their ``tail`` quantiles bound the design).
    settings : ReducedModelSettings
        Training and held-back counts, rounds, tolerances, surface kind, tail, outputs
        (a checked copy is made).
    seed : int, optional
        Seed of the design when ``settings.seed`` is not given.

    Returns
    -------
    ReducedModel
        The surface, its check, the decision and a note for the report.

    Raises
    ------
    InputError
        With no parameter, or settings out of range.
    """
    settings = settings.checked()
    d = len(marginals)
    if d < 1:
        raise InputError("reduced model: at least one parameter is needed")
    seed = settings.seed if settings.seed is not None else int(seed)
    training = 2 * quadratic_terms(d) if settings.training is None else settings.training
    low, high = parameter_box(marginals, settings.tail)
    used = training + settings.held_back
    x = design_points(low, high, used, seed)
    outputs = run_full(x, "design")
    names = modelled_outputs(list(outputs), settings.outputs)
    y = np.column_stack([np.asarray(outputs[n], dtype=float) for n in names])
    trained = np.arange(training)
    surface, check = None, None
    for k in range(1, settings.rounds + 1):
        held = np.setdiff1d(np.arange(used), trained)
        try:
            surface = ResponseSurface.fit(settings.kind, x[trained], y[trained], low, high, names)
        except InputError as exc:
            return ReducedModel(None, None, "full", k, used, len(trained), f"{exc}; refused")
        check = gate(surface, x[held], y[held], settings)
        if check.accepted:
            note = f"{check.describe()} (fit {k}, {len(trained)} training runs)"
            return ReducedModel(surface, check, "surrogate", k, used, len(trained), note)
        if k < settings.rounds:  # the worst held-back cases join the training set, fresh ones are drawn
            moved = held[check.worst[: max(1, len(check.worst) // 2)]]
            trained = np.union1d(trained, moved)
            used += settings.held_back
            x = design_points(low, high, used, seed)
            outputs = run_full(x, "design")
            y = np.column_stack([np.asarray(outputs[n], dtype=float) for n in names])
    note = f"{check.describe()} after {settings.rounds} fits ({len(trained)} training runs); refused"
    return ReducedModel(surface, check, "full", settings.rounds, used, len(trained), note)
