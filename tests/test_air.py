"""Dry air property fits against CoolProp 8 (Lemmon et al. 2000 equation of state,
Lemmon and Jacobsen 2004 transport), at 1 atm."""

from __future__ import annotations

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI

from heatstack.errors import HeatstackWarning, InputError
from heatstack.operations import air

P_ATM = 101325.0
TEMPERATURES = (250.0, 400.0, 700.0, 1200.0)

# heatstack function, CoolProp output key
PROPERTIES = {
    "density": (lambda t: air.density(t, P_ATM), "D"),
    "viscosity": (air.viscosity, "V"),
    "conductivity": (air.conductivity, "L"),
    "specific_heat": (air.specific_heat, "C"),
    "prandtl": (air.prandtl, "Prandtl"),
}


@pytest.mark.parametrize("temperature", TEMPERATURES)
@pytest.mark.parametrize("name", sorted(PROPERTIES))
def test_property_matches_coolprop_within_2_percent(name: str, temperature: float) -> None:
    # Source: CoolProp 8 PropsSI(..., 'Air') at 1 atm.
    function, key = PROPERTIES[name]
    expected = PropsSI(key, "T", temperature, "P", P_ATM, "Air")
    assert float(function(temperature)) == pytest.approx(expected, rel=0.02)


@pytest.mark.parametrize("temperature", TEMPERATURES)
def test_derived_properties_match_coolprop(temperature: float) -> None:
    # Source: CoolProp 8; kinematic viscosity mu/rho, diffusivity k/(rho cp) and the
    # isobaric expansion coefficient (which the ideal gas gives as 1/T).
    props = air.air_properties(temperature, P_ATM)
    state = {key: PropsSI(key, "T", temperature, "P", P_ATM, "Air") for key in ("D", "V", "L", "C")}
    beta = PropsSI("isobaric_expansion_coefficient", "T", temperature, "P", P_ATM, "Air")
    assert float(props.kinematic_viscosity) == pytest.approx(state["V"] / state["D"], rel=0.02)
    assert float(props.diffusivity) == pytest.approx(state["L"] / (state["D"] * state["C"]), rel=0.02)
    assert float(props.expansion) == pytest.approx(beta, rel=0.02)


def test_density_is_ideal_gas_with_stated_gas_constant() -> None:
    # Closed form rho = p / (R T) with R = 287.05 J/(kg K).
    assert float(air.density(300.0, 80000.0)) == pytest.approx(80000.0 / (287.05 * 300.0), rel=1e-14)
    assert float(air.air_properties(300.0, 50000.0).density) == pytest.approx(
        0.5 * float(air.air_properties(300.0, 100000.0).density), rel=1e-14
    )


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
