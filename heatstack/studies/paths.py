"""Key paths into a case mapping, and the values written at them converted to SI.

A path is written the way case-file errors name keys: ``duty.phases[0].events[0].mass``,
``assembly.fuse_plugs[1].release_temperature``, ``output.limits."inboard bead seat"``.
:func:`parse_path` splits it into keys and list indices, :func:`format_path` writes it
back. A value is a number in SI or a string with a unit (``"70 t"``); its physical
dimension can be read from such a string.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterator, Mapping, Sequence
from typing import Any

from ..errors import HeatstackError, InputError
from ..units import SI_UNITS, parse_quantity, registry

__all__ = ["parse_path", "format_path"]

Token = str | int


# ---------------------------------------------------------------------------- paths

_BARE = re.compile(r"[A-Za-z0-9_\-]+")
_KEY = re.compile(r'"((?:[^"\\]|\\.)*)"|([A-Za-z0-9_\-]+)')
_INDEX = re.compile(r"\[(\d+)\]")


def parse_path(path: str, where: str = "path") -> tuple[Token, ...]:
    """Split a parameter path into keys (str) and list indices (int).

    Parameters
    ----------
    path : str
        E.g. ``'duty.phases[0].events[0].mass'`` or ``'output.limits."fuse plug 1"'``.
    where : str
        Field name used in error messages.

    Raises
    ------
    InputError
        If the path is empty or malformed.
    """
    if not isinstance(path, str) or not path.strip():
        raise InputError(f"{where}: expected a key path such as 'duty.phases[0].events[0].mass', got {path!r}")
    tokens: list[Token] = []
    pos, text = 0, path.strip()
    while True:
        match = _KEY.match(text, pos)
        if match is None:
            raise InputError(f"{where}: cannot read {path!r} as a key path (at character {pos + 1})")
        tokens.append(match.group(1) if match.group(1) is not None else match.group(2))
        pos = match.end()
        while (index := _INDEX.match(text, pos)) is not None:
            tokens.append(int(index.group(1)))
            pos = index.end()
        if pos == len(text):
            return tuple(tokens)
        if text[pos] != ".":
            raise InputError(f"{where}: cannot read {path!r} as a key path (at character {pos + 1})")
        pos += 1


def format_path(tokens: Sequence[Token]) -> str:
    """The canonical text of a token path (inverse of :func:`parse_path`)."""
    out = ""
    for token in tokens:
        if isinstance(token, int):
            out += f"[{token}]"
        else:
            key = token if _BARE.fullmatch(token) else json.dumps(token)
            out += f".{key}" if out else key
    return out


def _leaf_paths(data: Any, prefix: tuple[Token, ...] = ()) -> Iterator[tuple[Token, ...]]:
    """Every path of the mapping, tables and values alike (depth first)."""
    if isinstance(data, Mapping):
        for key, value in data.items():
            yield (*prefix, key)
            yield from _leaf_paths(value, (*prefix, key))
    elif isinstance(data, list):
        for k, value in enumerate(data):
            yield (*prefix, k)
            yield from _leaf_paths(value, (*prefix, k))


_MISSING = object()


def _get(data: Any, tokens: Sequence[Token]) -> Any:
    node = data
    for token in tokens:
        if isinstance(token, int):
            if not isinstance(node, list) or token >= len(node):
                return _MISSING
            node = node[token]
        else:
            if not isinstance(node, Mapping) or token not in node:
                return _MISSING
            node = node[token]
    return node


def _set(data: Any, tokens: Sequence[Token], value: Any) -> None:
    parent = _get(data, tokens[:-1])
    parent[tokens[-1]] = value


# ---------------------------------------------------------------------------- dimensions


def _dimension_of_text(text: str, leaf: str) -> str | None:
    """Physical dimension (a key of ``SI_UNITS``) of a quantity string, or None if unknown.

    A temperature in an offset unit (degC, degF) is a temperature; in delta units it is
    a temperature difference; in kelvin it is a temperature when the key names one
    (``..._temperature``), else a difference (``tolerance``, ``target_change``).
    """
    reg = registry()
    try:
        quantity = parse_quantity(text, "value")
    except HeatstackError:
        return None
    units = f"{quantity.units}"
    if quantity.dimensionality == reg.Quantity(1.0, "K").dimensionality:
        if "delta_" in units:
            return "temperature_difference"
        if "degree_Celsius" in units or "degree_Fahrenheit" in units:
            return "temperature"
        return "temperature" if "temperature" in leaf else "temperature_difference"
    if quantity.dimensionless:
        return "dimensionless"
    for dimension, unit in SI_UNITS.items():
        if dimension in ("temperature", "temperature_difference", "dimensionless"):
            continue
        if reg.Quantity(1.0, unit).dimensionality == quantity.dimensionality:
            return dimension
    return None
