"""A worn heat sink: thinner friction discs, a moved stack, less mass, a hotter stop."""

from __future__ import annotations

import time

import pytest

from heatstack import Model
from heatstack.answers.analysis import peak
from heatstack.builders import build_wheel_brake
from heatstack.errors import GeometryError
from heatstack.geometry import HEAT_SINK_ROLES
from heatstack.material_files import load_material
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.heat_input import stop_from_energy
from heatstack.report import build_report, format_report
from heatstack.wheel_design import WheelBrakeDesign


def _stack_parts(built):
    return [p for p in built.assembly.parts if p.role in HEAT_SINK_ROLES]


def test_wear_thins_the_discs_and_keeps_the_stack_against_the_backing_flange() -> None:
    new = build_wheel_brake()
    worn = build_wheel_brake(WheelBrakeDesign(wear_fraction=1.0))
    w = WheelBrakeDesign().full_wear_per_face
    by_name = {p.name: p for p in _stack_parts(worn)}
    for part in _stack_parts(new):
        faces = 2 if part.role in ("rotor", "stator") else 1
        assert by_name[part.name].z_max - by_name[part.name].z_min == pytest.approx(
            part.z_max - part.z_min - faces * w, abs=1e-12
        )
    assert worn.stack_z[1] == pytest.approx(new.stack_z[1], abs=1e-12)
    assert worn.stack_z[0] == pytest.approx(new.stack_z[0] + 4 * 4 * w, abs=1e-12)
    housing = next(p for p in worn.assembly.parts if p.name == "housing")
    assert housing.z_max == pytest.approx(worn.stack_z[0], abs=1e-12)


def test_wear_per_face_equals_the_same_fraction() -> None:
    a = WheelBrakeDesign(wear_fraction=0.5)
    b = WheelBrakeDesign(wear_per_face=0.5 * a.full_wear_per_face)
    assert a.stack_wear == pytest.approx(b.stack_wear)


@pytest.mark.parametrize(
    ("changes", "key"),
    [
        ({"wear_per_face": 0.0095}, "wear_per_face"),  # 19 mm off an 18 mm stator
        ({"wear_fraction": 1.0, "full_wear_per_face": 0.02}, "wear_fraction"),
        ({"wear_fraction": 1.5}, "wear_fraction"),
    ],
)
def test_wear_beyond_the_disc_thickness_is_named(changes, key) -> None:
    with pytest.raises(GeometryError, match=f"design: {key}"):
        WheelBrakeDesign(**changes)


def test_worn_heat_sink_runs_hotter_by_the_mass_ratio() -> None:
    # First law: the same energy into a lighter heat sink raises its mean temperature by
    # the mass ratio, to first order (a small stop: cp nearly constant over the rise, and
    # little heat leaves the stack in the 30 s).
    started = time.perf_counter()
    stop = stop_from_energy("0.5 MJ", "20 s")
    duty = DutyCycle([DutyPhase("stop", "30 s", Environment(ground_speed="40 kt"), [stop])])
    rises, masses = [], []
    for fraction in (0.0, 1.0):
        built = build_wheel_brake(WheelBrakeDesign(wear_fraction=fraction))
        model = Model.build(built.assembly, cell_size=0.012)
        result = model.run(duty.schedule(built.assembly.surfaces), 288.15)
        rises.append(peak(result, "heat_sink_mean").temperature - 288.15)
        # the mass of the heat-sink parts from their annulus volumes and the material density
        sink = [part for part in built.assembly.parts if part.role in HEAT_SINK_ROLES]
        masses.append(sum(load_material(part.material).density * part.volume for part in sink))
        assert result.metadata["heat_sink_mass_kg"] == pytest.approx(masses[-1], rel=1e-9)
        assert f"Heat-sink mass: {masses[-1]:.2f} kg." in format_report(build_report(result))
    mass_ratio = masses[0] / masses[1]
    assert masses[1] < masses[0]
    assert rises[1] > rises[0]
    print(
        f"\nheat-sink mass new {masses[0]:.2f} kg, worn {masses[1]:.2f} kg (ratio {mass_ratio:.4f}); mean rise ratio {rises[1] / rises[0]:.4f}"
    )
    assert rises[1] / rises[0] == pytest.approx(mass_ratio, rel=0.05)
    assert time.perf_counter() - started < 10.0


def test_a_study_varies_wear_and_reversers_of_the_demo() -> None:
    from pathlib import Path

    from heatstack.case import case_from_mapping
    from heatstack.studies import Parameter, Sampling, Study, plan_study

    demo = Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml"
    plan = plan_study(
        Study(
            demo,
            [
                Parameter("assembly.design.wear_fraction", values=[0.0, 1.0], name="wear"),
                Parameter("duty.phases[0].events[0].aircraft.reversers", values=[0, 2], name="reversers"),
            ],
            Sampling("grid"),
        )
    )
    energies, shifts = {}, {}
    for k in range(len(plan.samples)):
        case = case_from_mapping(plan.case_mapping(k), "", "<study>", demo.parent)
        wear, reversers = plan.samples[k]
        energies[(wear, reversers)] = case.duty.phases[0].events[0].energy_per_brake
        shifts[(wear, reversers)] = case.built.stack_z[0]
    assert energies[(0.0, 0.0)] > energies[(0.0, 2.0)] and energies[(1.0, 0.0)] == energies[(0.0, 0.0)]
    assert shifts[(1.0, 0.0)] > shifts[(0.0, 0.0)]
