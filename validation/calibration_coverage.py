"""Interval coverage of the calibration in many repeated synthetic trials (the heavy version of the suite's tests).

Run ``python validation/calibration_coverage.py [TRIALS] [--model-error]`` (default 100).
Each trial fits noisy copies of the short run of the tiny invented brake
(tests/calibration_case.py) with a different noise seed.

- Default: readings from the fit's own model with 2 K noise (the intervals' coverage, not
  the model error, is tested; about 3 s a trial on one core).
- ``--model-error``: readings from a finer model (5 mm cells, Euler at 0.25 K a step, where
  the fit uses 10 mm and 4 K: about 0.55 K RMS apart) with 0.3 K noise, fitted with
  ``model_error = "estimate"``; the coverage of the intervals with the model-error term and
  of the noise covariance alone are both printed (about 10 s a trial).

The 95 % linearised intervals (Seber & Wild, Nonlinear Regression, Wiley 1989, sec. 5.1)
should cover the truth in Binomial(TRIALS, 0.95) of the trials (Johnson, Kemp & Kotz,
Univariate Discrete Distributions, 3rd ed., Wiley 2005, ch. 3). Printed per parameter: the
count covered, its Wilson score 95 % interval for the coverage rate (Wilson, J. Am. Stat.
Assoc. 22 (1927) 209-212; recommended by Agresti & Coull, Am. Stat. 52 (1998) 119-126), and
the binomial probability of a count that low or lower; and the sum of the trials'
Mahalanobis distances against its chi-square(2 TRIALS) range. The last line is
``coverage_ok: True`` when every count of the intervals the fit reports lies above the
binomial 1 % point and the Mahalanobis sum inside the two-sided 1 % range (default) or below
its upper 1 % point (``--model-error``: the bound on the model error is taken, so the
intervals may be wide).
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy.stats import binom, binomtest, chi2

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from calibration_case import coverage_trials  # noqa: E402


def coverage_line(name: str, count: int, trials: int) -> tuple[str, bool]:
    """A parameter's coverage count with its Wilson interval, and whether it passes the binomial 1 % test."""
    wilson = binomtest(int(count), trials, 0.95).proportion_ci(0.95, method="wilson")
    p_low = float(binom.cdf(count, trials, 0.95))
    text = (
        f"{name}: {count} of {trials} intervals cover the truth (Wilson 95 %: {wilson.low:.3f} to "
        f"{wilson.high:.3f}; P(X <= {count}) = {p_low:.3f} at p = 0.95)"
    )
    return text, p_low > 0.01


def main(trials: int = 100, model_error: bool = False) -> int:
    with tempfile.TemporaryDirectory() as folder:
        result = coverage_trials(Path(folder), trials, model_error=model_error)
    ok = True
    for name, count, alone in zip(("contact", "tau"), result.covered, result.covered_noise_only, strict=True):
        text, passed = coverage_line(name, count, trials)
        ok &= passed
        print(text)
        if model_error:
            print("  without the model-error term: " + coverage_line(name, alone, trials)[0])
    low, high = chi2.ppf([0.005, 0.995], 2 * trials)
    total = float(np.sum(result.mahalanobis))
    ok &= bool(total < chi2.ppf(0.99, 2 * trials)) if model_error else bool(low < total < high)
    print(
        f"sum of Mahalanobis distances: {total:.1f} (chi-square({2 * trials}) two-sided 1 %: {low:.1f} to {high:.1f})"
    )
    print(f"coverage_ok: {ok}")
    return 0 if ok else 1


if __name__ == "__main__":
    arguments = [a for a in sys.argv[1:] if a != "--model-error"]
    sys.exit(main(int(arguments[0]) if arguments else 100, "--model-error" in sys.argv[1:]))
