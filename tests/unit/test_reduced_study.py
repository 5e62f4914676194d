"""A study on a reduced model with real full runs: gate, confirmations, fallback, resume, Dask, study file, CLI.

The case is a lumped ring pair (very high conductivity, 2 s stop from an energy, 1 min
parked; invented) whose heat-sink mean peaks at about T_0 + E/(m c) (Incropera, DeWitt,
Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., sec. 5.3; from
memory), so a quadratic in (E, T_0) reproduces it far within 1 K; one run takes about
0.05 s. The limit on the heat-sink mean is set where it is crossed in about 1-2 % of cases.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from counting_executor import CountingExecutor  # tests/ is on the path (conftest)
from lumped_ring_case import lumped_ring_case  # tests/ is on the path (conftest)

from heatstack.errors import InputError
from heatstack.studies import (
    LocalExecutor,
    Normal,
    Parameter,
    RareEventSettings,
    ReducedModelSettings,
    Sampling,
    SerialExecutor,
    Study,
    load_study,
    run_reduced_study,
    run_study,
)
from heatstack.studies.dask_executor import DaskExecutor

ROOT = Path(__file__).resolve().parents[2]

LUMPED = lumped_ring_case("lumped ring pair for the reduced-model test (invented)", heat_sink_limit="380 degC")

STUDY_FILE = """
[study]
title = "invented scatter of the lumped ring pair (test)"
base_case = "lumped.toml"
method = "random"
cases = 300
seed = 4
outputs = ["heat_sink_mean"]

[[study.parameters]]
name = "energy"
path = "duty.phases[0].events[0].energy"
distribution = "normal"
mean = "1 MJ"
std = "0.1 MJ"

[[study.parameters]]
name = "start temperature"
path = "case.initial_temperature"
distribution = "normal"
mean = "20 degC"
std = "5 K"

[study.reduced_model]
training = 12
held_back = 6
tolerance_peak = "1 K"
tolerance_time = "30 s"
confirm_within = 3
confirm_margin = "2 K"

[study.rare_event]
event = "any_limit"
samples = 400
"""

MARGIN = "limit_margin:heat_sink_mean"


@pytest.fixture(scope="module")
def folder(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("reduced")
    (path / "lumped.toml").write_text(LUMPED)
    (path / "study.toml").write_text(STUDY_FILE)
    return path


def small_study(folder: Path, cases: int = 40, **settings) -> Study:
    return Study(
        folder / "lumped.toml",
        [
            Parameter("duty.phases[0].events[0].energy", Normal("1 MJ", "0.1 MJ"), name="energy"),
            Parameter("case.initial_temperature", Normal("20 degC", "5 K"), name="start temperature"),
        ],
        Sampling("random", cases, 4),
        outputs=["heat_sink_mean"],
        reduced_model=ReducedModelSettings(**{"training": 12, "held_back": 6, **settings}),
    )


def test_accepted_model_predicts_the_cases_and_reruns_the_near_limit_ones_in_full(folder, tmp_path):
    executor = CountingExecutor()
    run = run_reduced_study(load_study(folder / "study.toml"), tmp_path / "store", executor=executor, progress=False)
    model = run.model
    assert model.usable, model.note
    error = model.error_of(MARGIN)
    assert 0.0 < error < 1.0  # measured on 6 held-back full runs
    table = run.table
    full = table["source"] == "full run"
    assert int(full.sum()) == run.confirmed > 0
    # every case within 2 K (more than 3 errors) of the limit ran in full; the others are far from it
    assert np.all(np.abs(table[MARGIN][~full]) > max(3.0 * error, 2.0))
    # the confirmations are real full runs: the same numbers as running those cases directly
    direct = run_study(
        load_study(folder / "study.toml"),
        tmp_path / "direct",
        SerialExecutor(),
        progress=False,
        cases=np.flatnonzero(full).tolist(),
    )
    assert np.array_equal(direct.table[MARGIN][full], table[MARGIN][full])
    # full runs: 18 design runs, the confirmations and the rare-event samples near the limit
    assert run.full_runs[next(k for k in run.full_runs if k.startswith("design"))] == 18
    assert executor.submitted == run.total_full_runs
    assert run.rare_event is not None and run.rare_event.method == "importance_sampling"
    low, high = run.rare_event.interval
    assert 0.0 < low <= run.rare_event.estimate <= high < 0.1
    summary = json.loads((tmp_path / "store" / "reduced-model.json").read_text())
    assert summary["accepted"] and summary["errors"][MARGIN] == pytest.approx(error)


def test_a_rerun_resumes_without_a_single_new_full_run(folder, tmp_path):
    study = load_study(folder / "study.toml")
    first = run_reduced_study(study, tmp_path / "store", executor=SerialExecutor(), progress=False)
    again = CountingExecutor()
    second = run_reduced_study(study, tmp_path / "store", executor=again, progress=False)
    assert again.submitted == 0
    assert second.table.same_results(first.table)
    assert second.rare_event.estimate == first.rare_event.estimate


def test_more_training_runs_grow_the_design_store_and_reuse_every_finished_run(folder, tmp_path):
    run_reduced_study(small_study(folder, training=12), tmp_path / "store", executor=SerialExecutor(), progress=False)
    counter = CountingExecutor()
    grown = run_reduced_study(small_study(folder, training=16), tmp_path / "store", executor=counter, progress=False)
    design = next(k for k in grown.full_runs if k.startswith("design"))
    assert grown.full_runs[design] == 22
    assert counter.submitted - (grown.total_full_runs - 22) == 4  # only the 4 new design points ran


def test_a_refused_model_falls_back_to_full_runs_and_says_so(folder, tmp_path):
    study = small_study(folder, cases=8, tolerance_peak="1e-9 K", rounds=2)
    run = run_reduced_study(study, tmp_path / "store", executor=SerialExecutor(), progress=False)
    assert not run.model.usable
    assert "refused" in run.decision and "all 8 cases run in full" in run.decision
    assert run.table.counts()["ok"] == 8 and "source" not in run.table.columns
    assert run.full_runs["full"] == 8


def test_a_refused_model_with_fallback_stop_raises_after_writing_its_verdict(folder, tmp_path):
    study = small_study(folder, cases=8, tolerance_peak="1e-9 K", rounds=1, fallback="stop")
    with pytest.raises(InputError, match="refused"):
        run_reduced_study(study, tmp_path / "store", executor=SerialExecutor(), progress=False)
    summary = json.loads((tmp_path / "store" / "reduced-model.json").read_text())
    assert summary["accepted"] is False and "stopped" in summary["decision"]
    assert not (tmp_path / "store" / "full").exists()


def test_local_pool_and_dask_cluster_give_the_serial_study(folder, tmp_path, monkeypatch):
    distributed = pytest.importorskip("distributed")
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")]))
    study = small_study(folder, cases=60)
    rare = RareEventSettings(event="any_limit", samples=200, seed=2)
    serial = run_reduced_study(study, tmp_path / "serial", rare_event=rare, executor=SerialExecutor(), progress=False)
    pool = run_reduced_study(
        study, tmp_path / "pool", rare_event=rare, executor=LocalExecutor(workers=2), progress=False
    )
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        executor = DaskExecutor(cluster.scheduler_address, timeout=20.0)
        dask = run_reduced_study(study, tmp_path / "dask", rare_event=rare, executor=executor, progress=False)
    for other in (pool, dask):
        assert other.table.same_results(serial.table)
        assert other.full_runs == serial.full_runs
        assert other.rare_event.estimate == serial.rare_event.estimate


def test_study_file_keys_are_checked_with_their_path(folder, tmp_path):
    text = STUDY_FILE.replace("held_back = 6", "held_bak = 6")
    (tmp_path / "lumped.toml").write_text(LUMPED)
    (tmp_path / "bad.toml").write_text(text)
    with pytest.raises(InputError, match=r"study\.reduced_model\.held_bak: unknown key; did you mean 'held_back'"):
        load_study(tmp_path / "bad.toml")
    (tmp_path / "unit.toml").write_text(STUDY_FILE.replace('tolerance_time = "30 s"', 'tolerance_time = "30 K"'))
    with pytest.raises(InputError, match=r"study\.reduced_model\.tolerance_time"):
        load_study(tmp_path / "unit.toml")
    (tmp_path / "method.toml").write_text(STUDY_FILE.replace("samples = 400", 'samples = 400\nmethod = "subset"'))
    with pytest.raises(InputError, match=r"study\.rare_event\.method: expected one of importance_sampling"):
        load_study(tmp_path / "method.toml")


def test_a_plain_study_store_is_not_taken_for_a_reduced_one(folder, tmp_path):
    plain = Study(folder / "lumped.toml", small_study(folder).parameters, Sampling("random", 2, 1))
    run_study(plain, tmp_path / "store", SerialExecutor(), progress=False)
    with pytest.raises(InputError, match="without a reduced model"):
        run_reduced_study(small_study(folder), tmp_path / "store", executor=SerialExecutor(), progress=False)


def test_cli_study_with_a_reduced_model_reports_its_measured_error(folder, tmp_path, capsys):
    from heatstack.cli import main

    (tmp_path / "lumped.toml").write_text(LUMPED)
    (tmp_path / "study.toml").write_text(STUDY_FILE.replace("samples = 400", "samples = 100"))
    code = main(
        ["study", str(tmp_path / "study.toml"), "--workers", "1", "--quiet", "--report", str(tmp_path / "report.md")]
    )
    out = capsys.readouterr().out
    assert code == 0
    assert "reduced model used for" in out and "full runs in the store" in out
    report = (tmp_path / "report.md").read_text()
    assert "### Reduced model" in report and f"| {MARGIN} |" in report
    assert "### Rare event" in report and "importance sampling" in report
    assert "Not certified" in report or "not certified" in report


KILLABLE = """
import sys
from pathlib import Path
from heatstack.studies import LocalExecutor, load_study, run_reduced_study

if __name__ == "__main__":
    study = load_study(Path(sys.argv[1]))
    run_reduced_study(study, Path(sys.argv[2]), executor=LocalExecutor(workers=2), progress=False)
"""


def test_a_killed_reduced_study_loses_no_full_run_and_resumes_to_the_same_answer(folder, tmp_path):
    text = STUDY_FILE.replace("training = 12", "training = 40").replace("held_back = 6", "held_back = 10")
    text = text.split("[study.rare_event]")[0]  # the design runs are what is killed here
    (tmp_path / "lumped.toml").write_text(LUMPED)
    (tmp_path / "study.toml").write_text(text)
    script = tmp_path / "run.py"
    script.write_text(KILLABLE)
    store = tmp_path / "killed"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")])}
    proc = subprocess.Popen(
        [sys.executable, str(script), str(tmp_path / "study.toml"), str(store)],
        env=env,
        start_new_session=True,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    deadline = time.monotonic() + 90.0
    try:
        while len(list(store.glob("design-*/cases/case-*.h5"))) < 5:
            assert proc.poll() is None, f"the study ended before it could be killed: {proc.stderr.read()!r}"
            assert time.monotonic() < deadline, "no design run finished within 90 s"
            time.sleep(0.02)
    finally:
        os.killpg(proc.pid, signal.SIGKILL)  # the study, its forkserver and its workers
        proc.wait()
    finished = len(list(store.glob("design-*/cases/case-*.h5")))
    assert 5 <= finished < 50
    study = load_study(tmp_path / "study.toml")
    counter = CountingExecutor()
    resumed = run_reduced_study(study, store, executor=counter, progress=False)
    assert counter.submitted == resumed.total_full_runs - finished  # nothing finished was run again
    reference = run_reduced_study(study, tmp_path / "whole", executor=SerialExecutor(), progress=False)
    assert resumed.table.same_results(reference.table)
    assert not list(store.glob("**/.*.tmp"))
