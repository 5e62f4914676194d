"""The examples in examples/ run as shipped (they double as end-to-end tests)."""

from __future__ import annotations

import runpy
from pathlib import Path

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def test_turnaround_example_runs_and_reports_the_what_if(capsys):
    runpy.run_path(str(EXAMPLES / "turnaround.py"), run_name="__main__")
    out = capsys.readouterr().out
    assert "if a rejected take-off started now" in out and "fuse plug 1" in out


def test_calibration_example_loads_three_runs_four_parameters():
    # the invented dynamometer campaign (validation/make_calibration_example.py); the fit
    # itself is the benchmark validation/bench_calibration.py
    from heatstack.questions.calibration_file import load_calibration

    calibration = load_calibration(EXAMPLES / "calibration" / "dyno_campaign.toml")
    assert len(calibration.runs) == 3 and len(calibration.parameters) == 4
    assert all("INVENTED" in (EXAMPLES / "calibration" / Path(t.source).name).read_text() for r in calibration.runs
               for t in r.traces)  # fmt: skip
