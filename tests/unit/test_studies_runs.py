"""Running studies: an analytic study, executors, the store, kill and resume, bad input, plots.

Studies here are small and coarse (cell size 10-12 mm, target change 10 K, 20 min of
cooling) so that the whole file runs in well under a minute on two cores.

Reference for the analytic study: the energy balance of a lumped body heated for a
time t_s, rho V c dT/dt = P(t) - losses (Incropera, DeWitt, Bergman, Lavine,
Fundamentals of Heat and Mass Transfer, 6th ed., sec. 5.3, general lumped capacitance
analysis; from memory). With the losses bounded from above by h_max A (T - T_inf) +
eps sigma A (T^4 - T_inf^4) at the peak temperature, h_max = 25 W/(m^2 K) for free
convection of gases (same book, Table 1.1, from memory), the peak of the mass-weighted
mean temperature lies in [T_0 + E/(m c) - losses/(m c), T_0 + E/(m c)].
"""

from __future__ import annotations

import math
import os
import signal
import socket
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import h5py
import matplotlib
import numpy as np
import pytest
from counting_executor import CountingExecutor  # tests/ is on the path (conftest)
from lumped_ring_case import lumped_ring_case  # tests/ is on the path (conftest)

from heatstack.answers.fuse_plugs import assess_fuse_plugs
from heatstack.case import case_from_mapping, run_case
from heatstack.errors import InputError
from heatstack.studies import (
    LocalExecutor,
    Parameter,
    Sampling,
    SerialExecutor,
    Study,
    StudyStore,
    Uniform,
    load_study,
    load_table,
    plan_study,
    run_study,
    sensitivity,
)
from heatstack.studies.dask_executor import DaskExecutor
from heatstack.studies.executors import StudyExecutor
from heatstack.studies.plots import plot_margin_histogram, plot_tornado
from heatstack.studies.runner import clear_model_cache, summarise

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "examples" / "demo_rto.toml"
STEFAN_BOLTZMANN = 5.670374419e-8  # W/(m^2 K^4), CODATA 2018 (exact)

LUMPED = lumped_ring_case("lumped ring pair for the study test (invented)")

STUDY = """
[study]
title = "invented scatter of the shortened demo (test)"
base_case = "short_demo.toml"
method = "latin_hypercube"
cases = {cases}
seed = 2026
cell_size = "12 mm"
accuracy = "0.5 K"

[[study.parameters]]
path = "duty.phases[0].events[0].aircraft.mass"
name = "mass"
distribution = "normal"
mean = "62 t"
std = "3 t"

[[study.parameters]]
path = "assembly.fuse_plugs[0].release_temperature"
name = "plug 1 release"
distribution = "uniform"
low = "174 degC"
high = "180 degC"

[[study.parameters]]
path = ["duty.phases[0].environment.ambient_temperature", "duty.phases[1].environment.ambient_temperature",
        "duty.phases[2].environment.ambient_temperature"]
name = "ambient"
distribution = "triangular"
low = "5 degC"
mode = "20 degC"
high = "40 degC"
"""


@pytest.fixture(scope="module")
def folder(tmp_path_factory) -> Path:
    """A folder with the demo case, its cooling cut to 20 min, and study files of n cases."""
    path = tmp_path_factory.mktemp("studies")
    text = DEMO.read_text(encoding="utf-8")
    assert 'duration = "3 h"' in text
    (path / "short_demo.toml").write_text(text.replace('duration = "3 h"', 'duration = "20 min"'))
    for n in (4, 6, 10):
        (path / f"study{n}.toml").write_text(STUDY.replace("{cases}", str(n)))
    (path / "lumped.toml").write_text(LUMPED)
    return path


# ---------------------------------------------------------------------------- analytic study


def test_lumped_body_study_reproduces_the_energy_balance(folder, tmp_path):
    energies = [0.5e6, 1.0e6, 2.0e6]
    study = Study(
        folder / "lumped.toml",
        [Parameter("duty.phases[0].events[0].energy", values=["0.5 MJ", "1 MJ", "2 MJ"], name="energy")],
        Sampling("grid"),
        outputs=["heat_sink_mean"],
    )
    clear_model_cache()
    run = run_study(study, tmp_path / "store", SerialExecutor(), progress=False)
    table = run.table
    assert table["status"].tolist() == ["ok"] * 3
    assert table["energy"] == pytest.approx(energies, rel=1e-12)
    volume = math.pi * (0.2**2 - 0.1**2) * 0.020
    mc = 2000.0 * volume * 900.0
    area = 2 * math.pi * (0.2**2 - 0.1**2) + 2 * math.pi * 0.1 * 0.02 + 2 * math.pi * 0.2 * 0.02
    t0 = t_inf = 293.15
    for k, energy in enumerate(energies):
        closed = t0 + energy / mc
        loss = area * 2.0 * (25.0 * (closed - t_inf) + 0.05 * STEFAN_BOLTZMANN * (closed**4 - t_inf**4))
        peak = table["peak:heat_sink_mean"][k]
        assert closed - loss / mc <= peak <= closed + 1e-6
        assert table["peak_time:heat_sink_mean"][k] == pytest.approx(2.0, abs=1e-9)
        assert table["peak_delay:heat_sink_mean"][k] == pytest.approx(0.0, abs=1e-9)
        assert table["energy_in"][k] == pytest.approx(energy, rel=1e-9)
        assert table["limit_margin:heat_sink_mean"][k] == pytest.approx(873.15 - peak, abs=1e-9)
    # energy varies, the mesh does not: one model built, then reused
    assert table["model_reused"].tolist() == [False, True, True]
    assert "plug_margin_min" not in table  # no fuse plugs in this case


# ---------------------------------------------------------------------------- local pool


def test_local_pool_study_collects_peaks_margins_and_plug_release(folder, tmp_path):
    study = load_study(folder / "study6.toml")
    run = run_study(study, tmp_path / "store", LocalExecutor(workers=2), progress=False)
    table = run.table
    assert run.cases_run == 6 and run.cases_skipped == 0 and table["status"].tolist() == ["ok"] * 6
    release = table["plug 1 release"]
    peak = table["plug_peak:fuse plug 1"]
    # a plug releases when its peak reading reaches its (sampled) release temperature
    assert np.array_equal(table["plug_released:fuse plug 1"], (peak >= release).astype(float))
    assert table["plug_margin:fuse plug 1"] == pytest.approx(release - peak, abs=1e-9)
    assert table["plug_margin_min"] == pytest.approx(
        np.minimum(table["plug_margin:fuse plug 1"], table["plug_margin:fuse plug 2"])
    )
    plan = plan_study(study)
    # the stop's length follows from each case's mass through the equation of motion
    end_of_braking = [
        case_from_mapping(plan.case_mapping(k), plan.base_text, "direct", folder).duty.phases[0].events[0].end
        for k in range(6)
    ]
    assert table["peak_delay:sensor"] == pytest.approx(table["peak_time:sensor"] - end_of_braking, abs=1e-9)
    assert np.all(table["solver:steps"] > 0)
    # the summary is that of the very case the row describes: rerun row 4 directly
    data = plan.case_mapping(4)
    case = case_from_mapping(data, plan.base_text, "direct", folder)
    result = run_case(case)
    assert table["peak:sensor"][4] == result.peak("sensor")[0]
    # the plug temperature is the rim's at the plug, lagged by the plug's own time constant
    plug_2 = next(a for a in assess_fuse_plugs(result, case.fuse_plugs) if a.name == "fuse plug 2")
    assert table["plug_peak:fuse plug 2"][4] == plug_2.peak
    # two worker processes, one shared mesh: at most one build per worker
    assert np.count_nonzero(~table["model_reused"]) <= 2
    assert len(set(table["worker"])) <= 2


def test_a_varied_contact_conductance_gives_the_outputs_of_a_fresh_build(folder, tmp_path):
    # the worker's model cache serves one mesh with each row's own contact conductance:
    # every row equals a run on a model built afresh for that row's case
    study = Study(
        folder / "short_demo.toml",
        [Parameter("assembly.design.rotor_stator_clamped", values=[2500.0, 3500.0, 2500.0], name="h")],
        Sampling("grid"),
        outputs=["hottest rotor", "fuse plug 1"],
        cell_size="12 mm",
        accuracy="0.5 K",
    )
    clear_model_cache()
    table = run_study(study, tmp_path / "store", SerialExecutor(), progress=False).table
    assert table["model_reused"].tolist() == [False, True, True]
    assert table["peak:hottest rotor"][0] != table["peak:hottest rotor"][1]
    plan = plan_study(study)
    for k in (1, 2):
        case = case_from_mapping(plan.case_mapping(k), plan.base_text, "direct", folder)
        fresh = dict(summarise(case, run_case(case, case.build_model()), plan.outputs))
        for name in (n for n in table.output_names if not n.startswith("solver:")):
            assert table[name][k] == fresh[name], name


def test_the_study_report_says_how_its_cases_were_computed(folder, tmp_path):
    from heatstack.studies.summary import study_report

    h = Parameter("assembly.design.rotor_stator_clamped", values=[2500.0, 3500.0], name="h")
    study = Study(folder / "short_demo.toml", [h], Sampling("grid"), cell_size="12 mm", accuracy="0.5 K")
    table = run_study(study, tmp_path / "store", SerialExecutor(), progress=False).table
    assert (table.cell_size, table.accuracy, table.target_change) == (pytest.approx(0.012), 0.5, None)
    again = load_table(tmp_path / "store")  # read back from the store's manifest
    assert (again.cell_size, again.accuracy) == (table.cell_size, table.accuracy)
    text = study_report(again)
    steps = np.median(table["solver:steps"])
    assert "Numerics: cells of 12 mm and BDF2 time steps at accuracy 0.5 K" in text
    assert f"median {steps:.0f} time steps per case" in text
    own = Study(
        folder / "lumped.toml", [Parameter("duty.phases[0].events[0].energy", values=["1 MJ"])], Sampling("grid")
    )
    own_table = run_study(own, tmp_path / "own", SerialExecutor(), progress=False).table
    assert own_table.cell_size is None and own_table.accuracy is None
    assert "Numerics: each case's own cell size and solver settings (the study overrides none)" in study_report(
        own_table
    )


# ---------------------------------------------------------------------------- store


def test_rerun_skips_finished_cases_and_refuses_another_study(folder, tmp_path):
    study = load_study(folder / "study4.toml")
    store = tmp_path / "store"
    first = run_study(study, store, SerialExecutor(), progress=False)
    again = run_study(study, store, CountingExecutor(), progress=False)
    assert (again.cases_run, again.cases_skipped) == (0, 4)
    assert again.table.same_results(first.table)
    other = load_study(folder / "study4.toml")
    other = type(other)(**{**other.__dict__, "sampling": Sampling("latin_hypercube", 4, 2027)})
    executor = CountingExecutor()
    with pytest.raises(InputError, match=r"holds a different study \(sampling.seed: store 2026, now 2027"):
        run_study(other, store, executor, progress=False)
    assert executor.submitted == 0
    with h5py.File(store / "manifest.h5") as f:
        assert f.attrs["seed"] == 2026 and f.attrs["cell_size_m"] == pytest.approx(0.012)
        assert f.attrs["accuracy_K"] == pytest.approx(0.5)
        assert np.array_equal(f["samples"][()], plan_study(study).samples)


def test_failing_case_is_recorded_and_the_study_goes_on(folder, tmp_path):
    study = Study(
        folder / "lumped.toml",
        [Parameter("duty.phases[0].events[0].energy", values=["1 MJ", "-1 MJ", "2 MJ"], name="energy")],
        Sampling("grid"),
    )
    run = run_study(study, tmp_path / "store", SerialExecutor(), progress=False)
    assert run.table["status"].tolist() == ["ok", "failed", "ok"] and run.cases_failed == 1
    assert "energy" in run.table["error"][1] and "InputError" in run.table["error"][1]
    assert np.isnan(run.table["peak:sensor"][1]) and np.isfinite(run.table["peak:sensor"][2])
    retried = run_study(study, tmp_path / "store", SerialExecutor(), progress=False, retry_failed=True)
    assert (retried.cases_run, retried.cases_skipped) == (1, 2)


def test_unwritable_store_fails_before_the_first_case(folder, tmp_path):
    study = load_study(folder / "study4.toml")
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    executor = CountingExecutor()
    with pytest.raises(InputError, match="is not a folder"):
        run_study(study, blocker / "store", executor, progress=False)
    (tmp_path / "busy").mkdir()
    (tmp_path / "busy" / "notes.txt").write_text("someone else's folder")
    with pytest.raises(InputError, match="not a study store"):
        run_study(study, tmp_path / "busy", executor, progress=False)
    assert executor.submitted == 0
    assert sorted(p.name for p in (tmp_path / "busy").iterdir()) == ["notes.txt"]


def test_a_store_killed_before_its_manifest_is_started_again(folder, tmp_path):
    # what a study leaves if killed after creating its folder but before the manifest
    store = tmp_path / "store"
    (store / "cases").mkdir(parents=True)
    (store / "lock").write_text("")
    (store / ".manifest.h5.123.tmp").write_bytes(b"partial")
    run = run_study(load_study(folder / "study4.toml"), store, SerialExecutor(), progress=False)
    assert run.cases_run == 4 and not list(store.glob(".*.tmp"))


def test_a_store_in_use_is_refused(folder, tmp_path):
    plan = plan_study(load_study(folder / "study4.toml"))
    store = StudyStore(tmp_path / "store")
    with store.session(plan):
        with pytest.raises(InputError, match="in use by another running study"):
            with StudyStore(tmp_path / "store").session(plan):
                pass


KILLABLE = """
import sys, time
from heatstack.studies import LocalExecutor, load_study, run_study

def slow(done, total):
    time.sleep(0.3)

if __name__ == "__main__":  # worker processes import this file too
    run_study(load_study(sys.argv[1]), sys.argv[2], LocalExecutor(workers=2), progress=slow)
"""


def test_killed_study_resumes_to_the_identical_table(folder, tmp_path):
    study_file = folder / "study10.toml"
    store = tmp_path / "killed"
    script = tmp_path / "run.py"
    script.write_text(KILLABLE)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")])}
    proc = subprocess.Popen(
        [sys.executable, str(script), str(study_file), str(store)],
        env=env,
        start_new_session=True,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    deadline = time.monotonic() + 60.0
    try:
        while len(list((store / "cases").glob("case-*.h5"))) < 3:
            assert proc.poll() is None, f"the study ended before it could be killed: {proc.stderr.read()!r}"
            assert time.monotonic() < deadline, "no case finished within 60 s"
            time.sleep(0.02)
    finally:
        os.killpg(proc.pid, signal.SIGKILL)  # the study, its forkserver and its workers
        proc.wait()
    stored = sorted((store / "cases").glob("case-*.h5"))
    assert 3 <= len(stored) < 10
    for path in stored:  # only whole files: each opens and holds its values
        with h5py.File(path) as f:
            assert f.attrs["status"] == "ok" and f["values"].shape[0] > 10
    partial = load_table(store)
    assert partial.counts()["pending"] == 10 - len(stored)
    study = load_study(study_file)
    resumed = run_study(study, store, LocalExecutor(workers=2), progress=False)
    assert (resumed.cases_skipped, resumed.cases_run) == (len(stored), 10 - len(stored))
    assert not list(store.glob("**/.*.tmp"))
    reference = run_study(study, tmp_path / "uninterrupted", LocalExecutor(workers=2), progress=False)
    assert resumed.table.same_results(reference.table)
    assert resumed.table.names == reference.table.names


# ---------------------------------------------------------------------------- Dask


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_unreachable_scheduler_fails_within_its_timeout_and_writes_nothing(folder, tmp_path):
    pytest.importorskip("distributed")
    study = load_study(folder / "study4.toml")
    address = f"tcp://127.0.0.1:{_free_port()}"
    started = time.monotonic()
    with pytest.raises(InputError, match=r"Dask scheduler .* cannot be reached within 2 s"):
        run_study(study, tmp_path / "store", DaskExecutor(address, timeout=2.0), progress=False)
    assert time.monotonic() - started < 10.0
    assert not (tmp_path / "store").exists()


def test_study_on_a_local_dask_cluster_matches_the_serial_run(folder, tmp_path, monkeypatch):
    distributed = pytest.importorskip("distributed")
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")]))
    study = load_study(folder / "study4.toml")
    serial = run_study(study, tmp_path / "serial", SerialExecutor(), progress=False)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        executor = DaskExecutor(cluster.scheduler_address, timeout=20.0)
        run = run_study(study, tmp_path / "dask", executor, progress=False)
        assert executor.workers == 2
    assert run.cases_run == 4
    assert run.table.same_results(serial.table)
    assert len(set(run.table["worker"])) <= 2


def test_executor_interface_yields_results_as_they_complete():
    for executor in (SerialExecutor(), LocalExecutor(workers=2)):
        assert isinstance(executor, StudyExecutor)
        with executor:
            assert sorted(executor.map_unordered(abs, [-3, 1, -2])) == [1, 2, 3]
    with pytest.raises(InputError, match="workers"):
        LocalExecutor(workers=0)


# ---------------------------------------------------------------------------- plots


def test_plots_are_written_whole_with_the_caption(folder, tmp_path):
    study = Study(
        folder / "lumped.toml",
        [
            Parameter("duty.phases[0].events[0].energy", Uniform("0.5 MJ", "1.5 MJ"), name="energy"),
            Parameter("case.initial_temperature", Uniform("10 degC", "30 degC"), name="start"),
        ],
        Sampling("latin_hypercube", 8, 3),
        outputs=["heat_sink_mean"],
    )
    table = run_study(study, tmp_path / "store", SerialExecutor(), progress=False).table
    png = plot_margin_histogram(table, tmp_path / "margin.png", column="limit_margin:heat_sink_mean")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    with matplotlib.rc_context({"svg.fonttype": "none"}):  # text kept as text to search it
        histogram = plot_margin_histogram(table, tmp_path / "m.svg", column="limit_margin:heat_sink_mean")
    words = histogram.read_text()
    assert (
        "heat sink mean: margin to its output.limits value" in words and "limit_margin:" not in words
    )  # no internal names
    result = sensitivity(table, "limit_margin:heat_sink_mean")
    assert result.entries[0].parameter == "energy" and result.entries[0].spearman == pytest.approx(-1.0)
    svg = plot_tornado(result, tmp_path / "tornado.svg").read_text()
    assert "Not certified data" in svg and "energy" in svg
    assert not list(tmp_path.glob(".*.tmp"))
    with pytest.raises(InputError, match="suffix must be .png or .svg"):
        plot_tornado(result, tmp_path / "tornado.pdf")


def test_lumped_study_file_round_trip_through_toml(folder):
    # the lumped case is also a valid stand-alone case (guards the fixture itself)
    data = tomllib.loads(LUMPED)
    case = case_from_mapping(data, LUMPED, "lumped", folder)
    assert case.assembly.parts[0].material == "conductor"
