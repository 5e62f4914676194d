"""Braking events of a case file: one ``[[duty.phases.events]]`` table to a BrakingEvent.

The event's ``kind`` picks its function (:data:`heatstack.case_keys.EVENT_KINDS`); the
ground-roll sub-tables (aircraft, runway, conditions) fill their records; every error names
the key path.
"""

from __future__ import annotations

import difflib
import inspect
from dataclasses import fields
from pathlib import Path
from typing import Any

from .case_keys import EVENT_KINDS, ROLL_RECORDS
from .case_table import CaseTable
from .errors import HeatstackError, InputError
from .operations import atmosphere
from .operations.events import BrakingEvent
from .operations.roll_inputs import Conditions

__all__ = ["braking_event", "stated_air_pressure"]


def braking_event(t: CaseTable, base: Path) -> BrakingEvent:
    """The braking event of one ``[[duty.phases.events]]`` table; errors name its key path.

    The table's ``kind`` picks the function that makes the event
    (:data:`heatstack.case_keys.EVENT_KINDS`); its other keys are that function's arguments,
    and its ground-roll sub-tables (aircraft, runway, conditions) become their records.
    Relative speed-trace paths are resolved against ``base``.

    Parameters
    ----------
    t : CaseTable
        The event's table, with its key path (``duty.phases[0].events[1]``).
    base : Path
        The folder that a relative ``path_or_rows`` (speed trace file) is relative to: the
        case file's folder.

    Returns
    -------
    BrakingEvent
        The event, as its kind's function makes it.

    Raises
    ------
    InputError
        Naming the key path, if ``kind`` is unknown (with the closest kind), a key is unknown
        or missing, a sub-table is wrong, or the kind's function rejects a value.
    """
    kind = t.text("kind")
    if kind not in EVENT_KINDS:
        close = difflib.get_close_matches(kind, EVENT_KINDS, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise InputError(f"{t.where('kind')}: unknown event kind {kind!r}{hint} (kinds: {', '.join(EVENT_KINDS)})")
    function = EVENT_KINDS[kind]
    allowed = tuple(inspect.signature(function).parameters)
    t.finish(("kind", *allowed))
    kwargs = {key: value for key, value in t.data.items() if key != "kind"}
    for key, record in ROLL_RECORDS.items():
        if key in kwargs and key in allowed:
            kwargs[key] = _record(record, t.table(key))
    if isinstance(kwargs.get("path_or_rows"), str):
        kwargs["path_or_rows"] = str(base / kwargs["path_or_rows"])
    try:
        return function(**kwargs)
    except TypeError as exc:
        missing = [
            p.name
            for p in inspect.signature(function).parameters.values()
            if p.default is inspect.Parameter.empty and p.name not in kwargs
        ]
        raise InputError(f"{t.path}: {kind} needs {', '.join(missing) or 'other keys'} ({exc})") from None
    except HeatstackError as exc:
        raise InputError(f"{t.path}: {exc}") from exc


def _record(record: type, table: CaseTable) -> Any:
    """A ground-roll input record from its sub-table; unknown keys and bad values name the key path."""
    names = tuple(f.name for f in fields(record))
    table.finish(names)
    try:
        return record(**table.data)
    except TypeError:
        missing = [f.name for f in fields(record) if f.name not in table.data]
        raise InputError(f"{table.path}: missing {', '.join(missing)}") from None
    except HeatstackError as exc:
        message, own = str(exc), f"{table.path.rsplit('.', 1)[-1]}: "
        if message.startswith(own):  # "aircraft: mass: ..." -> "<path>.aircraft.mass: ..."
            head, _, rest = message[len(own) :].partition(": ")
            raise InputError(f"{table.path}.{head}: {rest}") from exc
        raise InputError(f"{table.path}: {message}") from exc


def stated_air_pressure(duty: Any) -> tuple[float, str] | None:
    """The air pressure the duty itself states where it starts, for gauge pressures.

    The first phase's ``environment.ambient_pressure`` when given; else the ISO 2533
    static pressure at the ``pressure_altitude`` of the first stop's ``conditions`` in the
    first phase that has one (a tyre inflated on that airfield reads its gauge against
    that air); else None.

    Parameters
    ----------
    duty : mapping
        The case file's raw ``[duty]`` table (already validated by the case reader).

    Returns
    -------
    tuple of (float, str) or None
        Pressure [Pa] and where it came from, in words; None if the duty states neither.

    References
    ----------
    ISO 2533:1975, Standard Atmosphere (the troposphere's static pressure), as
    :func:`heatstack.operations.atmosphere.isa_pressure` implements it.
    """
    phases = duty.get("phases") if isinstance(duty, dict) else None
    if not isinstance(phases, list) or not phases or not isinstance(phases[0], dict):
        return None
    environment = phases[0].get("environment", {})
    if isinstance(environment, dict) and "ambient_pressure" in environment:
        return None  # the environment's own value is already the phase's ambient pressure
    for phase in phases:
        for event in phase.get("events", []) if isinstance(phase, dict) else []:
            conditions = event.get("conditions") if isinstance(event, dict) else None
            if isinstance(conditions, dict) and "pressure_altitude" in conditions:
                altitude = Conditions(pressure_altitude=conditions["pressure_altitude"]).pressure_altitude
                pressure = float(atmosphere.isa_pressure(altitude))
                return pressure, f"ISO 2533 at the stop's pressure altitude {altitude:.0f} m"
    return None
