"""Key paths into a case mapping: parse, format, read and write the value at a path.

A path is written the way case-file errors name keys: ``duty.phases[0].events[0].mass``,
``assembly.fuse_plugs[1].release_temperature``, ``output.limits."inboard bead seat"``.
:func:`parse_path` splits it into keys and list indices, :func:`format_path` writes it
back. The physical dimension of the value at a path is the one its field declares
(:func:`heatstack.case.key_dimension`).
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterator, Mapping, Sequence
from typing import Any

from ..errors import InputError

__all__ = [
    "parse_path",
    "format_path",
    "every_path",
    "MISSING",
    "value_at",
    "set_value_at",
]

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

    Returns
    -------
    tuple of str and int
        The keys and list indices in order.

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
    """The canonical text of a token path (inverse of :func:`parse_path`).

    Parameters
    ----------
    tokens : sequence of str and int
        Keys and list indices.

    Returns
    -------
    str
        The path, keys that are not bare words quoted.
    """
    out = ""
    for token in tokens:
        if isinstance(token, int):
            out += f"[{token}]"
        else:
            key = token if _BARE.fullmatch(token) else json.dumps(token)
            out += f".{key}" if out else key
    return out


def every_path(data: Any, prefix: tuple[Token, ...] = ()) -> Iterator[tuple[Token, ...]]:
    """Every path of the mapping, tables and values alike (depth first).

    Parameters
    ----------
    data : object
        Nested mappings and lists.
    prefix : tuple of str and int, optional
        Path of ``data`` itself.

    Yields
    ------
    tuple of str and int
        Each path below ``prefix``.
    """
    if isinstance(data, Mapping):
        for key, value in data.items():
            yield (*prefix, key)
            yield from every_path(value, (*prefix, key))
    elif isinstance(data, list):
        for k, value in enumerate(data):
            yield (*prefix, k)
            yield from every_path(value, (*prefix, k))


#: What :func:`value_at` returns for a path that is not in the mapping.
MISSING = object()


def value_at(data: Any, tokens: Sequence[Token]) -> Any:
    """The value at a token path of nested mappings and lists, or :data:`MISSING`.

    Parameters
    ----------
    data : object
        Nested mappings and lists.
    tokens : sequence of str and int
        The path.

    Returns
    -------
    object
        The value, or ``MISSING`` when the path does not exist.
    """
    node = data
    for token in tokens:
        if isinstance(token, int):
            if not isinstance(node, list) or token >= len(node):
                return MISSING
            node = node[token]
        else:
            if not isinstance(node, Mapping) or token not in node:
                return MISSING
            node = node[token]
    return node


def set_value_at(data: Any, tokens: Sequence[Token], value: Any) -> None:
    """Write ``value`` at a token path whose parent exists (in place).

    Parameters
    ----------
    data : object
        Nested mappings and lists.
    tokens : sequence of str and int
        The path.
    value : object
        The value to write.
    """
    parent = value_at(data, tokens[:-1])
    parent[tokens[-1]] = value
