"""Study descriptions: a base case, the parameters to vary, how to sample them, what to collect.

A parameter is addressed by its path in the base case's TOML mapping, written the way
case-file errors name keys: ``duty.phases[0].events[0].mass``,
``assembly.fuse_plugs[1].release_temperature``, ``output.limits."inboard bead seat"``.
Each parameter takes either a list of ``values`` (a grid) or a distribution whose
parameters may carry units (``Normal(mean="70 t", std="2 t")``); bare numbers are SI.
The physical dimension of a parameter is read from the base value at its path (a string
such as ``"70 t"`` says *mass*), else from the units of the study's own values, or given
by hand with ``dimension=``.

:func:`plan_study` resolves a :class:`Study` against its base case into a
:class:`StudyPlan`: paths checked (an unknown path names the closest existing one), units
converted to SI, and the sample table drawn (full grid, random, or Latin hypercube). The
same seed always gives the same table.

References
----------
.. [1] McKay, M.D., Beckman, R.J., Conover, W.J., 1979, A comparison of three methods
   for selecting values of input variables in the analysis of output from a computer
   code, Technometrics 21, 239-245 (Latin hypercube sampling).
"""

from __future__ import annotations

import copy
import difflib
import hashlib
import itertools
import json
import math
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, fields
from pathlib import Path
from typing import Any, Literal

import numpy as np
from scipy.stats import qmc

from ..builders import WheelBrakeDesign
from ..case import case_from_mapping, load_case
from ..errors import HeatstackError, InputError
from ..units import SI_UNITS, quantity, to_si
from .distributions import Distribution
from .paths import MISSING, Token, every_path, format_path, parse_path, set_value_at, value_at

__all__ = [
    "Parameter",
    "Sampling",
    "Study",
    "StudyPlan",
    "ResolvedParameter",
    "plan_study",
    "SAMPLING_METHODS",
]

#: Sampling methods of a study.
SAMPLING_METHODS = ("grid", "random", "latin_hypercube")


# ---------------------------------------------------------------------------- description


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
        """The parameter as given, for the store's manifest."""
        out: dict[str, Any] = {"paths": list(self.paths), "name": self.label, "dimension": self.dimension}
        if self.distribution is not None:
            out.update(self.distribution.to_dict())
        if self.values is not None:
            out["values"] = list(self.values)
        return out


@dataclass(frozen=True)
class Sampling:
    """How the sample table is drawn.

    Parameters
    ----------
    method : {"grid", "random", "latin_hypercube"}
        ``grid``: every combination of the parameters' values (first parameter slowest).
        ``random``: independent uniform draws mapped through each distribution's inverse
        CDF. ``latin_hypercube``: one draw in each of ``cases`` equal-probability strata
        of every parameter (scipy.stats.qmc.LatinHypercube [1]_).
    cases : int, optional
        Number of cases (random and Latin hypercube; for a grid it must match or be omitted).
    seed : int, optional
        Seed of the random generator (required for random and Latin hypercube sampling:
        the same seed gives the same samples).
    """

    method: Literal["grid", "random", "latin_hypercube"] = "latin_hypercube"
    cases: int | None = None
    seed: int | None = None

    def to_dict(self) -> dict[str, Any]:
        """The sampling as given."""
        return {"method": self.method, "cases": self.cases, "seed": self.seed}


@dataclass(frozen=True)
class Study:
    """A study: a base case, its varied parameters, the sampling and what to collect.

    Parameters
    ----------
    base_case : str or Path
        The case file every case starts from.
    parameters : sequence of Parameter
    sampling : Sampling
    outputs : sequence of str, optional
        Probes or series whose peak (temperature [K], time [s], delay after the end of
        braking [s]) is collected; every probe and global series by default. Margins to
        the case's ``output.limits``, fuse-plug release and margin, and the solver
        statistics are always collected.
    cell_size : float or str, optional
        Overrides the case's cell size [m] (all directions) for speed.
    target_change : float or str, optional
        Overrides the solver's target temperature change per step [K] for speed.
    title : str
    """

    base_case: str | Path
    parameters: Sequence[Parameter]
    sampling: Sampling = field(default_factory=Sampling)
    outputs: Sequence[str] | None = None
    cell_size: float | str | None = None
    target_change: float | str | None = None
    title: str = "untitled study"

    def plan(self) -> StudyPlan:
        """Resolve against the base case: see :func:`plan_study`."""
        return plan_study(self)


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
        """Map uniform numbers in [0, 1) through the inverse CDF."""
        if self.distribution is not None:
            return np.asarray(self.distribution.ppf(u), dtype=float)
        index = np.minimum((u * self.values.size).astype(int), self.values.size - 1)
        return self.values[index]

    def representative(self) -> float:
        """The median of the distribution, or the first grid value [SI]."""
        if self.distribution is not None:
            return float(self.distribution.ppf(0.5))
        return float(self.values[0])

    def cast(self, value: float) -> Any:
        """The value as written into the case mapping."""
        if self.kind == "bool":
            return bool(value)
        if self.kind == "int":
            return int(round(value))
        return float(value)


@dataclass(frozen=True, eq=False)
class StudyPlan:
    """A study resolved against its base case: the sample table and the case mappings.

    Attributes
    ----------
    study : Study
    base_text : str
        Text of the base case file.
    base_mapping : dict
        Its parsed TOML mapping.
    base_dir : str
        Folder of the base case (relative paths inside it resolve here).
    origin : str
        File name of the base case.
    parameters : tuple of ResolvedParameter
    samples : ndarray, shape (cases, parameters)
        Parameter values [SI], one row per case.
    cell_size : float or None
        [m]
    target_change : float or None
        [K]
    outputs : tuple of str or None
    description : dict
        JSON-ready description (as given, plus the base case's SHA-256).
    fingerprint : str
        SHA-256 of the canonical description.
    """

    study: Study
    base_text: str
    base_mapping: dict
    base_dir: str
    origin: str
    parameters: tuple[ResolvedParameter, ...]
    samples: np.ndarray
    cell_size: float | None
    target_change: float | None
    outputs: tuple[str, ...] | None
    description: dict
    fingerprint: str

    @property
    def n_cases(self) -> int:
        """Number of cases."""
        return int(self.samples.shape[0])

    @property
    def parameter_names(self) -> tuple[str, ...]:
        """Column names of the parameters."""
        return tuple(p.name for p in self.parameters)

    def case_mapping(self, index: int) -> dict:
        """The case mapping of case ``index``: overrides applied, then the parameters."""
        return apply_values(self.base_mapping, self.parameters, self.samples[index], self.cell_size, self.target_change)


def apply_values(
    base: Mapping,
    parameters: Sequence[ResolvedParameter],
    row: Sequence[float],
    cell_size: float | None = None,
    target_change: float | None = None,
) -> dict:
    """A deep copy of ``base`` with the speed overrides and one row of parameter values written in."""
    data = copy.deepcopy(dict(base))
    if cell_size is not None:
        assembly = data.setdefault("assembly", {})
        for key in ("cell_size", "cell_size_radial", "cell_size_axial"):
            if key == "cell_size" or key in assembly:
                assembly[key] = float(cell_size)
    if target_change is not None:
        data.setdefault("solver", {})["target_change"] = float(target_change)
    for parameter, value in zip(parameters, row, strict=True):
        for path in parameter.paths:
            set_value_at(data, path, parameter.cast(value))
    return data


# ---------------------------------------------------------------------------- resolving


def _closest_path(mapping: Mapping, path: str, extra: Sequence[str] = ()) -> str:
    candidates = [format_path(p) for p in every_path(mapping)] + list(extra)
    close = difflib.get_close_matches(path, candidates, n=1, cutoff=0.6)
    if close:
        return f"; did you mean {close[0]!r}?"
    top = path.split(".")[0].split("[")[0]
    same = sorted({c for c in candidates if c.startswith(top)})[:8]
    return f"; paths under {top!r} include {', '.join(same)}" if same else ""


def _design_fields(mapping: Mapping) -> list[str]:
    """Optional design keys of the wheel-and-brake builder (for suggestions)."""
    assembly = mapping.get("assembly", {})
    if not isinstance(assembly, Mapping) or assembly.get("builder", "wheel-brake") != "wheel-brake":
        return []
    return [f"assembly.design.{f.name}" for f in fields(WheelBrakeDesign) if f.name != "fuse_plugs"]


def _parse_case(data: dict, text: str, origin: str, base_dir: Path):
    try:
        return case_from_mapping(data, text, origin, base_dir)
    except InputError:
        raise
    except HeatstackError as exc:
        raise InputError(str(exc)) from None


def _resolve_parameter(k: int, parameter: Parameter, mapping: dict, grid: bool) -> ResolvedParameter:
    where = f"study.parameters[{k}]"
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
    paths, bases, absent = [], [], []
    for j, text in enumerate(parameter.paths):
        pwhere = f"{where}.path" if isinstance(parameter.path, str) else f"{where}.path[{j}]"
        tokens = parse_path(text, pwhere)
        value = value_at(mapping, tokens)
        if value is MISSING:
            parent = value_at(mapping, tokens[:-1])
            if not (isinstance(parent, Mapping) and isinstance(tokens[-1], str)):
                hint = _closest_path(mapping, format_path(tokens), _design_fields(mapping))
                raise InputError(f"{pwhere}: {format_path(tokens)!r} does not exist in the base case{hint}")
            value = None  # an optional key: checked by a trial parse below
            absent.append((pwhere, tokens))
        elif isinstance(value, Mapping | list):
            raise InputError(f"{pwhere}: {format_path(tokens)!r} is a table or list in the base case, not a value")
        paths.append(tokens)
        bases.append(value)
    dimension = parameter.dimension
    raw_values = list(parameter.values) if parameter.values is not None else []
    texts = [b for b in bases if isinstance(b, str)]
    texts += parameter.distribution.strings() if parameter.distribution is not None else []
    texts += [v for v in raw_values if isinstance(v, str)]
    if dimension is None:
        from ..case_keys import key_dimension

        dimension = key_dimension(paths[0], mapping)
    if dimension is None and absent and texts:  # no declaration, not in the base case: a misspelt key?
        pwhere, tokens = absent[0]
        hint = _closest_path(mapping, format_path(tokens), _design_fields(mapping))
        raise InputError(f"{pwhere}: {format_path(tokens)!r} does not exist in the base case{hint}")
    if dimension is None and texts:
        raise InputError(
            f"{where}: cannot tell the physical dimension of {texts[0]!r}; give the parameter a dimension "
            f"(one of {', '.join(SI_UNITS)})"
        )
    base_kinds = {type(b) for b in bases if b is not None}
    kind = "float"
    if raw_values and all(isinstance(v, bool) for v in raw_values) and base_kinds <= {bool}:
        kind = "bool"
    elif raw_values and all(isinstance(v, int) and not isinstance(v, bool) for v in raw_values) and base_kinds <= {int}:
        kind = "int"
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


def _draw(parameters: Sequence[ResolvedParameter], sampling: Sampling) -> np.ndarray:
    d = len(parameters)
    if sampling.method == "grid":
        grids = [p.values for p in parameters]
        rows = list(itertools.product(*grids))
        return np.asarray(rows, dtype=float).reshape(len(rows), d)
    n, seed = sampling.cases, sampling.seed
    if sampling.method == "random":
        u = np.random.default_rng(seed).random((n, d))
    else:
        u = qmc.LatinHypercube(d=d, rng=np.random.default_rng(seed)).random(n)
    columns = [p.from_uniform(u[:, j]) for j, p in enumerate(parameters)]
    return np.column_stack(columns) if columns else np.zeros((n, 0))


def _check_sampling(sampling: Sampling, n_grid: int) -> None:
    if not isinstance(sampling, Sampling):
        raise InputError(f"study.sampling: expected a Sampling, got {type(sampling).__name__}")
    if sampling.method not in SAMPLING_METHODS:
        close = difflib.get_close_matches(str(sampling.method), SAMPLING_METHODS, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise InputError(
            f"study.method: unknown sampling {sampling.method!r}{hint} (one of {', '.join(SAMPLING_METHODS)})"
        )
    cases = sampling.cases
    if cases is not None and (isinstance(cases, bool) or not isinstance(cases, int | np.integer) or cases < 1):
        raise InputError(f"study.cases: expected a whole number >= 1, got {cases!r}")
    seed = sampling.seed
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0):
        raise InputError(f"study.seed: expected a whole number >= 0, got {seed!r}")
    if sampling.method == "grid":
        if cases is not None and cases != n_grid:
            raise InputError(f"study.cases: the grid has {n_grid} combinations, not {cases}; omit cases for a grid")
        return
    if cases is None:
        raise InputError(f"study.cases: required for {sampling.method} sampling")
    if seed is None:
        raise InputError(
            f"study.seed: required for {sampling.method} sampling "
            "(any whole number; the same seed gives the same samples)"
        )


def _canonical(data: Any) -> str:
    return json.dumps(data, sort_keys=True, separators=(",", ":"), default=str)


def plan_study(study: Study) -> StudyPlan:
    """Resolve a study against its base case and draw the sample table.

    Parameters
    ----------
    study : Study

    Returns
    -------
    StudyPlan

    Raises
    ------
    InputError
        Naming the field: an unknown path (with the closest existing path), a
        distribution with invalid parameters, a unit of the wrong dimension, a sampling
        without cases or seed, or a base case that is not valid.
    """
    if not isinstance(study, Study):
        raise InputError(f"study: expected a Study, got {type(study).__name__}")
    path = Path(study.base_case)
    base_case = load_case(path)
    text = base_case.text
    mapping = tomllib.loads(text)
    parameters = list(study.parameters)
    if not parameters:
        raise InputError("study.parameters: at least one parameter is needed")
    grid = getattr(study.sampling, "method", None) == "grid"
    resolved = tuple(_resolve_parameter(k, p, mapping, grid) for k, p in enumerate(parameters))
    names = [p.name for p in resolved]
    for k, name in enumerate(names):
        if names.index(name) != k:
            raise InputError(f"study.parameters[{k}].name: {name!r} is used by two parameters")
    n_grid = math.prod(p.values.size for p in resolved) if grid else 0
    _check_sampling(study.sampling, n_grid)
    positive = {"minimum": 0.0, "exclusive_minimum": True}
    cell = None if study.cell_size is None else quantity(study.cell_size, "length", "study.cell_size", **positive)
    change = (
        None
        if study.target_change is None
        else quantity(study.target_change, "temperature_difference", "study.target_change", **positive)
    )
    outputs = _check_outputs(study.outputs, base_case)
    # every parameter alone, then all together, at a representative value: catches keys
    # the case does not accept and values of the wrong type before any case runs
    for k, p in enumerate(resolved):
        if any(b is None for b in p.base_values):
            trial = apply_values(mapping, [p], [p.representative()])
            try:
                _parse_case(trial, text, path.name, path.parent)
            except InputError as exc:
                hint = _closest_path(mapping, format_path(p.paths[0]), _design_fields(mapping))
                raise InputError(
                    f"study.parameters[{k}].path: {format_path(p.paths[0])!r} does not exist in the base "
                    f"case{hint} (nor does the case accept it: {exc})"
                ) from None
    trial = apply_values(mapping, resolved, [p.representative() for p in resolved], cell, change)
    try:
        _parse_case(trial, text, path.name, path.parent)
    except InputError as exc:
        raise InputError(f"study: the base case with every parameter at its median is not valid: {exc}") from None
    samples = _draw(resolved, study.sampling)
    description = {
        "title": study.title,
        "base_case": {"origin": path.name, "sha256": hashlib.sha256(text.encode("utf-8")).hexdigest()},
        "parameters": [p.to_dict() for p in parameters],
        "sampling": study.sampling.to_dict(),
        "outputs": None if outputs is None else list(outputs),
        "cell_size": study.cell_size,
        "target_change": study.target_change,
    }
    compared = {k: v for k, v in description.items() if k != "title"}
    compared["base_case"] = {"sha256": description["base_case"]["sha256"]}
    fingerprint = hashlib.sha256(_canonical(compared).encode("utf-8")).hexdigest()
    return StudyPlan(
        study=study,
        base_text=text,
        base_mapping=mapping,
        base_dir=str(path.parent.resolve()),
        origin=path.name,
        parameters=resolved,
        samples=samples,
        cell_size=cell,
        target_change=change,
        outputs=outputs,
        description=json.loads(_canonical(description)),
        fingerprint=fingerprint,
    )


def _check_outputs(outputs: Sequence[str] | None, case: Any) -> tuple[str, ...] | None:
    if outputs is None:
        return None
    if isinstance(outputs, str):
        outputs = [outputs]
    known = sorted(
        {p.name for p in case.assembly.probes} | {s for g in case.assembly.cell_groups for s in g.series_names}
    )
    checked = []
    for k, name in enumerate(outputs):
        if not isinstance(name, str):
            raise InputError(f"study.outputs[{k}]: expected a probe or series name, got {name!r}")
        if name not in known and not name.startswith("surface:"):
            close = difflib.get_close_matches(name, known, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else f"; known: {', '.join(known)}"
            raise InputError(f"study.outputs[{k}]: no probe or series named {name!r}{hint}")
        checked.append(name)
    return tuple(checked)
