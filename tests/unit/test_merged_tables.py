"""The solver's one-pass evaluation over merged tables, and its factorisation with its fallback.

The vectorised pass (every material's properties, enthalpy inverse and emissivity, every
surface group's convection law, in one interpolation each) must give what the
per-material and per-group evaluation it replaced gives, to round-off. The case is
invented for the test: four parts of four of the shipped materials (carbon-carbon is
anisotropic; all are temperature dependent), touching and facing each other across a
radial gap so that every kind of face and gap side occurs.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse.linalg as spla

from heatstack import Assembly, FixedConvection, Model, Part, Phase, PowerHistory, Schedule
from heatstack.errors import PropertyRangeError
from heatstack.numerics import step_matrix
from heatstack.numerics.step_matrix import (
    StepMatrix,
    cell_properties,
    cell_properties_by_material,
    cell_temperature,
    cell_temperature_by_material,
)
from heatstack.numerics.tabulated import MergedConvection, TabulatedLaw, evaluator
from heatstack.operations.environment import NaturalConvection

PARTS = (
    Part("disc", "carbon-carbon", 0.10, 0.20, 0.00, 0.02, "rotor"),
    Part("plate", "low-alloy-steel", 0.10, 0.20, 0.02, 0.04, "pressure_plate"),
    Part("rim", "forged-aluminium-wheel-alloy", 0.22, 0.25, 0.00, 0.04, "wheel"),
    Part("shield", "stainless-heat-shield", 0.255, 0.26, 0.00, 0.04, "heat_shield"),
)


@pytest.fixture(scope="module")
def network():
    return Model.build(Assembly(parts=PARTS, gap_radiation=True), 0.004).network


def common_range(material) -> tuple[float, float]:
    """The temperatures [K] inside all of a material's tables."""
    tables = (
        material.specific_heat,
        material.conductivity_in_plane,
        material.conductivity_through_thickness,
        material.emissivity,
    )
    return max(t.temperature[0] for t in tables), min(t.temperature[-1] for t in tables)


def field_in_range(network, seed: int = 1) -> np.ndarray:
    """Random cell temperatures across each material's whole table range, knots included."""
    rng = np.random.default_rng(seed)
    T = np.empty(network.n_cells)
    for material, block in network.material_blocks:
        low, high = common_range(material)
        T[block] = rng.uniform(low, high, block.stop - block.start)
        knots = material.specific_heat.temperature
        knots = knots[(knots >= low) & (knots <= high)]
        T[block.start : block.start + knots.size] = knots  # exactly on the knots and the ends
    return T


def test_the_case_has_several_anisotropic_and_temperature_dependent_materials(network):
    materials = network.materials
    assert len(materials) == 4
    assert any(m.anisotropic for m in materials)
    assert all(np.ptp(m.specific_heat.value) > 0 for m in materials)
    assert network.gap_a.size > 0 and network.face_cell.size > 0


def test_merged_properties_match_the_per_material_evaluation(network):
    T = field_in_range(network)
    merged = cell_properties(network, T)
    reference = cell_properties_by_material(network, T)
    np.testing.assert_allclose(merged.conductivity, reference.conductivity, rtol=1e-14, atol=0)
    np.testing.assert_allclose(merged.heat_capacity, reference.heat_capacity, rtol=1e-14, atol=0)
    scale = np.max(np.abs(reference.enthalpy))
    np.testing.assert_allclose(merged.enthalpy, reference.enthalpy, rtol=1e-14, atol=1e-14 * scale)


def test_merged_properties_match_each_table_on_its_own(network):
    T = field_in_range(network, seed=2)
    merged = cell_properties(network, T)
    n = network.n_cells
    for material, block in network.material_blocks:
        t = T[block]
        np.testing.assert_allclose(merged.conductivity[block], material.conductivity_radial(t), rtol=1e-12)
        axial = merged.conductivity[n + block.start : n + block.stop]
        np.testing.assert_allclose(axial, material.conductivity_axial(t), rtol=1e-12)
        np.testing.assert_allclose(merged.heat_capacity[block], material.volumetric_heat_capacity(t), rtol=1e-12)
        scale = np.max(np.abs(material.enthalpy(t)))
        np.testing.assert_allclose(merged.enthalpy[block], material.enthalpy(t), rtol=1e-12, atol=1e-12 * scale)


def test_merged_enthalpy_inverse_matches_the_per_material_inverse(network):
    T = field_in_range(network, seed=3)
    H = cell_properties_by_material(network, T).enthalpy
    merged = cell_temperature(network, H)
    np.testing.assert_allclose(merged, cell_temperature_by_material(network, H), rtol=0, atol=1e-9)
    np.testing.assert_allclose(merged, T, rtol=0, atol=1e-8)  # and it inverts H(T)


def test_merged_emissivity_matches_each_material_table(network):
    tables = network.tables
    rng = np.random.default_rng(4)
    for lookup, cells in (
        (tables.emissivity_faces, network.face_cell),
        (tables.emissivity_gap_a, network.gap_a),
        (tables.emissivity_gap_b, network.gap_b),
    ):
        materials = network.cell_material[cells]
        ts = np.empty(cells.size)
        expected = np.empty(cells.size)
        for k, material in enumerate(network.materials):
            on = materials == k
            low, high = material.emissivity.temperature_range
            ts[on] = rng.uniform(low, high, int(on.sum()))
            expected[on] = material.emissivity(ts[on])
        np.testing.assert_allclose(tables.emissivity(lookup, ts), expected, rtol=1e-14, atol=1e-15)


def test_a_cell_outside_its_table_falls_back_to_the_table_range_policy(network):
    T = field_in_range(network)
    assert network.tables.thermal_properties(T) is not None
    T[0] = 5000.0  # far above every shipped table; the materials raise ("error" policy)
    assert network.tables.thermal_properties(T) is None
    with pytest.raises(PropertyRangeError, match=network.materials[network.cell_material[0]].name):
        cell_properties(network, T)


class TimeRamp:
    """A convection coefficient that grows in time: must be called, not tabulated."""

    ambient_temperature = 300.0
    surroundings_temperature = 300.0
    radiation = True

    def convection_coefficient(self, surface_temperature, time):
        return 10.0 + 0.5 * time + 0.01 * (np.asarray(surface_temperature) - 300.0)


def test_merged_convection_matches_each_group_law_evaluated_alone(network):
    groups = network.groups
    assert len(groups) >= 4
    shapes = ("vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down")
    laws = [
        TimeRamp() if g % 3 == 2 else NaturalConvection(shapes[g % 4], 0.05 + 0.1 * g, 288.15)
        for g in range(len(groups))
    ]
    merged = MergedConvection([evaluator(law) for law in laws], network.face_group)
    alone = [evaluator(law) for law in laws]
    assert any(isinstance(e, TabulatedLaw) for e in alone) and not all(isinstance(e, TabulatedLaw) for e in alone)
    rng = np.random.default_rng(5)
    for time, (low, high) in ((0.0, (300.0, 700.0)), (30.0, (280.0, 1300.0)), (60.0, (900.0, 1000.0))):
        ts = rng.uniform(low, high, network.face_cell.size)
        expected = np.empty(ts.size)
        for g, law in enumerate(alone):
            faces = network.face_group == g
            expected[faces] = law(ts[faces], time)
        np.testing.assert_allclose(merged(ts, time), expected, rtol=1e-13, atol=0)


def spd_step_matrix(network, seed: int) -> StepMatrix:
    """The network's step matrix filled with random positive capacities and conductances."""
    rng = np.random.default_rng(seed)
    system = StepMatrix(network)
    system.assemble(
        rng.uniform(1.0, 2.0, network.n_cells),
        rng.uniform(0.5, 50.0, network.link_a.size),
        rng.uniform(0.01, 0.1, network.gap_a.size),
    )
    return system


def test_factorisation_solves_the_step_matrix_and_reuses_its_analysis(network):
    pytest.importorskip("qdldl")
    system = spd_step_matrix(network, seed=6)
    rhs = np.random.default_rng(7).standard_normal(network.n_cells)
    first = system.factorise()
    np.testing.assert_allclose(first.solve(rhs), spla.spsolve(system.matrix.tocsc(), rhs), rtol=1e-10, atol=1e-12)
    refilled = spd_step_matrix(network, seed=8)
    system.matrix.data[:] = refilled.matrix.data
    second = system.factorise()
    assert second is first  # the same solver: its order and elimination tree are kept
    np.testing.assert_allclose(second.solve(rhs), spla.spsolve(system.matrix.tocsc(), rhs), rtol=1e-10, atol=1e-12)


def test_factorisation_falls_back_to_superlu_without_the_fast_extra(network, monkeypatch):
    monkeypatch.setattr(step_matrix, "qdldl", None)
    system = spd_step_matrix(network, seed=9)
    factors = system.factorise()
    assert isinstance(factors, spla.SuperLU)
    rhs = np.random.default_rng(10).standard_normal(network.n_cells)
    np.testing.assert_allclose(factors.solve(rhs), spla.spsolve(system.matrix.tocsc(), rhs), rtol=1e-10, atol=1e-12)


def test_a_run_gives_the_same_answer_with_either_factorisation(network, monkeypatch):
    pytest.importorskip("qdldl")
    model = Model.build(Assembly(parts=PARTS[:2], gap_radiation=False), 0.005)
    schedule = Schedule(
        PowerHistory((0.0, 5.0, 10.0), (0.0, 4.0e5, 0.0)),
        [Phase("stop", 0.0, 60.0, {"*": FixedConvection(30.0, 300.0)})],
    )
    ldl = model.run(schedule, 300.0)
    monkeypatch.setattr(step_matrix, "qdldl", None)
    lu = model.run(schedule, 300.0)
    # both converge each step to the Newton tolerance (1e-3 K by default)
    assert ldl.final_state.temperature.max() > 400.0
    np.testing.assert_allclose(ldl.final_state.temperature, lu.final_state.temperature, rtol=0, atol=1e-2)


def test_the_product_of_the_coefficients_is_the_assembled_matrix_times_a_vector(network):
    # a Newton iteration that reuses older factors takes A @ T from the link flows, unassembled
    assert network.gap_a.size > 0  # the gap pairs' flows are in it too
    rng = np.random.default_rng(11)
    system = StepMatrix(network)
    system.set_coefficients(
        rng.uniform(1.0, 2.0, network.n_cells),
        rng.uniform(0.5, 50.0, network.link_a.size),
        rng.uniform(0.01, 0.1, network.gap_a.size),
    )
    T = rng.uniform(300.0, 900.0, network.n_cells)
    lazy = system.product(T)
    assembled = system.assembled()
    np.testing.assert_allclose(lazy, assembled @ T, rtol=0, atol=1e-11 * np.max(np.abs(assembled @ T)))
    # factorising assembles the coefficients given last
    rhs = rng.standard_normal(network.n_cells)
    system.set_coefficients(2.0 * np.ones(network.n_cells), np.ones(network.link_a.size), np.ones(network.gap_a.size))
    factors = system.factorise()
    np.testing.assert_allclose(system.product(factors.solve(rhs)), rhs, rtol=0, atol=1e-9)
