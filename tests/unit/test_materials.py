"""Tests of the materials layer: property tables, exact enthalpy, file loading.

Each test checks against something outside the code under test: a closed form
written out here, scipy's adaptive quadrature, finite differences, or published
handbook values copied into the test with their citation.
"""

from __future__ import annotations

import tomllib
import warnings
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import quad

from heatstack.errors import HeatstackWarning, MaterialError, PropertyRangeError
from heatstack.material_files import available_materials, load_material, material_from_mapping, materials_directory
from heatstack.materials import REFERENCE_TEMPERATURE, Material
from heatstack.property_table import PropertyTable

SHIPPED = available_materials()
T_REF = 293.15


def table(name: str, material: str, rows, extrapolation: str = "error") -> PropertyTable:
    rows = np.asarray(rows, dtype=float)
    return PropertyTable(name, material, rows[:, 0], rows[:, 1], extrapolation, "test table")


def simple_material(name: str, cp_rows, extrapolation: str = "error", density: float = 1000.0) -> Material:
    k = table("conductivity", name, [[100.0, 10.0], [2000.0, 20.0]], extrapolation)
    return Material(
        name=name,
        description="test material",
        density=density,
        specific_heat=table("specific_heat", name, cp_rows, extrapolation),
        conductivity_in_plane=k,
        conductivity_through_thickness=k,
        emissivity=table("emissivity", name, [[100.0, 0.5], [2000.0, 0.5]], extrapolation),
        extrapolation=extrapolation,
    )


def mapping(name: str = "test-material", **overrides) -> dict:
    """A valid material mapping in the file layout; ``overrides`` replace top-level keys."""

    def section(unit: str, rows: list) -> dict:
        return {"unit": unit, "temperature_unit": "K", "source": "test values", "table": rows}

    data = {
        "name": name,
        "description": "a test material",
        "extrapolation": "error",
        "density": {"value": 2000.0, "unit": "kg/m^3", "source": "test value"},
        "specific_heat": section("J/(kg*K)", [[200.0, 500.0], [400.0, 700.0], [800.0, 900.0]]),
        "conductivity": section("W/(m*K)", [[200.0, 10.0], [800.0, 12.0]]),
        "emissivity": section("1", [[200.0, 0.5], [800.0, 0.6]]),
    }
    data.update(overrides)
    return data


def write_material(directory: Path, text: str, name: str = "bad") -> Path:
    path = directory / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


GOOD_FILE = """
name = "{name}"
description = "test"
extrapolation = "error"
[density]
value = 2000.0
unit = "kg/m^3"
source = "test"
[specific_heat]
unit = "J/(kg*K)"
temperature_unit = "K"
source = "test"
table = [[200.0, 500.0], [400.0, 700.0], [800.0, 900.0]]
[conductivity]
unit = "W/(m*K)"
temperature_unit = "K"
source = "test"
table = [[200.0, 10.0], [800.0, 12.0]]
[emissivity]
unit = "1"
temperature_unit = "K"
source = "test"
table = [[200.0, 0.5], [800.0, 0.6]]
"""


def quad_enthalpy(material: Material, t: float) -> float:
    """rho * integral of cp from 293.15 K to t by scipy.integrate.quad (independent of our integral).

    The integrand is the table interpolated with numpy (held constant beyond the ends
    for a clamped table); the knots are passed as break points so quad treats each
    linear piece exactly.
    """
    cp = material.specific_heat

    def integrand(x: float) -> float:
        return float(np.interp(x, cp.temperature, cp.value))

    low, high = min(T_REF, t), max(T_REF, t)
    inside = [k for k in cp.temperature if low < k < high]
    value, _ = quad(integrand, low, high, points=inside or None, epsabs=0.0, epsrel=1e-13, limit=200)
    return material.density * (value if t >= T_REF else -value)


# ------------------------------------------------------------------ enthalpy


@pytest.mark.parametrize("name", SHIPPED)
def test_enthalpy_equals_quadrature_of_rho_cp(name):
    material = load_material(name)
    low, high = material.specific_heat.temperature_range
    temperatures = np.concatenate([np.linspace(low, high, 37), material.specific_heat.temperature])
    temperatures = temperatures[np.abs(temperatures - T_REF) > 1.0]
    ours = material.enthalpy(temperatures)
    expected = np.array([quad_enthalpy(material, t) for t in temperatures])
    np.testing.assert_allclose(ours, expected, rtol=1e-9, atol=0.0)


@pytest.mark.parametrize("name", SHIPPED)
def test_enthalpy_is_zero_at_reference_temperature(name):
    assert REFERENCE_TEMPERATURE == T_REF
    assert load_material(name).enthalpy(T_REF) == 0.0


def test_enthalpy_of_two_row_table_matches_hand_closed_form():
    # cp(T) = a + b (T - T0) with T0 = 200 K, a = 500 J/(kg K), b = (900 - 500) / 200 = 2 J/(kg K^2).
    # H(T) = rho [a (T - Tref) + b/2 ((T - T0)^2 - (Tref - T0)^2)], Tref = 293.15 K, rho = 1000 kg/m^3.
    # At T = 350 K: 500 * 56.85 + (150^2 - 93.15^2) = 28425 + 13823.0775 = 42248.0775 J/kg.
    material = simple_material("two-row", [[200.0, 500.0], [400.0, 900.0]])
    rho, a, b, t0 = 1000.0, 500.0, 2.0, 200.0

    def closed_form(t):
        return rho * (a * (t - T_REF) + b / 2 * ((t - t0) ** 2 - (T_REF - t0) ** 2))

    assert material.enthalpy(350.0) == pytest.approx(42_248_077.5, rel=1e-12)
    t = np.array([200.0, 250.0, 293.15, 350.0, 400.0])
    np.testing.assert_allclose(material.enthalpy(t), closed_form(t), rtol=1e-12, atol=1e-6)


def test_clamped_enthalpy_is_linear_beyond_the_table():
    # Beyond a clamped table cp stays at its end value: H(T) = H(T_end) + rho cp_end (T - T_end).
    material = simple_material("clamp-linear", [[250.0, 500.0], [400.0, 900.0]], extrapolation="clamp")
    with pytest.warns(HeatstackWarning):
        h = material.enthalpy(np.array([150.0, 600.0]))
    h_low, h_high = material.enthalpy(np.array([250.0, 400.0]))
    assert h[0] == pytest.approx(h_low - 1000.0 * 500.0 * 100.0, rel=1e-12)
    assert h[1] == pytest.approx(h_high + 1000.0 * 900.0 * 200.0, rel=1e-12)


@pytest.mark.parametrize("name", SHIPPED)
def test_enthalpy_derivative_equals_volumetric_heat_capacity(name):
    # A central difference of a quadratic is exact at the centre, so inside each table
    # piece (H(T + d) - H(T - d)) / 2d must equal rho cp(T) up to rounding.
    material = load_material(name)
    knots = material.specific_heat.temperature
    centres = np.concatenate([knots[:-1] + f * np.diff(knots) for f in (0.25, 0.5, 0.75)])
    d = 1e-2
    derivative = (material.enthalpy(centres + d) - material.enthalpy(centres - d)) / (2 * d)
    np.testing.assert_allclose(derivative, material.volumetric_heat_capacity(centres), rtol=1e-8)


# ------------------------------------------------------------------ inverse


@pytest.mark.parametrize("name", SHIPPED)
def test_temperature_from_enthalpy_inverts_enthalpy_over_the_table(name):
    material = load_material(name)
    low, high = material.specific_heat.temperature_range
    t = np.concatenate([np.linspace(low, high, 1001), material.specific_heat.temperature, [T_REF]])
    back = material.temperature_from_enthalpy(material.enthalpy(t))
    np.testing.assert_allclose(back, t, rtol=0.0, atol=1e-9)


def test_temperature_from_enthalpy_inverts_constant_and_falling_cp_pieces():
    # cp constant on 300-500 K (linear H), falling on 500-700 K, rising elsewhere.
    rows = [[200.0, 400.0], [300.0, 600.0], [500.0, 600.0], [700.0, 450.0], [900.0, 800.0]]
    material = simple_material("mixed-pieces", rows)
    t = np.linspace(200.0, 900.0, 2001)
    np.testing.assert_allclose(material.temperature_from_enthalpy(material.enthalpy(t)), t, atol=1e-9)


def test_temperature_from_enthalpy_inverts_clamped_pieces():
    rows = [[250.0, 500.0], [400.0, 900.0]]
    material = simple_material("clamp-inverse", rows, extrapolation="clamp")
    t = np.concatenate([np.linspace(100.0, 250.0, 50), np.linspace(400.0, 1200.0, 50)])
    with pytest.warns(HeatstackWarning):
        h = material.enthalpy(t)
    with warnings.catch_warnings():  # the warning was given once already
        warnings.simplefilter("error")
        back = material.temperature_from_enthalpy(h)
    np.testing.assert_allclose(back, t, rtol=0.0, atol=1e-9)


def test_temperature_from_enthalpy_outside_error_table_raises():
    material = simple_material("inverse-range", [[250.0, 500.0], [400.0, 900.0]])
    too_hot = material.enthalpy(400.0) * (1 + 1e-6)
    with pytest.raises(PropertyRangeError, match="inverse-range.*specific_heat"):
        material.temperature_from_enthalpy([0.0, too_hot])


def test_temperature_from_enthalpy_keeps_shape():
    material = load_material("stainless-heat-shield")
    h = material.enthalpy(np.full((3, 4), 500.0))
    assert material.temperature_from_enthalpy(h).shape == (3, 4)
    assert material.temperature_from_enthalpy(0.0).shape == ()


# ------------------------------------------------------------------ tables


def test_table_interpolates_linearly_between_rows():
    # Midway between (300 K, 10) and (500 K, 30) the value is 20; a quarter of the way, 15.
    t = table("conductivity", "interp", [[300.0, 10.0], [500.0, 30.0], [600.0, 30.0]])
    np.testing.assert_allclose(t([300.0, 350.0, 400.0, 550.0]), [10.0, 15.0, 20.0, 30.0])


def test_table_slope_is_piecewise_constant_and_zero_where_clamped():
    # Slopes by hand: (30 - 10) / (500 - 300) = 0.1 per K, then (30 - 30) / 100 = 0.
    t = table("conductivity", "slope-test", [[300.0, 10.0], [500.0, 30.0], [600.0, 30.0]], "clamp")
    np.testing.assert_allclose(t.slope([300.0, 400.0, 550.0, 600.0]), [0.1, 0.1, 0.0, 0.0])
    with pytest.warns(HeatstackWarning):
        np.testing.assert_allclose(t.slope([250.0, 700.0]), [0.0, 0.0])


def test_out_of_range_temperature_raises_naming_material_and_property():
    material = load_material("carbon-carbon")
    with pytest.raises(PropertyRangeError) as info:
        material.specific_heat([300.0, 2600.0])
    message = str(info.value)
    assert "carbon-carbon" in message and "specific_heat" in message
    assert "2600" in message and "200" in message and "2500" in message


def test_out_of_range_enthalpy_and_conductivity_raise():
    material = load_material("low-alloy-steel")
    with pytest.raises(PropertyRangeError, match="low-alloy-steel"):
        material.enthalpy(150.0)
    with pytest.raises(PropertyRangeError, match="conductivity"):
        material.conductivity_radial(np.array([300.0, 2000.0]))


def test_nan_temperature_raises():
    with pytest.raises(PropertyRangeError, match="NaN"):
        load_material("stainless-heat-shield").emissivity([300.0, np.nan])


def test_clamp_table_warns_once_and_clamps_to_end_values():
    t = table("specific_heat", "clamp-once", [[250.0, 500.0], [400.0, 900.0]], "clamp")
    with pytest.warns(HeatstackWarning, match="clamp-once.*specific_heat"):
        np.testing.assert_allclose(t([100.0, 300.0, 1000.0]), [500.0, 500.0 + 400.0 / 3, 900.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        np.testing.assert_allclose(t(50.0), 500.0)


def test_tyre_rubber_clamps_beyond_its_table():
    rubber = load_material("tyre-rubber")
    assert rubber.extrapolation == "clamp"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", HeatstackWarning)
        assert rubber.conductivity_radial(700.0) == rubber.conductivity_radial(500.0)


def test_table_rejects_non_increasing_temperature_naming_the_row():
    with pytest.raises(MaterialError, match=r"row 3 \(T = 400 K\).*row 2 \(T = 400 K\)"):
        table("specific_heat", "rows", [[300.0, 1.0], [400.0, 2.0], [400.0, 3.0]])


# ------------------------------------------------------------------ shipped data


def test_carbon_carbon_cp_roughly_doubles_and_in_plane_exceeds_through_thickness():
    # Graphite-like cp: the issue asks for cp(1000 K) / cp(300 K) between 1.8 and 2.6.
    cc = load_material("carbon-carbon")
    ratio = float(cc.specific_heat(1000.0) / cc.specific_heat(300.0))
    assert 1.8 <= ratio <= 2.6
    assert cc.anisotropic
    t = np.linspace(200.0, 1500.0, 27)
    assert np.all(cc.conductivity_radial(t) > cc.conductivity_axial(t))


def test_isotropic_material_uses_one_table_for_both_directions():
    steel = load_material("low-alloy-steel")
    assert not steel.anisotropic
    assert steel.conductivity_in_plane is steel.conductivity_through_thickness


def test_stainless_matches_handbook_aisi_304():
    # Bergman, Lavine, Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
    # 7th ed. (2011), Table A.1, AISI 304: rho = 7900 kg/m^3;
    # k [W/(m K)] = 12.6, 14.9, 16.6, 19.8, 22.6, 25.4, 28.0, 31.7 and
    # cp [J/(kg K)] = 402, 477, 515, 557, 582, 611, 640, 682 at
    # 200, 300, 400, 600, 800, 1000, 1200, 1500 K.
    shield = load_material("stainless-heat-shield")
    t = [200.0, 300.0, 400.0, 600.0, 800.0, 1000.0, 1200.0, 1500.0]
    assert shield.density == 7900.0
    k_handbook = [12.6, 14.9, 16.6, 19.8, 22.6, 25.4, 28.0, 31.7]
    cp_handbook = [402.0, 477.0, 515.0, 557.0, 582.0, 611.0, 640.0, 682.0]
    np.testing.assert_allclose(shield.conductivity_radial(t), k_handbook)
    np.testing.assert_allclose(shield.specific_heat(t), cp_handbook)


def test_wheel_alloy_matches_handbook_2024_t6():
    # Bergman, Lavine, Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
    # 7th ed. (2011), Table A.1, aluminium alloy 2024-T6: rho = 2770 kg/m^3;
    # k = 163, 177, 186, 186 W/(m K) and cp = 787, 875, 925, 1042 J/(kg K) at 200, 300, 400, 600 K.
    wheel = load_material("forged-aluminium-wheel-alloy")
    t = [200.0, 300.0, 400.0, 600.0]
    assert wheel.density == 2770.0
    np.testing.assert_allclose(wheel.conductivity_axial(t), [163.0, 177.0, 186.0, 186.0])
    np.testing.assert_allclose(wheel.specific_heat(t), [787.0, 875.0, 925.0, 1042.0])


def test_carbon_carbon_cp_matches_handbook_pyrolytic_graphite():
    # Bergman, Lavine, Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
    # 7th ed. (2011), Table A.2, graphite (pyrolytic): cp = 411, 709, 992, 1406, 1650, 1793 J/(kg K)
    # at 200, 300, 400, 600, 800, 1000 K.
    cc = load_material("carbon-carbon")
    t = [200.0, 300.0, 400.0, 600.0, 800.0, 1000.0]
    np.testing.assert_allclose(cc.specific_heat(t), [411.0, 709.0, 992.0, 1406.0, 1650.0, 1793.0])


def test_six_required_materials_are_shipped():
    required = {
        "carbon-carbon",
        "low-alloy-steel",
        "sintered-copper-lining",
        "forged-aluminium-wheel-alloy",
        "stainless-heat-shield",
        "tyre-rubber",
    }
    assert required <= set(SHIPPED)


@pytest.mark.parametrize("name", SHIPPED)
def test_shipped_material_loads_with_plausible_ranges(name):
    material = load_material(name)
    assert material.name == name
    assert Path(material.source_file) == (materials_directory() / f"{name}.toml").resolve()
    low, high = material.specific_heat.temperature_range
    assert low <= 200.0 and high >= 500.0  # the whole assembly sees cold soak to hot bead
    if name in ("carbon-carbon", "low-alloy-steel", "stainless-heat-shield"):
        assert high >= 1500.0  # friction stack and shield in a rejected take-off


@pytest.mark.parametrize("name", SHIPPED)
def test_every_table_in_every_shipped_file_names_its_source(name):
    # Read the raw file with tomllib, independently of the loader.
    data = tomllib.loads((materials_directory() / f"{name}.toml").read_text(encoding="utf-8"))
    sections = [key for key, value in data.items() if isinstance(value, dict)]
    assert "density" in sections and "specific_heat" in sections and "emissivity" in sections
    for key in sections:
        assert isinstance(data[key]["source"], str) and data[key]["source"].strip(), key
    material = load_material(name)
    for prop in (material.specific_heat, material.conductivity_in_plane, material.emissivity):
        assert prop.source.strip()


def test_load_material_is_cached():
    assert load_material("carbon-carbon") is load_material("carbon-carbon")


# ------------------------------------------------------------------ bad input


def test_unknown_top_level_key_is_rejected_naming_it(tmp_path):
    write_material(tmp_path, GOOD_FILE.format(name="bad") + 'colour = "grey"\n')
    with pytest.raises(MaterialError, match="unknown key 'colour'"):
        load_material("bad", tmp_path)


def test_unknown_key_inside_a_table_is_rejected_naming_it(tmp_path):
    text = GOOD_FILE.format(name="bad").replace("[conductivity]\n", '[conductivity]\nnote = "x"\n')
    write_material(tmp_path, text)
    with pytest.raises(MaterialError, match=r"unknown key 'note' in \[conductivity\]"):
        load_material("bad", tmp_path)


def test_non_increasing_temperature_row_is_rejected_naming_the_row(tmp_path):
    text = GOOD_FILE.format(name="bad").replace("[400.0, 700.0], [800.0", "[400.0, 700.0], [350.0")
    path = write_material(tmp_path, text)
    with pytest.raises(MaterialError) as info:
        load_material("bad", tmp_path)
    message = str(info.value)
    assert str(path) in message and "specific_heat" in message and "row 3" in message


def test_unit_of_wrong_dimension_is_rejected_naming_the_key(tmp_path):
    text = GOOD_FILE.format(name="bad").replace('unit = "W/(m*K)"', 'unit = "J/(kg*K)"')
    write_material(tmp_path, text)
    with pytest.raises(MaterialError, match=r"\[conductivity\] unit"):
        load_material("bad", tmp_path)


def test_negative_conductivity_is_rejected(tmp_path):
    text = GOOD_FILE.format(name="bad").replace("[800.0, 12.0]", "[800.0, -12.0]")
    write_material(tmp_path, text)
    with pytest.raises(MaterialError, match=r"'bad'.*conductivity.*row 2"):
        load_material("bad", tmp_path)


def test_emissivity_above_one_is_rejected():
    data = mapping()
    data["emissivity"] = dict(data["emissivity"], table=[[200.0, 0.5], [800.0, 1.2]])
    with pytest.raises(MaterialError, match="emissivity"):
        material_from_mapping(data, "case.toml [materials.x]")


def test_reference_temperature_outside_error_table_is_rejected():
    data = mapping()
    data["specific_heat"] = dict(data["specific_heat"], table=[[300.0, 500.0], [800.0, 900.0]])
    with pytest.raises(MaterialError, match="293.15"):
        material_from_mapping(data, "inline")


def test_unknown_material_name_suggests_the_closest(tmp_path):
    write_material(tmp_path, GOOD_FILE.format(name="carbon-carbon"), name="carbon-carbon")
    write_material(tmp_path, GOOD_FILE.format(name="tyre-rubber"), name="tyre-rubber")
    with pytest.raises(MaterialError) as info:
        load_material("carbon-carbn", tmp_path)
    message = str(info.value)
    assert "Did you mean 'carbon-carbon'?" in message and "tyre-rubber" in message


def test_invalid_toml_is_a_material_error(tmp_path):
    write_material(tmp_path, 'name = "bad"\n[density\nvalue = 1\n')
    with pytest.raises(MaterialError, match="not valid TOML"):
        load_material("bad", tmp_path)


def test_name_must_match_file_name(tmp_path):
    write_material(tmp_path, GOOD_FILE.format(name="other"), name="bad")
    with pytest.raises(MaterialError, match="does not match the file name"):
        load_material("bad", tmp_path)


def test_malformed_row_is_rejected_naming_it():
    data = mapping()
    data["conductivity"] = dict(data["conductivity"], table=[[200.0, 10.0], [800.0, "twelve"]])
    with pytest.raises(MaterialError, match=r"\[conductivity\] table row 2"):
        material_from_mapping(data, "inline")


def test_inline_material_errors_start_with_origin():
    with pytest.raises(MaterialError, match=r"^case.toml \[materials.pad\]: "):
        material_from_mapping(mapping(density={"value": 1.0, "unit": "kg"}), "case.toml [materials.pad]")


def test_inline_material_with_celsius_table_equals_kelvin_table():
    # 0 degC = 273.15 K exactly (SI definition of the Celsius scale).
    kelvin = material_from_mapping(mapping("in-kelvin"), "inline")
    data = mapping("in-celsius")
    rows = [[t - 273.15, v] for t, v in data["specific_heat"]["table"]]
    data["specific_heat"] = dict(data["specific_heat"], temperature_unit="degC", table=rows)
    celsius = material_from_mapping(data, "inline")
    assert celsius.source_file == "<inline>"
    np.testing.assert_allclose(celsius.specific_heat.temperature, kelvin.specific_heat.temperature)
    np.testing.assert_allclose(celsius.enthalpy(600.0), kelvin.enthalpy(600.0), rtol=1e-12)


def test_anisotropic_inline_material_needs_both_directions():
    data = mapping()
    data["conductivity_in_plane"] = data.pop("conductivity")
    with pytest.raises(MaterialError, match="conductivity_through_thickness"):
        material_from_mapping(data, "inline")
