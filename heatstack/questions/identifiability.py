"""What the traces can tell: singular values of the scaled Jacobian, correlations, undetermined parameters, profiles.

The Jacobian is that of the weighted trace residuals in the fitted coordinates ``u``
(``ln`` of positive parameters, else the value over its bound range), so its columns are
comparable: a singular value ``s_k`` means a unit change of ``u`` along the singular
vector ``v_k`` moves the residual by ``s_k`` measurement sigmas.

Each parameter gets one of three verdicts, from two measurable criteria:

- its *relative standard deviation from the traces alone* (the linearised covariance of
  the data rows, no priors, scaled by the reduced chi-square when that exceeds one): the
  standard deviation of ``ln(value)`` for a positive parameter, i.e. the fractional
  uncertainty; of the value over its bound range otherwise;
- its *weak share*: the part of the parameter's unit direction lying in combinations
  whose singular value is below :data:`WEAK_RATIO` of the largest (the traces barely see
  those combinations).

*determined*: relative standard deviation at most :data:`DETERMINED_RELATIVE_SD` (5 %)
and weak share at most :data:`WEAK_SHARE`. The 5 % is the standard the calibration's own
validation asks of an identifiable parameter (recovered within 5 % of the truth): with a
larger standard deviation the estimate misses the truth by more than 5 % in more than a
third of repeated campaigns, so calling it determined would promise what the data do not
give. *poorly determined*: not determined, but a relative standard deviation at most
:data:`UNDETERMINED_RELATIVE_SD` (35 %: the 95 % interval within a factor of about 2
either way); the value is usable only with its interval. *not determined*: anything
wider, or a parameter the traces do not respond to; its value comes from its start or
prior.

References
----------
.. [1] Seber, G.A.F., Wild, C.J., Nonlinear Regression, Wiley, 1989, sec. 5.1 (linearised
   covariance) and sec. 5.9 (profile t, likelihood-ratio intervals).
.. [2] Bates, D.M., Watts, D.G., Nonlinear Regression Analysis and Its Applications,
   Wiley, 1988, sec. 6.1 (profiling).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..studies.executors import StudyExecutor
from .calibration import Z95, CalibrationFit, fit_calibration
from .calibration_records import Calibration
from .calibration_runs import from_internal, to_internal

__all__ = [
    "Identifiability",
    "Profile",
    "identifiability",
    "profile_parameter",
    "DETERMINED_RELATIVE_SD",
    "UNDETERMINED_RELATIVE_SD",
    "WEAK_RATIO",
    "WEAK_SHARE",
    "VERDICTS",
]

#: Largest relative standard deviation (traces alone) of a parameter called determined [-].
DETERMINED_RELATIVE_SD = 0.05
#: Relative standard deviation (traces alone) above which a parameter is not determined at all [-].
UNDETERMINED_RELATIVE_SD = 0.35
#: Singular value ratio below which a combination is reported as poorly determined [-].
WEAK_RATIO = 0.01
#: Largest share of a determined parameter's unit direction in poorly determined combinations [-].
WEAK_SHARE = 0.1
#: The three verdicts, best first.
VERDICTS = ("determined", "poorly determined", "not determined")


@dataclass(frozen=True, eq=False)
class Identifiability:
    """What the traces determine.

    Attributes
    ----------
    names : tuple of str
    singular_values : ndarray
        Of the scaled data Jacobian, largest first [-].
    singular_vectors : ndarray
        Rows: the right singular vectors, in the order of ``singular_values``.
    correlation : ndarray
        Parameter correlation matrix (NaN where a variance is infinite).
    relative_sd : ndarray
        Standard deviation of ``u`` from the traces alone (no priors): the relative
        standard deviation of a positive parameter [-] (inf where the traces do not see it).
    weak_share : ndarray
        Share of each parameter's unit direction in poorly determined combinations [-].
    verdicts : tuple of str
        One of :data:`VERDICTS` per parameter.
    statement : str
        Which parameters or combinations the traces do not determine, in words.
    """

    names: tuple[str, ...]
    singular_values: np.ndarray
    singular_vectors: np.ndarray
    correlation: np.ndarray
    relative_sd: np.ndarray
    weak_share: np.ndarray
    verdicts: tuple[str, ...]
    statement: str

    @property
    def determined(self) -> tuple[bool, ...]:
        """Whether each parameter is determined by the traces (see the module docstring)."""
        return tuple(v == VERDICTS[0] for v in self.verdicts)


def _data_standard_deviation(jacobian: np.ndarray, scale: float) -> np.ndarray:
    """Standard deviation of each ``u`` from the data rows alone [-]; inf where they do not see it."""
    _, singular, vt = np.linalg.svd(jacobian, full_matrices=False)
    m = jacobian.shape[1]
    if singular.size == 0 or singular[0] <= 0:
        return np.full(m, np.inf)
    keep = singular > singular[0] * 1e-8
    variance = np.sum((vt[keep] / singular[keep, None]) ** 2, axis=0) * scale
    blind = np.sum(vt[~keep] ** 2, axis=0) > 1e-6 if np.any(~keep) else np.zeros(m, dtype=bool)
    variance[blind] = np.inf
    return np.sqrt(variance)


def _weak_share(singular: np.ndarray, vt: np.ndarray) -> np.ndarray:
    """Share of each parameter's unit direction in combinations below :data:`WEAK_RATIO` of the largest."""
    if singular.size == 0 or singular[0] <= 0:
        return np.ones(vt.shape[1] if vt.ndim == 2 else 0)
    weak = singular < WEAK_RATIO * singular[0]
    return np.sum(vt[weak] ** 2, axis=0)


def _verdict(relative_sd: float, weak_share: float) -> str:
    if relative_sd <= DETERMINED_RELATIVE_SD and weak_share <= WEAK_SHARE:
        return VERDICTS[0]
    if relative_sd <= UNDETERMINED_RELATIVE_SD:
        return VERDICTS[1]
    return VERDICTS[2]


def _sentence(name: str, verdict: str, relative_sd: float, weak_share: float, log: bool) -> str:
    what = "relative standard deviation" if log else "standard deviation over its bound range"
    if not np.isfinite(relative_sd):
        return (
            f"The traces do not determine {name} at all (they do not respond to it); "
            "its value comes from its start or prior."
        )
    spread = f"{what} {relative_sd:.0%} from the traces alone"
    if weak_share > WEAK_SHARE:
        spread += f", {weak_share:.0%} of it in poorly determined combinations"
    if verdict == VERDICTS[1]:
        return (
            f"{name} is poorly determined ({spread}; determined needs at most {DETERMINED_RELATIVE_SD:.0%}): "
            "use it only with its interval."
        )
    return f"The traces do not determine {name} ({spread}); its value comes from its start or prior."


def _combination(vector: np.ndarray, names: tuple[str, ...], logs: tuple[bool, ...]) -> str:
    order = np.argsort(-np.abs(vector))
    terms = []
    for k in order:
        if abs(vector[k]) < 0.2:
            break
        label = f"ln({names[k]})" if logs[k] else names[k]
        terms.append(f"{vector[k]:+.2f} {label}")
    return " ".join(terms)


def identifiability(fit: CalibrationFit) -> Identifiability:
    """Singular values, correlations and the plain statement for a fit (see the module docstring).

    Parameters
    ----------
    fit : CalibrationFit
        The fit (its Jacobian and covariance).

    Returns
    -------
    Identifiability
        Names, scaled singular values and vectors, correlation matrix, 95 % half-widths in
        ``u``, which parameters are determined, and the statement in words.
    """
    names = tuple(p.name for p in fit.parameters)
    logs = tuple(p.log for p in fit.parameters)
    jac = fit.jacobian
    singular = np.linalg.svd(jac, compute_uv=False) if jac.size else np.zeros(0)
    _, _, vt = np.linalg.svd(jac, full_matrices=False)
    sd = fit.standard_errors()
    with np.errstate(invalid="ignore", divide="ignore"):
        correlation = fit.covariance / np.outer(sd, sd)
    correlation[~np.isfinite(correlation)] = np.nan
    np.fill_diagonal(correlation, np.where(np.isfinite(sd) & (sd > 0), 1.0, np.nan))
    relative = _data_standard_deviation(jac, max(1.0, fit.reduced_chi_square))
    weak = _weak_share(singular, vt)
    verdicts = tuple(_verdict(r, w) for r, w in zip(relative, weak, strict=True))
    lines = [
        _sentence(name, verdict, r, w, log)
        for name, verdict, r, w, log in zip(names, verdicts, relative, weak, logs, strict=True)
        if verdict != VERDICTS[0]
    ]
    top = singular[0] if singular.size and singular[0] > 0 else 1.0
    for s, vector in zip(singular, vt, strict=True):
        if s < WEAK_RATIO * top and np.count_nonzero(np.abs(vector) >= 0.2) > 1:
            lines.append(
                f"The combination {_combination(vector, names, logs)} is poorly determined "
                f"(singular value {s / top:.2g} of the largest)."
            )
    good = [name for name, verdict in zip(names, verdicts, strict=True) if verdict == VERDICTS[0]]
    if len(good) == len(names):
        lines.insert(
            0,
            "The traces determine every fitted parameter "
            f"(each to a relative standard deviation of at most {DETERMINED_RELATIVE_SD:.0%}).",
        )
    elif good:
        lines.insert(
            0,
            f"The traces determine {', '.join(good)} "
            f"(each to a relative standard deviation of at most {DETERMINED_RELATIVE_SD:.0%}).",
        )
    return Identifiability(names, singular, vt, correlation, relative, weak, verdicts, "\n".join(lines))


@dataclass(frozen=True, eq=False)
class Profile:
    """A profile of the fit's cost over one parameter.

    Attributes
    ----------
    name : str
    values : ndarray
        Values the parameter was held at [SI].
    chi_square : ndarray
        Weighted SSR (priors included) of the refit at each value [-].
    lower_95, upper_95 : float
        Where the profile rises 3.84 above its minimum (likelihood-ratio interval; NaN
        when not reached within the values tried) [SI].
    """

    name: str
    values: np.ndarray
    chi_square: np.ndarray
    lower_95: float
    upper_95: float


def profile_parameter(
    calibration: Calibration, fit: CalibrationFit, name: str, executor: StudyExecutor, points: int = 7
) -> Profile:
    """Refit the other parameters with ``name`` held at values across its interval.

    The values span ``u +/- 3 sd`` (within the bounds; the whole bound range when the
    parameter is not determined). The cost is rescaled by the fit's reduced chi-square
    when that exceeds one, as the covariance is.

    Parameters
    ----------
    calibration : Calibration
        The calibration.
    fit : CalibrationFit
        The fit whose values start each refit.
    name : str
        The parameter profiled.
    executor : StudyExecutor
        Runs the refits.
    points : int, optional
        Number of values of the profiled parameter.

    Returns
    -------
    Profile
        The values [SI], the rescaled chi-square at each, and the likelihood-ratio 95 %
        interval [SI].
    """
    names = [p.name for p in fit.parameters]
    j = names.index(name)
    p = fit.parameters[j]
    low, high = to_internal(p, p.lower), to_internal(p, p.upper)
    sd = fit.standard_errors()[j]
    if np.isfinite(sd):
        low, high = max(low, fit.internal[j] - 3 * sd), min(high, fit.internal[j] + 3 * sd)
    grid = np.linspace(low, high, points)
    chi = []
    for u in grid:
        refit = fit_calibration(
            calibration, executor, start=list(fit.values), fixed={j: from_internal(p, u)}, model_error=False
        )
        chi.append(sum(float(np.sum((r / _sigma(calibration, k)) ** 2)) for k, r in enumerate(refit.residuals)))
    chi_arr = np.array(chi) / max(1.0, fit.reduced_chi_square)
    values = np.array([from_internal(p, u) for u in grid])
    return Profile(name, values, chi_arr, *_crossings(values, chi_arr))


def _sigma(calibration: Calibration, k: int) -> float:
    traces = [t for run in calibration.runs for t in run.traces]
    return traces[k].sigma


def _crossings(values: np.ndarray, chi: np.ndarray) -> tuple[float, float]:
    level = float(np.min(chi)) + Z95**2
    k = int(np.argmin(chi))
    lower = upper = float("nan")
    for i in range(k, 0, -1):
        if chi[i - 1] >= level:
            lower = float(np.interp(level, [chi[i], chi[i - 1]], [values[i], values[i - 1]]))
            break
    for i in range(k, len(chi) - 1):
        if chi[i + 1] >= level:
            upper = float(np.interp(level, [chi[i], chi[i + 1]], [values[i], values[i + 1]]))
            break
    return lower, upper
