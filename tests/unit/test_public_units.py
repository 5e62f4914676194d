"""Every public constructor and entry point accepts SI numbers, unit strings and pint quantities alike."""

from __future__ import annotations

from pathlib import Path

import pytest

from heatstack import (
    Assembly,
    Contact,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
)
from heatstack.builders import build_wheel_brake
from heatstack.case import parse_case
from heatstack.case_keys import key_dimension
from heatstack.errors import GeometryError, InputError, UnitError
from heatstack.materials import simple_material
from heatstack.operations.heat_input import stop_from_aircraft
from heatstack.unit_declarations import declared_dimension
from heatstack.unit_parser import registry
from heatstack.wheel_design import WheelBrakeDesign

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml"
PLAIN = simple_material("plain", 7800.0, 480.0, 40.0, temperature_range=(200.0, 1500.0))
Q = registry().Quantity


def test_part_takes_unit_strings_and_numbers_together():
    part = Part("p", "carbon-carbon", r_inner="125 mm", r_outer="0.215 m", z_min=0, z_max="22 mm")
    assert (part.r_inner, part.r_outer, part.z_min, part.z_max) == pytest.approx((0.125, 0.215, 0.0, 0.022))
    assert all(isinstance(v, float) for v in (part.r_inner, part.r_outer, part.z_min, part.z_max))


def test_part_takes_pint_quantities():
    part = Part("p", "plain", Q(100, "mm"), Q(0.2, "m"), 0.0, Q(1, "cm"))
    assert part.r_inner == pytest.approx(0.1) and part.z_max == pytest.approx(0.01)


def test_part_with_a_wrong_unit_names_part_and_field():
    with pytest.raises(UnitError, match=r"part 'p': r_outer: expected length"):
        Part("p", "plain", 0.1, "2 kg", 0.0, 0.01)


def test_part_with_a_decimal_comma_is_an_error():
    with pytest.raises(UnitError, match="decimal point"):
        Part("p", "plain", "0,1 m", 0.2, 0.0, 0.01)


def test_probe_takes_units_for_position_and_time_constant():
    probe = Probe("sensor", r="113 mm", z=0.01, time_constant="20 s")
    assert probe.r == pytest.approx(0.113) and probe.time_constant == 20.0


def test_probe_negative_time_constant_is_a_geometry_error():
    with pytest.raises(GeometryError, match="probe 's': time_constant: must be >= 0"):
        Probe("s", 0.1, 0.0, time_constant="-1 s")


def test_contact_takes_a_conductance_with_unit():
    contact = Contact(roles=("rotor", "stator"), clamped="2000 W/(m^2*K)")
    assert contact.clamped == pytest.approx(2000.0) and contact.released == pytest.approx(2000.0)


def test_power_history_takes_unit_strings():
    history = PowerHistory(["0 s", "1 min"], ["2 MW", "0 W"])
    assert list(history.times) == [0.0, 60.0] and history.powers[0] == pytest.approx(2e6)


def test_power_history_takes_array_quantities():
    history = PowerHistory(Q([0.0, 2.0], "min"), Q([1.0, 0.0], "kW"))
    assert list(history.times) == [0.0, 120.0] and history.powers[0] == pytest.approx(1000.0)


def test_fixed_convection_takes_units():
    law = FixedConvection(h="8 W/(m^2*K)", ambient_temperature="15 degC")
    assert law.h == 8.0 and law.ambient_temperature == pytest.approx(288.15)
    assert law.surroundings_temperature == pytest.approx(288.15)


def test_solver_options_take_units():
    options = SolverOptions(
        scheme="euler", target_change="3 degC", max_step="2 min", fixed_step="500 ms", snapshot_times=("1 h",)
    )
    assert options.target_change == pytest.approx(3.0)
    assert SolverOptions(accuracy="300 mK").accuracy == pytest.approx(0.3)
    assert options.max_step == 120.0 and options.fixed_step == pytest.approx(0.5)
    assert options.snapshot_times == (3600.0,)


def test_solver_option_wrong_dimension_names_the_option():
    with pytest.raises(UnitError, match="max_step: expected time"):
        SolverOptions(max_step="2 m")


def _block() -> Assembly:
    return Assembly([Part("block", "plain", 0.1, 0.2, 0.0, 0.02, "rotor")])


def test_model_build_takes_a_cell_size_with_unit():
    by_unit = Model.build(_block(), cell_size="5 mm", materials={"plain": PLAIN})
    by_number = Model.build(_block(), cell_size=0.005, materials={"plain": PLAIN})
    assert by_unit.n_cells == by_number.n_cells


def test_model_build_refuses_a_zero_cell_size():
    with pytest.raises(GeometryError, match="cell_size: must be > 0"):
        Model.build(_block(), cell_size="0 mm", materials={"plain": PLAIN})


def test_model_run_takes_an_initial_temperature_with_unit():
    model = Model.build(_block(), 0.01, materials={"plain": PLAIN})
    law = {"*": FixedConvection(0.0, 303.15, radiation=False)}
    result = model.run(
        Schedule(PowerHistory.none(), [Phase("c", 0, 10, law)]),
        initial_temperature="30 degC",
        options=SolverOptions(fixed_step=5.0),
    )
    assert result.snapshots[0] == pytest.approx(303.15)


def test_wheel_brake_design_takes_a_thickness_with_unit_and_builds():
    design = WheelBrakeDesign(rotor_thickness="18 mm")
    assert design.rotor_thickness == pytest.approx(0.018)
    built = build_wheel_brake(design)
    rotor = next(p for p in built.assembly.parts if p.role == "rotor")
    assert rotor.z_max - rotor.z_min == pytest.approx(0.018)


def test_wheel_brake_design_declares_the_dimension_of_each_number():
    assert declared_dimension(WheelBrakeDesign, "drive_key_conductance") == "thermal_conductance"
    assert declared_dimension(WheelBrakeDesign, "stator_torque_tube") == "heat_transfer_coefficient"
    assert declared_dimension(WheelBrakeDesign, "sensor_time_constant") == "time"


def test_case_drive_key_conductance_with_unit_is_read():
    text = DEMO.read_text().replace("rotors = 4", 'rotors = 4\ndrive_key_conductance = "4 W/K"')
    case = parse_case(text)
    assert case.built.design.drive_key_conductance == pytest.approx(4.0)


def test_case_key_dimension_comes_from_the_declaration():
    assert key_dimension(("assembly", "design", "drive_key_conductance")) == "thermal_conductance"
    assert key_dimension(("assembly", "parts", 3, "z_max")) == "length"
    assert key_dimension(("duty", "phases", 0, "environment", "ground_speed")) == "speed"
    assert key_dimension(("output", "limits", "sensor")) == "temperature"


def test_brake_share_table_with_units():
    event = stop_from_aircraft("70 t", "100 kt", 4, brake_share=[["0 kt", 1.0], ["100 kt", 0.6]], stop_time="30 s")
    table = stop_from_aircraft("70 t", "100 kt", 4, brake_share=[[0.0, 1.0], [51.4444444, 0.6]], stop_time="30 s")
    assert event.energy_per_brake == pytest.approx(table.energy_per_brake, rel=1e-6)


def test_brake_share_table_share_out_of_range_is_an_input_error():
    with pytest.raises(InputError, match=r"brake_share share: must be <= 1"):
        stop_from_aircraft("70 t", "100 kt", 4, brake_share=[["0 kt", 1.0], ["100 kt", 1.6]], stop_time="30 s")


SHARE_CASE = """
[case]
title = "invented share-based stop"
[assembly]
cell_size = "10 mm"
[[duty.phases]]
name = "stop"
duration = "40 s"
[[duty.phases.events]]
kind = "stop_from_aircraft"
mass = "70 t"
brake_on_speed = "135 kt"
braked_wheels = 4
brake_share = 0.9
stop_time = "38 s"
[[duty.phases]]
name = "parked"
duration = "5 min"
"""


def test_case_brake_share_table_with_units_is_read():
    base = parse_case(SHARE_CASE)
    text = SHARE_CASE.replace("brake_share = 0.9", 'brake_share = [["0 kt", 0.9], ["200 kt", 0.9]]', 1)
    case = parse_case(text)
    energy = case.duty.phases[0].events[0].energy_per_brake
    assert energy == pytest.approx(base.duty.phases[0].events[0].energy_per_brake, rel=1e-9)


def test_event_function_declares_its_arguments_for_the_case_key_lookup():
    case = {"duty": {"phases": [{"events": [{"kind": "stop_from_aircraft", "mass": "70 t"}]}]}}
    assert key_dimension(("duty", "phases", 0, "events", 0, "mass"), case) == "mass"
    assert key_dimension(("duty", "phases", 0, "events", 0, "brake_on_speed"), case) == "speed"


def test_event_function_converts_declared_arguments_before_its_body():
    event = stop_from_aircraft(Q(70, "t"), "135 kt", 4, stop_time=Q(0.5, "min"))
    assert event.end == pytest.approx(30.0)
