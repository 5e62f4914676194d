"""Declared dimensions: dataclass fields and function arguments that state their physical dimension once.

:func:`declared` makes a dataclass field carry its dimension and bounds, and
:func:`convert_declared` (called from ``__post_init__``) turns what the user gave into SI
through :func:`heatstack.units.quantity`; :func:`declares` does the same for function
arguments. The case reader and the study paths look the dimensions up here.
"""

from __future__ import annotations

import dataclasses
import functools
import inspect
from collections.abc import Callable, Mapping
from typing import Any

from .errors import InputError, UnitError
from .unit_parser import QUOTE_LIMIT
from .units import SI_UNITS, quantity, quantity_array

__all__ = [
    "declared",
    "declared_dimension",
    "declared_dimensions",
    "convert_declared",
    "Declaration",
    "declares",
]


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
    return text if len(text) <= QUOTE_LIMIT else text[: QUOTE_LIMIT - 3] + "..."


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
