"""Cooling laws: BoundaryLaw protocol, hand values from the correlations with CoolProp
air properties, trends and input checks."""

from __future__ import annotations

import math

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI
from ht.conv_external import Nu_cylinder_Churchill_Bernstein, Nu_horizontal_plate_laminar_Baehr
from ht.conv_free_immersed import Nu_vertical_plate_Churchill

from heatstack.errors import HeatstackWarning, InputError
from heatstack.numerics.schedule import BoundaryLaw, FixedConvection
from heatstack.operations.environment import (
    CrossFlow,
    FanCooling,
    MixedConvection,
    NaturalConvection,
    RotatingDisc,
    WheelWell,
)

T_AIR = 290.0
G = 9.80665


def coolprop_air(t_film: float, pressure: float) -> dict[str, float]:
    """Film properties from CoolProp 8 (the independent source of these checks)."""
    keys = {"rho": "D", "mu": "V", "k": "L", "cp": "C"}
    props = {name: PropsSI(key, "T", t_film, "P", pressure, "Air") for name, key in keys.items()}
    props["nu"] = props["mu"] / props["rho"]
    props["alpha"] = props["k"] / (props["rho"] * props["cp"])
    props["pr"] = props["nu"] / props["alpha"]
    return props


def h_of(law: BoundaryLaw, ts: float) -> float:
    return float(law.convection_coefficient(np.array([ts]), 0.0)[0])


def all_laws() -> list[BoundaryLaw]:
    natural = NaturalConvection("vertical_plate", 0.3, T_AIR)
    forced = CrossFlow(0.6, 15.0, T_AIR)
    return [
        natural,
        NaturalConvection("horizontal_cylinder", 0.6, T_AIR),
        NaturalConvection("horizontal_plate_up", 0.1, T_AIR),
        NaturalConvection("horizontal_plate_down", 0.1, T_AIR),
        forced,
        RotatingDisc(0.25, 90.0, T_AIR),
        FanCooling(0.4, 6.0, T_AIR),
        MixedConvection(natural, forced),
        WheelWell("vertical_plate", 0.3, 320.0, 305.0, 70000.0),
        FixedConvection(20.0, T_AIR),
    ]


@pytest.mark.parametrize("law", all_laws(), ids=lambda law: type(law).__name__)
def test_each_law_is_a_boundary_law_with_positive_h_of_right_order(law: BoundaryLaw) -> None:
    assert isinstance(law, BoundaryLaw)
    h = law.convection_coefficient(np.linspace(330.0, 1100.0, 50), 12.0)
    assert h.shape == (50,)
    assert np.all(h > 0.5) and np.all(h < 200.0)  # air: 1-100 W/(m^2 K) for these sizes and speeds


def test_natural_vertical_plate_hand_value() -> None:
    # Churchill-Chu 1975 (via ht) with CoolProp properties at T_f = 450 K, p = 1 atm.
    ts, length = 610.0, 0.3
    air = coolprop_air(0.5 * (ts + T_AIR), 101325.0)
    gr = G * (1.0 / 450.0) * (ts - T_AIR) * length**3 / air["nu"] ** 2
    expected = Nu_vertical_plate_Churchill(air["pr"], gr) * air["k"] / length
    assert h_of(NaturalConvection("vertical_plate", length, T_AIR), ts) == pytest.approx(expected, rel=0.02)


def test_natural_at_reduced_pressure_hand_value() -> None:
    # Same at 60 kPa (about 4200 m): density, hence Ra, falls with pressure.
    ts, length, p = 500.0, 0.3, 60000.0
    air = coolprop_air(0.5 * (ts + T_AIR), p)
    gr = G * (2.0 / (ts + T_AIR)) * (ts - T_AIR) * length**3 / air["nu"] ** 2
    expected = Nu_vertical_plate_Churchill(air["pr"], gr) * air["k"] / length
    law = NaturalConvection("vertical_plate", length, T_AIR, ambient_pressure=p)
    assert h_of(law, ts) == pytest.approx(expected, rel=0.02)
    assert h_of(law, ts) < h_of(NaturalConvection("vertical_plate", length, T_AIR), ts)


def test_crossflow_hand_value() -> None:
    # Churchill-Bernstein 1977 (via ht) with CoolProp properties at T_f = 400 K.
    ts, d, v = 510.0, 0.6, 15.0
    air = coolprop_air(400.0, 101325.0)
    expected = Nu_cylinder_Churchill_Bernstein(v * d / air["nu"], air["pr"]) * air["k"] / d
    assert h_of(CrossFlow(d, v, T_AIR), ts) == pytest.approx(expected, rel=0.02)


def test_rotating_disc_hand_value_laminar_and_turbulent() -> None:
    # Re = omega R^2 / nu with CoolProp nu at T_f = 400 K. Laminar (omega = 10 rad/s,
    # Re ~ 2.4e4): h = 0.33 k sqrt(omega/nu). Turbulent (omega = 400 rad/s, Re ~ 1e6):
    # Nu = 0.33 Re^0.5 (Re_c/Re) + 0.015 Re^0.8 (1 - (Re_c/Re)^1.3), from memory coefficients.
    ts, r = 510.0, 0.25
    air = coolprop_air(400.0, 101325.0)
    laminar = 0.33 * air["k"] * math.sqrt(10.0 / air["nu"])
    assert h_of(RotatingDisc(r, 10.0, T_AIR), ts) == pytest.approx(laminar, rel=0.02)
    re = 400.0 * r**2 / air["nu"]
    frac = 2.4e5 / re
    nu_avg = 0.33 * math.sqrt(re) * frac + 0.015 * re**0.8 * (1 - frac**1.3)
    assert h_of(RotatingDisc(r, 400.0, T_AIR), ts) == pytest.approx(nu_avg * air["k"] / r, rel=0.02)


def test_fan_cooling_hand_values() -> None:
    # Flat plate average, Incropera et al. 6th ed. ch. 7 (eq. 7.30 laminar via ht's
    # Nu_horizontal_plate_laminar_Baehr; eq. 7.38 mixed by hand), CoolProp at 400 K.
    ts, length = 510.0, 0.4
    air = coolprop_air(400.0, 101325.0)
    re = 6.0 * length / air["nu"]
    laminar = Nu_horizontal_plate_laminar_Baehr(re, air["pr"]) * air["k"] / length
    assert h_of(FanCooling(length, 6.0, T_AIR), ts) == pytest.approx(laminar, rel=0.02)
    re = 60.0 * length / air["nu"]
    mixed = (0.037 * re**0.8 - 871.0) * air["pr"] ** (1 / 3) * air["k"] / length
    assert h_of(FanCooling(length, 60.0, T_AIR), ts) == pytest.approx(mixed, rel=0.02)


@pytest.mark.parametrize(
    "shape", ["vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down"]
)
@pytest.mark.parametrize("length", [0.05, 0.3, 1.0])
def test_natural_h_rises_with_surface_temperature(shape: str, length: float) -> None:
    # Up to 750 K. Above, in the turbulent Ra^(1/3) regime h ~ dT^(1/3) T_f^(-0.7)
    # with film properties, which peaks near T_f = 1.9 T_amb (T_s ~ 820 K): a known
    # feature of constant-property correlations, documented in NaturalConvection.
    law = NaturalConvection(shape, length, T_AIR)
    h = law.convection_coefficient(np.linspace(T_AIR + 1.0, 750.0, 300), 0.0)
    assert np.all(np.diff(h) > 0)


def test_horizontal_plate_cold_surface_uses_other_side() -> None:
    # A cold upward face behaves as a hot downward face: 0.27 / 0.54 at Ra < 1e7 (McAdams).
    ts = np.array([T_AIR - 40.0])
    up = NaturalConvection("horizontal_plate_up", 0.05, T_AIR).convection_coefficient(ts, 0.0)
    down = NaturalConvection("horizontal_plate_down", 0.05, T_AIR).convection_coefficient(ts, 0.0)
    assert float(up[0] / down[0]) == pytest.approx(0.5, rel=1e-12)


def test_mixed_lies_between_max_and_sum() -> None:
    natural = NaturalConvection("horizontal_cylinder", 0.6, T_AIR)
    ts = np.linspace(300.0, 1200.0, 40)
    for forced in (CrossFlow(0.6, 0.3, T_AIR), CrossFlow(0.6, 3.0, T_AIR), RotatingDisc(0.3, 5.0, T_AIR)):
        h_n = natural.convection_coefficient(ts, 0.0)
        h_f = forced.convection_coefficient(ts, 0.0)
        h = MixedConvection(natural, forced).convection_coefficient(ts, 0.0)
        assert np.all(h >= np.maximum(h_n, h_f)) and np.all(h <= h_n + h_f)
        assert np.allclose(h, np.cbrt(h_n**3 + h_f**3), rtol=1e-14)


def test_wheel_well_is_still_air_at_its_own_temperatures() -> None:
    well = WheelWell("horizontal_cylinder", 0.5, 330.0, 310.0, 75000.0, radiation=True)
    same = NaturalConvection("horizontal_cylinder", 0.5, 330.0, 75000.0, 310.0)
    ts = np.linspace(340.0, 900.0, 20)
    assert well.ambient_temperature == 330.0 and well.surroundings_temperature == 310.0
    assert np.array_equal(well.convection_coefficient(ts, 0.0), same.convection_coefficient(ts, 0.0))


def test_units_accepted_and_defaults() -> None:
    law = NaturalConvection("vertical_plate", "30 cm", "16.85 degC", "1 atm")
    assert law.length == pytest.approx(0.3, rel=1e-14)
    assert law.ambient_temperature == pytest.approx(T_AIR, rel=1e-12)
    assert law.ambient_pressure == pytest.approx(101325.0, rel=1e-14)
    assert law.surroundings_temperature == law.ambient_temperature and law.radiation is True
    fixed = FixedConvection("25 W/(m**2*K)", "20 degC", radiation=False)
    assert isinstance(fixed, FixedConvection) and fixed.ambient_temperature == pytest.approx(293.15)
    assert np.all(fixed.convection_coefficient(np.ones(3), 0.0) == 25.0)


def test_vectorised_over_2d_arrays() -> None:
    law = CrossFlow(0.5, 8.0, T_AIR)
    ts = np.linspace(300.0, 900.0, 12).reshape(3, 4)
    h = law.convection_coefficient(ts, 0.0)
    assert h.shape == (3, 4)
    assert h[1, 2] == pytest.approx(h_of(law, float(ts[1, 2])), rel=1e-14)


def test_film_beyond_air_fits_warns() -> None:
    law = NaturalConvection("vertical_plate", 0.3, T_AIR)
    with pytest.warns(HeatstackWarning, match="1500 K"):
        h = law.convection_coefficient(np.array([3200.0]), 0.0)
    assert np.isfinite(h).all()


@pytest.mark.parametrize(
    ("build", "field"),
    [
        (lambda: NaturalConvection("vertical_plate", -0.3, T_AIR), "length"),
        (lambda: NaturalConvection("vertical_plate", 0.0, T_AIR), "length"),
        (lambda: NaturalConvection("sphere", 0.3, T_AIR), "shape"),
        (lambda: NaturalConvection("vertical_plate", 0.3, T_AIR, ambient_pressure=0.0), "ambient_pressure"),
        (lambda: NaturalConvection("vertical_plate", 0.3, 120.0), "ambient_temperature"),
        (lambda: NaturalConvection("vertical_plate", 0.3, T_AIR, 1e5, -3.0), "surroundings_temperature"),
        (lambda: CrossFlow(0.5, -2.0, T_AIR), "air_speed"),
        (lambda: CrossFlow(-0.5, 2.0, T_AIR), "diameter"),
        (lambda: CrossFlow(0.5, 2.0, T_AIR, ambient_pressure=-1e5), "ambient_pressure"),
        (lambda: RotatingDisc(-0.2, 50.0, T_AIR), "radius"),
        (lambda: RotatingDisc(0.2, -50.0, T_AIR), "angular_speed"),
        (lambda: FanCooling(0.4, -1.0, T_AIR), "air_speed"),
        (lambda: FanCooling(0.4, 1.0, "20 kg"), "ambient_temperature"),
        (lambda: WheelWell("vertical_plate", 0.3, 320.0, 300.0, pressure=-5.0), "pressure"),
        (lambda: WheelWell("vertical_plate", 0.3, 320.0, -300.0), "wall_temperature"),
        (lambda: MixedConvection(CrossFlow(0.5, 2.0, T_AIR), CrossFlow(0.5, 2.0, 300.0)), "forced"),
        (lambda: MixedConvection(CrossFlow(0.5, 2.0, T_AIR), "fan"), "forced"),
    ],
)
def test_bad_inputs_raise_naming_the_field(build, field: str) -> None:
    with pytest.raises(InputError, match=field):
        build()


def test_tabulated_law_matches_the_correlation_it_replaces():
    """The solver's table of h(T_s) (2 K spacing) reproduces the correlation within 0.5 %
    away from the ambient temperature (reference: the law itself, evaluated directly)."""
    from heatstack.numerics.tabulated import TabulatedLaw
    from heatstack.operations.environment import NaturalConvection

    law = NaturalConvection("horizontal_cylinder", 0.44, 288.15)
    table = TabulatedLaw(law)
    ts = np.linspace(320.0, 1400.0, 97)
    np.testing.assert_allclose(table(ts, 0.0), law.convection_coefficient(ts, 0.0), rtol=5e-3)
    assert table.low <= 320.0 and table.high >= 1400.0 and table.high < 1500.0
