"""Fuzzing the inputs: mutated demo case and study files end in exit 0 or a one-line error (exit 2),
within a time bound, never a traceback, and never a silent misread.

The mutants come from ``tests/fuzz_mutations.py`` (shared with ``validation/fuzz_inputs.py``, which
runs the long campaign): keys dropped, renamed and added, wrong types, extreme and non-finite
numbers, hostile quantity strings, deep nesting, absurd sizes, damaged bytes. ``heatstack check``
and ``heatstack study --check`` run in this process through :func:`heatstack.cli.main`; the layout
figure is not drawn here (half a second each; the long campaign draws it).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import pytest
from fuzz_mutations import (
    CASE_FILE,
    HOSTILE_QUANTITIES,
    MUST_FAIL_QUANTITIES,
    STUDY_FILE,
    classify,
    error_lines,
    mutate,
    run_in_process,
    write_mutant,
    write_short_case,
)
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from heatstack.cli import main

#: A warning (e.g. a heat sink overloaded by a mutated energy) is a line on stderr, as at the command line.
pytestmark = pytest.mark.filterwarnings("default::heatstack.errors.HeatstackWarning")

#: Seconds one check may take (the demo's takes about 0.1 s without its figure).
LIMIT = 10.0
FUZZ = settings(
    deadline=None,
    database=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)


@pytest.fixture
def no_layout_figure(monkeypatch):
    monkeypatch.setattr("heatstack.plotting.plot_layout", lambda assembly, path, grid=None, **kw: Path(path))


def _outcome(mutant, kind: str) -> tuple[str, str]:
    with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as folder:
        code, out, err, seconds = run_in_process(main, write_mutant(mutant, Path(folder), kind), LIMIT)
    outcome = classify(code, out, err, seconds, LIMIT, mutant.must_fail)
    return outcome, f"{'; '.join(mutant.steps)[:400]} -> exit {code} in {seconds:.1f} s: {err.strip()[-400:]}"


@settings(FUZZ, max_examples=250)
@given(rng=st.randoms(use_true_random=False))
def test_a_mutated_case_file_is_accepted_or_refused_in_one_line(no_layout_figure, rng):
    outcome, what = _outcome(mutate(CASE_FILE, rng), "case")
    assert outcome in ("clear_error", "accepted"), f"{outcome}: {what}"


@settings(FUZZ, max_examples=100)
@given(rng=st.randoms(use_true_random=False))
def test_a_mutated_study_file_is_accepted_or_refused_in_one_line(rng):
    outcome, what = _outcome(mutate(STUDY_FILE, rng), "study")
    assert outcome in ("clear_error", "accepted"), f"{outcome}: {what}"


def _with_mass(value: str):
    from fuzz_mutations import Mutant

    text = CASE_FILE.read_text(encoding="utf-8").replace('mass = "70 t"', f"mass = {value!r}", 1)
    return Mutant(text.encode("utf-8"), [f"aircraft.mass = {value!r}"])


@pytest.mark.parametrize("value", MUST_FAIL_QUANTITIES)
def test_a_misreadable_or_arithmetic_quantity_is_always_an_error(no_layout_figure, value):
    mutant = _with_mass(value)
    mutant.must_fail = value
    outcome, what = _outcome(mutant, "case")
    assert outcome == "clear_error", what
    assert "aircraft.mass" in what


@pytest.mark.parametrize("value", HOSTILE_QUANTITIES)
def test_a_hostile_quantity_string_is_read_or_refused_in_one_line(no_layout_figure, value):
    outcome, what = _outcome(_with_mass(value), "case")
    assert outcome in ("clear_error", "accepted"), what


def test_a_decimal_comma_gets_its_own_message(tmp_path, capsys):
    path = tmp_path / "case.toml"
    path.write_text(CASE_FILE.read_text(encoding="utf-8").replace('mass = "70 t"', 'mass = "70,5 t"'))
    assert main(["check", str(path), "--out", str(tmp_path), "--force"]) == 2
    (line,) = error_lines(capsys.readouterr().err)
    assert "decimal point" in line and "70.5" in line


def test_accepted_mutants_of_a_short_case_run_to_the_end_or_fail_in_one_line(tmp_path, no_layout_figure):
    import random

    source = write_short_case(tmp_path)
    rng = random.Random(14)
    ran = []
    for _ in range(200):
        if len(ran) == 4:
            break
        mutant = mutate(source, rng, changes=1)
        folder = Path(tempfile.mkdtemp(dir=tmp_path))
        argv = write_mutant(mutant, folder, "case")
        code, out, err, seconds = run_in_process(main, argv, LIMIT)
        if classify(code, out, err, seconds, LIMIT, mutant.must_fail) != "accepted":
            continue
        argv = ["run", argv[1], "--out", str(folder / "run"), "--quiet", "--no-plots"]
        code, out, err, seconds = run_in_process(main, argv, 60.0)
        outcome = classify(code, out, err, seconds, 60.0, "")
        assert outcome in ("accepted", "clear_error", "failed"), f"{outcome}: {mutant.steps} -> {err[-400:]}"
        assert code != 2, f"run refused what check accepted: {mutant.steps} -> {err[-400:]}"
        ran.append(mutant.steps)
    assert len(ran) == 4, ran


def test_the_long_run_script_prints_its_counts_and_the_unhandled_rate_last():
    import os
    import subprocess
    import sys

    root = Path(__file__).resolve().parents[2]
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(root), os.environ.get("PYTHONPATH", "")])}
    done = subprocess.run(
        [
            sys.executable,
            str(root / "validation" / "fuzz_inputs.py"),
            "--cases",
            "4",
            "--studies",
            "2",
            "--runs",
            "0",
            "--study-runs",
            "0",
        ],
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )
    lines = done.stdout.strip().splitlines()
    assert done.returncode == 0, done.stdout + done.stderr
    assert lines[0].startswith("fuzzed 4 case files, 2 study files, 0 runs and 0 study runs")
    assert lines[-1] == "unhandled_per_10k: 0.0" and "silent_misreads: 0" in lines
