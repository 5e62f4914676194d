"""Interval coverage of the calibration in many repeated synthetic trials (the heavy version of the suite's test).

Run ``python validation/calibration_coverage.py [TRIALS]`` (default 100; about 1 s a trial on
one core). Each trial fits noisy copies of the short run of the tiny invented brake
(tests/calibration_case.py), made by the fit's own model, with a different noise seed; the
95 % linearised intervals (Seber & Wild, Nonlinear Regression, Wiley 1989, sec. 5.1) should
cover the truth in Binomial(TRIALS, 0.95) of them (Johnson, Kemp & Kotz, Univariate Discrete
Distributions, 3rd ed., Wiley 2005, ch. 3). Printed: per parameter the count covered and the
binomial probability of a count that low or lower, and the sum of the trials' Mahalanobis
distances against its chi-square(2 TRIALS) range. The last line is ``coverage_ok: True`` when
every count lies above the binomial 1 % point and the sum inside the two-sided 1 % range.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy.stats import binom, chi2

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from calibration_case import coverage_trials  # noqa: E402


def main(trials: int = 100) -> int:
    with tempfile.TemporaryDirectory() as folder:
        result = coverage_trials(Path(folder), trials)
    ok = True
    for name, count in zip(("contact", "tau"), result.covered, strict=True):
        p_low = float(binom.cdf(count, trials, 0.95))
        ok &= p_low > 0.01
        print(f"{name}: {count} of {trials} intervals cover the truth (P(X <= {count}) = {p_low:.3f} at p = 0.95)")
    low, high = chi2.ppf([0.005, 0.995], 2 * trials)
    total = float(np.sum(result.mahalanobis))
    ok &= bool(low < total < high)
    print(
        f"sum of Mahalanobis distances: {total:.1f} (chi-square({2 * trials}) two-sided 1 %: {low:.1f} to {high:.1f})"
    )
    print(f"coverage_ok: {ok}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main(int(sys.argv[1]) if len(sys.argv) > 1 else 100))
