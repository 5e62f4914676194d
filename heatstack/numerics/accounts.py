"""The energy accounts of one accepted time step, as one typed record.

The solver closes every step with a :class:`StepAccounts`; the recorder sums the
ledger accounts of successive steps into the run's
:class:`~heatstack.result.EnergyLedger` and the results file stores them under the same
names (:data:`LEDGER_ACCOUNTS`).
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields

import numpy as np

__all__ = ["StepAccounts", "LEDGER_ACCOUNTS"]

_LEDGER = {"ledger": True}


@dataclass(frozen=True, eq=False)
class StepAccounts:
    """Energies [J] that crossed the model's boundaries or were stored during one step.

    Attributes
    ----------
    heat_in : float
        Friction heat and volumetric source heat that entered the model [J].
    convected : float
        Heat convected from the exposed faces to the ambient [J].
    radiated : float
        Heat radiated from the exposed faces to the surroundings [J].
    stored : float
        Rise of the model's enthalpy [J].
    friction_a, friction_b : ndarray
        Friction heat [J] into the cell on side a and on side b of each rubbing face.
    """

    heat_in: float = field(metadata=_LEDGER)
    convected: float = field(metadata=_LEDGER)
    radiated: float = field(metadata=_LEDGER)
    stored: float = field(metadata=_LEDGER)
    friction_a: np.ndarray
    friction_b: np.ndarray


#: Names of the accounts summed into the energy ledger, in ledger and file order.
LEDGER_ACCOUNTS: tuple[str, ...] = tuple(f.name for f in fields(StepAccounts) if f.metadata.get("ledger"))
