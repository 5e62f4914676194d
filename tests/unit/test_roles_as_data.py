"""Trade knowledge as data: the numerics reads rubbing pairs, cell groups and surface records.

The builder and the case reader derive them from part roles; the numerics package must
not name a role, and a hand-made assembly with its own pairs and groups must work with
parts of any role.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

import heatstack.numerics
from heatstack import (
    Assembly,
    CellGroup,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    RubbingPair,
    Schedule,
    SurfaceGroup,
    simple_material,
)
from heatstack.assembly import rubbing_pairs_by_role
from heatstack.builders import SURFACE_GROUPS, build_wheel_brake
from heatstack.errors import GeometryError
from heatstack.geometry import HEAT_SINK, HEAT_SINK_MEAN, ROLES, WHEEL
from heatstack.operations.duty import Environment
from heatstack.operations.environment import FanCooling, MixedConvection, RotatingDisc

NUMERICS = Path(heatstack.numerics.__file__).parent
# the role names, the trade words of the stack, and reading a part's role (`.role`, `role`);
# ``part_roles`` (the results-file field the recorder copies through) does not match
TRADE_WORDS = re.compile(
    r"rotor|stator|pressure.plate|end.plate|torque.tube|heat.shield|tyre|bead|heat.sink|wheel|\brole",
    re.IGNORECASE,
)

RHO, CP, K = 2000.0, 1000.0, 50.0  # invented block material
BLOCK = simple_material("block-material", RHO, CP, K)


def test_numerics_source_names_no_role_or_trade_word():
    hits = [
        f"{path.name}:{number}: {line.strip()}"
        for path in sorted(NUMERICS.glob("*.py"))
        for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1)
        if TRADE_WORDS.search(line)
    ]
    assert hits == []


def test_numerics_source_quotes_no_role_name():
    source = "\n".join(path.read_text(encoding="utf-8") for path in NUMERICS.glob("*.py"))
    assert [role for role in ROLES if f'"{role}"' in source or f"'{role}'" in source] == []


def _blocks(**trade_data) -> Assembly:
    """Two stacked 20 mm annular blocks of role 'other' (no rotor anywhere)."""
    parts = [
        Part("lower", "block-material", 0.10, 0.20, 0.00, 0.02),
        Part("upper", "block-material", 0.10, 0.20, 0.02, 0.04),
    ]
    return Assembly(parts, **trade_data)


def _insulated_pulse(energy: float, duration: float) -> Schedule:
    law = FixedConvection(h=0.0, ambient_temperature=300.0, radiation=False)
    power = PowerHistory(np.array([0.0, duration]), np.full(2, energy / duration))
    return Schedule(power, [Phase("pulse", 0.0, duration, {"*": law}, clamped=True)])


def test_hand_made_pairs_and_groups_are_recorded_under_their_own_names():
    assembly = _blocks(
        rubbing_pairs=[RubbingPair("lower", "upper")],
        cell_groups=[CellGroup("lower block", ("lower",)), CellGroup("both blocks", ("lower", "upper"), ("mean",))],
    )
    model = Model.build(assembly, cell_size=0.005, materials={"block-material": BLOCK})
    energy = 2.0e5  # J
    result = model.run(_insulated_pulse(energy, 20.0), initial_temperature=300.0)
    assert result.ledger.friction_labels == ("lower / upper",)
    assert set(result.series) >= {"lower block_mean", "lower block_max", "both blocks_mean"}
    assert HEAT_SINK_MEAN not in result.series
    # first law for the insulated pair of blocks (common practice, no source): the
    # mass-weighted mean rises by E / (m c)
    mass = RHO * sum(p.volume for p in assembly.parts)
    assert result.series["both blocks_mean"][-1] == pytest.approx(300.0 + energy / (mass * CP), rel=1e-9)
    assert np.all(result.series["lower block_max"] >= result.series["lower block_mean"] - 1e-12)


def test_no_rubbing_pair_means_no_friction_faces():
    assembly = _blocks()
    assert assembly.rubbing_pairs == ()
    model = Model.build(assembly, cell_size=0.005, materials={"block-material": BLOCK})
    assert model.network.friction_labels == ()


def test_default_pairs_are_rotors_touching_stack_parts_across_an_axial_face():
    parts = [
        Part("pp", "m", 0.1, 0.2, 0.00, 0.02, "pressure_plate"),
        Part("r1", "m", 0.1, 0.2, 0.02, 0.04, "rotor"),
        Part("s1", "m", 0.1, 0.2, 0.04, 0.06, "stator"),
        Part("r2", "m", 0.1, 0.2, 0.07, 0.09, "rotor"),  # 10 mm clear of s1
        Part("tube", "m", 0.05, 0.1, 0.0, 0.09, "torque_tube"),  # touches radially only
    ]
    pairs = rubbing_pairs_by_role(parts)
    assert [(p.part_a, p.part_b) for p in pairs] == [("r1", "pp"), ("r1", "s1")]
    assert Assembly(parts).rubbing_pairs == pairs


def test_declared_pair_that_shares_no_axial_face_is_a_geometry_error():
    parts = [
        Part("inner", "block-material", 0.10, 0.15, 0.0, 0.02),
        Part("outer", "block-material", 0.15, 0.20, 0.0, 0.02),
    ]
    assembly = Assembly(parts, rubbing_pairs=[RubbingPair("inner", "outer")])
    with pytest.raises(GeometryError, match="rubbing pair 'inner / outer'"):
        Model.build(assembly, cell_size=0.005, materials={"block-material": BLOCK})


def test_records_naming_unknown_parts_are_geometry_errors():
    with pytest.raises(GeometryError, match="cell group 'g': no part named 'nowhere'"):
        _blocks(cell_groups=[CellGroup("g", ("nowhere",))])
    with pytest.raises(GeometryError, match="rubbing pair 'lower / nowhere'"):
        _blocks(rubbing_pairs=[RubbingPair("lower", "nowhere")])
    with pytest.raises(GeometryError, match="statistic 'median'"):
        CellGroup("g", ("lower",), ("median",))
    with pytest.raises(GeometryError, match="orientation 'diagonal'"):
        SurfaceGroup("s", 0.1, "diagonal")


def test_builder_declares_pairs_groups_and_surfaces():
    built = build_wheel_brake()
    assembly = built.assembly
    rotors = built.design.rotors
    assert len(assembly.rubbing_pairs) == 2 * rotors  # each rotor rubs on both neighbours
    assert [g.name for g in assembly.cell_groups] == [HEAT_SINK, WHEEL]
    assert tuple(s.name for s in assembly.surfaces) == SURFACE_GROUPS
    shapes = {s.name: s.orientation for s in assembly.surfaces}
    assert shapes["stack faces"] == "vertical_plate" and shapes["rim bore"] == "horizontal_cylinder"


def test_duty_reads_orientation_from_the_surface_record():
    rolling = Environment(ground_speed=20.0)
    laws = rolling.laws([SurfaceGroup("disc", 0.4, "vertical_plate"), SurfaceGroup("drum", 0.4)], 0.5)
    assert isinstance(laws["disc"], MixedConvection) and isinstance(laws["disc"].forced, RotatingDisc)
    assert not isinstance(laws["drum"].forced, (RotatingDisc, FanCooling))
