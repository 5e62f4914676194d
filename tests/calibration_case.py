"""The tiny invented brake of the calibration tests and its synthetic campaigns (tests and validation/).

The model is tests/data/calibration_tiny.toml: a rotor-stator pair of lumped rings, a carrier
with the sensor, and a guard ring away from the heat (all invented). Synthetic "measured"
traces come from heatstack itself, plus Gaussian noise.
"""

from __future__ import annotations

import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from heatstack.questions.calibration import fit_calibration, interval_95
from heatstack.questions.calibration_file import load_calibration
from heatstack.studies.executors import SerialExecutor

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "validation"))
from make_calibration_example import synthetic_readings, write_trace  # noqa: E402

BASE = (Path(__file__).resolve().parent / "data" / "calibration_tiny.toml").read_text(encoding="utf-8")
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


def run_block(k: int, energy: float, sensor_file: str, tc_file: str, overrides: str, noise: float = NOISE) -> str:
    return f"""
[[runs]]
name = "stop {k}"
[runs.overrides]
"duty.phases[0].events[0].energy" = {energy}
{overrides}
[[runs.traces]]
file = "{sensor_file}"
probe = "sensor"
uncertainty = "{noise} K"
[[runs.traces]]
file = "{tc_file}"
probe = "tc rotor"
uncertainty = "{noise} K"
"""


def make_campaign(
    folder: Path,
    clean: list[list[np.ndarray]],
    seed: int,
    extra: str = "",
    fit: str = "",
    short: bool = False,
    noise: float = NOISE,
) -> Path:
    rng = np.random.default_rng(seed)
    (folder / "tiny.toml").write_text(BASE, encoding="utf-8")
    runs = ""
    times, overrides = (SHORT_TIMES, SHORT_OVERRIDES) if short else (TIMES, "")
    for k, (energy, readings) in enumerate(zip(ENERGIES, clean, strict=False), start=1):
        for probe, values in zip(("sensor", "tc"), readings, strict=True):
            write_trace(folder / f"s{k}_{probe}.csv", times, values + rng.normal(0, noise, values.size), "synthetic")
        runs += run_block(k, energy, f"s{k}_sensor.csv", f"s{k}_tc.csv", overrides, noise)
    text = f'[calibration]\ntitle = "synthetic"\nbase_case = "tiny.toml"\n[fit]\nexecutor = "serial"\n' \
           f'prediction_samples = 4\n{fit}\n{PARAMETERS}{extra}{runs}'  # fmt: skip
    path = folder / "campaign.toml"
    path.write_text(text, encoding="utf-8")
    return path


def clean_fine() -> list[list[np.ndarray]]:
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


def clean_short(fine: bool = False) -> list[list[np.ndarray]]:
    """Noise-free readings of the coverage trials' single short run: from the fit's own model (10 mm
    cells, backward Euler at 4 K a step), or ``fine``: from a finer model (5 mm, 0.25 K a step), whose
    readings differ from the fit model's by 0.53 K (sensor) and 0.58 K (rotor thermocouple) RMS."""
    overrides = {"duty.phases[0].events[0].energy": ENERGIES[0], "duty.phases[1].duration": 40.0}
    cell, change = (0.005, 0.25) if fine else (0.01, 4.0)
    return [synthetic_readings(BASE, TRUTH_PATHS, overrides, ("sensor", "tc rotor"), SHORT_TIMES,
                               cell_size=cell, target_change=change)]  # fmt: skip


@dataclass(frozen=True)
class CoverageTrials:
    """Repeated synthetic calibrations of the short run (different noise seeds), from the fit's own model.

    Attributes
    ----------
    covered : ndarray
        Per parameter, the trials whose 95 % interval covered the truth.
    covered_noise_only : ndarray
        The same for the intervals of the noise covariance alone (without the model-error
        term; equal to ``covered`` when the model error is not estimated).
    mahalanobis : ndarray
        Per trial, ``(u - u_true)^T C^-1 (u - u_true)`` with ``C`` the fit's covariance of ``u``
        (chi-square with 2 degrees of freedom if the covariance is right).
    trials : int
    """

    covered: np.ndarray
    covered_noise_only: np.ndarray
    mahalanobis: np.ndarray
    trials: int


#: The model-error trials' noise [K]: small beside the fit model's own error (about 0.55 K RMS).
SMALL_NOISE = 0.3


def coverage_trials(folder: Path, trials: int, first_seed: int = 100, model_error: bool = False) -> CoverageTrials:
    """Fit ``trials`` noisy copies of the short run's clean readings; count covering intervals.

    Without ``model_error`` the readings come from the fit's own model with noise ``NOISE``;
    with it, from the finer model (:func:`clean_short`) with noise :data:`SMALL_NOISE`, fitted
    with ``model_error = "estimate"``.
    """
    clean = clean_short(fine=model_error)
    noise, fit_keys = (SMALL_NOISE, 'model_error = "estimate"') if model_error else (NOISE, "")
    truth = np.log([TRUTH["contact"], TRUTH["tau"]])
    covered, noise_only, distances = np.zeros(2, dtype=int), np.zeros(2, dtype=int), []
    for seed in range(first_seed, first_seed + trials):
        path = make_campaign(folder, clean, seed, fit=f"max_evaluations = 12\n{fit_keys}", short=True, noise=noise)
        fit = fit_calibration(load_calibration(path), SerialExecutor(), start=[TRUTH["contact"], TRUTH["tau"]])
        covariance = fit.covariance if fit.model_error is None else fit.covariance - fit.model_error.covariance()
        low, high = interval_95(fit.parameters, fit.internal, covariance)
        for k, name in enumerate(("contact", "tau")):
            covered[k] += fit.lower_95[k] <= TRUTH[name] <= fit.upper_95[k]
            noise_only[k] += low[k] <= TRUTH[name] <= high[k]
        error = fit.internal - truth
        distances.append(float(error @ np.linalg.solve(fit.covariance, error)))
    return CoverageTrials(covered, noise_only, np.array(distances), trials)
