"""Reading one TOML table of a case file: typed getters that name the key path.

:class:`CaseTable` wraps a table of a case file (:mod:`heatstack.case`) with its key
path (``duty.phases[2].events[0]``); every getter raises an :class:`InputError`
naming the full key, quantities are converted to SI in the dimension declared for
the key (:func:`heatstack.case_keys.key_dimension`), and :meth:`CaseTable.finish`
rejects unknown keys, suggesting the closest valid one.
"""

from __future__ import annotations

import difflib
import unicodedata
from collections.abc import Mapping
from typing import Any

from .case_keys import key_dimension
from .errors import InputError
from .unit_declarations import declared_dimensions
from .units import quantity

__all__ = ["CaseTable"]

_REQUIRED = object()
#: An absolute temperature: above 0 K.
ABOVE_ZERO = {"minimum": 0.0, "exclusive_minimum": True}


def _shown(value: Any) -> str:
    """``value`` for a message: its repr, cut to about 80 characters."""
    text = repr(value)
    return text if len(text) <= 80 else text[:77] + "..."


class CaseTable:
    """A TOML table being read: typed getters with key paths, unknown keys rejected.

    Parameters
    ----------
    data : mapping
        The table's contents.
    path : str
        Key path of the table, used in error messages ("" for the root).
    tokens : tuple of str and int, optional
        The same path as tokens, to look up the declared dimension of a key.

    Raises
    ------
    InputError
        If ``data`` is not a table.
    """

    def __init__(self, data: Any, path: str, tokens: tuple[str | int, ...] = ()):
        if not isinstance(data, Mapping):
            raise InputError(f"{path or 'case'}: expected a table, got {type(data).__name__}")
        self.data, self.path, self.tokens, self.used = dict(data), path, tokens, set()

    def where(self, key: str) -> str:
        """The key path of ``key`` in this table, for messages.

        Parameters
        ----------
        key : str
            A key of the table.

        Returns
        -------
        str
            ``"<path>.<key>"``, or ``key`` at the root.
        """
        return f"{self.path}.{key}" if self.path else key

    def has(self, key: str) -> bool:
        """Whether the table holds ``key``.

        Parameters
        ----------
        key : str
            The key.

        Returns
        -------
        bool
            True when the key is given.
        """
        return key in self.data

    def raw(self, key: str, default: Any = _REQUIRED) -> Any:
        """The value at ``key`` as given, marking the key as read.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Returned when the key is absent; without it the key is required.

        Returns
        -------
        object
            The value, or ``default``.

        Raises
        ------
        InputError
            If a required key is missing.
        """
        self.used.add(key)
        if key in self.data:
            return self.data[key]
        if default is _REQUIRED:
            raise InputError(f"{self.where(key)}: missing (required)")
        return default

    def text(self, key: str, default: Any = _REQUIRED) -> str:
        """The string at ``key``.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Returned when the key is absent; without it the key is required.

        Returns
        -------
        str
            The string, or ``default``.

        Raises
        ------
        InputError
            If the key is missing (and required), its value is not a string, or it holds a
            control character.
        """
        value = self.raw(key, default)
        if value is not default and not isinstance(value, str):
            raise InputError(f"{self.where(key)}: expected a string, got {_shown(value)}")
        if isinstance(value, str) and any(unicodedata.category(c) == "Cc" and c not in "\t\n\r" for c in value):
            # a control character (a null byte, say) passes the solve and then breaks the results file
            raise InputError(f"{self.where(key)}: control characters are not allowed in {_shown(value)}")
        return value

    def boolean(self, key: str, default: Any = _REQUIRED) -> bool:
        """The boolean at ``key``.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Returned when the key is absent; without it the key is required.

        Returns
        -------
        bool
            The value, or ``default``.

        Raises
        ------
        InputError
            If the key is missing (and required) or its value is not true or false.
        """
        value = self.raw(key, default)
        if value is not default and not isinstance(value, bool):
            raise InputError(f"{self.where(key)}: expected true or false, got {_shown(value)}")
        return value

    def integer(self, key: str, default: Any = _REQUIRED, minimum: int = 0, maximum: int | None = None) -> int:
        """The whole number at ``key``, at least ``minimum`` and at most ``maximum``.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Returned when the key is absent; without it the key is required.
        minimum : int, optional
            Smallest value allowed.
        maximum : int, optional
            Largest value allowed; None for no upper bound.

        Returns
        -------
        int
            The value, or ``default``.

        Raises
        ------
        InputError
            If the key is missing (and required) or its value is not a whole number in range.
        """
        value = self.raw(key, default)
        if value is default:
            return value
        if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
            raise InputError(f"{self.where(key)}: expected a whole number >= {minimum}, got {_shown(value)}")
        if maximum is not None and value > maximum:
            raise InputError(f"{self.where(key)}: expected a whole number <= {maximum}, got {_shown(value)}")
        return value

    def quantity(self, key: str, default: Any = _REQUIRED, **bounds: Any) -> float:
        """The value at ``key`` in SI, in the dimension declared for it (:func:`key_dimension`).

        ``bounds`` (``minimum``, ``exclusive_minimum``, ``maximum``) are checked in SI.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Returned as given when the key is absent; without it the key is required.
        **bounds : float
            ``minimum``, ``exclusive_minimum`` and ``maximum`` in SI, checked on the value.

        Returns
        -------
        float
            The value in SI, or ``default``.

        Raises
        ------
        InputError
            If the key is missing (and required), has no declared dimension, or its value is not
            a number or quantity in range.
        UnitError
            If the unit is unknown or of the wrong dimension.
        """
        value = self.raw(key, default)
        if value is default:
            return value
        return self.convert(value, (*self.tokens, key), self.where(key), **bounds)

    def convert(self, value: Any, tokens: tuple[str | int, ...], where: str, **bounds: Any) -> float:
        """A value found at ``tokens`` in SI, in the dimension declared for that key path.

        Parameters
        ----------
        value : object
            The value as given: a number or a quantity string.
        tokens : tuple of str and int
            Key path of the value, to look its dimension up.
        where : str
            Key path used in error messages.
        **bounds : float
            ``minimum``, ``exclusive_minimum`` and ``maximum`` in SI, checked on the value.

        Returns
        -------
        float
            The value in SI.

        Raises
        ------
        InputError
            If no dimension is declared for the key, or the value is not a number or quantity in range.
        UnitError
            If the unit is unknown or of the wrong dimension.
        """
        dimension = key_dimension(tokens)
        if dimension is None:
            raise InputError(f"{where}: no physical dimension is declared for this key")
        if isinstance(value, bool) or not isinstance(value, int | float | str):
            raise InputError(f"{where}: expected a number or a quantity such as '20 mm', got {_shown(value)}")
        return quantity(value, dimension, where, **bounds)

    def declared(self, cls: type, names: tuple[str, ...] | None = None) -> dict[str, float]:
        """The keys of this table that are declared fields of ``cls`` (or ``names`` of them), in SI.

        All of them count as valid keys for :meth:`finish`, given or not.

        Parameters
        ----------
        cls : type
            A dataclass with fields declared by :func:`heatstack.unit_declarations.declared`.
        names : tuple of str, optional
            The fields to read; every declared field by default.

        Returns
        -------
        dict of str to float
            The given keys' values in SI.
        """
        names = tuple(declared_dimensions(cls)) if names is None else names
        self.used.update(names)
        return {key: self.quantity(key) for key in names if self.has(key)}

    def table(self, key: str, default: Any = _REQUIRED) -> CaseTable:
        """The sub-table at ``key``.

        Parameters
        ----------
        key : str
            The key.
        default : object, optional
            Used when the key is absent (None gives an empty table); without it the key is required.

        Returns
        -------
        CaseTable
            The sub-table, with its key path.

        Raises
        ------
        InputError
            If the key is missing (and required) or its value is not a table.
        """
        value = self.raw(key, default)
        return CaseTable({} if value is None else value, self.where(key), (*self.tokens, key))

    def tables(self, key: str) -> list[CaseTable]:
        """The array of tables at ``key`` (empty when absent).

        Parameters
        ----------
        key : str
            The key.

        Returns
        -------
        list of CaseTable
            One table per item, with its key path ``key[k]``.

        Raises
        ------
        InputError
            If the value is not an array of tables.
        """
        value = self.raw(key, [])
        if not isinstance(value, list):
            raise InputError(f"{self.where(key)}: expected an array of tables ([[{self.where(key)}]])")
        return [CaseTable(item, f"{self.where(key)}[{k}]", (*self.tokens, key, k)) for k, item in enumerate(value)]

    def finish(self, allowed: tuple[str, ...] | None = None) -> None:
        """Reject keys that were not read (or not in ``allowed``), suggesting the closest.

        Parameters
        ----------
        allowed : tuple of str, optional
            The valid keys; by default the keys read so far.

        Raises
        ------
        InputError
            Naming the first unknown key and the closest valid one (or the valid keys).
        """
        allowed = tuple(sorted(self.used)) if allowed is None else allowed
        for key in self.data:
            if key not in allowed and key not in self.used:
                close = difflib.get_close_matches(str(key), allowed, n=1, cutoff=0.5)
                hint = f"; did you mean {close[0]!r}?" if close else f"; valid keys: {', '.join(allowed)}"
                raise InputError(f"{self.where(str(key))}: unknown key{hint}")
