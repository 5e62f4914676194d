"""Benchmark: the shipped invented dynamometer example (three runs, four parameters) calibrated on 2 cores.

Run ``python validation/bench_calibration.py``; the last line is ``calibration_minutes: X``
(target X <= 5). The fitted values are printed beside the invented truth the traces were
made with (validation/make_calibration_example.py), with whether each determined parameter
lies within its 95 % interval and 5 % of the truth, and the uncertainty the intervals carry.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from heatstack.questions.calibrate import calibrate, fit_summary, write_calibration_outputs
from heatstack.questions.calibration_file import load_calibration
from heatstack.questions.calibration_report import uncertainty_statement
from heatstack.questions.calibration_runs import make_executor
from heatstack.studies.paths import format_path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_calibration_example import FOLDER, TRUTH  # noqa: E402


def main() -> int:
    calibration = load_calibration(FOLDER / "dyno_campaign.toml")
    started = time.perf_counter()
    with make_executor("local", workers=2) as executor:
        run = calibrate(calibration, executor)
    minutes = (time.perf_counter() - started) / 60.0
    print(run.fit.message)
    print(fit_summary(run.fit, run.identifiability))
    fit = run.fit
    recovered = True
    for k, parameter in enumerate(fit.parameters):
        truth = TRUTH[format_path(parameter.paths[0])]
        inside = bool(fit.lower_95[k] <= truth <= fit.upper_95[k])
        close = abs(fit.values[k] / truth - 1.0) <= 0.05
        if run.identifiability.determined[k]:
            recovered &= inside and close
        print(
            f"  {parameter.name}: fitted {fit.values[k]:.5g}, invented truth {truth:.5g}, ratio "
            f"{fit.values[k] / truth:.4f}, truth inside the 95 % interval: {inside}"
        )
    print(run.identifiability.statement)
    print(*uncertainty_statement(fit), sep="\n")
    print(f"every determined parameter within its 95 % interval and 5 % of the truth: {recovered}")
    with tempfile.TemporaryDirectory() as folder:
        write_calibration_outputs(run, folder)
    print(f"model runs: {run.fit.model_runs}")
    print(f"calibration_minutes: {minutes:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
