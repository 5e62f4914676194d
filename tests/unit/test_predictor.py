"""The starting guess of a step: Lagrange extrapolation of the accepted states.

Check values: a Lagrange polynomial of degree k through k + 1 points reproduces any
polynomial of degree <= k exactly (Burden & Faires, Numerical Analysis, 9th ed.,
Theorem 3.2, from memory), also at a point outside the nodes and on unequal spacing.
Whatever the guess, the converged step is the same: a guess far outside a property
table must not fail or cut the step.
"""

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
    Schedule,
    SolverOptions,
    simple_material,
)
from heatstack.numerics import predictor
from heatstack.numerics.predictor import Extrapolator


def cubic(t):
    return np.array([2.0 - 0.5 * t + 0.25 * t**2 - 0.03 * t**3, 7.0 + t**3])


def quadratic(t):
    return np.array([1.0 + 3.0 * t - 0.2 * t**2, -4.0 * t**2])


@pytest.mark.parametrize("order, polynomial", [(2, quadratic), (3, cubic)])
def test_reproduces_a_polynomial_of_its_order_on_unequal_steps(order, polynomial):
    ex = Extrapolator(order)
    for t in (0.0, 0.3, 1.0, 1.4)[: order + 1]:
        ex.accept(t, polynomial(t))
    target = 2.25
    np.testing.assert_allclose(ex.guess(target), polynomial(target), rtol=1e-12)


def test_the_cubic_is_not_exact_for_a_quartic():
    """The check above can fail: a degree-4 term is not reproduced."""
    ex = Extrapolator(3)
    for t in (0.0, 1.0, 2.0, 3.0):
        ex.accept(t, np.array([t**4]))
    assert abs(ex.guess(4.0)[0] - 4.0**4) > 1.0


def test_first_guess_is_the_last_state_and_a_copy():
    ex = Extrapolator()
    state = np.array([300.0, 310.0])
    ex.accept(0.0, state)
    guess = ex.guess(1.0)
    np.testing.assert_array_equal(guess, state)
    guess[0] = 0.0
    assert state[0] == 300.0


def test_after_a_breakpoint_only_the_new_stretch_is_used():
    """Before the kink the data follow one quadratic, after it another; a line through the
    last state before the kink starts the new stretch, then the new stretch alone."""
    before = lambda t: np.array([t**2])  # noqa: E731
    after = lambda t: np.array([1.0 + 5.0 * (t - 1.0) - 3.0 * (t - 1.0) ** 2])  # noqa: E731 (after(1) == before(1))
    ex = Extrapolator(3)
    for t in (0.25, 0.5, 0.75, 1.0):
        ex.accept(t, before(t))
    ex.kink()
    # a line through t = 0.75 and 1.0
    line = before(1.0) + (before(1.0) - before(0.75)) / 0.25 * 0.25
    np.testing.assert_allclose(ex.guess(1.25), line)
    ex.accept(1.25, after(1.25))
    # a line through 1.0 and 1.25 (both on the new stretch)
    slope = (after(1.25) - after(1.0)) / 0.25
    np.testing.assert_allclose(ex.guess(1.5), after(1.25) + slope * 0.25)
    ex.accept(1.5, after(1.5))
    # three points on the new quadratic: exact
    np.testing.assert_allclose(ex.guess(1.75), after(1.75), rtol=1e-12)


def test_restart_forgets_the_history():
    ex = Extrapolator()
    for t in (0.0, 1.0, 2.0):
        ex.accept(t, np.array([t]))
    ex.restart()
    ex.accept(5.0, np.array([9.0]))
    np.testing.assert_array_equal(ex.guess(6.0), [9.0])


def test_bad_order_and_empty_history():
    with pytest.raises(ValueError, match="order"):
        Extrapolator(4)
    with pytest.raises(ValueError, match="no accepted state"):
        Extrapolator().guess(1.0)


def _model():
    material = simple_material(
        "guess-test",
        density=2000.0,
        specific_heat=(800.0, 1200.0),
        conductivity=(20.0, 15.0),
        temperature_range=(250.0, 900.0),
    )
    parts = [Part("disc", material.name, 0.1, 0.2, 0.0, 0.02, "rotor")]
    return Model.build(Assembly(parts=parts), 0.004, materials={material.name: material})


def _schedule():
    law = FixedConvection(50.0, 300.0, radiation=False)
    return Schedule(PowerHistory((0.0, 10.0), (0.0, 0.0)), [Phase("cool", 0.0, 30.0, {"*": law})])


def test_a_guess_outside_a_table_restarts_from_the_last_state(monkeypatch):
    """Same steps, same answer, no step cut when every extrapolated guess is 1000 K too cold."""
    model, options = _model(), SolverOptions(fixed_step=1.0, tolerance=1e-8)
    reference = model.run(_schedule(), 600.0, options)
    good = predictor.Extrapolator.guess
    monkeypatch.setattr(predictor.Extrapolator, "guess", lambda self, t: good(self, t) - 1000.0)
    result = model.run(_schedule(), 600.0, options)
    assert result.metadata["solver"]["rejected_steps"] == 0
    assert result.metadata["solver"]["steps"] == reference.metadata["solver"]["steps"]
    np.testing.assert_allclose(result.final_state.temperature, reference.final_state.temperature, atol=1e-6)
