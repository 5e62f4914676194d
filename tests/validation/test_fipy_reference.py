"""heatstack against FiPy on the identical grid: a three-part stack, a braking pulse, cooling.

Reference: FiPy 4.0.3, the finite-volume PDE library of NIST (Guyer, Wheeler & Warren,
Computing in Science & Engineering 11(3), 2009; https://pages.nist.gov/fipy/). The
FiPy model (``validation/fipy_reference.py``) is built on the same r-z grid lines with
``fipy.CylindricalGrid2D(dx=dr_array, dy=dz_array)`` (a ``CylindricalNonUniformGrid2D``,
FiPy docs, ``fipy.meshes``), and does its own metric, diffusion (``DiffusionTerm`` with
FiPy's distance-weighted harmonic face conductivity), convection (FiPy's documented
Robin route: the divergence of ``h_eff n`` on the cooled faces, implicit through
``ImplicitSourceTerm``) and time stepping (``TransientTerm`` + implicit terms:
backward Euler). It recomputes the friction heat from the assembly and the power
table. Both are run over the same steps (heatstack's step ends, fixed 0.5 s plus the
shortened steps that land on the breakpoints of the power table).

Case: pressure plate (steel-like) + rotor (carbon-like, anisotropic) + end plate, an
annulus r = 0.12..0.22 m, perfect contact; 0..15 s a ramped braking pulse at the two
rubbing faces, then cooling to 60 s; convection on the bottom of the pressure plate
and the top of the end plate, every other surface adiabatic, no radiation.

A second case puts temperature-dependent properties in all three parts (three materials
whose specific heat rises 20-70 % and whose conductivities change 20-40 % over the run's
300-730 K), with FiPy in enthalpy form (``TransientTerm(var=H)``; across the two material
interfaces, where H jumps, with a deferred correction: validation/fipy_reference.py).
heatstack runs at the same fixed steps as the twin (FiPy's TransientTerm with implicit
terms is backward Euler at fixed steps).

The two differ by construction only in the radial face conductance: FiPy's
``k r_f dz / (r_b - r_a)`` against heatstack's exact ``2 pi k dz / ln(r_b / r_a)``, a
relative ``(dr / 2 r)^2 / 3`` = 1.3e-4 here. That leaves 1.7e-3 K at most, which falls by
4x when dr is halved (checked below), so nothing else differs.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("fipy", minversion="4.0")

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "validation"))

from fipy_reference import FipyTwin, TableEnthalpy, radial_metric_difference  # noqa: E402

from heatstack import (  # noqa: E402
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)

TOLERANCE_K = 0.01
MATERIALS = {
    "hs-steel": simple_material("hs-steel", 7800.0, 480.0, 38.0),
    "hs-carbon": simple_material("hs-carbon", 1780.0, 1200.0, 40.0, conductivity_axial=14.0),
    "hs-plate": simple_material("hs-plate", 5000.0, 600.0, 25.0, conductivity_axial=18.0),
}
R_IN, R_OUT = 0.12, 0.22
PARTS = (
    Part("pressure plate", "hs-steel", R_IN, R_OUT, 0.0, 0.018, "pressure_plate"),
    Part("rotor", "hs-carbon", R_IN, R_OUT, 0.018, 0.043, "rotor"),
    Part("end plate", "hs-plate", R_IN, R_OUT, 0.043, 0.061, "end_plate"),
)
POWER_TIMES, POWER = (0.0, 0.7, 12.3, 15.0), (0.0, 4.0e5, 2.0e5, 0.0)  # breakpoints off the 0.5 s grid
COOLED = {"bottom": (60.0, 300.0), "top": (25.0, 290.0)}
SNAPSHOTS = (5.0, 15.0, 30.0)
# probe targets; each is moved to the nearest cell centre of the grid
PROBE_TARGETS = {
    "plate at rubbing face": (0.20, 0.0175),
    "rotor at rubbing face": (0.20, 0.0185),
    "rotor mid-plane": (0.17, 0.030),
    "end plate cooled face": (0.13, 0.060),
}


def _schedule() -> Schedule:
    laws = {
        "*": FixedConvection(0.0, 300.0, radiation=False),
        "pressure plate:bottom": FixedConvection(*COOLED["bottom"], radiation=False),
        "end plate:top": FixedConvection(*COOLED["top"], radiation=False),
    }
    return Schedule(
        PowerHistory(POWER_TIMES, POWER),
        [Phase("braking", 0.0, 15.0, laws, clamped=True), Phase("cooling", 15.0, 60.0, laws)],
    )


def _run_pair(dr: float) -> dict:
    cell_size = (dr, 0.0025)
    grid = Model.build(Assembly(parts=PARTS, gap_radiation=False), cell_size, materials=MATERIALS).grid
    rc, zc = grid.r_centres, grid.z_centres
    probes = {
        name: (float(rc[np.argmin(np.abs(rc - r))]), float(zc[np.argmin(np.abs(zc - z))]))
        for name, (r, z) in PROBE_TARGETS.items()
    }
    assembly = Assembly(parts=PARTS, probes=[Probe(n, r, z) for n, (r, z) in probes.items()], gap_radiation=False)
    model = Model.build(assembly, cell_size, materials=MATERIALS)
    result = model.run(
        _schedule(), 300.0, SolverOptions(scheme="euler", fixed_step=0.5, tolerance=1e-6, snapshot_times=SNAPSHOTS)
    )
    twin = FipyTwin(model.grid.r_edges, model.grid.z_edges, PARTS, MATERIALS, POWER_TIMES, POWER, COOLED)
    reference = twin.run(result.times, 300.0, probes=probes, snapshot_times=tuple(result.snapshot_times))
    field = max(
        float(np.max(np.abs(result.snapshots[k] - reference.snapshots[float(t)])))
        for k, t in enumerate(result.snapshot_times)
    )
    probe = {name: float(np.max(np.abs(result.probes[name] - reference.probes[name]))) for name in probes}
    return {
        "model": model,
        "result": result,
        "twin": twin,
        "reference": reference,
        "field": field,
        "probe": probe,
    }


@pytest.fixture(scope="module")
def pair() -> dict:
    return _run_pair(0.005)


def test_same_grid_and_steps(pair):
    model, twin, result = pair["model"], pair["twin"], pair["result"]
    assert model.n_cells == twin.n == 20 * 26  # fully active: one FiPy cell per unknown
    assert np.allclose(np.asarray(twin.mesh.cellVolumes) * 2 * np.pi, model.grid.to_field(model.network.volume).ravel())
    assert set(pair["reference"].snapshots) == {float(t) for t in result.snapshot_times}
    assert result.snapshot_times.size == len(SNAPSHOTS) + 2  # start and end too
    assert result.metadata["solver"]["steps"] == pair["reference"].steps


def test_friction_distribution_matches_engine(pair):
    """The twin's own rubbing-face weights (flux ~ r, equal share per interface) equal heatstack's."""
    net, twin, grid = pair["model"].network, pair["twin"], pair["model"].grid
    fipy_id = grid.cell_ij[:, 0] * grid.shape[1] + grid.cell_ij[:, 1]
    engine = {
        tuple(sorted((int(a), int(b)))): w
        for a, b, w in zip(fipy_id[net.friction_a], fipy_id[net.friction_b], net.friction_weight, strict=True)
    }
    own = {
        tuple(sorted((int(a), int(b)))): w
        for a, b, w in zip(twin.fric_below, twin.fric_above, twin.fric_weight, strict=True)
    }
    assert engine.keys() == own.keys()
    assert max(abs(engine[key] - own[key]) for key in own) < 1e-14


def test_temperature_field_matches_fipy(pair):
    assert pair["result"].snapshots.max() > 650.0  # the pulse really heats the stack
    assert pair["field"] <= TOLERANCE_K, f"largest field difference {pair['field']:.3g} K"


def test_probe_histories_match_fipy(pair):
    worst = max(pair["probe"].values())
    assert worst <= TOLERANCE_K, f"largest probe difference {worst:.3g} K: {pair['probe']}"


def test_remaining_difference_is_the_radial_metric(pair):
    """Halving dr cuts the metric term (dr/2r)^2/3 by 4, and the difference with it."""
    fine = _run_pair(0.0025)
    assert radial_metric_difference(pair["model"].grid.r_edges) / radial_metric_difference(
        fine["model"].grid.r_edges
    ) == pytest.approx(4.0, rel=0.05)
    ratio = pair["field"] / fine["field"]
    assert 3.5 < ratio < 4.5, f"field difference {pair['field']:.3g} K -> {fine['field']:.3g} K (ratio {ratio:.2f})"


# --------------------------------------------------------------------------- temperature-dependent, three materials

TABLE_RANGE = (250.0, 1250.0)  # K: the linear tables' end rows
DEPENDENT_MATERIALS = {
    "td-steel": simple_material("td-steel", 7800.0, (420.0, 700.0), (45.0, 28.0), temperature_range=TABLE_RANGE),
    "td-carbon": simple_material(
        "td-carbon",
        1780.0,
        (650.0, 1650.0),
        (50.0, 30.0),
        conductivity_axial=(16.0, 10.0),
        temperature_range=TABLE_RANGE,
    ),
    "td-plate": simple_material(
        "td-plate", 5000.0, (500.0, 750.0), (20.0, 30.0), conductivity_axial=(15.0, 22.0), temperature_range=TABLE_RANGE
    ),
}
DEPENDENT_PARTS = tuple(
    Part(p.name, material, p.r_inner, p.r_outer, p.z_min, p.z_max, p.role)
    for p, material in zip(PARTS, ("td-steel", "td-carbon", "td-plate"), strict=True)
)
DEPENDENT_CELLS, DEPENDENT_STEP = (0.005, 0.005), 1.0  # m, s (fixed)


@pytest.fixture(scope="module")
def dependent_pair() -> dict:
    model = Model.build(
        Assembly(parts=DEPENDENT_PARTS, gap_radiation=False), DEPENDENT_CELLS, materials=DEPENDENT_MATERIALS
    )
    options = SolverOptions(scheme="euler", fixed_step=DEPENDENT_STEP, tolerance=1e-6, snapshot_times=SNAPSHOTS)
    result = model.run(_schedule(), 300.0, options)
    grid = model.grid
    runs = {}
    for form in ("enthalpy", "temperature"):
        twin = FipyTwin(
            grid.r_edges, grid.z_edges, DEPENDENT_PARTS, DEPENDENT_MATERIALS, POWER_TIMES, POWER, COOLED, form=form
        )
        reference = twin.run(result.times, 300.0, snapshot_times=tuple(result.snapshot_times))
        runs[form] = max(
            float(np.max(np.abs(result.snapshots[k] - reference.snapshots[float(t)])))
            for k, t in enumerate(result.snapshot_times)
        )
    return {"result": result, "model": model, "difference": runs}


def test_dependent_case_really_varies_its_properties(dependent_pair):
    # the check means something only if cp and k change substantially over the run
    result, model = dependent_pair["result"], dependent_pair["model"]
    hottest = float(np.nanmax(result.snapshots))
    assert hottest > 650.0
    assert len(model.network.materials) == 3
    for material in DEPENDENT_MATERIALS.values():
        assert material.specific_heat(hottest) / material.specific_heat(300.0) > 1.2
        k_ratio = material.conductivity_radial(hottest) / material.conductivity_radial(300.0)
        assert abs(k_ratio - 1.0) > 0.15


def test_temperature_dependent_three_material_field_matches_fipy_enthalpy_form(dependent_pair):
    # FiPy 4.0.3 in enthalpy form on the identical grid and steps (module docstring); tolerance
    # 0.01 K as for the constant-property case (the radial metric leaves about 2e-3 K).
    difference = dependent_pair["difference"]["enthalpy"]
    assert difference <= TOLERANCE_K, f"largest field difference {difference:.3g} K"


def test_fipy_temperature_form_is_not_the_variable_cp_heat_equation(dependent_pair):
    # The same comparison against FiPy's TransientTerm(coeff=rho cp(T), var=T), which means
    # d(rho cp T)/dt and not rho cp dT/dt (FiPy docs, fipy.terms.transientTerm): it must miss by
    # far more than the tolerance, which shows the check above can see a wrong transient term.
    assert dependent_pair["difference"]["temperature"] > 100 * TOLERANCE_K


def test_twin_enthalpy_is_its_own_and_agrees_with_the_tables():
    # The twin integrates the cp table itself: its H differs from heatstack's by a constant
    # (the reference temperature) and its inverse returns the temperature.
    material = DEPENDENT_MATERIALS["td-carbon"]
    own = TableEnthalpy(material)
    t = np.linspace(300.0, 1200.0, 301)
    offset = own.enthalpy(t) - material.enthalpy(t)
    assert np.ptp(offset) <= 1e-9 * np.max(np.abs(material.enthalpy(t)))
    assert np.max(np.abs(own.temperature(own.enthalpy(t)) - t)) <= 1e-9
