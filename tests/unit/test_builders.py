"""The parametric wheel and brake builder makes a consistent assembly."""

from __future__ import annotations

import pytest

from heatstack import Model, Part
from heatstack.builders import SURFACE_GROUPS, build_wheel_brake
from heatstack.errors import GeometryError
from heatstack.wheel_design import WheelBrakeDesign


def test_reference_design_has_stack_wheel_and_probes():
    built = build_wheel_brake()
    roles = [p.role for p in built.assembly.parts]
    assert roles.count("rotor") == 4 and roles.count("stator") == 3
    assert {"pressure_plate", "end_plate", "torque_tube", "heat_shield", "wheel", "tyre_bead"} <= set(roles)
    probes = {p.name for p in built.assembly.probes}
    assert {"sensor", "hottest rotor", "fuse plug 1", "inboard bead seat"} <= probes


def test_number_of_rubbing_interfaces_is_twice_the_rotors():
    model = Model.build(build_wheel_brake(WheelBrakeDesign(rotors=3)).assembly, cell_size=0.006)
    assert len(model.network.friction_labels) == 6


def test_every_meshed_surface_group_has_a_length_scale():
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.006)
    assert set(model.network.groups) <= set(built.assembly.length_scales) == set(SURFACE_GROUPS)


def test_stack_height_follows_the_design_numbers():
    d = WheelBrakeDesign(rotors=2, rotor_thickness=0.025, stator_thickness=0.02)
    z0, z1 = build_wheel_brake(d).stack_z
    assert z1 - z0 == pytest.approx(2 * 0.025 + 0.02 + d.pressure_plate_thickness + d.end_plate_thickness)


def test_parts_can_be_replaced_by_name():
    built = build_wheel_brake()
    shield = next(p for p in built.assembly.parts if p.name == "heat shield")
    thicker = Part(
        "heat shield",
        "low-alloy-steel",
        shield.r_inner,
        shield.r_inner + 0.003,
        shield.z_min,
        shield.z_max,
        "heat_shield",
    )
    rebuilt = build_wheel_brake(replace_parts=[thicker])
    assert next(p for p in rebuilt.assembly.parts if p.name == "heat shield").material == "low-alloy-steel"


def test_replacing_an_unknown_part_is_an_error():
    with pytest.raises(GeometryError, match="no part named 'spoiler'"):
        build_wheel_brake(replace_parts=[Part("spoiler", "low-alloy-steel", 0.3, 0.31, 0, 0.01)])


def test_design_rejects_bad_numbers():
    with pytest.raises(GeometryError, match="rotors"):
        WheelBrakeDesign(rotors=0)
    with pytest.raises(GeometryError, match="rim_thickness"):
        WheelBrakeDesign(rim_thickness=-0.01)
    with pytest.raises(GeometryError, match="unknown field 'rotor_count'"):
        WheelBrakeDesign().with_changes(rotor_count=5)


def _arrays(network) -> dict:
    import numpy as np

    return {k: v for k, v in vars(network).items() if isinstance(v, np.ndarray)}


def test_a_model_with_other_contacts_equals_a_fresh_build_array_by_array():
    import numpy as np

    model = Model.build(build_wheel_brake().assembly, cell_size=0.012)
    other = build_wheel_brake(WheelBrakeDesign(rotor_stator_clamped=2200.0, tyre_bead_rim=600.0)).assembly
    fresh = Model.build(other, cell_size=0.012).network
    reused = model.with_contacts(other).network
    assert reused.assembly is other
    changed = 0
    for name, value in _arrays(fresh).items():
        assert np.array_equal(getattr(reused, name), value), name
        changed += not np.array_equal(getattr(model.network, name), value)
    # the two contact resistance arrays, and nothing else, differ from the first model's
    assert changed == 2
    assert reused.link_ga is model.network.link_ga  # shared, not copied


def test_other_contacts_refuse_an_assembly_with_another_geometry():
    model = Model.build(build_wheel_brake().assembly, cell_size=0.012)
    thicker = build_wheel_brake(WheelBrakeDesign(rotor_thickness=0.03)).assembly
    with pytest.raises(GeometryError, match="more than its contact conductances"):
        model.with_contacts(thicker)
