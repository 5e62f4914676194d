"""Generate the invented dynamometer campaign of examples/calibration/ (INVENTED data, demonstration only).

heatstack itself makes the "measured" traces: the example's base case with known parameter
values (:data:`TRUTH`), run on a finer grid and with a different scheme and step control than
a calibration uses (no inverse crime: cells of 0.625 mm and backward Euler at a 0.05 K target
change per step, where the fit uses 1.25 mm cells and error-controlled BDF2 at 0.15 K), read
at the thermocouples' sample times, plus Gaussian noise. Run
``python validation/make_calibration_example.py`` to rewrite the CSV files (the three runs on
two processes, about 5 minutes).
"""

from __future__ import annotations

import copy
import sys
import tomllib
from collections.abc import Mapping, Sequence
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np

from heatstack.case import case_from_mapping, run_case
from heatstack.studies.paths import parse_path, set_value_at

ROOT = Path(__file__).resolve().parents[1]
FOLDER = ROOT / "examples" / "calibration"

#: The invented "true" values the traces are made with (SI) — what the calibration must recover.
TRUTH = {
    "assembly.contacts[0].clamped": 3000.0,
    "assembly.contacts[0].released": 300.0,
    "assembly.contacts[1].clamped": 550.0,
    "assembly.contacts[1].released": 550.0,
    "assembly.probes[0].time_constant": 12.0,
}
#: Invented runs: duty overrides (SI) and the thermocouples read.
RUNS = (
    ("stop 1", {"duty.phases[0].events[0].energy": 1.0e6, "duty.phases[2].environment.wind_speed": 1.0}),
    ("stop 2", {"duty.phases[0].events[0].energy": 1.5e6, "duty.phases[2].environment.wind_speed": 2.0}),
    ("stop 3", {"duty.phases[0].events[0].energy": 2.0e6, "duty.phases[2].environment.wind_speed": 4.0}),
)
#: Thermocouples declared in the calibration file (r, z, part) as well as the sensor: one in
#: each ring, so the rotor-stator temperature difference that the contact sets is measured.
THERMOCOUPLES = (
    {"name": "tc stator", "r": 0.15, "z": 0.035, "part": "stator"},
    {"name": "tc rotor", "r": 0.15, "z": 0.005, "part": "rotor"},
)
#: Probes read and the file name part of each.
PROBES = (("sensor", "sensor"), ("tc stator", "tc_stator"), ("tc rotor", "tc_rotor"))
NOISE = 1.0  # standard deviation of the invented measurement noise [K]
#: The "measured" runs' grid and step control: half the example's cell size (1.25 mm), and backward
#: Euler at a small target change per step where the fit uses BDF2 at the default accuracy, so the
#: fit's own discretisation error is part of what it meets.
FINE_CELL_SIZE, FINE_TARGET_CHANGE = 0.000625, 0.05  # [m], [K]
SAMPLE_TIMES = np.arange(0.0, 900.0 + 1e-9, 5.0)  # [s]
SEED = 20261202  # the noise generator's seed, fixed so the example is reproducible


def synthetic_readings(
    base_text: str,
    values: Mapping[str, float],
    overrides: Mapping[str, float],
    probes: Sequence[str],
    times: np.ndarray,
    *,
    cell_size: float = 0.00125,
    target_change: float = 0.5,
    extra_probes: Sequence[Mapping] = (),
) -> list[np.ndarray]:
    """Noise-free readings of ``probes`` at ``times`` [K] from a finer run of the base case."""
    mapping = copy.deepcopy(tomllib.loads(base_text))
    for path, value in {**values, **overrides}.items():
        set_value_at(mapping, parse_path(path), value)
    mapping["assembly"]["cell_size"] = cell_size
    mapping.setdefault("solver", {}).update(scheme="euler", target_change=target_change)
    mapping["assembly"].setdefault("probes", []).extend(dict(p) for p in extra_probes)
    case = case_from_mapping(mapping, base_text, "synthetic", FOLDER)
    result = run_case(case)
    return [np.interp(times, result.times, result.history(p)) for p in probes]


def write_trace(path: Path, times: np.ndarray, temperatures: np.ndarray, note: str) -> None:
    """Write a trace CSV (time in s, temperature in degC)."""
    lines = [f"# {note}", "time_s,temperature_degC"]
    lines += [f"{t:.1f},{T - 273.15:.3f}" for t, T in zip(times, temperatures, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def fine_readings(overrides: Mapping[str, float]) -> list[np.ndarray]:
    """Noise-free readings [K] of :data:`PROBES` in one invented run, on the fine grid and steps."""
    base_text = (FOLDER / "dyno_brake.toml").read_text(encoding="utf-8")
    return synthetic_readings(
        base_text, TRUTH, overrides, [p for p, _ in PROBES], SAMPLE_TIMES, extra_probes=THERMOCOUPLES,
        cell_size=FINE_CELL_SIZE, target_change=FINE_TARGET_CHANGE,
    )  # fmt: skip


def main() -> int:
    rng = np.random.default_rng(SEED)
    with ProcessPoolExecutor(2) as pool:
        clean_runs = list(pool.map(fine_readings, [overrides for _, overrides in RUNS]))
    for k, ((name, _), readings) in enumerate(zip(RUNS, clean_runs, strict=True), start=1):
        for (_, probe), clean in zip(PROBES, readings, strict=True):
            noisy = clean + rng.normal(0.0, NOISE, clean.size)
            note = f"INVENTED dynamometer {name}, {probe}: made by heatstack with known parameters plus noise"
            write_trace(FOLDER / f"stop{k}_{probe}.csv", SAMPLE_TIMES, noisy, note)
    return 0


if __name__ == "__main__":
    sys.exit(main())
