"""Units at the edges: parse user quantities into SI floats, and format them back.

Inside heatstack every quantity is a plain float in SI (K, s, m, W, J, kg, Pa). Only
public constructors, the case file and the command line call this module, through
one path: :func:`quantity` (and :func:`quantity_array`) for values, :func:`unit` for
unit strings given on their own, :func:`declared` / :func:`convert_declared` for
dataclass fields and :func:`declares` for function arguments that declare their
dimension once.

A value string is read by our own tokeniser before pint sees it: exactly one number
(decimal point or scientific notation, one optional sign) followed by a unit
expression of unit names, ``*``, ``/``, ``^`` or ``**`` with small whole exponents and
parentheses. pint never evaluates arithmetic taken from input, so ``"9**9**9 s"``
cannot hang and ``"2*3 m"`` is refused rather than read as 6 m.
"""

from __future__ import annotations

import dataclasses
import functools
import inspect
import math
import re
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np
import pint

from .errors import InputError, UnitError

__all__ = [
    "registry",
    "quantity",
    "quantity_array",
    "parse_quantity",
    "unit",
    "declared",
    "declared_dimension",
    "declared_dimensions",
    "convert_declared",
    "Declaration",
    "declares",
    "to_si",
    "to_si_array",
    "from_si",
    "SI_UNITS",
]

#: The SI unit heatstack uses internally for each dimension name it accepts.
SI_UNITS: dict[str, str] = {
    "temperature": "K",
    "temperature_difference": "K",
    "time": "s",
    "length": "m",
    "area": "m**2",
    "volume": "m**3",
    "thermal_conductance": "W/K",
    "mass": "kg",
    "energy": "J",
    "power": "W",
    "pressure": "Pa",
    "force": "N",
    "speed": "m/s",
    "acceleration": "m/s**2",
    "density": "kg/m**3",
    "specific_heat": "J/(kg*K)",
    "conductivity": "W/(m*K)",
    "heat_transfer_coefficient": "W/(m**2*K)",
    "heat_flux": "W/m**2",
    "moment_of_inertia": "kg*m**2",
    "angular_speed": "rad/s",
    "dimensionless": "",
}

#: Longest value or unit text read at all [characters], and the most quoted in a message.
_MAX_TEXT = 200
_QUOTE = 80
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


def _quote(text: str) -> str:
    """``text`` quoted for a message, cut to at most ~80 characters."""
    return repr(text if len(text) <= _QUOTE else text[: _QUOTE - 3] + "...")


class _BadUnit(Exception):
    """Why a unit expression was refused (the caller adds field and text)."""


def _tokens(text: str) -> list[tuple[str, str]]:
    out, pos = [], 0
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        match = _UNIT_TOKEN.match(text, pos)
        if match is None:
            raise _BadUnit(f"cannot read {_quote(text[pos:].strip())}")
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
        raise UnitError(f"{field}: the unit {_quote(text)} is longer than {_MAX_TEXT} characters")
    try:
        return _parse_unit(text)
    except _BadUnit as exc:
        raise UnitError(f"{field}: {_quote(text)} is not a unit: {exc}") from None


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
        raise UnitError(f"{field}: {_quote(text)} is longer than {_MAX_TEXT} characters")
    stripped = text.strip()
    if "," in stripped:
        raise UnitError(
            f"{field}: {_quote(text)} has a comma; use a decimal point and no thousands separator "
            "(e.g. '70.5 t', '1000 kg')"
        )
    match = _NUMBER.match(stripped)
    if match is None:
        nonfinite = _NONFINITE.match(stripped)
        if nonfinite is None:
            raise UnitError(
                f"{field}: cannot read {_quote(text)}: expected one number and a unit, such as '20 mm' or '15 degC'"
            )
        if not allow_nonfinite:
            raise InputError(f"{field}: must be finite, got {_quote(text)}")
        match = nonfinite
    magnitude = float(match.group(0))
    if not (math.isfinite(magnitude) or allow_nonfinite):
        raise InputError(f"{field}: {_quote(text)} is outside the range of a float")
    try:
        return registry().Quantity(magnitude, _parse_unit(stripped[match.end() :]))
    except _BadUnit as exc:
        raise UnitError(
            f"{field}: cannot read {_quote(text)} as one number and a unit ({exc}); e.g. '20 mm', '2000 W/(m^2*K)'"
        ) from None


def _as_difference(value: pint.Quantity) -> pint.Quantity:
    """Treat degC / degF as temperature differences (1 degC = 1 K)."""
    text = f"{value.units}"
    if "degree_Celsius" in text:
        return registry().Quantity(value.magnitude, "delta_degC")
    if "degree_Fahrenheit" in text:
        return registry().Quantity(value.magnitude, "delta_degF")
    return value


def _convert(value: Any, given_unit: str | None, dimension: str, field: str, allow_nonfinite: bool) -> np.ndarray:
    """One value (number, string or pint Quantity) or a numeric array -> SI array."""
    if dimension not in SI_UNITS:
        raise UnitError(f"{field}: unknown dimension {dimension!r}")
    target = SI_UNITS[dimension]
    reg = registry()
    if isinstance(value, str):
        if given_unit is not None:
            raise UnitError(f"{field}: {_quote(value)} carries a unit; do not also give unit={given_unit!r}")
        value = parse_quantity(value, field, allow_nonfinite)
    elif isinstance(value, pint.Quantity):
        if given_unit is not None:
            raise UnitError(f"{field}: {value!r} carries a unit; do not also give unit={given_unit!r}")
    else:
        if isinstance(value, bool | np.bool_) or value is None:
            raise InputError(f"{field}: expected a number or a quantity such as '20 mm', got {value!r}")
        try:
            magnitude = np.asarray(value, dtype=float)
        except (TypeError, ValueError, OverflowError) as exc:
            raise InputError(f"{field}: expected a number or a quantity such as '20 mm', got {value!r}") from exc
        if given_unit is None:
            return magnitude
        value = reg.Quantity(magnitude, unit(given_unit, f"{field} unit"))
    if dimension == "temperature_difference":
        value = _as_difference(value)
    try:
        converted = value.to(target) if target else value.to("dimensionless")
    except pint.DimensionalityError as exc:
        raise UnitError(
            f"{field}: expected {dimension.replace('_', ' ')} (e.g. in {target or 'no unit'}), got {value.units:~}"
        ) from exc
    except pint.PintError as exc:  # e.g. an offset unit (degC) inside a product
        raise UnitError(f"{field}: cannot convert {value.units:~} to {target or 'no unit'}: {exc}") from exc
    try:
        return np.asarray(converted.magnitude, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{field}: expected numbers, got {value!r}") from exc


def _check_range(
    values: np.ndarray,
    field: str,
    minimum: float | None,
    exclusive_minimum: bool,
    maximum: float | None,
    allow_nonfinite: bool,
    error: type[InputError],
    unit: str = "",
) -> None:
    if not allow_nonfinite and not np.all(np.isfinite(values)):
        raise error(f"{field}: must be finite, got {_shown(values)}")
    finite = values[np.isfinite(values)] if allow_nonfinite else values
    if minimum is not None:
        low = finite <= minimum if exclusive_minimum else finite < minimum
        if np.any(low):
            sign = ">" if exclusive_minimum else ">="
            raise error(f"{field}: must be {sign} {minimum:g}{unit}, got {_shown(values)}{unit}")
    if maximum is not None and np.any(finite > maximum):
        raise error(f"{field}: must be <= {maximum:g}{unit}, got {_shown(values)}{unit}")


def _si_text(dimension: str) -> str:
    """`` <SI unit>`` of ``dimension`` for messages (empty for none or an unknown dimension)."""
    unit = SI_UNITS.get(dimension, "") if isinstance(dimension, str) else ""
    return f" {unit}" if unit else ""


def _shown(values: np.ndarray) -> str:
    text = f"{float(values):g}" if values.ndim == 0 else np.array2string(values, threshold=6, precision=6)
    return text if len(text) <= _QUOTE else text[: _QUOTE - 3] + "..."


def quantity(
    value: Any,
    dimension: str,
    field: str,
    *,
    unit: str | None = None,
    minimum: float | None = None,
    exclusive_minimum: bool = False,
    maximum: float | None = None,
    allow_nonfinite: bool = False,
    error: type[InputError] = InputError,
) -> float:
    """The one way a user value becomes an SI float: parse, check dimension and range.

    Parameters
    ----------
    value : float or str or pint.Quantity
        A bare number (already SI, or in ``unit``), a string such as ``"20 degC"`` or
        ``"3.5 MJ"``, or a pint Quantity.
    dimension : str
        A key of :data:`SI_UNITS` (e.g. ``"temperature"``, ``"energy"``).
    field : str
        Name or key path of the input field; every error message starts with it.
    unit : str, optional
        Unit of a bare number (e.g. ``"kt"``); checked like any unit string.
    minimum, maximum : float, optional
        Bounds in SI.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.
    allow_nonfinite : bool
        Accept ``nan`` and ``inf`` (bounds then apply to the finite values only).
    error : type of InputError
        Class raised for a value out of range or not finite (e.g. ``GeometryError``).

    Returns
    -------
    float
        The value in the SI unit of ``dimension``.

    Raises
    ------
    UnitError
        If the text cannot be read, the unit is unknown or has the wrong dimension.
    InputError
        (or ``error``) if the value is not a number, not one value, not finite or out of range.
    """
    values = _convert(value, unit, dimension, field, allow_nonfinite)
    if values.ndim != 0:
        raise InputError(f"{field}: expected one value, got {_shown(values)}")
    _check_range(values, field, minimum, exclusive_minimum, maximum, allow_nonfinite, error, _si_text(dimension))
    return float(values)


def quantity_array(
    values: Any,
    dimension: str,
    field: str,
    *,
    unit: str | None = None,
    minimum: float | None = None,
    exclusive_minimum: bool = False,
    maximum: float | None = None,
    allow_nonfinite: bool = False,
    error: type[InputError] = InputError,
) -> np.ndarray:
    """Array form of :func:`quantity`.

    Accepts a numeric array, an array Quantity, or a sequence whose items are numbers,
    strings or Quantities (each read alone; ``field[i]`` in errors).

    Parameters
    ----------
    values : array_like, pint.Quantity or sequence
        The values.
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name or key path of the input field.
    unit : str, optional
        Unit of bare numbers.
    minimum, maximum : float, optional
        Bounds in SI, applied to every value.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.
    allow_nonfinite : bool
        Accept ``nan`` and ``inf``.
    error : type of InputError
        Class raised for a value out of range or not finite.

    Returns
    -------
    numpy.ndarray
        Float array in the SI unit of ``dimension``.

    Raises
    ------
    UnitError
        If a value cannot be read or has the wrong dimension.
    InputError
        (or ``error``) if a value is not finite or out of range.
    """
    if isinstance(values, list | tuple) and any(isinstance(v, str | pint.Quantity) for v in values):
        out = np.array(
            [_convert(v, unit, dimension, f"{field}[{i}]", allow_nonfinite) for i, v in enumerate(values)],
            dtype=float,
        )
    else:
        out = np.asarray(_convert(values, unit, dimension, field, allow_nonfinite), dtype=float)
    _check_range(out, field, minimum, exclusive_minimum, maximum, allow_nonfinite, error, _si_text(dimension))
    return out


def to_si(value: Any, unit: str | None, dimension: str, field: str) -> float:
    """Convert a value to an SI float with no range check (see :func:`quantity`).

    Non-finite numbers pass; text is read by the same safe tokeniser.

    Parameters
    ----------
    value : float or str or pint.Quantity
        The value.
    unit : str or None
        Unit of a bare number (None: SI).
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    float
        The value in SI.

    Raises
    ------
    UnitError
        If the value cannot be read or has the wrong dimension.
    """
    return quantity(value, dimension, field, unit=unit, allow_nonfinite=True)


def to_si_array(value: Any, unit: str | None, dimension: str, field: str) -> np.ndarray:
    """Array version of :func:`to_si`.

    Parameters
    ----------
    value : array_like, pint.Quantity or sequence
        The values.
    unit : str or None
        Unit of bare numbers (None: SI).
    dimension : str
        A key of :data:`SI_UNITS`.
    field : str
        Name of the input field, used in error messages.

    Returns
    -------
    numpy.ndarray
        The values in SI.

    Raises
    ------
    UnitError
        If a value cannot be read or has the wrong dimension.
    """
    return quantity_array(value, dimension, field, unit=unit, allow_nonfinite=True)


# ---------------------------------------------------------------------------- declared fields


def declared(
    dimension: str,
    default: Any = dataclasses.MISSING,
    *,
    positive: bool = False,
    minimum: float | None = None,
    exclusive_minimum: bool = False,
    maximum: float | None = None,
    **options: Any,
) -> Any:
    """A dataclass field that declares its physical dimension (and bounds) once.

    ``rotor_thickness: float = declared("length", 0.020, positive=True)``; ``positive``
    is short for ``minimum=0.0, exclusive_minimum=True``.
    :func:`convert_declared` (called from ``__post_init__``) then turns whatever the
    user gave (SI number, unit string, pint Quantity) into the SI float; the case
    reader and the study paths look the dimension up with :func:`declared_dimension`.

    Parameters
    ----------
    dimension : str
        A key of :data:`SI_UNITS`.
    default : object, optional
        The field's default (SI number, unit string or Quantity); none by default.
    positive : bool
        Refuse zero and negative values.
    minimum, maximum : float, optional
        Bounds in SI.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.
    **options
        Further :func:`dataclasses.field` arguments.

    Returns
    -------
    dataclasses.Field
        The field, its dimension and bounds in ``metadata``.
    """
    if positive:
        minimum, exclusive_minimum = 0.0, True
    metadata = {
        "dimension": dimension,
        "minimum": minimum,
        "exclusive_minimum": exclusive_minimum,
        "maximum": maximum,
    }
    return dataclasses.field(default=default, metadata=metadata, **options)


def declared_dimension(cls: Any, name: str) -> str | None:
    """The dimension field ``name`` of dataclass ``cls`` declares, or None.

    Parameters
    ----------
    cls : type or dataclass instance
        The dataclass.
    name : str
        Field name.

    Returns
    -------
    str or None
        The declared dimension; None for an undeclared or unknown field.
    """
    for f in dataclasses.fields(cls):
        if f.name == name:
            return f.metadata.get("dimension")
    return None


def declared_dimensions(cls: Any) -> Mapping[str, str]:
    """Every declared field of dataclass ``cls`` and its dimension.

    Parameters
    ----------
    cls : type or dataclass instance
        The dataclass.

    Returns
    -------
    mapping of str to str
        Field name to dimension.
    """
    return {f.name: f.metadata["dimension"] for f in dataclasses.fields(cls) if "dimension" in f.metadata}


def _scalar_field(f: dataclasses.Field) -> bool:
    """Whether a declared field holds one value: annotated ``float`` (or ``float | None``)."""
    annotation = f.type if isinstance(f.type, str) else getattr(f.type, "__name__", str(f.type))
    return annotation.replace(" ", "") in ("float", "float|None", "None|float")


def _quoted(value: Any) -> str:
    """``repr(value)``, cut to the quoting limit."""
    text = repr(value)
    return text if len(text) <= _QUOTE else text[: _QUOTE - 3] + "..."


def convert_declared(instance: Any, where: str, error: type[InputError] = InputError) -> None:
    """Convert every declared field of a (frozen) dataclass instance to SI, in place.

    ``None`` stays ``None``; a sequence field holds a tuple of SI floats, and a list given to a
    field annotated ``float`` is refused. Messages read ``"<where>: <field>: ..."``.

    Parameters
    ----------
    instance : dataclass instance
        The instance (frozen or not) whose declared fields are converted.
    where : str
        Prefix of error messages ("" for none).
    error : type of InputError, optional
        Class raised for a value out of range or not finite.

    Raises
    ------
    UnitError
        If a value cannot be read or has the wrong dimension.
    InputError
        (or ``error``) if a value is out of its declared bounds.
    """
    prefix = f"{where}: " if where else ""
    for f in dataclasses.fields(instance):
        if "dimension" not in f.metadata:
            continue
        value = getattr(instance, f.name)
        if value is None:
            continue
        bounds = {k: f.metadata[k] for k in ("minimum", "exclusive_minimum", "maximum")}
        name, dimension = f"{prefix}{f.name}", f.metadata["dimension"]
        if isinstance(value, list | tuple) and _scalar_field(f):
            raise error(f"{name}: expected one value, got a list {_quoted(value)}")
        if isinstance(value, list | tuple):
            out: Any = tuple(float(v) for v in quantity_array(value, dimension, name, error=error, **bounds))
        else:
            out = quantity(value, dimension, name, error=error, **bounds)
        object.__setattr__(instance, f.name, out)


# ---------------------------------------------------------------------------- display


def from_si(value: Any, dimension: str, unit_text: str) -> np.ndarray | float:
    """Convert an SI value (or array) of ``dimension`` to ``unit_text`` for display.

    Parameters
    ----------
    value : float or array_like
        The value in the SI unit of ``dimension``.
    dimension : str
        A key of :data:`SI_UNITS`.
    unit_text : str
        The output unit, e.g. ``"degC"``.

    Returns
    -------
    float or ndarray
        The value in ``unit_text``.

    Raises
    ------
    UnitError
        If the unit is unknown or not of ``dimension``.
    """
    reg = registry()
    value_si = reg.Quantity(np.asarray(value, dtype=float), SI_UNITS[dimension] or "dimensionless")
    try:
        out = value_si.to(unit(unit_text, "output unit")).magnitude
    except pint.DimensionalityError as exc:
        raise UnitError(f"output unit {unit_text!r} is not a {dimension.replace('_', ' ')}") from exc
    return float(out) if np.ndim(out) == 0 else np.asarray(out)


# ---------------------------------------------------------------------------- declared arguments


@dataclasses.dataclass(frozen=True)
class Declaration:
    """The physical dimension and bounds declared for one function argument.

    ``positive`` is short for ``minimum=0.0, exclusive_minimum=True``.

    Attributes
    ----------
    dimension : str
        A key of :data:`SI_UNITS`.
    minimum, maximum : float or None
        Bounds in SI.
    exclusive_minimum : bool
        Whether ``minimum`` itself is refused.

    Raises
    ------
    UnitError
        If ``dimension`` is unknown.
    """

    dimension: str
    positive: dataclasses.InitVar[bool] = False
    minimum: float | None = None
    exclusive_minimum: bool = False
    maximum: float | None = None

    def __post_init__(self, positive: bool) -> None:
        if self.dimension not in SI_UNITS:
            raise UnitError(f"declaration: unknown dimension {self.dimension!r}")
        if positive:
            object.__setattr__(self, "minimum", 0.0)
            object.__setattr__(self, "exclusive_minimum", True)


def declares(**declarations: Declaration) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Decorator: the named arguments of a function declare their dimension once.

    Before the call, each named argument that is not ``None`` is converted to SI by
    :func:`quantity` (so the body sees SI floats); the declarations stay readable as
    ``function.dimensions`` (argument name -> dimension) for the case reader and studies.

    Parameters
    ----------
    **declarations : Declaration
        The declaration of each argument, by argument name.

    Returns
    -------
    callable
        The decorator; the wrapped function has a ``dimensions`` attribute.
    """

    def wrap(function: Callable[..., Any]) -> Callable[..., Any]:
        signature = inspect.signature(function)

        @functools.wraps(function)
        def call(*args: Any, **kwargs: Any) -> Any:
            bound = signature.bind(*args, **kwargs)
            for name, spec in declarations.items():
                value = bound.arguments.get(name)
                if value is not None:
                    bound.arguments[name] = quantity(
                        value,
                        spec.dimension,
                        name,
                        minimum=spec.minimum,
                        exclusive_minimum=spec.exclusive_minimum,
                        maximum=spec.maximum,
                    )
            return function(*bound.args, **bound.kwargs)

        call.dimensions = {name: spec.dimension for name, spec in declarations.items()}  # type: ignore[attr-defined]
        return call

    return wrap
