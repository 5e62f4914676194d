"""Calibration to measured traces: synthetic recovery, interval coverage, identifiability, whiteness, bad input.

The model is a tiny invented brake (tests/data/calibration_tiny.toml: a rotor-stator pair of
lumped rings, a carrier with the sensor, and a guard ring away from the heat). Synthetic
"measured" traces come from heatstack itself on a finer grid and a tighter step control
than the fit uses (no inverse crime), plus Gaussian noise.
"""

from __future__ import annotations

import math
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest

from heatstack.case import parse_case
from heatstack.cli import main
from heatstack.errors import InputError
from heatstack.questions.calibrate import calibrate, write_calibration_outputs
from heatstack.questions.calibrated_case import read_calibration_block, toml_text, values_by_name
from heatstack.questions.calibration import fit_calibration
from heatstack.questions.calibration_file import load_calibration
from heatstack.questions.calibration_report import runs_test
from heatstack.studies.executors import SerialExecutor

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "validation"))
from make_calibration_example import synthetic_readings, write_trace  # noqa: E402

BASE = (Path(__file__).resolve().parents[1] / "data" / "calibration_tiny.toml").read_text(encoding="utf-8")
TRUTH = {"contact": 1500.0, "tau": 15.0}
TRUTH_PATHS = {
    "assembly.contacts[1].clamped": 1500.0,
    "assembly.contacts[1].released": 1500.0,
    "assembly.contacts[2].clamped": 1500.0,
    "assembly.contacts[2].released": 1500.0,
    "assembly.probes[0].time_constant": 15.0,
}
TIMES = np.arange(0.0, 300.0 + 1e-9, 6.0)
ENERGIES = (0.4e6, 0.6e6)
#: The coverage trials' cheaper run: one stop, one minute of cooling, coarse steps.
SHORT_TIMES = np.arange(0.0, 50.0 + 1e-9, 1.0)
SHORT_OVERRIDES = '"duty.phases[1].duration" = "40 s"\n"solver.target_change" = "4 K"'

NOISE = 2.0  # K

PARAMETERS = """
[[parameters]]
name = "contact"
path = ["assembly.contacts[1].clamped", "assembly.contacts[1].released",
        "assembly.contacts[2].clamped", "assembly.contacts[2].released"]
start = "800 W/(m^2*K)"
lower = "50 W/(m^2*K)"
upper = "50000 W/(m^2*K)"

[[parameters]]
name = "tau"
path = "assembly.probes[0].time_constant"
start = "25 s"
lower = "1 s"
upper = "200 s"
"""
GUARD = """
[[parameters]]
name = "guard convection length"
path = 'assembly.length_scales."guard:outer"'
start = "0.3 m"
lower = "0.03 m"
upper = "3 m"
"""


def _run_block(k: int, energy: float, sensor_file: str, tc_file: str, overrides: str) -> str:
    return f"""
[[runs]]
name = "stop {k}"
[runs.overrides]
"duty.phases[0].events[0].energy" = {energy}
{overrides}
[[runs.traces]]
file = "{sensor_file}"
probe = "sensor"
uncertainty = "{NOISE} K"
[[runs.traces]]
file = "{tc_file}"
probe = "tc rotor"
uncertainty = "{NOISE} K"
"""


def _campaign(
    folder: Path, clean: list[list[np.ndarray]], seed: int, extra: str = "", fit: str = "", short: bool = False
) -> Path:
    rng = np.random.default_rng(seed)
    (folder / "tiny.toml").write_text(BASE, encoding="utf-8")
    runs = ""
    times, overrides = (SHORT_TIMES, SHORT_OVERRIDES) if short else (TIMES, "")
    for k, (energy, readings) in enumerate(zip(ENERGIES, clean, strict=False), start=1):
        for probe, values in zip(("sensor", "tc"), readings, strict=True):
            write_trace(folder / f"s{k}_{probe}.csv", times, values + rng.normal(0, NOISE, values.size), "synthetic")
        runs += _run_block(k, energy, f"s{k}_sensor.csv", f"s{k}_tc.csv", overrides)
    text = f'[calibration]\ntitle = "synthetic"\nbase_case = "tiny.toml"\n[fit]\nexecutor = "serial"\n' \
           f'prediction_samples = 4\n{fit}\n{PARAMETERS}{extra}{runs}'  # fmt: skip
    path = folder / "campaign.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _clean_fine() -> list[list[np.ndarray]]:
    """Noise-free readings at the truth, on a finer grid and with tighter steps than the fit's."""
    return [
        synthetic_readings(
            BASE,
            TRUTH_PATHS,
            {"duty.phases[0].events[0].energy": e},
            ("sensor", "tc rotor"),
            TIMES,
            cell_size=0.005,
            target_change=0.5,
        )  # fmt: skip
        for e in ENERGIES
    ]


def _clean_short() -> list[list[np.ndarray]]:
    """Noise-free readings of the coverage trials' single short run, from the fit's own model."""
    overrides = {"duty.phases[0].events[0].energy": ENERGIES[0], "duty.phases[1].duration": 40.0}
    return [synthetic_readings(BASE, TRUTH_PATHS, overrides, ("sensor", "tc rotor"), SHORT_TIMES,
                               cell_size=0.01, target_change=4.0)]  # fmt: skip


@pytest.fixture(scope="module")
def recovered(tmp_path_factory):
    folder = tmp_path_factory.mktemp("recovery")
    path = _campaign(folder, _clean_fine(), seed=7, extra=GUARD)
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
        "calibrated-case.toml", "calibration-report.txt", "calibration-report.md", "calibration-traces.png"
    }  # fmt: skip
    text = (tmp_path / "out" / "calibrated-case.toml").read_text()
    case = parse_case(text, "calibrated", tmp_path)
    sensor = next(p for p in case.assembly.probes if p.name == "sensor")
    assert sensor.time_constant == pytest.approx(run.fit.values[1])
    assert values_by_name(read_calibration_block(text))["contact"] == pytest.approx(run.fit.values[0])
    report = (tmp_path / "out" / "calibration-report.md").read_text()
    assert "not certified data" in report and "| contact |" in report and "peak:sensor" in report


def test_toml_writer_round_trips_the_base_case():
    data = tomllib.loads(BASE)
    assert tomllib.loads(toml_text(data)) == data


def test_interval_coverage_near_nominal_in_repeated_trials(tmp_path):
    # 95 % linearised intervals (Seber & Wild 1989, sec. 5.1) on data from the fit's own model
    # (the interval's coverage, not the model error, is tested); 20 seeds, each parameter: the
    # count covered must be within binomial noise of 0.95 * 20 = 19 (P(X <= 16) ~ 1.6 % at p = 0.95).
    clean = _clean_short()
    trials, covered = 20, np.zeros(2)
    for seed in range(trials):
        path = _campaign(tmp_path, clean, seed=100 + seed, fit="max_evaluations = 12", short=True)
        calibration = load_calibration(path)
        fit = fit_calibration(calibration, SerialExecutor(), start=[TRUTH["contact"], TRUTH["tau"]])
        for k, name in enumerate(("contact", "tau")):
            covered[k] += fit.lower_95[k] <= TRUTH[name] <= fit.upper_95[k]
    assert np.all(covered >= 17), covered


# ---------------------------------------------------------------------------- bad input


@pytest.fixture()
def campaign(tmp_path):
    clean = [[np.full(TIMES.size, 300.0), np.full(TIMES.size, 300.0)] for _ in ENERGIES]
    return _campaign(tmp_path, clean, seed=1)


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


def test_energy_interval_grows_when_sensor_lag_and_contacts_are_uncertain(tmp_path):
    # First-order propagation of independent inputs: JCGM 100:2008 (GUM), sec. 5.1.2.
    from heatstack.questions.honest_energy import energy_with_input_uncertainty

    (tmp_path / "tiny.toml").write_text(BASE.replace('duration = "5 min"', 'duration = "40 s"'), encoding="utf-8")
    case = parse_case((tmp_path / "tiny.toml").read_text(), "tiny", tmp_path)
    clean = _clean_short()[0][0]
    readings = clean + np.random.default_rng(5).normal(0.0, NOISE, clean.size)
    honest = energy_with_input_uncertainty(case, SHORT_TIMES, readings, "sensor", 5.0, 0.3)
    assert [c.name for c in honest.contributions] == ["sensor time constant", "contact conductances"]
    assert all(c.standard_deviation > 0 for c in honest.contributions)
    assert honest.standard_deviation > honest.estimate.standard_error


def test_profile_likelihood_interval_close_to_the_linearised_one(tmp_path):
    # Nearly linear problem: the likelihood-ratio interval (chi-square rise 3.84) and the
    # linearised one agree (Seber & Wild 1989, sec. 5.9 against sec. 5.1).
    from heatstack.questions.identifiability import profile_parameter

    path = _campaign(tmp_path, _clean_short(), seed=11, fit="max_evaluations = 12", short=True)
    calibration = load_calibration(path)
    executor = SerialExecutor()
    fit = fit_calibration(calibration, executor, start=[TRUTH["contact"], TRUTH["tau"]])
    profile = profile_parameter(calibration, fit, "tau", executor, points=5)
    assert profile.lower_95 < fit.values[1] < profile.upper_95
    linear = fit.upper_95[1] - fit.lower_95[1]
    assert profile.upper_95 - profile.lower_95 == pytest.approx(linear, rel=0.3)
