"""Benchmark: the shortest safe wait after the demo's stop, on 2 cores.

Not a test (``validation/`` is outside the pytest ``testpaths``). Run from the
repository root::

    PYTHONPATH=. python validation/bench_dispatch.py

The arrival: the INVENTED demonstration case's wheel and brake (examples/demo_rto.toml)
on a coarse 8 mm grid, its heavy stop (70 t from 135 kt, four braked wheels, 90 % on the
brakes) and the 5 min held after it. The departure: an invented rejected take-off of
45 t from 105 kt in 35 s; limits: every fuse plug 10 K below release, the hottest
heat-sink cell below 1100 K. The wait is searched up to 4 h to within 30 s, the bracketing
ladder through a LocalExecutor with 2 workers.

Timing: wall clock (``time.perf_counter``) from the arrival's final state to the answer
(model build and arrival run excluded). The last line is ``wait_seconds_to_answer: X``.
"""

from __future__ import annotations

import time
import warnings
from dataclasses import replace

from heatstack.case import load_case
from heatstack.cli_shipped import demo_case_path
from heatstack.operations.duty import DutyCycle, Environment
from heatstack.operations.heat_input import stop_from_aircraft
from heatstack.questions.chaining import run_from_state
from heatstack.questions.safe_wait import Departure, DispatchLimits, WaitProblem, shortest_safe_wait
from heatstack.studies.executors import LocalExecutor


def main() -> None:
    warnings.simplefilter("ignore")
    case = replace(load_case(demo_case_path()), cell_size=(0.008, 0.008))
    model = case.build_model()
    surfaces = tuple(case.assembly.surfaces)
    arrival_duty = DutyCycle(case.duty.phases[:2])  # the stop and the 5 min held after it
    arrival = run_from_state(model, arrival_duty.schedule(surfaces), case.initial_temperature, case.fuse_plugs)
    ambient = 298.15
    rto = stop_from_aircraft("45 t", "105 kt", 4, 0.9, stop_time="35 s", name="rejected take-off")
    departure = Departure(
        rto, Environment(ambient_temperature=ambient), Environment(ambient_temperature=ambient, ground_speed="30 kt")
    )
    limits = DispatchLimits(tuple(case.fuse_plugs), plug_margin=10.0, heat_sink_limit=1100.0)
    problem = WaitProblem(model, arrival.final_state, departure, limits, surfaces)
    print(f"model: {model.n_cells} cells (8 mm); arrival state at {arrival.final_state.time:.0f} s")
    start = time.perf_counter()
    with LocalExecutor(workers=2) as executor:
        answer = shortest_safe_wait(problem, "4 h", "30 s", executor)
    seconds = time.perf_counter() - start
    print(answer.message)
    for name, margin, unit in answer.at_wait.margins:
        print(f"  {name:16s} margin {margin:9.2f} {unit}")
    print(f"runs: {len(answer.samples)}; sensor at departure {answer.at_wait.sensor_at_departure - 273.15:.0f} degC")
    print(f"wait_seconds_to_answer: {seconds:.1f}")


if __name__ == "__main__":
    main()
