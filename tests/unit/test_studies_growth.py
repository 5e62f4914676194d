"""Studies that grow: raising ``cases`` of a random or Sobol' study reuses every finished case."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from counting_executor import CountingExecutor  # tests/ is on the path (conftest)
from lumped_ring_case import lumped_ring_case  # tests/ is on the path (conftest)

from heatstack.errors import InputError
from heatstack.studies import Parameter, Sampling, SerialExecutor, Study, Uniform, plan_study, run_study
from heatstack.studies.runner import clear_model_cache

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "examples" / "demo_rto.toml"
MASS = "duty.phases[0].events[0].aircraft.mass"

LUMPED = lumped_ring_case("lumped ring for the growth test (invented)", parked="30 s", heat_sink_limit=None)


@pytest.fixture()
def lumped(tmp_path) -> Path:
    path = tmp_path / "lumped.toml"
    path.write_text(LUMPED)
    return path


def energy_study(base: Path, method: str, cases: int, seed: int = 5) -> Study:
    parameter = Parameter("duty.phases[0].events[0].energy", Uniform("0.5 MJ", "2 MJ"), name="energy")
    return Study(base, [parameter], Sampling(method, cases, seed), outputs=["sensor"])


@pytest.mark.parametrize("method", ["random", "sobol"])
def test_more_cases_with_the_same_seed_contain_the_smaller_study(method):
    params = [
        Parameter(MASS, Uniform("55 t", "70 t")),
        Parameter("assembly.fuse_plugs[0].release_temperature", Uniform("174 degC", "180 degC")),
    ]
    small = plan_study(Study(DEMO, params, Sampling(method, 7, 3)))
    large = plan_study(Study(DEMO, params, Sampling(method, 19, 3)))
    other = plan_study(Study(DEMO, params, Sampling(method, 7, 4)))
    assert np.array_equal(large.samples[:7], small.samples)
    assert not np.allclose(other.samples, small.samples)
    assert small.growth_key == large.growth_key != other.growth_key
    assert small.fingerprint != large.fingerprint


def test_latin_hypercube_has_no_growth_key():
    params = [Parameter(MASS, Uniform("55 t", "70 t"))]
    assert plan_study(Study(DEMO, params, Sampling("latin_hypercube", 7, 3))).growth_key == ""


@pytest.mark.parametrize("method", ["random", "sobol"])
def test_raising_cases_extends_a_finished_study_and_reuses_every_case(lumped, tmp_path, method):
    store = tmp_path / "store"
    clear_model_cache()
    first = run_study(energy_study(lumped, method, 3), store, SerialExecutor(), progress=False)
    assert first.cases_run == 3
    counting = CountingExecutor()
    grown = run_study(energy_study(lumped, method, 5), store, counting, progress=False)
    assert (grown.cases_run, grown.cases_skipped, counting.submitted) == (2, 3, 2)
    assert len(grown.table) == 5
    for name in ("energy", "peak:sensor", "wall_time"):
        assert np.array_equal(grown.table[name][:3], first.table[name], equal_nan=True)
    # lowering the count again reuses the stored cases too, and raising it back runs nothing
    back = run_study(energy_study(lumped, method, 2), store, CountingExecutor(), progress=False)
    assert (back.cases_run, len(back.table)) == (0, 2)
    again = CountingExecutor()
    assert run_study(energy_study(lumped, method, 5), store, again, progress=False).cases_run == 0
    assert again.submitted == 0


def test_changing_anything_else_still_refuses(lumped, tmp_path):
    store = tmp_path / "store"
    run_study(energy_study(lumped, "random", 2), store, SerialExecutor(), progress=False)
    counting = CountingExecutor()
    with pytest.raises(InputError, match=r"holds a different study \(sampling.seed: store 5, now 6"):
        run_study(energy_study(lumped, "random", 4, seed=6), store, counting, progress=False)
    with pytest.raises(InputError, match=r"holds a different study \(sampling.method"):
        run_study(energy_study(lumped, "sobol", 2), store, counting, progress=False)
    wider = Study(
        lumped,
        [Parameter("duty.phases[0].events[0].energy", Uniform("0.5 MJ", "3 MJ"), name="energy")],
        Sampling("random", 4, 5),
        outputs=["sensor"],
    )
    with pytest.raises(InputError, match="holds a different study"):
        run_study(wider, store, counting, progress=False)
    assert counting.submitted == 0


def test_a_latin_hypercube_study_says_why_it_cannot_grow(lumped, tmp_path):
    store = tmp_path / "store"
    run_study(energy_study(lumped, "latin_hypercube", 2), store, SerialExecutor(), progress=False)
    with pytest.raises(
        InputError, match=r"holds a different study.*cannot grow; sample with method = 'random' or 'sobol'"
    ):
        run_study(energy_study(lumped, "latin_hypercube", 3), store, CountingExecutor(), progress=False)
