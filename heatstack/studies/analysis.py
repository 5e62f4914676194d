"""Study statistics: release probabilities with confidence intervals, percentiles, sensitivities.

The release probability of a fuse plug is estimated by the fraction of cases in which
it released, with two binomial confidence intervals: Wilson's score interval [1]_
(close to nominal coverage on average) and the Clopper-Pearson interval [2]_ (never
below nominal coverage, wider). Both assume independent cases: true of random
sampling; with Latin hypercube sampling the cases are stratified and the intervals are
conservative; for a grid the "probability" is only the fraction of grid points.

Sensitivities rank the parameters by Spearman's rank correlation with an output
(monotone effects) and by standardised regression coefficients (linear effects; their
squares sum to the R^2 of the linear fit when the parameters are uncorrelated) [3]_.
Each rank correlation carries a confidence interval by Fisher's z transform with the
variance 1.06 / (n - 3) of Fieller, Hartley and Pearson [4]_; a coefficient whose interval
holds zero is not told apart from chance. A sample with fewer than
:data:`CASES_PER_PARAMETER` finished cases per varied parameter is flagged as too thin to
support the ranking or R^2 (common practice, no source: ten observations per predictor
for a regression), and the report and the tornado chart say so.

Reading a ranking of ``plug_margin_min``: the smallest margin is one plug's margin in each
case; a parameter of another plug cannot move it, and any correlation it shows is chance.
:func:`governing_plugs` counts which plug gave the smallest margin, and the study report
(:func:`heatstack.studies.summary.study_report`) lists it. The table these functions read is
:class:`heatstack.studies.table.StudyTable`.

References
----------
.. [1] Wilson, E.B., 1927, Probable inference, the law of succession, and statistical
   inference, J. Am. Stat. Assoc. 22, 209-212.
.. [2] Clopper, C.J., Pearson, E.S., 1934, The use of confidence or fiducial limits
   illustrated in the case of the binomial, Biometrika 26, 404-413.
.. [3] Saltelli, A. et al., 2008, Global Sensitivity Analysis: The Primer, Wiley,
   section 1.2 (standardised regression coefficients).
.. [4] Fieller, E.C., Hartley, H.O., Pearson, E.S., 1957, Tests for rank correlation
   coefficients. I, Biometrika 44, 470-481 (variance of Fisher's z of Spearman's rho).
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import stats

from ..errors import InputError
from .labels import plug_names
from .table import StudyTable

__all__ = [
    "ProbabilityEstimate",
    "Sensitivity",
    "SensitivityResult",
    "binomial_intervals",
    "check_confidence",
    "release_probability",
    "margin_percentiles",
    "sensitivity",
    "governing_plugs",
    "CASES_PER_PARAMETER",
]

#: Finished cases per varied parameter below which a sensitivity ranking and its R^2 are
#: flagged as too thin (common practice, no source: ten observations per predictor).
CASES_PER_PARAMETER = 10


# ---------------------------------------------------------------------------- probabilities


@dataclass(frozen=True)
class ProbabilityEstimate:
    """A binomial proportion with two confidence intervals.

    Attributes
    ----------
    label : str
    events : int
        Cases with the event (release).
    trials : int
        Cases counted (finished without error).
    estimate : float
        ``events / trials``.
    confidence : float
        Confidence level of the intervals, e.g. 0.95.
    wilson : (float, float)
        Wilson score interval [1]_.
    clopper_pearson : (float, float)
        Clopper-Pearson ("exact") interval [2]_.
    """

    label: str
    events: int
    trials: int
    estimate: float
    confidence: float
    wilson: tuple[float, float]
    clopper_pearson: tuple[float, float]


def check_confidence(confidence: float) -> float:
    """A confidence level checked to lie strictly between 0 and 1.

    Parameters
    ----------
    confidence : float
        Two-sided confidence level, e.g. 0.95.

    Returns
    -------
    float
        ``confidence`` as a float.

    Raises
    ------
    InputError
        If it is not a number strictly between 0 and 1.
    """
    if isinstance(confidence, bool) or not isinstance(confidence, int | float) or not 0.0 < confidence < 1.0:
        raise InputError(f"confidence: must lie strictly between 0 and 1, got {confidence!r}")
    return float(confidence)


def binomial_intervals(
    events: int, trials: int, confidence: float = 0.95
) -> tuple[tuple[float, float], tuple[float, float]]:
    """Wilson score and Clopper-Pearson intervals for ``events`` out of ``trials``.

    Parameters
    ----------
    events, trials : int
        ``0 <= events <= trials``, ``trials >= 1``.
    confidence : float
        Two-sided confidence level.

    Returns
    -------
    wilson, clopper_pearson : (float, float)

    Raises
    ------
    InputError
        If the counts are not whole numbers with ``0 <= events <= trials`` and ``trials >= 1``.

    Notes
    -----
    Wilson's interval is that of :meth:`scipy.stats.binomtest` (``method="wilson"``).
    The Clopper-Pearson bounds are the beta quantiles
    ``B(alpha/2; k, n-k+1)`` and ``B(1-alpha/2; k+1, n-k)`` (0 and 1 at the ends),
    from :data:`scipy.stats.beta`.
    """
    confidence = check_confidence(confidence)
    for name, value in (("events", events), ("trials", trials)):
        if isinstance(value, bool) or not isinstance(value, int | np.integer):
            raise InputError(f"{name}: expected a whole number, got {value!r}")
    if trials < 1 or not 0 <= events <= trials:
        raise InputError(f"events, trials: need 0 <= events <= trials and trials >= 1, got {events} of {trials}")
    k, n = int(events), int(trials)
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="wilson")
    alpha = 1.0 - confidence
    low = 0.0 if k == 0 else float(stats.beta.ppf(alpha / 2.0, k, n - k + 1))
    high = 1.0 if k == n else float(stats.beta.ppf(1.0 - alpha / 2.0, k + 1, n - k))
    return (float(ci.low), float(ci.high)), (low, high)


def release_probability(table: StudyTable, plug: str | None = None, confidence: float = 0.95) -> ProbabilityEstimate:
    """Probability that a fuse plug releases (any plug by default), from the finished cases.

    Parameters
    ----------
    table : StudyTable
    plug : str, optional
        Plug name (e.g. ``"fuse plug 1"``); ``None`` for "any plug".
    confidence : float

    Returns
    -------
    ProbabilityEstimate
        Releases ``k`` of ``n`` finished cases, the fraction, and its Wilson and
        Clopper-Pearson intervals at ``confidence``.

    Raises
    ------
    InputError
        If the study has no fuse plugs, no such plug, or no finished case.
    """
    column = "any_plug_released" if plug is None else f"plug_released:{plug}"
    if column not in table.columns:
        plugs = [n.split(":", 1)[1] for n in table.output_names if n.startswith("plug_released:")]
        if not plugs:
            raise InputError("release_probability: the study's cases have no fuse plugs")
        close = difflib.get_close_matches(str(plug), plugs, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else f"; plugs: {', '.join(plugs)}"
        raise InputError(f"release_probability: no fuse plug named {plug!r}{hint}")
    values = table[column][table.ok]
    if values.size == 0:
        raise InputError("release_probability: no case finished without error")
    k, n = int(np.count_nonzero(values > 0.5)), int(values.size)
    wilson, exact = binomial_intervals(k, n, confidence)
    return ProbabilityEstimate(plug or "any plug", k, n, k / n, confidence, wilson, exact)


def margin_percentiles(
    table: StudyTable, column: str = "plug_margin_min", q: Sequence[float] = (5.0, 50.0, 95.0)
) -> dict[float, float]:
    """Percentiles of an output over the finished cases (numpy's linear interpolation).

    Parameters
    ----------
    table : StudyTable
    column : str
        Output column, e.g. ``"plug_margin_min"`` or ``"limit_margin:inboard bead seat"`` [K].
    q : sequence of float
        Percentiles in [0, 100].

    Returns
    -------
    dict of float to float
        Each percentile to its value, in the column's unit.

    Raises
    ------
    InputError
        If no finished case has a value of ``column``, or a percentile is outside [0, 100].
    """
    values = table[column][table.ok]
    values = values[np.isfinite(values)]
    if values.size == 0:
        raise InputError(f"margin_percentiles: no finished case has a value of {column!r}")
    qs = [float(x) for x in q]
    if any(not 0.0 <= x <= 100.0 for x in qs):
        raise InputError(f"q: percentiles must lie in [0, 100], got {list(q)}")
    return dict(zip(qs, (float(v) for v in np.percentile(values, qs)), strict=True))


# ---------------------------------------------------------------------------- sensitivity


@dataclass(frozen=True)
class Sensitivity:
    """Sensitivity of one output to one parameter.

    Attributes
    ----------
    parameter : str
    spearman : float
        Spearman rank correlation coefficient [-].
    p_value : float
        Two-sided p-value of ``spearman`` (no correlation as the null hypothesis).
    src : float
        Standardised regression coefficient [-]: change of the output, in standard
        deviations, per standard deviation of the parameter, the others fixed.
    spearman_interval : tuple of float
        95 % confidence interval of ``spearman`` (Fisher's z, variance 1.06 / (n - 3) [4]_).
    """

    parameter: str
    spearman: float
    p_value: float
    src: float
    spearman_interval: tuple[float, float] = (math.nan, math.nan)

    @property
    def distinguishable(self) -> bool:
        """Whether the rank correlation's 95 % interval excludes zero."""
        low, high = self.spearman_interval
        return bool(low > 0.0 or high < 0.0)


@dataclass(frozen=True)
class SensitivityResult:
    """Sensitivities of one output, ranked by ``|spearman|`` (largest first).

    Attributes
    ----------
    output : str
    entries : tuple of Sensitivity
    r_squared : float
        Coefficient of determination of the linear fit behind the SRCs.
    cases : int
        Cases used.
    skipped : tuple of str
        Parameters left out (constant over the cases).
    """

    output: str
    entries: tuple[Sensitivity, ...]
    r_squared: float
    cases: int
    skipped: tuple[str, ...] = ()

    @property
    def cases_per_parameter(self) -> float:
        """Finished cases per varied parameter."""
        return self.cases / max(1, len(self.entries))

    @property
    def thin(self) -> bool:
        """Whether there are fewer than :data:`CASES_PER_PARAMETER` cases per parameter."""
        return self.cases_per_parameter < CASES_PER_PARAMETER

    @property
    def warnings(self) -> tuple[str, ...]:
        """What a reader must know before trusting the ranking (empty when nothing)."""
        out = []
        if self.thin:
            need = CASES_PER_PARAMETER * len(self.entries)
            out.append(
                f"{self.cases} cases for {len(self.entries)} parameters ({self.cases_per_parameter:.1f} per parameter, "
                f"fewer than {CASES_PER_PARAMETER}): too few to support the ranking or R^2 "
                f"(an R^2 near 1 may only be over-fitting); run at least {need} cases"
            )
        chance = [e.parameter for e in self.entries if not e.distinguishable]
        if chance:
            out.append("rank correlation not told apart from zero (95 % interval holds 0): " + ", ".join(chance))
        return tuple(out)


def _default_output(table: StudyTable) -> str:
    for name in ("plug_margin_min", *[n for n in table.output_names if n.startswith("limit_margin:")]):
        if name in table.columns:
            return name
    peaks = [n for n in table.output_names if n.startswith("peak:")]
    if not peaks:
        raise InputError("sensitivity: the table has no outputs")
    return peaks[0]


def sensitivity(
    table: StudyTable, output: str | None = None, parameters: Sequence[str] | None = None
) -> SensitivityResult:
    """Rank parameters by their influence on an output.

    Parameters
    ----------
    table : StudyTable
    output : str, optional
        Output column; ``plug_margin_min`` (else the first limit margin, else the first
        peak) by default.
    parameters : sequence of str, optional
        Parameter columns; all by default.

    Returns
    -------
    SensitivityResult

    Raises
    ------
    InputError
        For an unknown column or too few finished cases (more than parameters + 1 needed).
    """
    output = output or _default_output(table)
    names = list(parameters) if parameters is not None else list(table.parameter_names)
    y = table[output]
    x = np.column_stack([table[n] for n in names]) if names else np.zeros((table.n_cases, 0))
    keep = table.ok & np.isfinite(y) & np.all(np.isfinite(x), axis=1)
    x, y = x[keep], y[keep]
    varying = [j for j in range(x.shape[1]) if np.ptp(x[:, j]) > 0]
    skipped = tuple(names[j] for j in range(len(names)) if j not in varying)
    x = x[:, varying]
    used = [names[j] for j in varying]
    n, d = x.shape
    if n <= d + 1:
        raise InputError(f"sensitivity: {n} finished cases are too few for {d} parameters (need more than {d + 1})")
    if np.ptp(y) == 0:
        raise InputError(f"sensitivity: {output!r} is the same in every case")
    xs = (x - x.mean(axis=0)) / x.std(axis=0, ddof=1)
    ys = (y - y.mean()) / y.std(ddof=1)
    design = np.column_stack([np.ones(n), xs])
    coefficients, *_ = np.linalg.lstsq(design, ys, rcond=None)
    residual = ys - design @ coefficients
    r2 = float(1.0 - residual @ residual / (ys @ ys))
    entries = []
    for j, name in enumerate(used):
        rho = stats.spearmanr(x[:, j], y)
        entries.append(
            Sensitivity(
                name,
                float(rho.statistic),
                float(rho.pvalue),
                float(coefficients[j + 1]),
                _spearman_interval(float(rho.statistic), n),
            )
        )
    entries.sort(key=lambda e: -abs(e.spearman) if math.isfinite(e.spearman) else 0.0)
    return SensitivityResult(output, tuple(entries), r2, n, skipped)


def _spearman_interval(rho: float, n: int, confidence: float = 0.95) -> tuple[float, float]:
    """Confidence interval of Spearman's rho by Fisher's z, variance 1.06 / (n - 3) [4]_."""
    if not math.isfinite(rho) or n <= 3:
        return (math.nan, math.nan)
    z = math.atanh(min(max(rho, -0.999999), 0.999999))
    half = float(stats.norm.ppf(0.5 + confidence / 2)) * math.sqrt(1.06 / (n - 3))
    # a rank correlation of exactly +-1 is clipped before atanh; the interval still holds it
    return (min(math.tanh(z - half), rho), max(math.tanh(z + half), rho))


def governing_plugs(table: StudyTable) -> dict[str, int]:
    """How many finished cases each fuse plug gave ``plug_margin_min`` (the smallest margin).

    Parameters
    ----------
    table : StudyTable
        The study's table of finished and failed cases.

    Returns
    -------
    dict
        Plug name -> number of cases, largest first; empty without plugs.
    """
    names = plug_names(table.output_names)
    if not names:
        return {}
    margins = np.column_stack([table[f"plug_margin:{n}"] for n in names])
    keep = table.ok & np.all(np.isfinite(margins), axis=1)
    if not np.any(keep):
        return {}
    counts = np.bincount(np.argmin(margins[keep], axis=1), minlength=len(names))
    order = np.argsort(-counts, kind="stable")
    return {names[k]: int(counts[k]) for k in order if counts[k]}
