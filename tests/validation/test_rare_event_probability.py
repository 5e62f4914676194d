"""Rare-event probabilities and the reduced model's gate against a study known in closed form.

The study: a lumped body heated by a braking energy E from the ambient temperature T_a,
losses neglected while it is heated, so its peak is

    T_peak = T_a + E / (m c)

(the energy balance of a lumped body, Incropera, DeWitt, Bergman, Lavine, Fundamentals of
Heat and Mass Transfer, 6th ed., sec. 5.3 with the loss terms dropped; from memory). With
E ~ N(mu_E, s_E) and T_a ~ N(mu_T, s_T) independent, T_peak is normal with mean
mu_T + mu_E/(m c) and standard deviation sqrt(s_T^2 + (s_E/(m c))^2), so a fuse plug at
threshold T_r releases (peak >= T_r) with probability exactly 1 - Phi((T_r - mean)/std),
the normal CDF. The threshold is set for 1e-2 and for 1e-4.

The estimator is the study's own: :func:`heatstack.studies.surrogate.build_reduced_model`
(trained and gated on the closed form standing in for full runs), then
:func:`heatstack.studies.reduced_study.estimate_rare_event` (importance sampling about
the design point found on the reduced model, full runs, here the closed form, near the
limit), and plain Monte Carlo as the check.

Coverage: a 95 % interval should contain the true probability in 95 % of repeated
trials; the count of trials that do is binomial, and the test asks that 0.95 lie inside
the 99.9 % Clopper-Pearson interval of that count (Clopper, C.J., Pearson, E.S., 1934,
The use of confidence or fiducial limits illustrated in the case of the binomial,
Biometrika 26, 404-413). The intervals checked: the central-limit interval of importance
sampling (Owen, Monte Carlo theory, methods and examples, 2013, ch. 9; from memory) and
Wilson's interval of plain Monte Carlo (Wilson, E.B., 1927, Probable inference, the law
of succession, and statistical inference, JASA 22, 209-212).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from heatstack.studies.analysis import binomial_intervals
from heatstack.studies.rare_events import find_design_point, importance_sampling, monte_carlo
from heatstack.studies.reduced_study import estimate_rare_event
from heatstack.studies.settings import RareEventSettings, ReducedModelSettings
from heatstack.studies.surrogate import build_reduced_model

HEAT_CAPACITY = 400e3  # m c of the body [J/K] (invented)
ENERGY = stats.norm(60e6, 6e6)  # braking energy [J] (invented scatter)
AMBIENT = stats.norm(298.15, 8.0)  # ambient temperature [K] (invented scatter)
MARGINALS = [ENERGY, AMBIENT]
PEAK_MEAN = 298.15 + 60e6 / HEAT_CAPACITY
PEAK_STD = float(np.hypot(8.0, 6e6 / HEAT_CAPACITY))


def threshold_for(probability: float) -> float:
    """The release temperature [K] the peak reaches with ``probability`` (normal quantile)."""
    return PEAK_MEAN + PEAK_STD * float(stats.norm.isf(probability))


def exact_probability(threshold: float) -> float:
    """P(T_peak >= threshold), from the normal CDF of the peak."""
    return float(stats.norm.sf((threshold - PEAK_MEAN) / PEAK_STD))


def lumped_runs(threshold: float, calls: list | None = None):
    """The closed form standing in for full runs: peak and plug margin of each row (E, T_a)."""

    def run_full(x: np.ndarray, role: str, rows=None) -> dict[str, np.ndarray]:
        if calls is not None:
            calls.append((role, len(x) if rows is None else len(rows)))
        peak = x[:, 1] + x[:, 0] / HEAT_CAPACITY
        if rows is not None:  # only those rows are "run"
            peak = np.where(np.isin(np.arange(len(x)), rows), peak, np.nan)
        return {"peak:body": peak, "plug_margin:plug": threshold - peak}

    return run_full


@pytest.mark.parametrize("probability", [1e-2, 1e-4])
def test_study_estimator_reproduces_the_exact_release_probability(probability):
    threshold = threshold_for(probability)
    assert exact_probability(threshold) == pytest.approx(probability, rel=1e-9)
    calls: list = []
    run_full = lumped_runs(threshold, calls)
    model_settings = ReducedModelSettings(training=12, held_back=8)
    model = build_reduced_model(run_full, MARGINALS, model_settings, seed=11)
    assert model.usable, model.note
    assert model.error_of("plug_margin:plug") < 1.0
    settings = RareEventSettings(samples=2000, seed=3)
    estimate = estimate_rare_event(model, MARGINALS, settings, run_full, model_settings)
    assert estimate.contains(probability), estimate.describe()
    assert estimate.coefficient_of_variation < 0.1  # 2000 samples reach 1e-4 to better than 10 %
    assert estimate.reliability_index == pytest.approx(stats.norm.isf(probability), abs=0.05)
    # full runs only near the limit or outside the checked box, not for every sample
    confirmations = sum(n for role, n in calls if role == "rare")
    assert 0 < confirmations < settings.samples
    if probability >= 1e-2:  # the check: plain Monte Carlo of the full runs themselves
        plain = monte_carlo(lambda x: run_full(x, "mc")["plug_margin:plug"], MARGINALS, 20000, seed=5)
        assert plain.contains(probability), plain.describe()
        assert estimate.interval[0] <= plain.interval[1] and plain.interval[0] <= estimate.interval[1]


def _coverage_within_binomial_noise(covered: int, trials: int, nominal: float) -> bool:
    _, (low, high) = binomial_intervals(covered, trials, 0.999)
    return low <= nominal <= high


def test_importance_sampling_interval_covers_at_its_nominal_rate():
    threshold = threshold_for(1e-4)

    def margin(x):
        return threshold - (x[:, 1] + x[:, 0] / HEAT_CAPACITY)

    u_star, _ = find_design_point(margin, MARGINALS, seed=1)
    trials = 300
    covered = sum(
        importance_sampling(margin, MARGINALS, u_star, 400, seed=1000 + k).contains(1e-4) for k in range(trials)
    )
    assert _coverage_within_binomial_noise(covered, trials, 0.95), covered


# Two plugs, each releasing when its own scatter pushes it past its threshold: the union of two
# independent limits in different directions of standard normal space. Exactly
# P(any) = 1 - (1 - Phi(-b))^2 (two independent events of probability Phi(-b) each; the
# product rule, from memory).
TWO_LIMITS = [stats.norm(0.0, 1.0), stats.norm(0.0, 1.0)]
TWO_B = 3.0
TWO_EXACT = float(1.0 - stats.norm.cdf(TWO_B) ** 2)


def two_plug_margins(x: np.ndarray) -> np.ndarray:
    """Each plug's margin [K]: 10 K per standard deviation, zero at b standard deviations."""
    return 10.0 * (TWO_B - x)


def test_importance_sampling_covers_a_union_of_two_limits_with_a_component_about_each():
    def either(x):
        return two_plug_margins(x).min(axis=1)

    nearest, _ = find_design_point(either, TWO_LIMITS, seed=1)
    points = np.array(
        [find_design_point(lambda x, k=k: two_plug_margins(x)[:, k], TWO_LIMITS, seed=1)[0] for k in (0, 1)]
    )
    assert np.allclose(np.sort(np.abs(points), axis=0), [[0.0, 0.0], [TWO_B, TWO_B]], atol=0.05)
    trials = 200
    both = [importance_sampling(either, TWO_LIMITS, points, 1000, seed=3000 + k) for k in range(trials)]
    covered = sum(e.contains(TWO_EXACT) for e in both)
    assert _coverage_within_binomial_noise(covered, trials, 0.95), covered
    assert both[0].design_points == 2
    # about the nearest design point alone, the other limit is left to the defensive share: the
    # estimator stays unbiased on average, but a typical run falls short (the rare defensive hit
    # in the other region weighs ten times more) and its interval misses the truth far too often
    one = [importance_sampling(either, TWO_LIMITS, nearest, 1000, seed=3000 + k) for k in range(trials)]
    assert np.median([e.estimate for e in one]) < 0.8 * TWO_EXACT
    assert sum(e.contains(TWO_EXACT) for e in one) < 0.8 * trials


def test_monte_carlo_wilson_interval_covers_at_its_nominal_rate():
    threshold = threshold_for(1e-2)

    def margin(x):
        return threshold - (x[:, 1] + x[:, 0] / HEAT_CAPACITY)

    trials = 300
    covered = sum(monte_carlo(margin, MARGINALS, 2000, seed=2000 + k).contains(1e-2) for k in range(trials))
    assert _coverage_within_binomial_noise(covered, trials, 0.95), covered


# ---------------------------------------------------------------------------- the gate

CAPACITY = stats.norm(HEAT_CAPACITY, 20e3)  # the body's m c scatters too [J/K] (invented): peak ~ 1/(m c)


def curved_runs(x: np.ndarray, role: str) -> dict[str, np.ndarray]:
    """Peak T_a + E/(m c) with m c varied: not a quadratic in (E, T_a, m c)."""
    peak = x[:, 1] + x[:, 0] / x[:, 2]
    return {"peak:body": peak, "plug_margin:plug": 560.0 - peak}


def test_gate_refuses_a_training_set_too_small_for_a_quadratic():
    model = build_reduced_model(curved_runs, [ENERGY, AMBIENT, CAPACITY], ReducedModelSettings(training=6), seed=3)
    assert not model.usable and model.decision == "full"
    assert "too few" in model.note and model.surface is None


def test_gate_refuses_a_deliberately_small_training_set_on_its_held_back_runs():
    settings = ReducedModelSettings(training=10, held_back=20, rounds=1)  # exactly a quadratic's 10 terms
    model = build_reduced_model(curved_runs, [ENERGY, AMBIENT, CAPACITY], settings, seed=3)
    assert not model.usable
    assert model.error_of("peak:body") > 1.0  # measured on the held-back runs, above the 1 K tolerance
    assert "refused" in model.note


def test_gate_accepts_a_sufficient_training_set_grown_where_the_error_is_largest():
    settings = ReducedModelSettings(training=40, held_back=20, rounds=4)
    model = build_reduced_model(curved_runs, [ENERGY, AMBIENT, CAPACITY], settings, seed=3)
    assert model.usable, model.note
    assert model.training > 40  # the worst held-back runs joined the training set
    assert model.error_of("peak:body") <= 1.0
    # the measured error is honest: fresh points of the box are within a few times it
    rng = np.random.default_rng(9)
    x = model.surface.low + rng.random((2000, 3)) * (model.surface.high - model.surface.low)
    truth = curved_runs(x, "check")["peak:body"]
    worst = np.max(np.abs(model.surface.predict(x)[:, model.surface.output_names.index("peak:body")] - truth))
    assert worst < 3.0 * 1.0


def test_a_failed_full_run_among_the_samples_is_said_not_hidden():
    from heatstack.errors import HeatstackWarning

    threshold = threshold_for(1e-2)

    def margin(x):
        out = threshold - (x[:, 1] + x[:, 0] / HEAT_CAPACITY)
        out[0] = np.nan  # one full run failed
        return out

    with pytest.warns(HeatstackWarning, match="1 of 500 samples have no margin"):
        plain = monte_carlo(margin, MARGINALS, 500, seed=1)
    assert plain.samples == 499


def test_no_release_decision_rests_on_the_model_error():
    # a deliberately coarse model (about 2 K off, accepted under a loose 100 K tolerance): every sample whose
    # event the model could get wrong runs in full, so each sample's event is the closed form's own
    def run_full(x, role, rows=None):
        out = curved_runs(x, role)
        if rows is not None:
            keep = np.isin(np.arange(len(x)), rows)
            out = {k: np.where(keep, v, np.nan) for k, v in out.items()}
        return out

    marginals = [ENERGY, AMBIENT, CAPACITY]
    model_settings = ReducedModelSettings(training=20, held_back=20, rounds=1, tolerance_peak="100 K")
    model = build_reduced_model(run_full, marginals, model_settings, seed=3)
    assert model.usable and model.error_of("plug_margin:plug") > 1.0
    estimate = estimate_rare_event(model, marginals, RareEventSettings(samples=2000, seed=5), run_full, model_settings)
    truth = curved_runs(estimate.rows, "truth")["plug_margin:plug"]
    predicted = model.surface.predict(estimate.rows)[:, model.surface.output_names.index("plug_margin:plug")]
    assert np.any((predicted <= 0) != (truth <= 0))  # the model alone would have decided some samples wrongly
    assert np.array_equal(estimate.margins <= 0, truth <= 0)
