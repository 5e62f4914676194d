"""A chained run carries the instrument's state: a sensor that lags when a run ends still
lags when the next run starts from that run's final state.

Check values: the first-order instrument ``tau dy/dt = x - y`` held at a constant input
``X`` relaxes as ``y = X + (y0 - X) exp(-t / tau)`` (Doebelin, Measurement Systems,
5th ed., sec. 3.3, first-order step response, from memory); and a run split in two at a
step boundary gives the readings of the run taken whole.
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
from heatstack.numerics.instrument import first_order_lag
from heatstack.resultfile import write_result
from heatstack.resultread import read_result

STEEL = simple_material("plain", 7800.0, 480.0, 40.0, temperature_range=(200.0, 1500.0))
TAU = 60.0  # s, slow against the heating so the reading lags by tens of kelvin


def test_lag_from_a_given_start_relaxes_exponentially():
    t = np.linspace(0.0, 300.0, 61)
    y = first_order_lag(t, np.full(t.size, 500.0), TAU, initial=350.0)
    np.testing.assert_allclose(y, 500.0 + (350.0 - 500.0) * np.exp(-t / TAU), rtol=0, atol=1e-9)


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


def test_a_split_run_reads_like_the_whole_run():
    model = _model()
    whole = model.run(_schedule(extra=(100.0,)), 300.0, OPTIONS)
    first = model.run(
        Schedule(
            PowerHistory((0.0, 1.0, 200.0), (0.0, 2.0e4, 2.0e4)),
            [Phase("heat", 0.0, 100.0, {"*": FixedConvection(20.0, 300.0, radiation=False)})],
        ),
        300.0,
        OPTIONS,
    )
    state = first.final_state
    # the sensor lags the metal by tens of kelvin when the first run ends
    assert state.readings["sensor"] < first.probes["sensor"][-1] - 10.0
    assert "bare" not in state.readings  # no lag, nothing to carry
    second = model.run(_schedule(), state, OPTIONS)
    k = int(np.searchsorted(whole.times, 100.0))
    assert whole.times[k] == pytest.approx(100.0)
    np.testing.assert_allclose(second.readings["sensor"], whole.readings["sensor"][k:], atol=1e-5)
    np.testing.assert_allclose(second.readings["bare"], whole.readings["bare"][k:], atol=1e-5)


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
