"""The invented stop-and-park case shared by the energy-fit tests (unit and validation).

Synthetic traces are made by heatstack itself with a known energy on a FINER grid (cell_size 0.006) than the fits
use (0.009), so the fit never sees the exact model that made its data.
"""

from __future__ import annotations

import numpy as np

from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.heat_input import stop_from_energy
from heatstack.questions.convection_scaling import scale_convection

E_TRUE = 20e6  # [J], per brake
T_AMBIENT = 288.15
TRACE_T = np.arange(0.0, 3601.0, 30.0)  # every 30 s over 1 h
NOISE = 1.0  # [K]


def stop_and_park(energy: float, parked: str = "1 h") -> DutyCycle:
    """An invented 30 s stop at the given energy, then parked with the brake set."""
    return DutyCycle(
        [
            DutyPhase("stop", "30 s", Environment(ground_speed="40 kt"), [stop_from_energy(energy, "30 s")]),
            DutyPhase("parked", parked, Environment(), clamped=True),
        ]
    )


def synthetic_trace(model, built, energy, seed, initial=T_AMBIENT, multiplier=1.0):
    schedule = stop_and_park(energy).schedule(built.assembly.surfaces, extra_breakpoints=TRACE_T)
    result = model.run(scale_convection(schedule, multiplier), initial)
    clean = np.interp(TRACE_T, result.times, result.readings["sensor"])
    return clean + np.random.default_rng(seed).normal(0.0, NOISE, TRACE_T.size)
