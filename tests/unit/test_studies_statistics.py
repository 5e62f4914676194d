"""Study statistics: binomial intervals, their coverage, percentiles, sensitivities, the report.

Pure statistics, no solver. Sources, beside each check:

* Wilson, E.B., 1927, J. Am. Stat. Assoc. 22, 209-212 (score interval; its closed form
  is re-derived in :func:`wilson_closed_form` below).
* Clopper, C.J., Pearson, E.S., 1934, Biometrika 26, 404-413 (exact interval; at k = 0
  the upper bound is 1 - (alpha/2)^(1/n) in closed form).
* Newcombe, R.G., 1998, Statistics in Medicine 17, 857-872, Table I: intervals for
  81/263, 15/148, 0/20 and 1/29 (values quoted from memory to 4 decimals).
* Brown, L.D., Cai, T.T., DasGupta, A., 2001, Statistical Science 16, 101-133: the
  Clopper-Pearson coverage is never below nominal; Wilson's oscillates about it (from
  memory).
* Saltelli, A. et al., 2008, Global Sensitivity Analysis: The Primer, Wiley, sec. 1.2:
  for a linear model with independent inputs SRC_i = b_i sigma_i / sigma_y and the
  squared SRCs sum to R^2 (from memory).
* Hyndman, R.J., Fan, Y., 1996, The American Statistician 50, 361-365, definition 7
  (numpy's default linear percentile).
"""

from __future__ import annotations

import math

import matplotlib
import numpy as np
import pytest
from scipy import stats

from heatstack.errors import InputError
from heatstack.studies import (
    OptionalDependencyError,
    StudyTable,
    binomial_intervals,
    governing_plugs,
    margin_percentiles,
    release_probability,
    sensitivity,
    study_report,
)
from heatstack.studies.plots import plot_tornado


def wilson_closed_form(k: int, n: int, confidence: float) -> tuple[float, float]:
    """Wilson 1927: centre (p + z^2/2n)/(1 + z^2/n), half-width z/(1 + z^2/n) sqrt(p(1-p)/n + z^2/4n^2)."""
    z = stats.norm.ppf(0.5 + confidence / 2.0)
    p = k / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z / (1 + z * z / n) * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
    return centre - half, centre + half


def make_table(columns: dict, parameters=(), title="synthetic (test)", method="random") -> StudyTable:
    n = len(next(iter(columns.values())))
    cols = {"case": np.arange(n), **{k: np.asarray(v) for k, v in columns.items()}}
    cols.setdefault("status", np.array(["ok"] * n))
    cols.setdefault("error", np.array([""] * n))
    outputs = tuple(k for k in columns if k not in parameters and k not in ("status", "error"))
    return StudyTable(cols, tuple(parameters), outputs, {}, title, method)


# ---------------------------------------------------------------------------- intervals


@pytest.mark.parametrize(
    ("k", "n", "wilson", "exact"),
    [
        (81, 263, (0.2553, 0.3662), (0.2527, 0.3676)),
        (15, 148, (0.0624, 0.1605), (0.0578, 0.1617)),
        (0, 20, (0.0000, 0.1611), (0.0000, 0.1684)),
        (1, 29, (0.0061, 0.1718), (0.0009, 0.1776)),
    ],
)
def test_intervals_match_newcombe_1998_table(k, n, wilson, exact):
    w, cp = binomial_intervals(k, n, 0.95)
    assert w == pytest.approx(wilson, abs=6e-5)
    assert cp == pytest.approx(exact, abs=6e-5)


@pytest.mark.parametrize(("k", "n"), [(0, 10), (3, 10), (10, 10), (17, 50), (250, 1000)])
def test_wilson_matches_its_closed_form(k, n):
    w, _ = binomial_intervals(k, n, 0.9)
    assert w == pytest.approx(wilson_closed_form(k, n, 0.9), abs=1e-12)


def test_clopper_pearson_ends_in_closed_form():
    # k = 0: upper bound solves (1 - p)^n = alpha/2; k = n: lower bound solves p^n = alpha/2
    n, alpha = 37, 0.05
    _, (low, high) = binomial_intervals(0, n, 0.95)
    assert low == 0.0 and high == pytest.approx(1 - (alpha / 2) ** (1 / n), rel=1e-12)
    _, (low, high) = binomial_intervals(n, n, 0.95)
    assert high == 1.0 and low == pytest.approx((alpha / 2) ** (1 / n), rel=1e-12)


def _exact_coverage(p: float, n: int, intervals: np.ndarray) -> float:
    k = np.arange(n + 1)
    covered = (intervals[:, 0] <= p) & (p <= intervals[:, 1])
    return float(np.sum(stats.binom.pmf(k, n, p)[covered]))


@pytest.mark.parametrize("p", [0.05, 0.2, 0.5])
def test_intervals_cover_a_known_probability_at_the_nominal_rate(p):
    # 2000 synthetic studies of n = 50 Bernoulli(p) cases: the fraction of intervals that
    # cover p agrees with the exact coverage within binomial noise (4 sigma), and the
    # exact coverage sits at the nominal 95 % (Clopper-Pearson never below; Wilson within
    # 2 points: Brown, Cai & DasGupta 2001)
    n, trials, confidence = 50, 2000, 0.95
    rng = np.random.default_rng(20260)
    table = [binomial_intervals(k, n, confidence) for k in range(n + 1)]
    wilson = np.array([t[0] for t in table])
    exact = np.array([t[1] for t in table])
    k = rng.binomial(n, p, size=trials)
    for intervals, floor in ((wilson, confidence - 0.02), (exact, confidence)):
        expected = _exact_coverage(p, n, intervals)
        assert expected >= floor - 1e-12
        observed = float(np.mean((intervals[k, 0] <= p) & (p <= intervals[k, 1])))
        sigma = math.sqrt(expected * (1 - expected) / trials)
        assert abs(observed - expected) <= 4 * sigma + 1e-12
        assert observed >= confidence - 0.02 - 4 * math.sqrt(confidence * (1 - confidence) / trials)


def test_interval_input_errors():
    with pytest.raises(InputError, match="events <= trials"):
        binomial_intervals(5, 3)
    with pytest.raises(InputError, match="confidence"):
        binomial_intervals(1, 3, 1.5)
    with pytest.raises(InputError, match="whole number"):
        binomial_intervals(1.5, 3)


def test_release_probability_any_plug_and_per_plug():
    a = np.array([1, 0, 0, 1, 0, 0, 0, 0, 1, 0], dtype=float)
    b = np.array([1, 1, 0, 0, 0, 0, 0, 0, 0, 0], dtype=float)
    status = np.array(["ok"] * 9 + ["failed"])
    table = make_table(
        {
            "plug_released:plug 1": a,
            "plug_released:plug 2": b,
            "any_plug_released": np.maximum(a, b),
            "status": status,
        }
    )
    est = release_probability(table)
    assert (est.events, est.trials) == (4, 9)  # the failed case is not counted
    assert est.wilson == pytest.approx(wilson_closed_form(4, 9, 0.95))
    assert release_probability(table, "plug 2").events == 2
    with pytest.raises(InputError, match="no fuse plug named 'plug1'; did you mean 'plug 1'"):
        release_probability(table, "plug1")


# ---------------------------------------------------------------------------- percentiles, sensitivity


def test_margin_percentiles_linear_interpolation():
    # Hyndman & Fan definition 7 on 0..100: the q-th percentile is q itself
    table = make_table({"plug_margin_min": np.arange(101.0)})
    assert margin_percentiles(table) == {5.0: 5.0, 50.0: 50.0, 95.0: 95.0}
    table = make_table({"plug_margin_min": np.array([1.0, 2.0, np.nan, 4.0])})
    assert margin_percentiles(table, q=[50]) == {50.0: 2.0}


def test_sensitivity_of_a_linear_model_matches_the_closed_form():
    rng = np.random.default_rng(4)
    n = 4000
    x = rng.uniform(0.0, 1.0, size=(n, 3))
    noise = 0.1
    y = 4.0 * x[:, 0] - 1.0 * x[:, 1] + 0.0 * x[:, 2] + rng.normal(0.0, noise, n)
    table = make_table({"a": x[:, 0], "b": x[:, 1], "c": x[:, 2], "out": y}, parameters=("a", "b", "c"))
    result = sensitivity(table, "out")
    assert [e.parameter for e in result.entries] == ["a", "b", "c"]
    sigma_x = 1 / math.sqrt(12)
    sigma_y = math.sqrt((16 + 1) * sigma_x**2 + noise**2)
    src = {e.parameter: e.src for e in result.entries}
    assert src["a"] == pytest.approx(4 * sigma_x / sigma_y, abs=0.02)
    assert src["b"] == pytest.approx(-sigma_x / sigma_y, abs=0.02)
    assert abs(src["c"]) < 0.02
    assert sum(v * v for v in src.values()) == pytest.approx(result.r_squared, abs=0.01)
    assert result.entries[2].p_value > 1e-3 and result.entries[0].p_value < 1e-12


def test_sensitivity_skips_constant_parameters_and_needs_enough_cases():
    x = np.linspace(0, 1, 10)
    table = make_table({"a": x, "k": np.ones(10), "out": 2 * x}, parameters=("a", "k"))
    result = sensitivity(table, "out")
    assert result.skipped == ("k",) and result.entries[0].spearman == pytest.approx(1.0)
    small = make_table({"a": x[:2], "out": x[:2]}, parameters=("a",))
    with pytest.raises(InputError, match="too few"):
        sensitivity(small, "out")
    with pytest.raises(InputError, match="no column 'outt'; did you mean 'out'"):
        sensitivity(table, "outt")


def test_report_lists_probabilities_margins_and_failures():
    n = 40
    rng = np.random.default_rng(1)
    mass = rng.uniform(50e3, 70e3, n)
    margin = 20.0 - (mass - 50e3) / 500.0
    status = np.array(["ok"] * (n - 1) + ["failed"])
    error = np.array([""] * (n - 1) + ["SolverError: invented failure for the test"])
    table = make_table(
        {
            "mass": mass,
            "plug_released:fuse plug 1": (margin <= 0).astype(float),
            "plug_margin:fuse plug 1": margin,
            "plug_peak:fuse plug 1": 450.15 - margin,
            "any_plug_released": (margin <= 0).astype(float),
            "plug_margin_min": margin,
            "status": status,
            "error": error,
        },
        parameters=("mass",),
        method="latin_hypercube",
    )
    text = study_report(table)
    est = release_probability(table)
    assert "not certified data" in text and "local regulations" in text
    assert "plug_margin" not in text and "plug_peak" not in text  # readable names only
    assert f"| any plug | {est.events} / {n - 1} | {est.estimate:.3f} |" in text
    assert f"{est.wilson[0]:.3f} - {est.wilson[1]:.3f}" in text
    assert "case 39: SolverError: invented failure" in text
    assert "| mass | -1.000 |" in text


def test_table_to_dataframe_or_a_clear_error():
    table = make_table({"x": np.arange(3.0)})
    try:
        import pandas  # noqa: F401
    except ImportError:
        with pytest.raises(OptionalDependencyError, match="pandas, an optional dependency"):
            table.to_dataframe()
    else:
        frame = table.to_dataframe()
        assert list(frame["x"]) == [0.0, 1.0, 2.0]


# ---------------------------------------------------------------------------- honest statistics


def test_a_thin_sample_is_flagged_in_the_ranking_the_report_and_the_tornado(tmp_path):
    # 12 cases for 5 parameters: 2.4 per parameter, fewer than ten (common practice, no source)
    rng = np.random.default_rng(8)
    x = rng.uniform(0.0, 1.0, size=(12, 5))
    out = x @ np.array([3.0, -2.0, 1.0, 0.0, 0.0]) + rng.normal(0.0, 0.01, 12)
    names = ("a", "b", "c", "d", "e")
    table = make_table({**{n: x[:, k] for k, n in enumerate(names)}, "out": out}, parameters=names)
    result = sensitivity(table, "out")
    assert result.thin and result.cases_per_parameter == pytest.approx(2.4)
    assert result.r_squared > 0.99  # over-fitting looks like a perfect fit
    assert any("too few to support the ranking or R^2" in w and "at least 50 cases" in w for w in result.warnings)
    text = study_report(table, output="out")
    assert "**Warning:** 12 cases for 5 parameters" in text
    assert "Spearman rank correlation" in text and "standardised regression coefficient" in text
    matplotlib.use("Agg")
    svg = plot_tornado(result, tmp_path / "t.svg").read_text()
    assert "too few to support this ranking" in svg


def test_a_large_sample_is_not_flagged_and_chance_correlations_are():
    rng = np.random.default_rng(9)
    x = rng.uniform(0.0, 1.0, size=(400, 2))
    table = make_table({"a": x[:, 0], "b": x[:, 1], "out": x[:, 0]}, parameters=("a", "b"))
    result = sensitivity(table, "out")
    assert not result.thin
    strong = next(e for e in result.entries if e.parameter == "a")
    noise = next(e for e in result.entries if e.parameter == "b")
    assert strong.distinguishable and strong.spearman_interval[0] > 0.9
    assert noise.spearman_interval[0] < noise.spearman < noise.spearman_interval[1]
    assert not noise.distinguishable  # this seed: b's rank correlation with out is chance
    assert result.warnings == ("rank correlation not told apart from zero (95 % interval holds 0): b",)


def test_a_perfect_rank_correlation_lies_inside_its_interval_and_plots(tmp_path):
    # an output that rises with the input in every case has Spearman's rho = +1 exactly
    # (Spearman's definition; from memory): its interval must hold it and the tornado
    # must draw without negative error-bar lengths
    x = np.linspace(0.0, 1.0, 20)
    table = make_table({"a": x, "b": x[::-1] ** 2, "out": 3.0 * x}, parameters=("a", "b"))
    result = sensitivity(table, "out")
    for entry in result.entries:
        low, high = entry.spearman_interval
        assert abs(entry.spearman) == pytest.approx(1.0)
        assert low <= entry.spearman <= high
    matplotlib.use("Agg")
    assert plot_tornado(result, tmp_path / "t.svg").stat().st_size > 0


def test_spearman_interval_covers_at_its_nominal_rate():
    # Fieller, Hartley & Pearson 1957: Fisher's z of Spearman's rho has variance ~ 1.06/(n-3).
    # For independent inputs rho = 0; 400 trials of 30 cases, 95 % nominal; binomial noise
    # sd = sqrt(0.95*0.05/400) = 0.011, so [0.91, 0.99] is about +-4 sd
    rng = np.random.default_rng(10)
    covered = 0
    for _ in range(400):
        a, b = rng.uniform(size=30), rng.uniform(size=30)
        table = make_table({"a": a, "out": b}, parameters=("a",))
        covered += not sensitivity(table, "out").entries[0].distinguishable
    assert 0.91 <= covered / 400 <= 0.99


def test_the_smallest_plug_margin_names_the_plug_that_gives_it():
    # the oddity of a 12-case demo study: plug 1's release temperature "correlated" with the
    # smallest margin although plug 2 gave it in every case; the report now says so
    rng = np.random.default_rng(11)
    n = 12
    release = rng.uniform(447.15, 453.15, n)
    heat = rng.uniform(0.0, 1.0, n)
    peak1 = 460.0 + 40.0 * heat
    peak2 = peak1 + 26.0
    table = make_table(
        {
            "plug 1 release": release,
            "energy": heat,
            "plug_margin:fuse plug 1": release - peak1,
            "plug_peak:fuse plug 1": peak1,
            "plug_released:fuse plug 1": np.ones(n),
            "plug_margin:fuse plug 2": 450.15 - peak2,
            "plug_peak:fuse plug 2": peak2,
            "plug_released:fuse plug 2": np.ones(n),
            "any_plug_released": np.ones(n),
            "plug_margin_min": np.minimum(release - peak1, 450.15 - peak2),
        },
        parameters=("plug 1 release", "energy"),
    )
    assert governing_plugs(table) == {"fuse plug 2": 12}
    assert "The smallest margin is that of fuse plug 2 in 12 of 12 cases" in study_report(table)
    own = {e.parameter: e for e in sensitivity(table, "plug_margin:fuse plug 1").entries}
    assert own["plug 1 release"].src > 0  # margin = release - peak: a higher release raises it


def test_table_edge_warnings_of_many_cases_are_one_line_with_their_range():
    edge = (
        "HeatstackWarning: material 'tyre-rubber', property 'specific_heat': temperature {} K is outside "
        "the table (the table covers 200 K to 500 K); clamping to the end value"
    )
    warnings = np.array([edge.format(500.486), edge.format(501.375), "", "another warning {x}"])
    table = make_table({"a": np.arange(4.0), "out": np.arange(4.0), "warnings": warnings}, parameters=("a",))
    text = study_report(table, output="out")
    lines = [line for line in text.splitlines() if "tyre-rubber" in line]
    assert lines == [f"- {edge.format('500.5 to 501.4')} (2 cases)"]
    assert "- another warning {x} (1 case)" in text
