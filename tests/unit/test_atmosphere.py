"""Standard atmosphere and airspeed conversions: vectorised forms and bad input (the ISO 2533 checks are in
tests/validation/test_atmosphere_iso2533.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from heatstack.errors import InputError
from heatstack.operations import atmosphere as atm


def test_vectorised_cas() -> None:
    cas = np.array([40.0, 60.0, 80.0])
    tas = atm.true_airspeed(cas, 2000.0)
    assert tas.shape == (3,)
    assert tas[1] == pytest.approx(float(atm.true_airspeed(60.0, 2000.0)), rel=1e-14)


@pytest.mark.parametrize("h", [-2500.0, 11500.0, float("nan")])
def test_altitude_out_of_range_raises(h: float) -> None:
    with pytest.raises(InputError, match="pressure_altitude"):
        atm.isa_pressure(h)


def test_supersonic_or_negative_cas_raises() -> None:
    with pytest.raises(InputError, match="calibrated_airspeed"):
        atm.impact_pressure(400.0)
    with pytest.raises(InputError, match="calibrated_airspeed"):
        atm.impact_pressure(-1.0)
    with pytest.raises(InputError, match="supersonic"):
        atm.true_airspeed(300.0, 10000.0)


def test_temperature_and_offset_together_raise() -> None:
    with pytest.raises(InputError, match="temperature_offset"):
        atm.true_airspeed(60.0, 0.0, air_temperature=300.0, temperature_offset=5.0)
