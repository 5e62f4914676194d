"""The solver's pieces called on their own: accounts record, matrix pattern, one Newton step.

The stack is invented for the test: two carbon-like discs of one material, 20 mm thick
on a 0.12-0.22 m annulus, one rubbing interface, convection and radiation to 300 K.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
import scipy.sparse as sp

from heatstack import Assembly, FixedConvection, Model, Part, Phase, PowerHistory, Schedule, simple_material
from heatstack.numerics.accounts import LEDGER_ACCOUNTS, StepAccounts
from heatstack.numerics.boundaries import SurfaceTemperatures
from heatstack.numerics.newton import NewtonStep
from heatstack.numerics.step_matrix import cell_enthalpy, csc_pattern
from heatstack.result import EnergyLedger

MATERIAL = simple_material(
    "test-carbon",
    density=1780.0,
    specific_heat=(650.0, 1650.0),
    conductivity=(50.0, 30.0),
    conductivity_axial=(16.0, 10.0),
    temperature_range=(250.0, 1250.0),
)


def test_every_ledger_account_is_an_energy_ledger_field():
    ledger_fields = {f.name for f in dataclasses.fields(EnergyLedger)}
    assert LEDGER_ACCOUNTS == ("heat_in", "convected", "radiated", "stored")
    assert set(LEDGER_ACCOUNTS) <= ledger_fields


def test_step_accounts_cannot_be_changed():
    accounts = StepAccounts(1.0, 0.5, 0.25, 0.25, friction_a=np.zeros(1), friction_b=np.zeros(1))
    with pytest.raises(dataclasses.FrozenInstanceError):
        accounts.heat_in = 2.0


def test_csc_pattern_sums_duplicate_entries_like_scipy():
    rows = np.array([0, 1, 2, 0, 1, 0])
    cols = np.array([0, 1, 2, 1, 0, 1])  # (0, 1) twice
    values = np.array([1.0, 2.0, 3.0, 4.0, 5.0, 6.0])
    matrix, position = csc_pattern(3, rows, cols)
    matrix.data[:] = np.bincount(position, weights=values, minlength=matrix.data.size)
    expected = sp.coo_matrix((values, (rows, cols)), shape=(3, 3)).toarray()
    np.testing.assert_array_equal(matrix.toarray(), expected)


def test_one_newton_step_closes_its_own_energy_accounts():
    # first law for a closed step (e.g. Incropera, Fundamentals of Heat and Mass
    # Transfer, 6th ed., eq. 1.11c, from memory): stored = heat in - convected - radiated
    parts = [
        Part("rotor", MATERIAL.name, 0.12, 0.22, 0.0, 0.02, "rotor"),
        Part("stator", MATERIAL.name, 0.12, 0.22, 0.02, 0.04, "stator"),
    ]
    model = Model.build(Assembly(parts=parts), 0.005, materials={MATERIAL.name: MATERIAL})
    law = FixedConvection(30.0, 300.0, radiation=True)
    schedule = Schedule(PowerHistory((0.0, 10.0), (2.0e5, 2.0e5)), [Phase("stop", 0.0, 10.0, {"*": law})])
    network = model.network
    stats = {"iterations": 0, "factorisations": 0}
    newton = NewtonStep(network, schedule, tolerance=1e-6, max_iterations=30, stats=stats)
    T = np.full(network.n_cells, 400.0)
    H = cell_enthalpy(network, T)
    outcome = newton.step(0.0, 1.0, T, H, T, SurfaceTemperatures.of_cells(network, T))
    accounts = outcome.accounts
    assert accounts.heat_in == pytest.approx(2.0e5)
    assert accounts.convected > 0 and accounts.radiated > 0
    closure = accounts.stored - accounts.heat_in + accounts.convected + accounts.radiated
    assert abs(closure) <= 1e-9 * accounts.heat_in
    assert np.sum(accounts.friction_a) + np.sum(accounts.friction_b) == pytest.approx(accounts.heat_in)
    assert stats["factorisations"] == 1 and stats["iterations"] == outcome.iterations
