"""Study parameters: what a study varies (:class:`Parameter`) and how each is checked against the base case and
converted to SI (:class:`ResolvedParameter`)."""

from __future__ import annotations

import difflib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, fields
from typing import Any

import numpy as np

from ..case_keys import key_dimension
from ..errors import InputError
from ..units import SI_UNITS, quantity, to_si
from ..wheel_design import WheelBrakeDesign
from .distributions import Distribution
from .paths import MISSING, Token, every_path, format_path, parse_path, value_at

__all__ = ["Parameter", "ResolvedParameter", "resolve_parameter", "closest_path", "design_fields"]


@dataclass(frozen=True)
class Parameter:
    """One varied input of a study.

    Parameters
    ----------
    path : str or sequence of str
        Key path(s) in the base case mapping; with several paths the same value is
        written at each (e.g. the ambient temperature of every duty phase).
    distribution : Distribution, optional
        For random and Latin hypercube sampling.
    values : sequence, optional
        For grid sampling (numbers in SI, strings with a unit, whole numbers or
        booleans); with random or Latin hypercube sampling the values are drawn with
        equal probability.
    name : str, optional
        Column name in the results; the first path by default.
    dimension : str, optional
        A key of :data:`heatstack.units.SI_UNITS`, when it cannot be read from the base
        value or the units given.
    """

    path: str | Sequence[str]
    distribution: Distribution | None = None
    values: Sequence[Any] | None = None
    name: str | None = None
    dimension: str | None = None

    @property
    def paths(self) -> tuple[str, ...]:
        """The key paths, as a tuple."""
        return (self.path,) if isinstance(self.path, str) else tuple(self.path)

    @property
    def label(self) -> str:
        """Column name in the results."""
        return self.name or self.paths[0]

    def to_dict(self) -> dict[str, Any]:
        """The parameter as given, for the store's manifest.

        Returns
        -------
        dict
            Paths, name, dimension, and the distribution's fields or the values.
        """
        out: dict[str, Any] = {"paths": list(self.paths), "name": self.label, "dimension": self.dimension}
        if self.distribution is not None:
            out.update(self.distribution.to_dict())
        if self.values is not None:
            out["values"] = list(self.values)
        return out


@dataclass(frozen=True, eq=False)
class ResolvedParameter:
    """A parameter checked against the base case, in SI.

    Attributes
    ----------
    name : str
    paths : tuple of tuple
        Token paths.
    dimension : str or None
        Physical dimension (``None``: bare numbers, used as given).
    kind : {"float", "int", "bool"}
        Type written into the case mapping.
    base_values : tuple
        Value at each path in the base case (``None`` where the key is absent and the
        case's default applies).
    distribution : scipy frozen distribution or None
    values : ndarray or None
        Grid values in SI.
    unit : str
        SI unit of the column.
    """

    name: str
    paths: tuple[tuple[Token, ...], ...]
    dimension: str | None
    kind: str
    base_values: tuple[Any, ...]
    distribution: Any
    values: np.ndarray | None
    unit: str

    def from_uniform(self, u: np.ndarray) -> np.ndarray:
        """Map uniform numbers in [0, 1) through the inverse CDF.

        Parameters
        ----------
        u : ndarray
            Uniform numbers in [0, 1).

        Returns
        -------
        ndarray
            Parameter values [SI]: the distribution's quantiles, or grid values picked by
            equal shares of [0, 1).
        """
        if self.distribution is not None:
            return np.asarray(self.distribution.ppf(u), dtype=float)
        index = np.minimum((u * self.values.size).astype(int), self.values.size - 1)
        return self.values[index]

    def representative(self) -> float:
        """The median of the distribution, or the first grid value.

        Returns
        -------
        float
            The value [SI].
        """
        if self.distribution is not None:
            return float(self.distribution.ppf(0.5))
        return float(self.values[0])

    def cast(self, value: float) -> Any:
        """The value as written into the case mapping.

        Parameters
        ----------
        value : float
            A sampled value [SI].

        Returns
        -------
        bool, int or float
            The value as the base case's kind (an int rounded).
        """
        if self.kind == "bool":
            return bool(value)
        if self.kind == "int":
            return int(round(value))
        return float(value)


def closest_path(mapping: Mapping, path: str, extra: Sequence[str] = ()) -> str:
    """``"; did you mean 'x'?"`` for the nearest key path, else a list of paths under the same top key.

    Parameters
    ----------
    mapping : mapping
        The base case mapping.
    path : str
        The key path that was not found.
    extra : sequence of str, optional
        More candidate paths (e.g. optional design keys).

    Returns
    -------
    str
        The hint, or ``""`` when nothing is close.
    """
    candidates = [format_path(p) for p in every_path(mapping)] + list(extra)
    close = difflib.get_close_matches(path, candidates, n=1, cutoff=0.6)
    if close:
        return f"; did you mean {close[0]!r}?"
    top = path.split(".")[0].split("[")[0]
    same = sorted({c for c in candidates if c.startswith(top)})[:8]
    return f"; paths under {top!r} include {', '.join(same)}" if same else ""


def design_fields(mapping: Mapping) -> list[str]:
    """Optional design keys of the wheel-and-brake builder (for suggestions).

    Parameters
    ----------
    mapping : mapping
        The base case mapping.

    Returns
    -------
    list of str
        ``assembly.design.<field>`` paths; empty when the case uses another builder.
    """
    assembly = mapping.get("assembly", {})
    if not isinstance(assembly, Mapping) or assembly.get("builder", "wheel-brake") != "wheel-brake":
        return []
    return [f"assembly.design.{f.name}" for f in fields(WheelBrakeDesign) if f.name != "fuse_plugs"]


def resolve_parameter(k: int, parameter: Parameter, mapping: dict, grid: bool) -> ResolvedParameter:
    """Check one study parameter against the base case and convert its values or distribution to SI.

    Parameters
    ----------
    k : int
        Index of the parameter in the study, for error messages.
    parameter : Parameter
        The parameter as given.
    mapping : dict
        The base case mapping.
    grid : bool
        Whether the study samples a grid (values needed) rather than distributions.

    Returns
    -------
    ResolvedParameter
        The parameter with its paths, dimension, kind, base values, frozen distribution or
        SI values, and unit.

    Raises
    ------
    InputError
        If a path is not in the base case, no value is given, or the dimension cannot be told.
    UnitError
        If a value has the wrong unit.
    """
    where = f"study.parameters[{k}]"
    _check_parameter(where, parameter, grid)
    paths, bases, absent = _base_values(where, parameter, mapping)
    raw_values = list(parameter.values) if parameter.values is not None else []
    dimension = _parameter_dimension(where, parameter, mapping, paths, bases, absent, raw_values)
    kind = _value_kind(raw_values, bases)
    distribution, values = None, None
    if parameter.distribution is not None:
        distribution = parameter.distribution.frozen(dimension, f"{where}.distribution")
    else:
        if not raw_values:
            raise InputError(f"{where}.values: at least one value is needed")
        if kind == "bool":
            values = np.array([1.0 if v else 0.0 for v in raw_values])
        else:
            values = np.array(
                [quantity(v, dimension or "dimensionless", f"{where}.values[{i}]") for i, v in enumerate(raw_values)]
            )
    if dimension is None and any(isinstance(b, str) for b in bases):
        raise InputError(f"{where}: cannot tell the physical dimension of {bases[0]!r}; give dimension = ...")
    for tokens, base_value in zip(paths, bases, strict=True):
        if isinstance(base_value, str) and dimension is not None:
            to_si(base_value, None, dimension, f"{where}: the base value at {format_path(tokens)}")
    unit = SI_UNITS.get(dimension or "dimensionless", "") if kind == "float" else ""
    return ResolvedParameter(
        name=parameter.label,
        paths=tuple(paths),
        dimension=dimension,
        kind=kind,
        base_values=tuple(bases),
        distribution=distribution,
        values=values,
        unit=unit,
    )


def _check_parameter(where: str, parameter: Parameter, grid: bool) -> None:
    """The checks of a parameter that need no base case: values or distribution, paths, dimension name."""
    if not isinstance(parameter, Parameter):
        raise InputError(f"{where}: expected a Parameter, got {type(parameter).__name__}")
    if (parameter.distribution is None) == (parameter.values is None):
        raise InputError(
            f"{where}: give either values (a grid) or a distribution, "
            f"not {'both' if parameter.values is not None else 'neither'}"
        )
    if parameter.distribution is not None and not isinstance(parameter.distribution, Distribution):
        raise InputError(f"{where}.distribution: expected a Distribution, got {parameter.distribution!r}")
    if grid and parameter.values is None:
        raise InputError(f"{where}: grid sampling needs a list of values for {parameter.label!r}, not a distribution")
    if not parameter.paths:
        raise InputError(f"{where}.path: at least one key path is needed")
    if parameter.dimension is not None and parameter.dimension not in SI_UNITS:
        close = difflib.get_close_matches(str(parameter.dimension), SI_UNITS, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else f"; one of {', '.join(SI_UNITS)}"
        raise InputError(f"{where}.dimension: unknown dimension {parameter.dimension!r}{hint}")


def _base_values(where: str, parameter: Parameter, mapping: dict) -> tuple[list, list, list]:
    """Each path's tokens, its value in the base case (None where an optional key is absent) and the absent ones."""
    paths, bases, absent = [], [], []
    for j, text in enumerate(parameter.paths):
        pwhere = f"{where}.path" if isinstance(parameter.path, str) else f"{where}.path[{j}]"
        tokens = parse_path(text, pwhere)
        value = value_at(mapping, tokens)
        if value is MISSING:
            parent = value_at(mapping, tokens[:-1])
            if not (isinstance(parent, Mapping) and isinstance(tokens[-1], str)):
                hint = closest_path(mapping, format_path(tokens), design_fields(mapping))
                raise InputError(f"{pwhere}: {format_path(tokens)!r} does not exist in the base case{hint}")
            value = None  # an optional key: checked by a trial parse below
            absent.append((pwhere, tokens))
        elif isinstance(value, Mapping | list):
            raise InputError(f"{pwhere}: {format_path(tokens)!r} is a table or list in the base case, not a value")
        paths.append(tokens)
        bases.append(value)
    return paths, bases, absent


def _parameter_dimension(
    where: str, parameter: Parameter, mapping: dict, paths: list, bases: list, absent: list, raw_values: list
) -> str | None:
    """The parameter's declared dimension, else the one its first path's key declares in the case."""
    texts = [b for b in bases if isinstance(b, str)]
    texts += parameter.distribution.strings() if parameter.distribution is not None else []
    texts += [v for v in raw_values if isinstance(v, str)]
    dimension = parameter.dimension if parameter.dimension is not None else key_dimension(paths[0], mapping)
    if dimension is None and absent and texts:  # no declaration, not in the base case: a misspelt key?
        pwhere, tokens = absent[0]
        hint = closest_path(mapping, format_path(tokens), design_fields(mapping))
        raise InputError(f"{pwhere}: {format_path(tokens)!r} does not exist in the base case{hint}")
    if dimension is None and texts:
        raise InputError(
            f"{where}: cannot tell the physical dimension of {texts[0]!r}; give the parameter a dimension "
            f"(one of {', '.join(SI_UNITS)})"
        )
    return dimension


def _value_kind(raw_values: list, bases: list) -> str:
    """ "bool", "int" or "float": how the parameter's values are written back into the case."""
    base_kinds = {type(b) for b in bases if b is not None}
    if raw_values and all(isinstance(v, bool) for v in raw_values) and base_kinds <= {bool}:
        return "bool"
    if raw_values and all(isinstance(v, int) and not isinstance(v, bool) for v in raw_values) and base_kinds <= {int}:
        return "int"
    return "float"
