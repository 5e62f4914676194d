"""The safe quantity parser: one number and a unit expression, checked before pint sees it."""

from __future__ import annotations

import time

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatstack.errors import HeatstackError, InputError, UnitError
from heatstack.unit_parser import registry, unit
from heatstack.units import quantity, quantity_array


def test_number_with_unit_converts_to_si():
    assert quantity("125 mm", "length", "r") == pytest.approx(0.125)


def test_number_without_space_before_unit_is_read():
    assert quantity("20mm", "length", "r") == pytest.approx(0.020)


def test_scientific_notation_is_read():
    assert quantity("1.5e3 W/K", "thermal_conductance", "g") == pytest.approx(1500.0)


def test_caret_and_double_star_powers_agree():
    a = quantity("2000 W/(m^2*K)", "heat_transfer_coefficient", "h")
    b = quantity("2000 W/(m**2*K)", "heat_transfer_coefficient", "h")
    assert a == b == pytest.approx(2000.0)


def test_negative_exponent_in_unit_is_read():
    assert quantity("3 m*s^-1", "speed", "v") == pytest.approx(3.0)


def test_celsius_is_an_absolute_temperature():
    assert quantity("15 degC", "temperature", "t") == pytest.approx(288.15)


def test_celsius_is_one_kelvin_as_a_difference():
    assert quantity("3 degC", "temperature_difference", "dt") == pytest.approx(3.0)


def test_pint_quantity_is_accepted():
    assert quantity(registry().Quantity(2.0, "mm"), "length", "r") == pytest.approx(0.002)


def test_bare_number_is_si():
    assert quantity(0.2, "length", "r") == 0.2


def test_bare_number_with_separate_unit():
    assert quantity(100, "speed", "v", unit="kt") == pytest.approx(51.4444, rel=1e-4)


@pytest.mark.parametrize("text", ["70,5 t", "177,5 degC", "0,52 m", "1,000 kg"])
def test_decimal_comma_is_an_error_with_its_own_message(text):
    with pytest.raises(UnitError, match="use a decimal point"):
        quantity(text, "mass", "mass")


@pytest.mark.parametrize("text", ["--1 degC", "+-1 K", "- 1 K"])
def test_more_than_one_sign_is_an_error(text):
    with pytest.raises(UnitError, match="cannot read"):
        quantity(text, "temperature", "t")


def test_arithmetic_in_the_number_is_refused():
    with pytest.raises(UnitError, match="cannot read '2\\*3 m'"):
        quantity("2*3 m", "length", "r")


def test_tower_of_powers_is_refused_at_once():
    start = time.perf_counter()
    with pytest.raises(UnitError):
        quantity("9**9**9 s", "time", "t")
    assert time.perf_counter() - start < 1.0


def test_power_of_ten_written_as_arithmetic_is_refused():
    with pytest.raises(UnitError):
        quantity("10**400 s", "time", "t")


def test_number_beyond_float_range_is_an_error():
    with pytest.raises(InputError, match="range of a float"):
        quantity("1e400 m", "length", "r")


@pytest.mark.parametrize("text", ["nan degC", "inf s", "-inf K"])
def test_non_finite_text_is_an_error_by_default(text):
    with pytest.raises(InputError, match="finite"):
        quantity(text, "time" if "s" in text.split()[-1] else "temperature", "x")


def test_non_finite_is_accepted_when_the_caller_allows():
    assert quantity("inf s", "time", "t", allow_nonfinite=True) == float("inf")


def test_non_finite_number_is_an_error_by_default():
    with pytest.raises(InputError, match="finite"):
        quantity(float("nan"), "length", "r")


def test_huge_python_integer_is_an_error():
    with pytest.raises(InputError):
        quantity(10**400, "length", "r")


def test_unit_exponent_beyond_four_is_refused():
    with pytest.raises(UnitError, match="beyond"):
        quantity("1 m^5", "length", "r")


def test_deep_parentheses_are_refused():
    with pytest.raises(UnitError, match="nested too deep"):
        quantity("1 ((((((m))))))", "length", "r")


def test_unknown_unit_is_a_unit_error():
    with pytest.raises(UnitError, match="unknown unit"):
        quantity("3 furlongs_per_fortnight", "speed", "v")


def test_wrong_dimension_names_the_field():
    with pytest.raises(UnitError, match="assembly.cell_size: expected length"):
        quantity("5 s", "length", "assembly.cell_size")


def test_boolean_is_not_a_number():
    with pytest.raises(InputError, match="expected a number"):
        quantity(True, "length", "r")


def test_message_quotes_at_most_about_80_characters():
    text = "1 " + "m*" * 90 + "?"
    with pytest.raises(UnitError) as info:
        quantity(text, "length", "r")
    quoted = str(info.value).split("'")[1]
    assert len(quoted) <= 80


def test_overlong_text_is_refused():
    with pytest.raises(UnitError, match="longer than"):
        quantity("1 " + "m" * 500, "length", "r")


def test_exclusive_minimum_refuses_zero():
    with pytest.raises(InputError, match="must be > 0"):
        quantity("0 mm", "length", "r", minimum=0.0, exclusive_minimum=True)


def test_maximum_is_checked_in_si():
    with pytest.raises(InputError, match="must be <= 1"):
        quantity("150 %", "dimensionless", "share", maximum=1.0)


def test_range_error_class_is_the_callers():
    class Custom(InputError):
        pass

    with pytest.raises(Custom):
        quantity(-1.0, "length", "r", minimum=0.0, error=Custom)


def test_separate_unit_string_is_checked_like_a_value():
    with pytest.raises(UnitError, match="not a unit"):
        quantity(1.0, "length", "r", unit="2*m")


def test_unit_function_refuses_arithmetic():
    with pytest.raises(UnitError, match="not a unit"):
        unit("m**9**9", "u")


def test_unit_function_reads_a_compound_unit():
    assert unit("W/(m^2*K)", "u") == registry().parse_units("W/(m**2*K)")


def test_array_of_strings_converts_each_item():
    out = quantity_array(["0 kt", "100 kt"], "speed", "brake_share")
    assert out[1] == pytest.approx(51.4444, rel=1e-4)


def test_array_item_error_names_its_index():
    with pytest.raises(UnitError, match=r"times\[1\]"):
        quantity_array(["0 s", "1,5 s"], "time", "times")


def test_text_and_separate_unit_together_is_an_error():
    with pytest.raises(UnitError, match="carries a unit"):
        quantity("3 m", "length", "r", unit="mm")


_ALPHABET = st.sampled_from(list("0123456789.,+-eE*/^() mKsgkdCW%nafi_") + ["**", "degC", "inf", "nan"])


@settings(max_examples=300, deadline=None)
@given(st.lists(_ALPHABET, max_size=30).map("".join))
def test_random_strings_give_a_float_or_a_heatstack_error_quickly(text):
    start = time.perf_counter()
    try:
        out = quantity(text, "length", "x")
    except HeatstackError:
        pass
    else:
        assert isinstance(out, float)
    assert time.perf_counter() - start < 0.5


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=60))
def test_arbitrary_unicode_gives_a_float_or_a_heatstack_error(text):
    try:
        out = quantity(text, "temperature", "t")
    except HeatstackError:
        return
    assert isinstance(out, float)


def test_material_unit_key_goes_through_the_unit_check():
    from heatstack.errors import MaterialError
    from heatstack.material_files import material_from_mapping

    table = {"temperature_unit": "K", "source": "test", "table": [[200.0, 1.0], [2000.0, 1.0]]}
    data = {
        "name": "pad",
        "density": {"value": 2000.0, "unit": "kg/m^3", "source": "test"},
        "specific_heat": {**table, "unit": "J/(kg*K)"},
        "conductivity": {**table, "unit": "W/(m*K)**9**9"},
        "emissivity": {**table, "unit": "1", "table": [[200.0, 0.8], [2000.0, 0.8]]},
    }
    with pytest.raises(MaterialError, match=r"\[conductivity\] unit.*not a unit"):
        material_from_mapping(data, "case.toml [materials.pad]")
