"""Operations layer: braking events (heat input) and cooling laws (environment).

Modules
-------
air
    Dry air properties, 200-1500 K.
atmosphere
    ISO 2533 troposphere and airspeed conversions.
convection
    Nusselt number correlations.
environment
    Cooling laws satisfying :class:`heatstack.numerics.schedule.BoundaryLaw`.
ground_roll
    The equation of motion on the runway: brake power per brake and the energy accounts.
events
    The braking-event record and the sum of power histories.
heat_input
    Braking events giving a :class:`heatstack.numerics.schedule.PowerHistory`.
roll_inputs
    Aircraft, runway, wind and air, braking levels: the ground roll's input records.
speed_trace
    Reading a speed trace (times, ground speeds) from CSV or rows.
stops
    Rejected take-off, landing roll and taxi stop from the ground roll, as braking events.
"""

from __future__ import annotations

from .environment import (
    CrossFlow,
    FanCooling,
    MixedConvection,
    NaturalConvection,
    RotatingDisc,
    WheelWell,
)
from .events import BrakingEvent, combine
from .heat_input import (
    gear_retraction,
    stop_from_aircraft,
    stop_from_energy,
    stop_from_speed_trace,
    taxi_snubs,
)
from .speed_trace import read_speed_trace

__all__ = [
    "BrakingEvent",
    "CrossFlow",
    "FanCooling",
    "MixedConvection",
    "NaturalConvection",
    "RotatingDisc",
    "WheelWell",
    "combine",
    "gear_retraction",
    "read_speed_trace",
    "stop_from_aircraft",
    "stop_from_energy",
    "stop_from_speed_trace",
    "taxi_snubs",
]
