"""Dask faults under a running study (issue 14 item 7): no worker left, the scheduler gone, a case
that kills its worker each time. Each stops the study within the executor's timeout with a
heatstack ExecutorError (exit 1 from the command line, one line), keeps every finished case in the
store, and says to run again to resume; the resumed study completes.

The clusters are ``distributed.LocalCluster`` objects: threads in this process where a case need not
kill its process, one worker process with a nanny for the case that kills its worker.
"""

from __future__ import annotations

import os
import time

import pytest
from lumped_ring_case import lumped_ring_case  # tests/ is on the path (conftest)

from heatstack.cli_errors import exit_code_and_line
from heatstack.errors import ExecutorError
from heatstack.studies import DaskExecutor, Parameter, Sampling, SerialExecutor, Study, run_study
from heatstack.studies.runner import clear_model_cache

distributed = pytest.importorskip("distributed")

LUMPED = lumped_ring_case("lumped ring pair for the study test (invented)")

#: The executor's timeout in these tests [s]: the study must stop within it plus a poll or two.
TIMEOUT = 2.0


def nap(x):
    time.sleep(0.2)
    return x


def die_on_three(x):
    if x == 3:
        os._exit(1)
    return x


def _cluster(**options):
    return distributed.LocalCluster(
        n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None, **options
    )


def _stops_within(generator, seconds: float) -> tuple[ExecutorError, float]:
    started = time.monotonic()
    with pytest.raises(ExecutorError) as caught:
        for _ in generator:
            pass
    return caught.value, time.monotonic() - started


def test_no_worker_left_stops_the_study_within_its_timeout():
    with _cluster() as cluster:
        executor = DaskExecutor(cluster.scheduler_address, timeout=TIMEOUT)
        results = executor.map_unordered(nap, range(30))
        assert [next(results), next(results)]
        cluster.scale(0)
        error, took = _stops_within(results, TIMEOUT + 8.0)
        executor.close()
    assert took < TIMEOUT + 8.0
    assert "no worker left for 2 s" in str(error) and "run the same command again to resume" in str(error)
    code, line = exit_code_and_line(error)
    assert code == 1 and line.startswith("heatstack: failed:") and len(line.splitlines()) == 1


def test_the_scheduler_gone_is_a_heatstack_error_not_a_cancelled_future():
    with _cluster() as cluster:
        executor = DaskExecutor(cluster.scheduler_address, timeout=TIMEOUT)
        results = executor.map_unordered(nap, range(30))
        assert next(results) is not None
        cluster.close()
        error, took = _stops_within(results, TIMEOUT + 8.0)
        executor.close()
    assert took < TIMEOUT + 8.0
    assert "scheduler" in str(error) and "is gone" in str(error) and "resume" in str(error)
    assert "CancelledError" not in str(error)
    code, line = exit_code_and_line(error)
    assert code == 1 and "internal error" not in line


def test_a_case_that_kills_its_worker_each_time_stops_the_study_naming_it(monkeypatch):
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join([os.path.dirname(__file__), os.environ.get("PYTHONPATH", "")]))
    import dask

    with (
        dask.config.set({"distributed.scheduler.allowed-failures": 1}),
        distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster,
    ):
        executor = DaskExecutor(cluster.scheduler_address, timeout=20.0)
        error, took = _stops_within(executor.map_unordered(die_on_three, range(6)), 60.0)
        executor.close()
    assert took < 60.0
    assert "killed its worker each time" in str(error) and "resume" in str(error)


def _study(folder, cases: int) -> Study:
    (folder / "lumped.toml").write_text(LUMPED)
    return Study(
        folder / "lumped.toml",
        [Parameter("duty.phases[0].events[0].energy", values=[f"{0.5 + 0.1 * k:.1f} MJ" for k in range(cases)])],
        Sampling("grid"),
        outputs=["heat_sink_mean"],
    )


def test_finished_cases_are_kept_when_the_workers_go_and_the_study_resumes(tmp_path):
    study = _study(tmp_path, 8)
    clear_model_cache()
    with _cluster() as cluster:
        executor = DaskExecutor(cluster.scheduler_address, timeout=TIMEOUT)

        def lose_workers_after_two(done, total):
            if done == 2:
                cluster.scale(0)

        started = time.monotonic()
        with pytest.raises(ExecutorError, match="no worker left"):
            run_study(study, tmp_path / "store", executor, progress=lose_workers_after_two)
        assert time.monotonic() - started < 60.0
        executor.close()
    resumed = run_study(study, tmp_path / "store", SerialExecutor(), progress=False)
    assert resumed.cases_skipped >= 2
    assert resumed.cases_run == 8 - resumed.cases_skipped
    assert resumed.table["status"].tolist() == ["ok"] * 8
