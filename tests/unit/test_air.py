"""Dry-air property fits: vectorised evaluation, range checks and bad input (the CoolProp comparisons are in
tests/validation/test_air_properties.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from heatstack.errors import HeatstackWarning, InputError
from heatstack.operations import air

P_ATM = 101325.0


def test_vectorised_over_arrays() -> None:
    temps = np.array([[210.0, 500.0], [900.0, 1490.0]])
    props = air.air_properties(temps, P_ATM)
    assert props.viscosity.shape == temps.shape
    for index, t in np.ndenumerate(temps):
        assert props.conductivity[index] == pytest.approx(float(air.conductivity(t)), rel=1e-14)
        assert props.prandtl[index] == pytest.approx(float(air.prandtl(t)), rel=1e-14)


@pytest.mark.parametrize("bad", [150.0, 1600.0, float("nan")])
def test_out_of_range_temperature_raises_naming_it(bad: float) -> None:
    with pytest.raises(InputError, match="air temperature") as info:
        air.viscosity(np.array([300.0, bad]))
    assert str(bad) in str(info.value)


def test_clamp_warns_and_uses_limit() -> None:
    with pytest.warns(HeatstackWarning, match="200-1500 K"):
        props = air.air_properties(np.array([1800.0, 300.0]), P_ATM, clamp=True)
    assert props.viscosity[0] == pytest.approx(float(air.viscosity(1500.0)), rel=1e-14)


@pytest.mark.parametrize("pressure", [0.0, -5.0, float("inf")])
def test_bad_pressure_raises(pressure: float) -> None:
    with pytest.raises(InputError, match="pressure"):
        air.air_properties(300.0, pressure)
