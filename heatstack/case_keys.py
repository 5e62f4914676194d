"""Which physical dimension each key of a case file has, declared once.

A key that is a field of a public dataclass (:class:`~heatstack.geometry.Part`,
:class:`~heatstack.wheel_design.WheelBrakeDesign`, :class:`~heatstack.operations.duty.Environment`
...) has the dimension its field declares (:func:`heatstack.unit_declarations.declared`); a
braking-event key has the one its event function declares (:func:`heatstack.unit_declarations.declares`);
the few keys that only the case file has are listed here. The case reader and the
studies look dimensions up with :func:`key_dimension`; nothing guesses from a name.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from .geometry import Contact, Part, Probe
from .numerics.options import SolverOptions
from .operations import heat_input, stops
from .operations.duty import DutyCycle, DutyPhase, Environment
from .operations.events import BrakingEvent
from .operations.roll_inputs import Aircraft, Conditions, Runway
from .report_settings import TyreSettings
from .unit_declarations import declared_dimension
from .wheel_design import FusePlugSpec, WheelBrakeDesign

__all__ = ["EVENT_KINDS", "ROLL_RECORDS", "key_dimension"]

#: Braking-event kinds of ``[[duty.phases.events]]`` and the functions that make them.
EVENT_KINDS: dict[str, Callable[..., BrakingEvent]] = {
    "stop_from_energy": heat_input.stop_from_energy,
    "stop_from_aircraft": heat_input.stop_from_aircraft,
    "speed_trace": heat_input.stop_from_speed_trace,
    "taxi_snubs": heat_input.taxi_snubs,
    "gear_retraction": heat_input.gear_retraction,
    "rejected_takeoff": stops.rejected_takeoff,
    "landing_roll": stops.landing_roll,
    "taxi_stop": stops.taxi_stop,
    "speed_trace_roll": stops.speed_trace_roll,
}

#: Sub-tables of a ground-roll event (``[duty.phases.events.aircraft]`` ...) and the records they fill.
ROLL_RECORDS: dict[str, type] = {"aircraft": Aircraft, "runway": Runway, "conditions": Conditions}

_ROLL_KEY = ("duty", "phases", int, "events", int, str, str)


#: Tables of the case file whose keys are the fields of a dataclass: the dimension of
#: each key is the one its field declares (``int`` stands for any list index).
_DECLARING_TABLES: dict[tuple[Any, ...], type] = {
    ("assembly", "design"): WheelBrakeDesign,
    ("assembly", "parts", int): Part,
    ("assembly", "probes", int): Probe,
    ("assembly", "contacts", int): Contact,
    ("assembly", "fuse_plugs", int): FusePlugSpec,
    ("duty",): DutyCycle,
    ("duty", "phases", int): DutyPhase,
    ("duty", "phases", int, "environment"): Environment,
    ("solver",): SolverOptions,
    ("tyre",): TyreSettings,
}
#: Keys of the case file that are not a dataclass field, and their dimension (``str``
#: stands for any key).
_CASE_KEYS: dict[tuple[Any, ...], str] = {
    ("case", "initial_temperature"): "temperature",
    ("case", "initial_state_time"): "time",
    ("assembly", "cell_size"): "length",
    ("assembly", "cell_size_radial"): "length",
    ("assembly", "cell_size_axial"): "length",
    ("assembly", "default_contact_conductance"): "heat_transfer_coefficient",
    ("assembly", "length_scales", str): "length",
    ("duty", "phases", int, "environment", "wheel_well_air_temperature"): "temperature",
    ("duty", "phases", int, "environment", "wheel_well_wall_temperature"): "temperature",
    ("solver", "snapshot_times", int): "time",
    ("solver", "max_wall_time"): "time",
    ("output", "limits", str): "temperature",
    ("output", "cooling_below"): "temperature",
}


def _matches(pattern: tuple[Any, ...], tokens: tuple[Any, ...]) -> bool:
    if len(pattern) != len(tokens):
        return False
    for want, token in zip(pattern, tokens, strict=True):
        if want is int:
            if not isinstance(token, int):
                return False
        elif want is str:
            if not isinstance(token, str):
                return False
        elif want != token:
            return False
    return True


_EVENT_KEY = ("duty", "phases", int, "events", int, str)


def key_dimension(tokens: tuple[str | int, ...], case: Mapping[str, Any] | None = None) -> str | None:
    """The physical dimension declared for the case key at ``tokens``, or None.

    ``("assembly", "design", "rotor_thickness")`` -> ``"length"`` (from the field of
    :class:`~heatstack.wheel_design.WheelBrakeDesign`); ``("output", "limits", "sensor")``
    -> ``"temperature"``. A braking-event key (``duty.phases[i].events[j].mass``) is
    declared by its event function (:func:`heatstack.unit_declarations.declares`); finding it needs
    the event's ``kind``, read from the parsed ``case`` mapping.

    Parameters
    ----------
    tokens : tuple of str and int
        Key path in the case mapping.
    case : mapping, optional
        The parsed case mapping, needed for braking-event keys.

    Returns
    -------
    str or None
        The dimension (a key of :data:`heatstack.units.SI_UNITS`), None when none is declared.
    """
    tokens = tuple(tokens)
    if _matches(_EVENT_KEY, tokens):
        try:
            kind = case["duty"]["phases"][tokens[2]]["events"][tokens[4]]["kind"]
        except (TypeError, KeyError, IndexError):
            return None
        function = EVENT_KINDS.get(kind) if isinstance(kind, str) else None
        return getattr(function, "dimensions", {}).get(tokens[5])
    if _matches(_ROLL_KEY, tokens) and tokens[5] in ROLL_RECORDS:
        return declared_dimension(ROLL_RECORDS[tokens[5]], tokens[6])
    for pattern, dimension in _CASE_KEYS.items():
        if _matches(pattern, tokens):
            return dimension
    if tokens and isinstance(tokens[-1], str):
        for pattern, cls in _DECLARING_TABLES.items():
            if _matches(pattern, tokens[:-1]):
                return declared_dimension(cls, tokens[-1])
    return None
