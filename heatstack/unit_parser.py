"""The safe quantity parser: unit strings and quantity strings read into pint objects.

A value string is read by our own tokeniser before pint sees it: exactly one number
(decimal point or scientific notation, one optional sign) followed by a unit
expression of unit names, ``*``, ``/``, ``^`` or ``**`` with small whole exponents and
parentheses. pint never evaluates arithmetic taken from input, so ``"9**9**9 s"``
cannot hang and ``"2*3 m"`` is refused rather than read as 6 m. The conversion of what
it reads to SI floats, with range checks, is :mod:`heatstack.units`.
"""

from __future__ import annotations

import functools
import math
import re
from typing import Any

import pint

from .errors import InputError, UnitError

__all__ = ["registry", "unit", "parse_quantity", "quote_text", "QUOTE_LIMIT"]

#: Longest value or unit text read at all [characters].
_MAX_TEXT = 200
#: The most characters of an input quoted in a message.
QUOTE_LIMIT = 80
#: Largest magnitude of a unit exponent, and deepest nesting of parentheses.
_MAX_EXPONENT = 4
_MAX_DEPTH = 4

_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_NONFINITE = re.compile(r"[+-]?(?:inf|infinity|nan)(?![A-Za-z_])", re.IGNORECASE)
_UNIT_TOKEN = re.compile(
    r"\s*(?:(?P<name>[A-Za-z_\u00b0\u00b5\u03bc\u03a9\u2126%][A-Za-z0-9_\u00b0\u00b5\u03bc\u03a9\u2126]*)"
    r"|(?P<power>\*\*|\^)|(?P<op>[*/])|(?P<open>\()|(?P<close>\))|(?P<int>[+-]?\d+))"
)


@functools.lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """Return heatstack's shared pint unit registry (created once).

    Returns
    -------
    pint.UnitRegistry
        The registry (offset units converted to base units, ``kt`` defined as the knot).
    """
    reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    reg.define("kt = knot")
    return reg


def quote_text(text: str) -> str:
    """``text`` quoted for a message, cut to at most ~80 characters.

    Parameters
    ----------
    text : str
        The input text.

    Returns
    -------
    str
        ``repr`` of the text, cut to :data:`QUOTE_LIMIT` characters with ``...`` at the cut.
    """
    return repr(text if len(text) <= QUOTE_LIMIT else text[: QUOTE_LIMIT - 3] + "...")


class _BadUnit(Exception):
    """Why a unit expression was refused (the caller adds field and text)."""


def _tokens(text: str) -> list[tuple[str, str]]:
    out, pos = [], 0
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        match = _UNIT_TOKEN.match(text, pos)
        if match is None:
            raise _BadUnit(f"cannot read {quote_text(text[pos:].strip())}")
        kind = match.lastgroup
        out.append((kind, match.group(kind)))
        pos = match.end()
    return out


class _UnitGrammar:
    """Recursive-descent check of a unit expression: names, * / ^ ** with small whole powers, ( )."""

    def __init__(self, text: str):
        self.tokens, self.at = _tokens(text), 0

    def fail(self, why: str) -> _BadUnit:
        return _BadUnit(why)

    def peek(self) -> tuple[str, str] | None:
        return self.tokens[self.at] if self.at < len(self.tokens) else None

    def take(self) -> tuple[str, str]:
        token = self.tokens[self.at]
        self.at += 1
        return token

    def check(self) -> None:
        if self.tokens:
            self.product(0)
        if self.peek() is not None:
            raise self.fail(f"unexpected {self.peek()[1]!r}")

    def product(self, depth: int) -> None:
        self.power(depth)
        while (token := self.peek()) is not None and token[0] in ("op", "name", "open", "int"):
            if token[0] == "op":
                self.take()
            self.power(depth)

    def power(self, depth: int) -> None:
        self.factor(depth)
        token = self.peek()
        if token is not None and token[0] == "power":
            self.take()
            self.exponent()

    def exponent(self) -> None:
        token = self.peek()
        parenthesised = token is not None and token[0] == "open"
        if parenthesised:
            self.take()
            token = self.peek()
        if token is None or token[0] != "int":
            raise self.fail("an exponent must be a whole number")
        self.take()
        if abs(int(token[1])) > _MAX_EXPONENT:
            raise self.fail(f"exponent {token[1]} is beyond +-{_MAX_EXPONENT}")
        if parenthesised:
            if self.peek() is None or self.peek()[0] != "close":
                raise self.fail("missing ')'")
            self.take()

    def factor(self, depth: int) -> None:
        token = self.peek()
        if token is None:
            raise self.fail("it ends where a unit name is expected")
        kind, text = self.take()
        if kind == "name":
            return
        if kind == "int" and text == "1":
            return  # as in "1/s"
        if kind == "open":
            if depth >= _MAX_DEPTH:
                raise self.fail("parentheses nested too deep")
            self.product(depth + 1)
            if self.peek() is None or self.peek()[0] != "close":
                raise self.fail("missing ')'")
            self.take()
            return
        raise self.fail(f"unexpected {text!r} where a unit name is expected")


def unit(text: Any, field: str) -> pint.Unit:
    """Check a unit string and return the pint unit.

    Parameters
    ----------
    text : str
        Unit expression, e.g. ``"W/(m^2*K)"``, ``"kt"``, ``"degC"``.
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    pint.Unit
        The unit.

    Raises
    ------
    UnitError
        If ``text`` is not a string of unit names, ``*``, ``/``, ``^``/``**`` with
        whole exponents up to 4 in magnitude and parentheses, or names an unknown unit.
    """
    if not isinstance(text, str):
        raise UnitError(f"{field}: a unit must be a string such as 'mm' or 'W/(m^2*K)', got {text!r}")
    if len(text) > _MAX_TEXT:
        raise UnitError(f"{field}: the unit {quote_text(text)} is longer than {_MAX_TEXT} characters")
    try:
        return _parse_unit(text)
    except _BadUnit as exc:
        raise UnitError(f"{field}: {quote_text(text)} is not a unit: {exc}") from None


def _parse_unit(text: str) -> pint.Unit:
    if not text.strip():
        return registry().dimensionless
    _UnitGrammar(text).check()
    try:
        return registry().parse_units(text)
    except Exception:  # pint raises several unrelated exception types
        raise _BadUnit("unknown unit name") from None


def parse_quantity(text: str, field: str, allow_nonfinite: bool = False) -> pint.Quantity:
    """Read a quantity string (``"20 mm"``) into a pint Quantity, through our own tokeniser.

    Parameters
    ----------
    text : str
        One number followed by a unit expression.
    field : str
        Name of the input field, used in error messages.
    allow_nonfinite : bool, optional
        Accept ``nan`` and ``inf`` as the number.

    Returns
    -------
    pint.Quantity
        The quantity in the unit as written.

    Raises
    ------
    UnitError
        If ``text`` is not one number followed by a unit expression (see the module notes).
    InputError
        If the number is not finite (unless ``allow_nonfinite``) or beyond float range.
    """
    if len(text) > _MAX_TEXT:
        raise UnitError(f"{field}: {quote_text(text)} is longer than {_MAX_TEXT} characters")
    stripped = text.strip()
    if "," in stripped:
        raise UnitError(
            f"{field}: {quote_text(text)} has a comma; use a decimal point and no thousands separator "
            "(e.g. '70.5 t', '1000 kg')"
        )
    match = _NUMBER.match(stripped)
    if match is None:
        nonfinite = _NONFINITE.match(stripped)
        if nonfinite is None:
            raise UnitError(
                f"{field}: cannot read {quote_text(text)}: expected one number and a unit, such as '20 mm' or '15 degC'"
            )
        if not allow_nonfinite:
            raise InputError(f"{field}: must be finite, got {quote_text(text)}")
        match = nonfinite
    magnitude = float(match.group(0))
    if not (math.isfinite(magnitude) or allow_nonfinite):
        raise InputError(f"{field}: {quote_text(text)} is outside the range of a float")
    try:
        return registry().Quantity(magnitude, _parse_unit(stripped[match.end() :]))
    except _BadUnit as exc:
        raise UnitError(
            f"{field}: cannot read {quote_text(text)} as one number and a unit ({exc}); e.g. '20 mm', '2000 W/(m^2*K)'"
        ) from None
