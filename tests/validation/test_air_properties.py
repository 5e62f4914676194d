"""Dry air property fits against CoolProp 8 (Lemmon et al. 2000 equation of state,
Lemmon and Jacobsen 2004 transport), at 1 atm."""

from __future__ import annotations

import pytest
from CoolProp.CoolProp import PropsSI

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
