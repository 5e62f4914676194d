"""A chained run carries the instrument's state: a state without readings, the results-file round trip and bad
saved readings (the closed-form lag checks are in tests/validation/test_instrument_lag.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    State,
    simple_material,
)
from heatstack.errors import InputError
from heatstack.resultfile import write_result
from heatstack.resultread import read_result

STEEL = simple_material("plain", 7800.0, 480.0, 40.0, temperature_range=(200.0, 1500.0))
TAU = 60.0  # s, slow against the heating so the reading lags by tens of kelvin


def _model() -> Model:
    assembly = Assembly(
        [Part("rotor", "plain", 0.1, 0.2, 0.0, 0.02, "rotor"), Part("stator", "plain", 0.1, 0.2, 0.02, 0.04, "stator")],
        probes=[Probe("sensor", 0.15, 0.03, time_constant=TAU), Probe("bare", 0.15, 0.03)],
    )
    return Model.build(assembly, 0.01, materials={"plain": STEEL})


def _schedule(extra=()) -> Schedule:
    law = {"*": FixedConvection(20.0, 300.0, radiation=False)}
    power = PowerHistory((0.0, 1.0, 200.0), (0.0, 2.0e4, 2.0e4))
    return Schedule(power, [Phase("heat", 0.0, 200.0, law)], extra_breakpoints=extra)


OPTIONS = SolverOptions(fixed_step=2.0, tolerance=1e-8)


def test_a_state_without_readings_starts_in_equilibrium():
    model = _model()
    first = model.run(_schedule(), 300.0, SolverOptions(fixed_step=2.0, tolerance=1e-8))
    bare = State(first.final_state.time - 100.0, first.final_state.temperature)
    again = model.run(_schedule(), bare, OPTIONS)
    assert again.readings["sensor"][0] == pytest.approx(again.probes["sensor"][0])


def test_readings_survive_the_result_file(tmp_path):
    model = _model()
    result = model.run(_schedule(), 300.0, OPTIONS)
    path = write_result(result, tmp_path / "run.h5")
    back = read_result(path)
    assert back.final_state.readings == pytest.approx(result.final_state.readings)
    assert set(back.final_state.readings) == {"sensor"}


@pytest.mark.parametrize("bad", [float("nan"), -5.0, "hot"])
def test_a_bad_saved_reading_is_named(bad):
    model = _model()
    state = State(0.0, np.full(model.n_cells, 300.0), readings={"sensor": bad})
    with pytest.raises(InputError, match="reading of probe 'sensor'"):
        model.run(_schedule(), state, OPTIONS)
