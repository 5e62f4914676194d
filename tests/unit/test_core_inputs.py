"""Bad input to the core engine gives a heatstack error that names the culprit."""

from __future__ import annotations

import numpy as np
import pytest

from heatstack import (
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
from heatstack.errors import GeometryError, MaterialError, ScheduleError, SolverError

STEEL = simple_material("plain", 7800.0, 480.0, 40.0, temperature_range=(200.0, 1500.0))


def one_block(**kw) -> Assembly:
    return Assembly([Part("block", "plain", 0.1, 0.2, 0.0, 0.02, "rotor")], **kw)


def test_overlapping_parts_name_both():
    with pytest.raises(GeometryError, match="'a' and 'b' overlap"):
        Assembly([Part("a", "plain", 0.1, 0.2, 0, 0.02), Part("b", "plain", 0.15, 0.25, 0.01, 0.03)])


def test_touching_parts_do_not_overlap():
    Assembly([Part("a", "plain", 0.1, 0.2, 0, 0.02), Part("b", "plain", 0.1, 0.2, 0.02, 0.03)])


@pytest.mark.parametrize(
    "sizes, field",
    [
        ((0.2, 0.1, 0.0, 0.02), "radial size"),
        ((0.1, 0.2, 0.02, 0.02), "axial size"),
        ((-0.1, 0.2, 0, 1), "r_inner"),
    ],
)
def test_non_positive_sizes_are_rejected(sizes, field):
    with pytest.raises(GeometryError, match=field):
        Part("bad", "plain", *sizes)


def test_probe_outside_every_part_is_named():
    with pytest.raises(GeometryError, match="probe 'lost'.*outside every part"):
        one_block(probes=[Probe("lost", 0.5, 0.01)])


def test_unknown_material_names_the_part():
    asm = Assembly([Part("block", "unobtainium", 0.1, 0.2, 0.0, 0.02)])
    with pytest.raises(MaterialError, match="part 'block'.*unobtainium"):
        Model.build(asm)


def test_unknown_role_is_rejected():
    with pytest.raises(GeometryError, match="role"):
        Part("a", "plain", 0.1, 0.2, 0, 0.02, role="brake_pad")


def test_negative_power_names_the_row():
    with pytest.raises(ScheduleError, match="row 1: negative power"):
        PowerHistory([0.0, 1.0, 2.0], [1.0, -5.0, 0.0])


def test_time_table_must_increase():
    with pytest.raises(ScheduleError, match="row 2"):
        PowerHistory([0.0, 1.0, 1.0], [1.0, 1.0, 0.0])


def test_phases_with_gap_are_rejected():
    law = {"*": FixedConvection(10.0, 300.0)}
    with pytest.raises(ScheduleError, match="leave a gap"):
        Schedule(PowerHistory.none(), [Phase("a", 0, 10, law), Phase("b", 11, 20, law)])


def test_missing_law_for_a_surface_group_is_named():
    model = Model.build(one_block(), materials={"plain": STEEL})
    sched = Schedule(PowerHistory.none(), [Phase("cool", 0, 10, {"block:top": FixedConvection(5.0, 300.0)})])
    with pytest.raises(ScheduleError, match="no cooling law for surface group 'block:"):
        model.run(sched, 300.0)


def test_temperature_outside_table_stops_with_time_and_part():
    """Heating a block past its table's 1500 K upper end is an error, not extrapolation."""
    asm = Assembly(
        [
            Part("rotor", "plain", 0.1, 0.2, 0.0, 0.01, "rotor"),
            Part("stator", "plain", 0.1, 0.2, 0.01, 0.02, "stator"),
        ]
    )
    model = Model.build(asm, 0.005, materials={"plain": STEEL})
    adiabatic = FixedConvection(0.0, 300.0, radiation=False)
    sched = Schedule(PowerHistory([0.0, 100.0], [5e6, 5e6]), [Phase("stop", 0, 100, {"*": adiabatic}, clamped=True)])
    with pytest.raises(SolverError, match=r"at t = .* s .*part 'rotor|stator'.*1500"):
        model.run(sched, 300.0, SolverOptions(max_step_cuts=3))


def test_initial_temperature_for_unknown_part_is_rejected():
    model = Model.build(one_block(), materials={"plain": STEEL})
    sched = Schedule(PowerHistory.none(), [Phase("cool", 0, 10, {"*": FixedConvection(5.0, 300.0)})])
    with pytest.raises(Exception, match="no part named 'ghost'"):
        model.run(sched, {"ghost": 300.0, "*": 300.0})


def test_state_chains_into_a_second_run():
    """The end state of one run starts the next: two halves equal one whole run.

    Backward Euler: a chained BDF2 run starts its history afresh (one backward-Euler step),
    so there the halves equal the whole only to the time-discretisation error.
    """
    model = Model.build(one_block(), 0.01, materials={"plain": STEEL})
    law = {"*": FixedConvection(50.0, 300.0)}
    whole = model.run(
        Schedule(PowerHistory.none(), [Phase("c", 0, 200, law)]),
        600.0,
        SolverOptions(scheme="euler", fixed_step=10.0, tolerance=1e-8),
    )
    first = model.run(
        Schedule(PowerHistory.none(), [Phase("c", 0, 200, law)], extra_breakpoints=(100.0,)),
        600.0,
        SolverOptions(scheme="euler", fixed_step=10.0, tolerance=1e-8),
    )
    half = model.run(
        Schedule(PowerHistory.none(), [Phase("c", 0, 100, law)]),
        600.0,
        SolverOptions(scheme="euler", fixed_step=10.0, tolerance=1e-8),
    )
    second = model.run(
        Schedule(PowerHistory.none(), [Phase("c", 0, 200, law)]),
        half.final_state,
        SolverOptions(scheme="euler", fixed_step=10.0, tolerance=1e-8),
    )
    assert second.times[0] == pytest.approx(100.0)
    np.testing.assert_allclose(second.final_state.temperature, whole.final_state.temperature, atol=1e-6)
    np.testing.assert_allclose(first.final_state.temperature, whole.final_state.temperature, atol=1e-6)


def test_power_energy_window_beyond_the_table_counts_no_phantom_ramp():
    """A stop of 2 MJ from t = 5 s to 20 s, integrated over [0, 10] s: power falls linearly
    from 2E/t_s, so the first 5 s of braking deliver E (1 - (1 - 5/15)^2) = 2 MJ * 5/9 (by hand)."""
    power = PowerHistory([5.0, 20.0], [2 * 2e6 / 15.0, 0.0])
    assert power.energy(0.0, 10.0) == pytest.approx(2e6 * 5.0 / 9.0, rel=1e-12)
    assert power.energy(0.0, 100.0) == pytest.approx(2e6, rel=1e-12)
