"""A chained run carries the instrument's state: a state without readings, the results-file round trip and bad
saved readings (the closed-form lag checks are in tests/validation/test_instrument_lag.py).
"""

from __future__ import annotations

import numpy as np
import pytest
from lag_case import OPTIONS, lag_model, lag_schedule

from heatstack import (
    SolverOptions,
    State,
)
from heatstack.errors import InputError
from heatstack.resultfile import write_result
from heatstack.resultread import read_result


def test_a_state_without_readings_starts_in_equilibrium():
    model = lag_model()
    first = model.run(lag_schedule(), 300.0, SolverOptions(fixed_step=2.0, tolerance=1e-8))
    bare = State(first.final_state.time - 100.0, first.final_state.temperature)
    again = model.run(lag_schedule(), bare, OPTIONS)
    assert again.readings["sensor"][0] == pytest.approx(again.probes["sensor"][0])


def test_readings_survive_the_result_file(tmp_path):
    model = lag_model()
    result = model.run(lag_schedule(), 300.0, OPTIONS)
    path = write_result(result, tmp_path / "run.h5")
    back = read_result(path)
    assert back.final_state.readings == pytest.approx(result.final_state.readings)
    assert set(back.final_state.readings) == {"sensor"}


@pytest.mark.parametrize("bad", [float("nan"), -5.0, "hot"])
def test_a_bad_saved_reading_is_named(bad):
    model = lag_model()
    state = State(0.0, np.full(model.n_cells, 300.0), readings={"sensor": bad})
    with pytest.raises(InputError, match="reading of probe 'sensor'"):
        model.run(lag_schedule(), state, OPTIONS)
