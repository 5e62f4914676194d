"""An energy interval that owns up to the uncertain model inputs behind a sensor trace.

The energy fit (:mod:`heatstack.questions.inverse`) gives a standard error from the
scatter of the trace alone. The sensor's time constant and the contact conductances are
rarely known to better than tens of percent, and both move the trace as the energy does.
:func:`energy_with_input_uncertainty` refits the energy with each uncertain input moved
one standard deviation up and down and adds the spread in quadrature (first-order
propagation of independent inputs):

    ``var(E) = se^2 + sum_k ((E(theta_k + s_k) - E(theta_k - s_k)) / 2)^2``

References
----------
.. [1] JCGM 100:2008, Evaluation of measurement data - Guide to the expression of
   uncertainty in measurement (GUM), sec. 5.1.2 (law of propagation of uncertainty,
   uncorrelated inputs) and sec. 5.1.3 (sensitivities by finite differences).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..case import Case
from ..errors import InputError
from .inverse import EnergyEstimate, estimate_energy

__all__ = ["InputContribution", "HonestEnergy", "energy_with_input_uncertainty", "case_with_inputs"]


@dataclass(frozen=True)
class InputContribution:
    """One uncertain input's share of the energy uncertainty.

    Attributes
    ----------
    name : str
    spread : float
        The input's standard deviation (s for the time constant, relative [-] for the
        contact conductances).
    energy_low, energy_high : float
        Energy refitted with the input one standard deviation down and up [J].
    standard_deviation : float
        Its contribution to the energy's standard deviation [J].
    """

    name: str
    spread: float
    energy_low: float
    energy_high: float
    standard_deviation: float


@dataclass(frozen=True, eq=False)
class HonestEnergy:
    """The energy fit with its uncertainty from the trace and from the uncertain inputs.

    Attributes
    ----------
    estimate : EnergyEstimate
        The fit at the nominal inputs.
    contributions : tuple of InputContribution
    standard_deviation : float
        Total standard deviation of the energy [J] (trace scatter and inputs).
    """

    estimate: EnergyEstimate
    contributions: tuple[InputContribution, ...]
    standard_deviation: float


def case_with_inputs(
    case: Case, sensor: str, time_constant_shift: float = 0.0, conductance_factor: float = 1.0
) -> Case:
    """The case with the sensor's time constant shifted and every contact conductance scaled.

    Parameters
    ----------
    case : Case
        The case.
    sensor : str
        Name of the probe whose time constant is shifted.
    time_constant_shift : float, optional
        Added to the sensor's time constant [s].
    conductance_factor : float, optional
        Factor on every contact conductance and the default one [-].

    Returns
    -------
    Case
        A new case; ``case`` is unchanged.

    Raises
    ------
    InputError
        If the shifted time constant is negative, or the sensor is not a probe of the case.
    """
    probes, found = [], False
    for probe in case.assembly.probes:
        if probe.name == sensor:
            new = probe.time_constant + time_constant_shift
            if new < 0:
                raise InputError(f"sensor time constant: {probe.time_constant:g} s minus its spread is below zero")
            probe, found = replace(probe, time_constant=new), True
        probes.append(probe)
    if time_constant_shift and not found:
        raise InputError(f"sensor: no probe named {sensor!r} in the case")

    def scaled(value: float | None) -> float | None:
        return None if value is None else value * conductance_factor

    contacts = [replace(c, clamped=scaled(c.clamped), released=scaled(c.released)) for c in case.assembly.contacts]
    assembly = replace(
        case.assembly,
        probes=probes,
        contacts=contacts,
        default_contact_conductance=scaled(case.assembly.default_contact_conductance),
    )
    return replace(case, assembly=assembly)


def _energy(case: Case, times: np.ndarray, readings: np.ndarray, sensor: str) -> EnergyEstimate:
    return estimate_energy(
        case.build_model(), case.duty, case.assembly.surfaces, times, readings, case.initial_temperature,
        sensor=sensor, raise_on_failure=False,
    )  # fmt: skip


def energy_with_input_uncertainty(
    case: Case,
    times: np.ndarray,
    readings: np.ndarray,
    sensor: str = "sensor",
    time_constant_sd: float | None = None,
    conductance_relative_sd: float | None = None,
) -> HonestEnergy:
    """Fit the energy and propagate the sensor time constant's and contact conductances' uncertainty.

    Parameters
    ----------
    case : Case
    times, readings : ndarray
        The trace [s], [K].
    sensor : str
    time_constant_sd : float, optional
        Standard deviation of the sensor's time constant [s].
    conductance_relative_sd : float, optional
        Relative standard deviation of every contact conductance together [-] (< 1).

    Returns
    -------
    HonestEnergy

    Raises
    ------
    InputError
        A spread that is not > 0, or that takes an input below zero.
    """
    nominal = _energy(case, times, readings, sensor)
    contributions = []
    if time_constant_sd is not None:
        if not time_constant_sd > 0:
            raise InputError(f"sensor time constant spread: must be > 0 s, got {time_constant_sd}")
        low = _energy(case_with_inputs(case, sensor, -time_constant_sd), times, readings, sensor).energy
        high = _energy(case_with_inputs(case, sensor, time_constant_sd), times, readings, sensor).energy
        contributions.append(
            InputContribution("sensor time constant", time_constant_sd, low, high, abs(high - low) / 2)
        )
    if conductance_relative_sd is not None:
        if not 0 < conductance_relative_sd < 1:
            raise InputError(f"contact conductance spread: must be between 0 and 1, got {conductance_relative_sd}")
        down, up = 1 - conductance_relative_sd, 1 + conductance_relative_sd
        low = _energy(case_with_inputs(case, sensor, conductance_factor=down), times, readings, sensor).energy
        high = _energy(case_with_inputs(case, sensor, conductance_factor=up), times, readings, sensor).energy
        contributions.append(
            InputContribution("contact conductances", conductance_relative_sd, low, high, abs(high - low) / 2)
        )
    total = math.sqrt(nominal.standard_error**2 + sum(c.standard_deviation**2 for c in contributions))
    return HonestEnergy(nominal, tuple(contributions), total)
