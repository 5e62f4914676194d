"""What is known on the ramp: a sensor reading after a known duty, turned into a wheel state.

The crew or the line engineer knows the duty (e.g. the landing and the taxi-in) and reads
the brake-temperature gauge at known times after it. :func:`state_from_ramp_readings`
fits the braking energy to those readings (:func:`~heatstack.questions.inverse.estimate_energy`),
then runs the duty again at a chosen bound of that energy (the estimate plus a number of
standard errors, cautious by default) and returns the state at the end of the duty —
the "now" a shortest-safe-wait question starts from. The energy's uncertainty is so
carried to the wait: a wait found from the upper-bound state covers the energies the
readings allow up to that bound.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..answers.fuse_plugs import FusePlug, state_with_plugs
from ..errors import InputError
from ..geometry import SurfaceGroup
from ..model import Model
from ..numerics.solver import SolverOptions
from ..operations.duty import DutyCycle
from ..result import State
from ..wheel_design import FusePlugSpec
from .inverse import EnergyEstimate, estimate_energy, predict_from_estimate

__all__ = ["RampState", "state_from_ramp_readings"]


@dataclass(frozen=True, eq=False)
class RampState:
    """The state reconstructed from ramp readings.

    Attributes
    ----------
    state : State
        At the end of the duty, run at ``energy_used`` (with instrument and fuse-plug lags).
    energy : float
        Fitted energy per brake [J].
    standard_error : float
        Its standard error [J].
    energy_used : float
        ``energy + standard_errors * standard_error`` [J]: the energy the state is run at.
    standard_errors : float
        How many standard errors above the estimate the state is taken.
    estimate : EnergyEstimate
    """

    state: State
    energy: float
    standard_error: float
    energy_used: float
    standard_errors: float
    estimate: EnergyEstimate


def state_from_ramp_readings(
    model: Model,
    make_duty: Callable[[float], DutyCycle],
    surfaces: Sequence[SurfaceGroup],
    reading_times: Any,
    readings: Any,
    initial_temperature: float,
    plugs: Sequence[FusePlug | FusePlugSpec] = (),
    *,
    sensor: str = "sensor",
    standard_errors: float = 2.0,
    options: SolverOptions | None = None,
) -> RampState:
    """Reconstruct the wheel's state from sensor readings at known times after a known duty.

    Parameters
    ----------
    model : Model
    make_duty : callable
        Energy per brake [J] -> the known duty (a :class:`~heatstack.operations.duty.DutyCycle`
        from time 0); its end is "now", the time of the state returned, and must not be
        before the last reading.
    surfaces : sequence of SurfaceGroup
    reading_times, readings : array_like
        Times [s] from the start of the duty and sensor readings [K], increasing in time.
    initial_temperature : float
        Uniform temperature of the wheel before the duty [K].
    plugs : sequence of FusePlug or FusePlugSpec
        Fuse plugs whose lagged temperatures the state carries.
    sensor : str
    standard_errors : float
        Standard errors added to the fitted energy for the state (>= 0; 2 is about a
        one-sided 97.7 % bound for a normal error).
    options : SolverOptions, optional

    Returns
    -------
    RampState

    Raises
    ------
    InputError
        For readings the fit rejects (see ``estimate_energy``) or a negative
        ``standard_errors``.
    FitError
        If the fit does not converge.
    """
    if not (np.isfinite(standard_errors) and standard_errors >= 0):
        raise InputError(f"standard_errors: must be finite and >= 0, got {standard_errors!r}")
    estimate = estimate_energy(
        model, make_duty, surfaces, reading_times, readings, initial_temperature, sensor=sensor, options=options
    )
    used = estimate.energy + standard_errors * estimate.standard_error
    bound = replace(estimate, energy=used)
    result = predict_from_estimate(model, make_duty, surfaces, bound, initial_temperature, options=options)
    return RampState(
        state=state_with_plugs(result, plugs),
        energy=estimate.energy,
        standard_error=estimate.standard_error,
        energy_used=used,
        standard_errors=float(standard_errors),
        estimate=estimate,
    )
