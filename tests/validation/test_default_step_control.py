"""The default step control's answers on the demonstration case against 16 times finer steps.

A step-refinement check (Roache, Verification and Validation in Computational Science and
Engineering, Hermosa, 1998, ch. 5, systematic refinement; from memory): the shipped
demonstration case (examples/demo_rto.toml, invented; its ``[solver]`` section only names
snapshot times, so it runs at the default settings) is run as shipped and again with
every step-size control of ``SolverOptions()`` divided by 16 (largest temperature change
per step, initial and largest step). The defaults must put the peaks engineers read off
(sensor, fuse plugs, bead seats) within 0.2 K of the finer run, and the heat-sink cooling
time to the case's ``cooling_below`` within 0.5 % (issue 13).
"""

from __future__ import annotations

import dataclasses

import pytest
from settings import PENDING

from heatstack import SolverOptions
from heatstack.answers import cooling_time_in_result, peak
from heatstack.case import load_case, run_case
from heatstack.cli import demo_case_path

REFINEMENT = 16
PEAKS = ("sensor", "fuse plug 1", "fuse plug 2", "inboard bead seat", "outboard bead seat")
PEAK_TOLERANCE_K, COOLING_TOLERANCE = 0.2, 0.005


@pytest.fixture(scope="module")
def demo_pair():
    case = load_case(demo_case_path())
    defaults = SolverOptions(snapshot_times=case.solver.snapshot_times)
    assert case.solver == defaults  # the demonstration runs at the defaults
    model = case.build_model()
    finer = SolverOptions(
        target_change=defaults.target_change / REFINEMENT,
        initial_step=defaults.initial_step / REFINEMENT,
        max_step=defaults.max_step / REFINEMENT,
        snapshot_times=defaults.snapshot_times,
    )
    as_shipped = run_case(case, model)
    reference = run_case(dataclasses.replace(case, solver=finer), model)
    assert reference.times.size > 8 * as_shipped.times.size  # the finer run did take far more steps
    return case, as_shipped, reference


@pytest.mark.xfail(strict=True, reason=PENDING.format(miss="0.61 K on the sensor peak against 0.2 K"))
def test_defaults_put_demo_peaks_within_0_2_K_of_16x_finer_steps(demo_pair):
    _, as_shipped, reference = demo_pair
    miss = {name: abs(peak(as_shipped, name).temperature - peak(reference, name).temperature) for name in PEAKS}
    assert max(miss.values()) <= PEAK_TOLERANCE_K, miss


@pytest.mark.xfail(strict=True, reason=PENDING.format(miss="0.68 % on the heat-sink cooling time against 0.5 %"))
def test_defaults_put_demo_cooling_time_within_0_5_percent_of_16x_finer_steps(demo_pair):
    case, as_shipped, reference = demo_pair
    below = case.output.cooling_below
    times = [cooling_time_in_result(run, "heat_sink_mean", below) for run in (as_shipped, reference)]
    assert all(t.reached for t in times)
    assert abs(times[0].duration / times[1].duration - 1.0) <= COOLING_TOLERANCE, times
