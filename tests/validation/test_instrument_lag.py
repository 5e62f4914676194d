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
from lag_case import OPTIONS, TAU, lag_model, lag_schedule

from heatstack import (
    FixedConvection,
    Phase,
    PowerHistory,
    Schedule,
)
from heatstack.numerics.instrument import first_order_lag


def test_lag_from_a_given_start_relaxes_exponentially():
    t = np.linspace(0.0, 300.0, 61)
    y = first_order_lag(t, np.full(t.size, 500.0), TAU, initial=350.0)
    np.testing.assert_allclose(y, 500.0 + (350.0 - 500.0) * np.exp(-t / TAU), rtol=0, atol=1e-9)


def test_a_split_run_reads_like_the_whole_run():
    model = lag_model()
    whole = model.run(lag_schedule(extra=(100.0,)), 300.0, OPTIONS)
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
    second = model.run(lag_schedule(), state, OPTIONS)
    k = int(np.searchsorted(whole.times, 100.0))
    assert whole.times[k] == pytest.approx(100.0)
    np.testing.assert_allclose(second.readings["sensor"], whole.readings["sensor"][k:], atol=1e-5)
    np.testing.assert_allclose(second.readings["bare"], whole.readings["bare"][k:], atol=1e-5)
