"""Calibration to measured traces: synthetic recovery, interval coverage, identifiability, whiteness, bad input.

The model is a tiny invented brake (tests/data/calibration_tiny.toml: a rotor-stator pair of
lumped rings, a carrier with the sensor, and a guard ring away from the heat). Synthetic
"measured" traces come from heatstack itself on a finer grid and a tighter step control
than the fit uses (no inverse crime), plus Gaussian noise.
"""

from __future__ import annotations

import html
import math
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest
from calibration_case import (  # tests/ is on the path (conftest)
    BASE,
    ENERGIES,
    GUARD,
    NOISE,
    SHORT_TIMES,
    SMALL_NOISE,
    TIMES,
    TRUTH,
    clean_fine,
    clean_short,
    coverage_trials,
    make_campaign,
)
from make_calibration_example import write_trace  # validation/ is on the path (calibration_case)

from heatstack.case import parse_case
from heatstack.cli import main
from heatstack.errors import InputError
from heatstack.questions.calibrate import calibrate, write_calibration_outputs
from heatstack.questions.calibrated_case import read_calibration_block, toml_text, values_by_name
from heatstack.questions.calibration import CalibrationFit, fit_calibration
from heatstack.questions.calibration_file import load_calibration
from heatstack.questions.calibration_records import FitParameter
from heatstack.questions.calibration_report import (
    CalibrationAnswers,
    answer_table,
    runs_test,
    trace_table,
    uncertainty_statement,
)
from heatstack.questions.calibration_runs import Evaluator
from heatstack.questions.identifiability import DETERMINED_RELATIVE_SD, identifiability
from heatstack.report import CAUTION
from heatstack.studies.executors import SerialExecutor


@pytest.fixture(scope="module")
def recovered(tmp_path_factory):
    folder = tmp_path_factory.mktemp("recovery")
    path = make_campaign(folder, clean_fine(), seed=7, extra=GUARD)
    calibration = load_calibration(path)
    return calibration, calibrate(calibration, SerialExecutor()), folder


def test_identifiable_parameters_recovered_within_interval_and_5_percent(recovered):
    # Truth is known by construction (synthetic traces); the 95 % linearised interval:
    # Seber & Wild, Nonlinear Regression, Wiley 1989, sec. 5.1.
    _, run, _ = recovered
    fit = run.fit
    for k, name in enumerate(("contact", "tau")):
        assert fit.lower_95[k] <= TRUTH[name] <= fit.upper_95[k], (name, fit.values[k], fit.lower_95[k])
        assert abs(fit.values[k] / TRUTH[name] - 1) < 0.05, (name, fit.values[k])
    assert fit.converged


def test_convection_on_a_surface_at_ambient_reported_not_determined(recovered):
    _, run, _ = recovered
    assert run.identifiability.determined[:2] == (True, True)
    assert run.identifiability.determined[2] is False
    assert "do not determine guard convection length" in run.identifiability.statement
    assert not (math.isfinite(run.fit.lower_95[2]) and run.fit.upper_95[2] / run.fit.lower_95[2] < 4)


def test_residuals_white_within_noise(recovered):
    # Wald & Wolfowitz (1940) runs test of residual signs, two-sided at 1 %: no systematic misfit
    _, run, _ = recovered
    for residual in run.fit.residuals:
        assert runs_test(residual).p_value > 0.01
        assert np.sqrt(np.mean(residual**2)) < 1.5 * NOISE


def test_outputs_written_case_parses_with_fitted_values(recovered, tmp_path):
    calibration, run, _ = recovered
    written = write_calibration_outputs(run, tmp_path / "out")
    assert {p.name for p in written} == {
        "calibrated-case.toml", "calibration-report.txt", "calibration-report.md", "calibration-traces.png",
        "calibration-run-1.png", "calibration-run-2.png", "report.html",
    }  # fmt: skip
    text = (tmp_path / "out" / "calibrated-case.toml").read_text()
    case = parse_case(text, "calibrated", tmp_path)
    sensor = next(p for p in case.assembly.probes if p.name == "sensor")
    assert sensor.time_constant == pytest.approx(run.fit.values[1])
    assert values_by_name(read_calibration_block(text))["contact"] == pytest.approx(run.fit.values[0])
    report = (tmp_path / "out" / "calibration-report.md").read_text()
    assert "not certified data" in report and "| contact |" in report and "peak:sensor" in report


def test_html_report_is_self_contained_with_the_key_numbers(recovered, tmp_path):
    calibration, run, _ = recovered
    write_calibration_outputs(run, tmp_path / "out")
    page = (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    assert html.escape(CAUTION, quote=True) in page and "not certified" in page
    # self-contained: no link or source outside the page, every image a data URI
    assert not re.search(r"(?:src|href)=\"(?!data:|#)", page), "a link out of the page"
    assert "http://" not in page and "https://" not in page
    assert page.count('src="data:image/png;base64,') == len(calibration.runs)
    for k, parameter in enumerate(run.fit.parameters):
        assert f"{run.fit.values[k]:.4g}" in page, parameter.name  # the fitted value, as in the table
        assert run.identifiability.verdicts[k] in page
    assert f"{run.fit.lower_95[0]:.4g} to {run.fit.upper_95[0]:.4g}" in page
    for section in ("runs", "traces", "parameters", "identifiability", "answers", "calibration-file", "case"):
        assert f'<section id="{section}">' in page, section
    assert "Correlation matrix" in page and "peak:sensor" in page
    for name, at_fit, interval, _ in answer_table(run.answers)[1]:
        assert f'<td class="text">{name}</td><td class="number">{at_fit}</td>' in page
        assert interval in page


def test_answer_table_says_a_cooling_time_no_draw_reaches():
    answers = CalibrationAnswers(
        ("cooling_time", "peak:sensor"),
        np.array([np.inf, 400.0]),
        np.array([np.inf, 399.0]),
        np.array([np.inf, 401.5]),
        16,
    )
    rows = answer_table(answers)[1]
    assert rows[0][1:3] == ["not reached in the run", "not reached in any draw"]
    assert rows[1][2] == "125.9 to 128.4"


def test_toml_writer_round_trips_the_base_case():
    data = tomllib.loads(BASE)
    assert tomllib.loads(toml_text(data)) == data


def test_interval_coverage_near_nominal_in_repeated_trials(tmp_path):
    # 95 % linearised intervals and covariance (Seber & Wild, Nonlinear Regression, Wiley 1989,
    # sec. 5.1) on data from the fit's own model (the interval's coverage, not the model error, is
    # tested). Eight noise seeds; the 100-seed version is validation/calibration_coverage.py.
    # (1) Each parameter's covering count is Binomial(8, 0.95) if the intervals are right
    #     (Johnson, Kemp & Kotz, Univariate Discrete Distributions, 3rd ed., Wiley 2005, ch. 3):
    #     P(X <= 5) = 0.6 %, so at least 6 must cover.
    # (2) With so few trials the count alone has little power, so also: each trial's
    #     (u - u_true)^T C^-1 (u - u_true) is chi-square(2) if C is right, and the sum over the
    #     trials chi-square(16) (Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions,
    #     vol. 1, 2nd ed., Wiley 1994, ch. 18: a sum of independent chi-squares); two-sided 1 %:
    #     5.14 to 34.27 (scipy.stats.chi2.ppf). Intervals half as wide as they should be give a sum
    #     near 64 and fail; intervals twice too wide, near 4, fail too.
    from scipy.stats import binom, chi2

    trials = 8
    result = coverage_trials(tmp_path, trials)
    assert binom.cdf(5, trials, 0.95) < 0.01 <= binom.cdf(6, trials, 0.95)  # the bound quoted above
    assert np.all(result.covered >= 6), result.covered
    low, high = chi2.ppf([0.005, 0.995], 2 * trials)
    total = float(np.sum(result.mahalanobis))
    assert low < total < high, (total, low, high, result.mahalanobis)


def test_model_error_term_keeps_coverage_when_the_model_error_outweighs_the_noise(tmp_path):
    # Readings from a finer model (5 mm cells, Euler at 0.25 K a step) than the fit's (10 mm, 4 K),
    # whose own error (about 0.55 K RMS) is large beside the noise (0.3 K). The 95 % intervals
    # (Seber & Wild 1989, sec. 5.1) with the estimated model-error term (Richardson extrapolation,
    # Roache 1998 ch. 5; an uncorrected systematic effect, JCGM 100:2008 F.2.4.5) must still cover
    # the truth as Binomial(6, 0.95) allows at 1 % (Johnson, Kemp & Kotz 2005, ch. 3):
    # P(X <= 3) = 0.2 %, so at least 4 of 6. The noise covariance alone must fail that for the
    # contact conductance (its interval too narrow for the bias the model error gives it).
    from scipy.stats import binom, chi2

    trials = 6
    result = coverage_trials(tmp_path, trials, model_error=True)
    assert binom.cdf(3, trials, 0.95) < 0.01 <= binom.cdf(4, trials, 0.95)  # the bound quoted above
    assert np.all(result.covered >= 4), result.covered
    assert result.covered_noise_only[0] < 4, result.covered_noise_only
    # not too narrow: the sum of Mahalanobis distances no larger than chi-square(12) allows at 1 %
    # (the bound on the model error is taken, so the intervals may be wide: no lower test)
    assert float(np.sum(result.mahalanobis)) < chi2.ppf(0.99, 2 * trials), result.mahalanobis


@pytest.fixture(scope="module")
def model_error_fit(tmp_path_factory):
    folder = tmp_path_factory.mktemp("model-error")
    path = make_campaign(folder, clean_short(fine=True), 3, fit='max_evaluations = 12\nmodel_error = "estimate"',
                         short=True, noise=SMALL_NOISE)  # fmt: skip
    calibration = load_calibration(path)
    fit = fit_calibration(calibration, SerialExecutor(), start=[TRUTH["contact"], TRUTH["tau"]])
    return calibration, fit


def test_estimated_model_error_bounds_the_fit_models_own_error(model_error_fit):
    # Richardson (1911), Roache 1998 ch. 5: for an error falling R >= 2 times per refinement, 2 x the
    # difference to the refined model lies between the coarse model's error and twice it. The
    # coarse error here: the fit model's readings at the truth against a much finer model's.
    _, fit = model_error_fit
    fine, coarse = clean_short(fine=True)[0], clean_short()[0]
    own = np.array([np.sqrt(np.mean((c - f) ** 2)) for c, f in zip(coarse, fine, strict=True)])
    assert fit.model_error is not None
    assert np.all(fit.model_error.trace_rms >= 0.9 * own), (fit.model_error.trace_rms, own)
    assert np.all(fit.model_error.trace_rms <= 2.1 * own), (fit.model_error.trace_rms, own)
    assert "refined model: cells 5 x 5 mm, backward Euler, target change 1 K" in fit.model_error.description
    # the term is in the covariance and widens the intervals
    noise_only = fit.covariance - fit.model_error.covariance()
    assert np.all(np.diag(fit.covariance) > np.diag(noise_only))


def test_report_states_the_uncertainty_it_used(model_error_fit, recovered):
    _, fit = model_error_fit
    statement = " ".join(uncertainty_statement(fit))
    assert "measurement uncertainty and stated model uncertainty in quadrature" in statement
    assert "Model error: estimated by re-running every test run once" in statement
    assert "added to their covariance as a systematic term" in statement
    _, run, _ = recovered
    assert "Model error: not estimated" in " ".join(uncertainty_statement(run.fit))
    header, rows = trace_table(run.calibration, run.fit)
    assert rows[0][header.index("sigma used K")] == f"{NOISE:.3g}"


def test_stated_model_uncertainty_adds_in_quadrature(campaign):
    # sigma = sqrt(u_meas^2 + u_model^2): independent components (JCGM 100:2008, eq. 10)
    _edit(campaign, 'probe = "sensor"\nuncertainty = "2.0 K"',
          'probe = "sensor"\nuncertainty = "2.0 K"\nmodel_uncertainty = "1.5 K"')  # fmt: skip
    calibration = load_calibration(campaign)
    first, second = calibration.runs[0].traces
    assert first.model_uncertainty == 1.5 and first.sigma == pytest.approx(2.5)
    assert second.model_uncertainty == 0.0 and second.sigma == 2.0
    sigmas = Evaluator(calibration, SerialExecutor()).sigmas
    assert sigmas[: first.times.size] == pytest.approx(2.5)


@pytest.mark.parametrize(
    ("old", "new", "expected"),
    [
        ('uncertainty = "2.0 K"', 'uncertainty = "2.0 K"\nmodel_uncertainty = "-1 K"',
         r"runs\[0\]\.traces\[0\]\.model_uncertainty: must be >= 0"),
        ('uncertainty = "2.0 K"', 'uncertainty = "2.0 K"\nmodel_uncertainty = "1 s"', r"model_uncertainty"),
        ('executor = "serial"', 'executor = "serial"\nmodel_error = "guess"',
         r"fit\.model_error: expected one of none, estimate, got 'guess'"),
    ],
    ids=["negative", "wrong unit", "unknown mode"],
)  # fmt: skip
def test_cli_bad_model_uncertainty_exits_2_naming_the_key(campaign, capsys, old, new, expected):
    _edit(campaign, old, new)
    out = campaign.parent / "out"
    assert main(["calibrate", str(campaign), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert re.search(expected, err) and "Traceback" not in err, err
    assert not out.exists()


# ---------------------------------------------------------------------------- bad input


@pytest.fixture()
def campaign(tmp_path):
    clean = [[np.full(TIMES.size, 300.0), np.full(TIMES.size, 300.0)] for _ in ENERGIES]
    return make_campaign(tmp_path, clean, seed=1)


def _edit(path: Path, old: str, new: str) -> Path:
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))
    return path


def test_trace_outside_the_run_is_an_error(campaign):
    write_trace(campaign.parent / "s1_sensor.csv", TIMES + 100.0, np.full(TIMES.size, 300.0), "late")
    with pytest.raises(InputError, match=r"runs\[0\].traces\[0\].file: .*outside run 'stop 1'"):
        load_calibration(campaign)


def test_probe_outside_every_part_is_an_error(campaign):
    _edit(campaign, "[[runs.traces]]", '[[runs.probes]]\nname = "tc far"\nr = "500 mm"\nz = "5 mm"\n[[runs.traces]]')
    with pytest.raises(InputError, match=r"runs\[0\].*tc far"):
        load_calibration(campaign)


def test_unknown_parameter_path_suggests_the_closest(campaign):
    _edit(campaign, "assembly.probes[0].time_constant", "assembly.probes[0].time_constnt")
    with pytest.raises(InputError, match=r"did you mean 'assembly.probes\[0\].time_constant'"):
        load_calibration(campaign)


def test_bounds_excluding_the_start_is_an_error(campaign):
    _edit(campaign, 'start = "25 s"', 'start = "500 s"')
    with pytest.raises(InputError, match=r"parameters\[1\].start: .*outside the bounds"):
        load_calibration(campaign)


def test_trace_with_too_few_points_is_an_error(campaign):
    write_trace(campaign.parent / "s2_tc.csv", TIMES[:3], np.full(3, 300.0), "short")
    with pytest.raises(InputError, match=r"runs\[1\].traces\[1\].file: s2_tc.csv has 3 points"):
        load_calibration(campaign)


def test_cli_unreachable_dask_address_exits_2_and_writes_nothing(campaign, capsys):
    _edit(campaign, 'executor = "serial"', 'executor = "tcp://127.0.0.1:9"\ntimeout = "1 s"')
    out = campaign.parent / "out"
    assert main(["calibrate", str(campaign), "--out", str(out), "--quiet"]) == 2
    assert "cannot be reached" in capsys.readouterr().err
    assert not out.exists()


def test_cli_bad_path_exits_2_and_writes_nothing(campaign, capsys):
    _edit(campaign, "assembly.probes[0].time_constant", "assembly.probes[7].time_constant")
    out = campaign.parent / "out"
    assert main(["calibrate", str(campaign), "--out", str(out)]) == 2
    assert "does not exist in the base case" in capsys.readouterr().err
    assert not out.exists()


def _bad_csv_column(campaign: Path) -> None:
    (campaign.parent / "s1_tc.csv").write_text("time_s,temperature_degC\n0,20\n6,twenty\n12,21\n", encoding="utf-8")


@pytest.mark.parametrize(
    ("edit", "expected"),
    [
        (
            lambda c: (c.parent / "s2_sensor.csv").unlink(),
            r"runs\[1\]\.traces\[0\]\.file: .*s2_sensor\.csv.* does not exist",
        ),
        (_bad_csv_column, r"runs\[0\]\.traces\[1\]\.file: .*s1_tc\.csv, line 3: cannot read '6,twenty' as numbers"),
        (
            lambda c: _edit(c, 'probe = "tc rotor"', 'probe = "tc rotr"'),
            r"runs\[0\]\.traces\[1\]\.probe: no probe named 'tc rotr' .*did you mean 'tc rotor'",
        ),
        (
            lambda c: _edit(c, 'lower = "1 s"\nupper = "200 s"', 'lower = "200 s"\nupper = "1 s"'),
            r"parameters\[1\]: lower bound '200 s' is not below upper bound '1 s'",
        ),
        (
            lambda c: _edit(
                c, 'upper = "200 s"\n', 'upper = "200 s"\nprior = {kind = "normal", mean = "15 K", sd = "5 s"}\n'
            ),
            r"parameters\[1\]\.prior\.mean",
        ),
    ],
    ids=["missing csv", "bad column", "probe not found", "bounds inverted", "prior in wrong units"],
)
def test_cli_bad_input_exits_2_naming_the_key_and_writes_nothing(campaign, capsys, edit, expected):
    edit(campaign)
    out = campaign.parent / "out"
    assert main(["calibrate", str(campaign), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert re.search(r"heatstack: error: campaign\.toml: " + expected, err), err
    assert "Traceback" not in err
    assert not out.exists()


def test_cli_calibrate_prints_the_caution_and_writes_every_report(recovered, tmp_path, capsys, monkeypatch):
    # the fit itself is the fixture's; the verb's own output is checked here
    import heatstack.questions.calibrate as calibrate_module

    calibration, run, folder = recovered
    monkeypatch.setattr(calibrate_module, "calibrate", lambda c: run)
    out = tmp_path / "cli-out"
    code = main(["calibrate", str(folder / "campaign.toml"), "--out", str(out), "--quiet"])
    printed = capsys.readouterr().out
    assert code == 0
    assert printed.startswith(CAUTION)
    assert "wrote: " + str(out / "report.html") in printed
    assert (out / "report.html").is_file() and (out / "calibration-report.txt").is_file()
    assert (
        CAUTION in (out / "calibration-report.txt").read_text()
        and CAUTION in (out / "calibrated-case.toml").read_text()
    )


def test_energy_interval_grows_when_sensor_lag_and_contacts_are_uncertain(tmp_path):
    # First-order propagation of independent inputs: JCGM 100:2008 (GUM), sec. 5.1.2.
    from heatstack.questions.honest_energy import energy_with_input_uncertainty

    (tmp_path / "tiny.toml").write_text(BASE.replace('duration = "5 min"', 'duration = "40 s"'), encoding="utf-8")
    case = parse_case((tmp_path / "tiny.toml").read_text(), "tiny", tmp_path)
    clean = clean_short()[0][0]
    readings = clean + np.random.default_rng(5).normal(0.0, NOISE, clean.size)
    honest = energy_with_input_uncertainty(case, SHORT_TIMES, readings, "sensor", 5.0, 0.3)
    assert [c.name for c in honest.contributions] == ["sensor time constant", "contact conductances"]
    assert all(c.standard_deviation > 0 for c in honest.contributions)
    assert honest.standard_deviation > honest.estimate.standard_error


def test_profile_likelihood_interval_close_to_the_linearised_one(tmp_path):
    # Nearly linear problem: the likelihood-ratio interval (chi-square rise 3.84) and the
    # linearised one agree (Seber & Wild 1989, sec. 5.9 against sec. 5.1).
    from heatstack.questions.identifiability import profile_parameter

    path = make_campaign(tmp_path, clean_short(), seed=11, fit="max_evaluations = 12", short=True)
    calibration = load_calibration(path)
    executor = SerialExecutor()
    fit = fit_calibration(calibration, executor, start=[TRUTH["contact"], TRUTH["tau"]])
    profile = profile_parameter(calibration, fit, "tau", executor, points=5)
    assert profile.lower_95 < fit.values[1] < profile.upper_95
    linear = fit.upper_95[1] - fit.lower_95[1]
    assert profile.upper_95 - profile.lower_95 == pytest.approx(linear, rel=0.3)


# ---------------------------------------------------------------------------- what "determined" means


def _fit_with_jacobian(jacobian: np.ndarray, values: list[float]) -> CalibrationFit:
    """A fit record with a given weighted Jacobian in ln(value) (no runs): for the identifiability verdicts."""
    parameters = tuple(
        FitParameter(f"p{k}", (("assembly", f"k{k}"),), "heat_transfer_coefficient", v, 1.0, 1e6, True)
        for k, v in enumerate(values)
    )
    covariance = np.linalg.pinv(jacobian.T @ jacobian)
    sd = np.sqrt(np.diag(covariance))
    u = np.log(values)
    return CalibrationFit(
        parameters, np.array(values), np.exp(u - 1.96 * sd), np.exp(u + 1.96 * sd), u, covariance, jacobian,
        (), (), (), 1.0, 1, 1, True, "converged",
    )  # fmt: skip


def _orthonormal(rows: int, columns: int) -> np.ndarray:
    q, _ = np.linalg.qr(np.random.default_rng(3).normal(size=(rows, columns)))
    return q


def test_a_parameter_off_by_20_percent_with_a_wide_interval_is_not_called_determined():
    # truth 1000; the fit says 800 with a 15 % relative standard deviation (95 % interval ~590 to 1080):
    # it covers the truth, but the traces do not pin it down to the 5 % a determined parameter needs
    fit = _fit_with_jacobian(_orthonormal(60, 2) / np.array([0.15, 0.02]), [800.0, 12.0])
    ident = identifiability(fit)
    assert ident.relative_sd == pytest.approx([0.15, 0.02], rel=1e-6)
    assert ident.determined == (False, True)
    assert ident.verdicts == ("poorly determined", "determined")
    assert "p0 is poorly determined (relative standard deviation 15%" in ident.statement
    assert "every fitted parameter" not in ident.statement
    assert DETERMINED_RELATIVE_SD == 0.05


def test_a_parameter_with_a_tight_interval_in_a_weak_combination_is_not_determined():
    # two nearly collinear columns: each alone looks sharp, their difference the traces barely see
    q = _orthonormal(60, 3)
    jacobian = np.column_stack([q[:, 0] * 1e4, q[:, 0] * 1e4 + q[:, 1] * 20.0, q[:, 2] * 1e3])
    ident = identifiability(_fit_with_jacobian(jacobian, [1.0e3, 2.0e3, 5.0]))
    assert ident.weak_share[0] > 0.1 and ident.weak_share[2] < 1e-9
    assert ident.determined == (False, False, True)
    assert "The combination" in ident.statement and "poorly determined (singular value" in ident.statement


def test_a_parameter_the_traces_do_not_see_is_not_determined_at_all():
    q = _orthonormal(60, 2)
    jacobian = np.column_stack([q[:, 0] / 0.01, np.zeros(60)])
    ident = identifiability(_fit_with_jacobian(jacobian, [1.0e3, 2.0e3]))
    assert ident.verdicts == ("determined", "not determined")
    assert "do not determine p1 at all" in ident.statement
