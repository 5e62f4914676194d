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
converted to SI, and the sample table drawn (full grid, random, scrambled Sobol' or Latin
hypercube). The same seed always gives the same table.

Studies that grow: with ``random`` sampling case ``i``'s inputs depend only on the seed and
``i`` (its own generator stream, seeded with ``(seed, i)``), and with ``sobol`` sampling the
first ``n`` points of a seeded scrambled Sobol' sequence are the same whatever the length
drawn; either way a study with the same seed and more cases contains the smaller study's
cases exactly, and raising ``cases`` extends a finished store (:attr:`StudyPlan.growth_key`).
A Latin hypercube's strata depend on the number of cases, so it cannot grow.

References
----------
.. [1] McKay, M.D., Beckman, R.J., Conover, W.J., 1979, A comparison of three methods
   for selecting values of input variables in the analysis of output from a computer
   code, Technometrics 21, 239-245 (Latin hypercube sampling).
.. [2] Owen, A.B., 1998, Scrambling Sobol' and Niederreiter-Xing points, Journal of
   Complexity 14, 466-489 (scrambled Sobol' sequences, scipy.stats.qmc.Sobol).
"""

from __future__ import annotations

import copy
import difflib
import hashlib
import itertools
import json
import math
import os
import tomllib
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

import numpy as np
from scipy.stats import qmc

from ..case import case_from_mapping, load_case
from ..errors import HeatstackError, InputError
from ..units import quantity
from .parameters import Parameter, ResolvedParameter, closest_path, design_fields, resolve_parameter
from .paths import format_path, set_value_at
from .settings import RareEventSettings, ReducedModelSettings

__all__ = [
    "Parameter",
    "Sampling",
    "Study",
    "StudyPlan",
    "ResolvedParameter",
    "plan_study",
    "SAMPLING_METHODS",
    "MAX_STUDY_CASES",
    "MIN_TARGET_CHANGE",
    "check_study_size",
    "study_memory_estimate",
]

#: Sampling methods of a study.
SAMPLING_METHODS = ("grid", "random", "latin_hypercube", "sobol")

#: Sampling methods whose first ``n`` cases do not depend on the number of cases drawn.
GROWING_METHODS = ("random", "sobol")


#: The smallest ``target_change`` of a study [K]: below, each of its runs takes millions of steps.
MIN_TARGET_CHANGE = 1e-3
#: The most cases a study may plan [-]: a million full runs, eleven days of one core at a second each.
MAX_STUDY_CASES = 1_000_000
#: Bytes a study holds per case and parameter (the sample table and the sampler's working copies),
#: and per case for its row of the results table and its place in the store's index [bytes].
_BYTES_PER_CASE_PARAMETER = 4 * 8
_BYTES_PER_CASE = 64 * 8


def study_memory_estimate(cases: int, parameters: int) -> int:
    """The memory a study of ``cases`` cases of ``parameters`` parameters needs for its tables [bytes].

    Parameters
    ----------
    cases : int
        Number of cases [-].
    parameters : int
        Number of sampled parameters [-].

    Returns
    -------
    int
        The estimate [bytes]: the sample table and the sampler's working copies (32 bytes a case
        and parameter) and a row of the results table with the store's index (512 bytes a case).
    """
    return int(cases) * (_BYTES_PER_CASE_PARAMETER * int(parameters) + _BYTES_PER_CASE)


def _memory_available() -> int:
    """Half the physical memory of this machine [bytes] (8 GiB when it cannot be read)."""
    try:
        return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") // 2
    except (AttributeError, ValueError, OSError):
        return 8 * 2**30


def check_study_size(cases: int, parameters: int, memory: int | None = None) -> None:
    """Refuse, before any array is made, a study with too many cases for its tables or its runs.

    Parameters
    ----------
    cases : int
        Number of cases the study would plan [-].
    parameters : int
        Number of sampled parameters [-].
    memory : int, optional
        The memory the tables may take [bytes]; half the physical memory by default.

    Raises
    ------
    InputError
        Naming ``study.cases``, the estimate and the limit, when the tables would not fit in
        ``memory`` or there are more than :data:`MAX_STUDY_CASES` cases.
    """
    limit = _memory_available() if memory is None else int(memory)
    need = study_memory_estimate(cases, parameters)
    if need > limit:
        raise InputError(
            f"study.cases: {cases:.4g} cases of {parameters} parameters need about {need / 2**30:.3g} GiB for "
            f"their tables, more than the {limit / 2**30:.3g} GiB this machine can give; use fewer cases"
        )
    if cases > MAX_STUDY_CASES:
        raise InputError(
            f"study.cases: {cases:.4g} cases is more than the {MAX_STUDY_CASES:,} a study may plan "
            f"(about {need / 2**20:.3g} MiB of tables, and as many full runs); use fewer cases"
        )


# ---------------------------------------------------------------------------- description


@dataclass(frozen=True)
class Sampling:
    """How the sample table is drawn.

    Parameters
    ----------
    method : {"grid", "random", "latin_hypercube", "sobol"}
        ``grid``: every combination of the parameters' values (first parameter slowest).
        ``random``: independent uniform draws mapped through each distribution's inverse
        CDF, case ``i`` from a generator seeded with ``(seed, i)``. ``latin_hypercube``:
        one draw in each of ``cases`` equal-probability strata of every parameter
        (scipy.stats.qmc.LatinHypercube [1]_). ``sobol``: the first ``cases`` points of a
        scrambled Sobol' sequence (scipy.stats.qmc.Sobol [2]_), space filling and, like
        ``random``, a prefix of any longer study with the same seed.
    cases : int, optional
        Number of cases (random and Latin hypercube; for a grid it must match or be omitted).
    seed : int, optional
        Seed of the random generator (required for random and Latin hypercube sampling:
        the same seed gives the same samples).
    """

    method: Literal["grid", "random", "latin_hypercube", "sobol"] = "latin_hypercube"
    cases: int | None = None
    seed: int | None = None

    def to_dict(self) -> dict[str, Any]:
        """The sampling as given.

        Returns
        -------
        dict
            Keys ``method``, ``cases`` and ``seed``.
        """
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
        Overrides the solver's target temperature change per step [K] (a base case with
        ``scheme = "euler"`` only).
    accuracy : float or str, optional
        Overrides the solver's accuracy [K] (the BDF2 scheme's "peaks within about this of
        the converged answer") for speed.
    title : str
    reduced_model : ReducedModelSettings, optional
        Stand a checked reduced-order model in for full runs
        (:func:`heatstack.studies.reduced_study.run_reduced_study`); not part of the
        fingerprint, so the full runs of a study are reused whatever its model settings.
    rare_event : RareEventSettings, optional
        Also estimate a rare event's probability on the reduced model.
    """

    base_case: str | Path
    parameters: Sequence[Parameter]
    sampling: Sampling = field(default_factory=Sampling)
    outputs: Sequence[str] | None = None
    cell_size: float | str | None = None
    target_change: float | str | None = None
    accuracy: float | str | None = None
    title: str = "untitled study"
    reduced_model: ReducedModelSettings | None = None
    rare_event: RareEventSettings | None = None

    def plan(self) -> StudyPlan:
        """Resolve against the base case: see :func:`plan_study`.

        Returns
        -------
        StudyPlan
            The resolved parameters and the sample table.
        """
        return plan_study(self)


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
    accuracy : float or None
        Solver accuracy override [K].
    outputs : tuple of str or None
    description : dict
        JSON-ready description (as given, plus the base case's SHA-256).
    fingerprint : str
        SHA-256 of the canonical description.
    growth_key : str
        SHA-256 of the canonical description without the number of cases, for sampling
        methods whose cases do not depend on that number (``random``, ``sobol``); ``""``
        otherwise. Two plans with the same growth key share their first cases exactly.
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
    growth_key: str = ""
    accuracy: float | None = None

    @property
    def n_cases(self) -> int:
        """Number of cases."""
        return int(self.samples.shape[0])

    @property
    def parameter_names(self) -> tuple[str, ...]:
        """Column names of the parameters."""
        return tuple(p.name for p in self.parameters)

    def case_mapping(self, index: int) -> dict:
        """The case mapping of case ``index``: overrides applied, then the parameters.

        Parameters
        ----------
        index : int
            Case number (row of ``samples``).

        Returns
        -------
        dict
            The case mapping.
        """
        return apply_values(
            self.base_mapping,
            self.parameters,
            self.samples[index],
            self.cell_size,
            self.target_change,
            self.accuracy,
        )


def apply_values(
    base: Mapping,
    parameters: Sequence[ResolvedParameter],
    row: Sequence[float],
    cell_size: float | None = None,
    target_change: float | None = None,
    accuracy: float | None = None,
) -> dict:
    """A deep copy of ``base`` with the speed overrides and one row of parameter values written in.

    Parameters
    ----------
    base : mapping
        Base case mapping.
    parameters : sequence of ResolvedParameter
        The study's parameters and their key paths.
    row : sequence of float
        One value per parameter [SI].
    cell_size : float, optional
        Cell size written over the assembly's cell sizes [m].
    target_change : float, optional
        Solver target temperature change per step [K].
    accuracy : float, optional
        Solver accuracy [K].

    Returns
    -------
    dict
        The new case mapping.
    """
    data = copy.deepcopy(dict(base))
    if cell_size is not None:
        assembly = data.setdefault("assembly", {})
        for key in ("cell_size", "cell_size_radial", "cell_size_axial"):
            if key == "cell_size" or key in assembly:
                assembly[key] = float(cell_size)
    if target_change is not None:
        data.setdefault("solver", {})["target_change"] = float(target_change)
    if accuracy is not None:
        data.setdefault("solver", {})["accuracy"] = float(accuracy)
    for parameter, value in zip(parameters, row, strict=True):
        for path in parameter.paths:
            set_value_at(data, path, parameter.cast(value))
    return data


# ---------------------------------------------------------------------------- resolving


def _parse_case(data: dict, text: str, origin: str, base_dir: Path):
    try:
        return case_from_mapping(data, text, origin, base_dir)
    except InputError:
        raise
    except HeatstackError as exc:
        raise InputError(str(exc)) from None


def _draw(parameters: Sequence[ResolvedParameter], sampling: Sampling) -> np.ndarray:
    d = len(parameters)
    if sampling.method == "grid":
        grids = [p.values for p in parameters]
        rows = list(itertools.product(*grids))
        return np.asarray(rows, dtype=float).reshape(len(rows), d)
    n, seed = sampling.cases, sampling.seed
    if sampling.method == "random":
        u = np.array([np.random.default_rng([seed, i]).random(d) for i in range(n)]).reshape(n, d)
    elif sampling.method == "sobol":
        u = sobol_points(d, n, seed)
    else:
        u = qmc.LatinHypercube(d=d, rng=np.random.default_rng(seed)).random(n)
    columns = [p.from_uniform(u[:, j]) for j, p in enumerate(parameters)]
    return np.column_stack(columns) if columns else np.zeros((n, 0))


def sobol_points(d: int, n: int, seed: int) -> np.ndarray:
    """The first ``n`` points of a seeded scrambled Sobol' sequence in ``[0, 1)^d`` [2]_.

    The first ``n`` points are the same for any longer draw with the same seed. (Sobol'
    points balance best in powers of two; scipy's warning about other counts is silenced:
    a study that grows cannot keep to powers of two.)

    Parameters
    ----------
    d : int
        Number of dimensions (sampled parameters).
    n : int
        Number of points.
    seed : int
        Seed of the scrambling.

    Returns
    -------
    ndarray, shape (n, d)
        The points in ``[0, 1)^d``.
    """
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=".*balance properties.*")
        return qmc.Sobol(d=d, scramble=True, rng=np.random.default_rng(seed)).random(n)


def _check_sampling(sampling: Sampling, n_grid: int, parameters: int) -> None:
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
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int | np.integer) or not 0 <= seed < 2**63):
        raise InputError(f"study.seed: expected a whole number from 0 to 2**63 - 1, got {str(seed)[:40]}")
    if sampling.method == "grid":
        check_study_size(n_grid, parameters)
        if cases is not None and cases != n_grid:
            raise InputError(f"study.cases: the grid has {n_grid} combinations, not {cases}; omit cases for a grid")
        return
    if cases is None:
        raise InputError(f"study.cases: required for {sampling.method} sampling")
    check_study_size(int(cases), parameters)
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
    resolved = tuple(resolve_parameter(k, p, mapping, grid) for k, p in enumerate(parameters))
    names = [p.name for p in resolved]
    for k, name in enumerate(names):
        if names.index(name) != k:
            raise InputError(f"study.parameters[{k}].name: {name!r} is used by two parameters")
    n_grid = math.prod(p.values.size for p in resolved) if grid else 0
    _check_sampling(study.sampling, n_grid, len(resolved))
    positive = {"minimum": 0.0, "exclusive_minimum": True}
    cell = None if study.cell_size is None else quantity(study.cell_size, "length", "study.cell_size", **positive)
    change, accuracy = (_temperature_override(study, key) for key in ("target_change", "accuracy"))
    outputs = _check_outputs(study.outputs, base_case)
    for key, settings in (("reduced_model", study.reduced_model), ("rare_event", study.rare_event)):
        if settings is not None:
            if not isinstance(settings, ReducedModelSettings | RareEventSettings):
                raise InputError(f"study.{key}: expected settings, got {type(settings).__name__}")
            settings.checked(f"study.{key}")
    # every parameter alone, then all together, at a representative value: catches keys
    # the case does not accept and values of the wrong type before any case runs
    for k, p in enumerate(resolved):
        if any(b is None for b in p.base_values):
            trial = apply_values(mapping, [p], [p.representative()])
            try:
                _parse_case(trial, text, path.name, path.parent)
            except InputError as exc:
                hint = closest_path(mapping, format_path(p.paths[0]), design_fields(mapping))
                raise InputError(
                    f"study.parameters[{k}].path: {format_path(p.paths[0])!r} does not exist in the base "
                    f"case{hint} (nor does the case accept it: {exc})"
                ) from None
    trial = apply_values(mapping, resolved, [p.representative() for p in resolved], cell, change, accuracy)
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
    if study.accuracy is not None:  # only when given: the fingerprints of earlier studies stay
        description["accuracy"] = study.accuracy
    compared = {k: v for k, v in description.items() if k != "title"}
    compared["base_case"] = {"sha256": description["base_case"]["sha256"]}
    fingerprint = hashlib.sha256(_canonical(compared).encode("utf-8")).hexdigest()
    growth_key = ""
    if study.sampling.method in GROWING_METHODS:
        grown = {**compared, "sampling": {**compared["sampling"], "cases": None}}
        growth_key = hashlib.sha256(_canonical(grown).encode("utf-8")).hexdigest()
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
        accuracy=accuracy,
        outputs=outputs,
        description=json.loads(_canonical(description)),
        fingerprint=fingerprint,
        growth_key=growth_key,
    )


def _temperature_override(study: Study, key: str) -> float | None:
    """The study's solver override ``key`` (a temperature difference) in K, or None; below
    :data:`MIN_TARGET_CHANGE` the solver would take steps without end (a fuzzed hang)."""
    value = getattr(study, key)
    if value is None:
        return None
    return quantity(value, "temperature_difference", f"study.{key}", minimum=MIN_TARGET_CHANGE)


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
