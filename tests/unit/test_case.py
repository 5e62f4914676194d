"""Case files: validation with key paths, suggestions for unknown keys, and a fuzzed loader."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from heatstack.case import load_case, parse_case
from heatstack.errors import HeatstackError, InputError

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml"

SMALL = """
[case]
title = "small explicit stack (test)"
initial_temperature = "20 degC"

[materials.plain]
description = "constant properties for a test"
extrapolation = "error"
density = {value = 2000.0, unit = "kg/m^3", source = "test"}
specific_heat = {unit = "J/(kg*K)", temperature_unit = "K", source = "test", table = [[200.0, 900.0], [2000.0, 900.0]]}
conductivity = {unit = "W/(m*K)", temperature_unit = "K", source = "test", table = [[200.0, 20.0], [2000.0, 20.0]]}
emissivity = {unit = "1", temperature_unit = "K", source = "test", table = [[200.0, 0.8], [2000.0, 0.8]]}

[assembly]
builder = "none"
cell_size = "5 mm"
[[assembly.parts]]
name = "rotor"
material = "plain"
r_inner = "100 mm"
r_outer = "200 mm"
z_min = 0
z_max = "10 mm"
role = "rotor"
[[assembly.parts]]
name = "stator"
material = "plain"
r_inner = "100 mm"
r_outer = "200 mm"
z_min = "10 mm"
z_max = "20 mm"
role = "stator"
[[assembly.probes]]
name = "sensor"
r = "150 mm"
z = "5 mm"
time_constant = "5 s"
[assembly.length_scales]
"rotor:inner" = "0.2 m"
"rotor:outer" = "0.4 m"
"rotor:bottom" = "0.4 m"
"stator:inner" = "0.2 m"
"stator:outer" = "0.4 m"
"stator:top" = "0.4 m"

[[duty.phases]]
name = "stop"
duration = "20 s"
[[duty.phases.events]]
kind = "stop_from_energy"
energy = "1 MJ"
duration = "20 s"
[[duty.phases]]
name = "parked"
duration = "10 min"

[output.limits]
sensor = "300 degC"
"""


def test_demo_case_loads_and_names_its_phases():
    case = load_case(DEMO)
    assert [p.name for p in case.duty.phases][0] == "rejected take-off"
    assert case.built is not None
    assert {p.name for p in case.assembly.probes} >= {"sensor", "fuse plug 1", "fuse plug 2"}


def test_explicit_case_runs_and_delivers_its_energy():
    from heatstack.case import run_case

    case = parse_case(SMALL)
    result = run_case(case)
    assert result.ledger.heat_in[-1] == pytest.approx(1e6, rel=1e-12)
    assert result.ledger.relative_closure_error < 1e-9
    assert case.output.limits["sensor"] == pytest.approx(573.15)


def test_unknown_key_suggests_the_closest():
    with pytest.raises(InputError, match=r"case.initial_temprature: unknown key; did you mean 'initial_temperature'"):
        parse_case(SMALL.replace("initial_temperature =", "initial_temprature ="))


def test_wrong_dimension_names_the_key_path():
    bad = SMALL.replace('r_outer = "200 mm"', 'r_outer = "200 kg"', 1)
    with pytest.raises(InputError, match=r"assembly.parts\[0\].r_outer: expected length"):
        parse_case(bad)


def test_unknown_event_kind_is_named_with_its_path():
    with pytest.raises(InputError, match=r"duty.phases\[0\].events\[0\].kind: unknown event kind 'stop_by_energy'"):
        parse_case(SMALL.replace('kind = "stop_from_energy"', 'kind = "stop_by_energy"'))


def test_event_error_is_prefixed_with_its_path():
    with pytest.raises(InputError, match=r"duty.phases\[0\].events\[0\]"):
        parse_case(SMALL.replace('energy = "1 MJ"', 'energy = "-1 MJ"'))


def test_limit_for_an_unknown_probe_is_rejected():
    with pytest.raises(InputError, match="output.limits.sensr: no probe or series of that name; did you mean 'sensor'"):
        parse_case(SMALL.replace('sensor = "300 degC"', 'sensr = "300 degC"'))


def test_invalid_toml_is_an_input_error():
    with pytest.raises(InputError, match="not valid TOML"):
        parse_case("[case\ntitle = 1")


def test_missing_case_file_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        load_case(tmp_path / "nope.toml")


def test_design_overrides_with_units_reach_the_builder():
    text = DEMO.read_text().replace("rotors = 4", 'rotors = 3\nrotor_thickness = "25 mm"')
    case = parse_case(text)
    assert case.built.design.rotors == 3
    assert case.built.design.rotor_thickness == pytest.approx(0.025)


def _mutations():
    """Random edits of the small case: drop, retype or rename a key at some path."""
    values = st.one_of(
        st.integers(-5, 5),
        st.floats(allow_nan=True),
        st.text(max_size=8),
        st.booleans(),
        st.sampled_from(["20 mm", "-3 s", "5 kg", "1e9 K", "nan", "", "x y"]),
        st.lists(st.integers(), max_size=2),
        st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
    )
    return st.tuples(st.integers(0, 10_000), st.sampled_from(["drop", "set", "rename"]), values, st.text(max_size=6))


def _apply(data, choice: int, action: str, value, new_name: str):
    tables = []

    def walk(node):
        if isinstance(node, dict):
            tables.append(node)
            for child in node.values():
                walk(child)
        elif isinstance(node, list):
            for child in node:
                walk(child)

    walk(data)
    table = tables[choice % len(tables)]
    if not table:
        return data
    key = sorted(table)[choice % len(table)]
    if action == "drop":
        del table[key]
    elif action == "set":
        table[key] = value
    else:
        table[new_name or "x"] = table.pop(key)
    return data


def _dumps(data, prefix=""):
    """A tiny TOML writer for the mutated mapping (inline tables keep it simple)."""

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, int | float):
            return repr(float(v)) if isinstance(v, float) else str(v)
        if isinstance(v, str):
            return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{" + ", ".join(f"{value(str(k))} = {value(x)}" for k, x in v.items()) + "}"
        raise TypeError(v)

    return "\n".join(f"{value(str(k))} = {value(v)}" for k, v in data.items())


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_mutations())
def test_fuzzed_case_gives_an_input_error_or_a_valid_case(mutation):
    data = tomllib.loads(SMALL)
    text = _dumps(_apply(data, *mutation))
    try:
        parse_case(text)
    except HeatstackError:
        pass
