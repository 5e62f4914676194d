"""The examples in examples/ run as shipped (they double as end-to-end tests)."""

from __future__ import annotations

import runpy
from pathlib import Path

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def test_turnaround_example_runs_and_reports_the_what_if(capsys):
    runpy.run_path(str(EXAMPLES / "turnaround.py"), run_name="__main__")
    out = capsys.readouterr().out
    assert "if a rejected take-off started now" in out and "fuse plug 1" in out
