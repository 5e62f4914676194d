"""Calibration files: the base case, the test runs with their measured traces, and the parameters to fit.

Layout (TOML, every quantity a number in SI or a string with a unit)::

    [calibration]
    title = "dynamometer campaign"
    base_case = "brake.toml"          # relative to this file

    [fit]                             # all optional
    loss = "linear"                   # or "soft_l1", "huber", "cauchy" (robust)
    loss_scale = 3.0                  # residual, in measurement sigmas, where a robust loss bends
    max_evaluations = 40              # model evaluations (each: every run once)
    executor = "local"                # "serial", "local" or a Dask scheduler address
    workers = 2
    timeout = "10 s"                  # to reach a Dask scheduler
    prediction_samples = 24           # parameter draws for the answers' intervals
    profile = "contact clamped"       # a parameter to profile (optional)
    model_error = "estimate"          # or "none" (default): the fit model's own error
                                      # estimated by a refined re-run, in the intervals

    [[parameters]]
    name = "contact clamped"
    path = "assembly.contacts[0].clamped"     # or a list of paths set together
    start = "2000 W/(m^2*K)"
    lower = "200 W/(m^2*K)"
    upper = "20000 W/(m^2*K)"
    prior = {kind = "lognormal", median = "2000 W/(m^2*K)", sigma = 1.0}   # optional
    run = "stop 2"                    # optional: only this run (else shared by all)

    [[runs]]
    name = "stop 1"
    [runs.overrides]                  # case paths, as studies address them
    "duty.phases[0].events[0].energy" = "1.2 MJ"
    [[runs.probes]]                   # a thermocouple not in the base case
    name = "tc stator"
    r = "150 mm"
    z = "30 mm"
    part = "stator"
    [[runs.traces]]
    file = "stop1_tc.csv"             # time, temperature (see questions.sensor_trace)
    probe = "tc stator"
    uncertainty = "0.5 K"             # one standard deviation of each reading
    model_uncertainty = "0.1 K"       # optional: stated model uncertainty, in quadrature

A prior is ``{kind = "normal", mean = ..., sd = ...}`` or ``{kind = "lognormal",
median = ..., sigma = ...}`` (``sigma`` the standard deviation of the natural log, [-]).
Parameters whose lower bound is above zero are fitted in log space.

Uncertainty of the readings: each reading of a trace weighs ``1 / sigma`` with ``sigma =
sqrt(uncertainty^2 + model_uncertainty^2)`` [K] (``model_uncertainty`` 0 when not given);
``model_error = "estimate"`` adds the fit model's estimated discretisation error to the
parameters' covariance as a systematic term
(:mod:`heatstack.questions.calibration_model_error`).
"""

from __future__ import annotations

import copy
import difflib
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from ..case import case_from_mapping
from ..case_keys import key_dimension
from ..errors import HeatstackError, InputError
from ..studies.paths import (
    MISSING,
    Token,
    every_path,
    format_path,
    parse_path,
    set_value_at,
    value_at,
)
from ..units import quantity
from .calibration_records import (
    LOSSES,
    MODEL_ERRORS,
    Calibration,
    FitParameter,
    FitSettings,
    MeasuredTrace,
    Prior,
    TestRun,
)
from .sensor_trace import check_trace, read_sensor_trace

__all__ = [
    "load_calibration",
    "parse_calibration",
    "closest_path_hint",
]

_MIN_POINTS = 5


# ---------------------------------------------------------------------------- helpers


def _table(data: Any, where: str) -> Mapping:
    if not isinstance(data, Mapping):
        raise InputError(f"{where}: expected a table")
    return data


def _check_keys(data: Mapping, allowed: tuple[str, ...], where: str) -> None:
    for key in data:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), allowed, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else f"; expected one of {', '.join(allowed)}"
            raise InputError(f"{where}.{key}: unknown key{hint}")


def _required(data: Mapping, key: str, where: str) -> Any:
    if key not in data:
        raise InputError(f"{where}.{key}: missing")
    return data[key]


def closest_path_hint(mapping: Mapping, path: str) -> str:
    """``"; did you mean 'x'?"`` for the nearest key path of ``mapping``, or ``""``.

    Parameters
    ----------
    mapping : mapping
        Nested tables to search.
    path : str
        The key path that was not found, dotted.

    Returns
    -------
    str
        The hint, or an empty string when no path is close.
    """
    candidates = [format_path(p) for p in every_path(mapping)]
    close = difflib.get_close_matches(path, candidates, n=1, cutoff=0.5)
    return f"; did you mean {close[0]!r}?" if close else ""


def _existing_path(mapping: Mapping, text: str, where: str) -> tuple[Token, ...]:
    tokens = parse_path(text, where)
    value = value_at(mapping, tokens)
    if value is MISSING:
        parent = value_at(mapping, tokens[:-1])
        if not (isinstance(parent, Mapping) and isinstance(tokens[-1], str)):
            hint = closest_path_hint(mapping, format_path(tokens))
            raise InputError(f"{where}: {format_path(tokens)!r} does not exist in the base case{hint}")
    elif isinstance(value, Mapping | list):
        raise InputError(f"{where}: {format_path(tokens)!r} is a table or list in the base case, not a value")
    return tokens


def _dimension(tokens: tuple, base: Mapping, values: list[Any], where: str) -> str:
    """The dimension the case declares for the key at ``tokens``; dimensionless for an undeclared number."""
    dimension = key_dimension(tokens, base)
    if dimension is not None:
        return dimension
    if value_at(base, tokens) is MISSING:  # neither declared nor in the base case: a misspelt key?
        hint = closest_path_hint(base, format_path(tokens))
        raise InputError(f"{where}: {format_path(tokens)!r} does not exist in the base case{hint}")
    if any(isinstance(value, str) for value in values):
        raise InputError(
            f"{where}: {format_path(tokens)!r} declares no physical dimension; give its values as plain numbers"
        )
    return "dimensionless"


# ---------------------------------------------------------------------------- parameters


def _prior(data: Any, dimension: str, where: str) -> Prior:
    data = _table(data, where)
    kind = _required(data, "kind", where)
    if kind == "normal":
        _check_keys(data, ("kind", "mean", "sd"), where)
        center = quantity(_required(data, "mean", where), dimension, f"{where}.mean")
        sd_dimension = "temperature_difference" if dimension == "temperature" else dimension
        spread = quantity(_required(data, "sd", where), sd_dimension, f"{where}.sd")
    elif kind == "lognormal":
        _check_keys(data, ("kind", "median", "sigma"), where)
        center = quantity(_required(data, "median", where), dimension, f"{where}.median")
        spread = quantity(_required(data, "sigma", where), "dimensionless", f"{where}.sigma")
        if not center > 0:
            raise InputError(f"{where}.median: must be > 0 for a lognormal prior")
    else:
        raise InputError(f"{where}.kind: expected 'normal' or 'lognormal', got {kind!r}")
    if not spread > 0:
        raise InputError(f"{where}: the prior's spread must be > 0")
    return Prior(kind, center, spread)


def _trial_parse(calibration: Calibration, paths: tuple[tuple[Token, ...], ...], value: float, where: str) -> None:
    """A key the base case lacks must be one the case accepts: parse the base case with it set."""
    base = calibration.base_mapping
    missing = [path for path in paths if value_at(base, path) is MISSING]
    if not missing:
        return
    trial = copy.deepcopy(base)
    for path in missing:
        set_value_at(trial, path, value)
    try:
        case_from_mapping(trial, calibration.base_text, calibration.base_origin, calibration.base_dir)
    except HeatstackError as exc:
        hint = closest_path_hint(base, format_path(missing[0]))
        raise InputError(
            f"{where}: {format_path(missing[0])!r} does not exist in the base case{hint} ({exc})"
        ) from None


def _parameter(data: Any, k: int, calibration: Calibration, run_names: tuple[str, ...]) -> FitParameter:
    where = f"parameters[{k}]"
    base = calibration.base_mapping
    data = _table(data, where)
    _check_keys(data, ("name", "path", "start", "lower", "upper", "prior", "run"), where)
    raw_paths = _required(data, "path", where)
    texts = [raw_paths] if isinstance(raw_paths, str) else list(raw_paths)
    if not texts:
        raise InputError(f"{where}.path: at least one key path is needed")
    paths = tuple(_existing_path(base, text, f"{where}.path") for text in texts)
    name = str(data.get("name", format_path(paths[0])))
    raw = {key: _required(data, key, where) for key in ("start", "lower", "upper")}
    dimension = _dimension(tuple(paths[0]), base, [*raw.values(), value_at(base, paths[0])], where)
    start, lower, upper = (quantity(raw[key], dimension, f"{where}.{key}") for key in ("start", "lower", "upper"))
    if not lower < upper:
        raise InputError(f"{where}: lower bound {raw['lower']!r} is not below upper bound {raw['upper']!r}")
    if not lower <= start <= upper:
        raise InputError(
            f"{where}.start: {raw['start']!r} lies outside the bounds [{raw['lower']!r}, {raw['upper']!r}]"
        )
    _trial_parse(calibration, paths, start, f"{where}.path")
    prior = _prior(data["prior"], dimension, f"{where}.prior") if "prior" in data else None
    if prior is not None and prior.kind == "lognormal" and not lower > 0:
        raise InputError(f"{where}.prior: a lognormal prior needs a lower bound above zero")
    run = data.get("run")
    if run is not None and run not in run_names:
        close = difflib.get_close_matches(str(run), run_names, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else f"; runs are {', '.join(run_names)}"
        raise InputError(f"{where}.run: no run named {run!r}{hint}")
    return FitParameter(name, paths, dimension, start, lower, upper, lower > 0, prior, run)


# ---------------------------------------------------------------------------- runs


def _trace(data: Any, where: str, run: str, folder: Path, probes: set[str], duration: float) -> MeasuredTrace:
    data = _table(data, where)
    _check_keys(data, ("file", "probe", "uncertainty", "model_uncertainty"), where)
    probe = str(_required(data, "probe", where))
    if probe not in probes:
        close = difflib.get_close_matches(probe, sorted(probes), n=1)
        hint = f"; did you mean {close[0]!r}?" if close else f"; probes are {', '.join(sorted(probes))}"
        raise InputError(f"{where}.probe: no probe named {probe!r} in run {run!r}{hint}")
    path = folder / str(_required(data, "file", where))
    if not path.is_file():
        raise InputError(f"{where}.file: {str(path)!r} does not exist")
    try:
        times, temperatures = read_sensor_trace(path)
        if times.size < _MIN_POINTS:
            raise InputError(f"{path.name} has {times.size} points; a trace needs at least {_MIN_POINTS}")
        check_trace(times, temperatures, 1)
    except InputError as exc:
        raise InputError(f"{where}.file: {exc}") from None
    if times[0] < 0 or times[-1] > duration:
        raise InputError(
            f"{where}.file: {path.name} runs from {times[0]:g} s to {times[-1]:g} s, outside run {run!r} "
            f"(0 to {duration:g} s)"
        )
    sigma = quantity(_required(data, "uncertainty", where), "temperature_difference", f"{where}.uncertainty")
    if not sigma > 0:
        raise InputError(f"{where}.uncertainty: must be > 0")
    model = quantity(data.get("model_uncertainty", 0.0), "temperature_difference", f"{where}.model_uncertainty")
    if not model >= 0:
        raise InputError(f"{where}.model_uncertainty: must be >= 0")
    return MeasuredTrace(f"{run}/{probe}", probe, times, temperatures, sigma, str(path), model)


def _run_mapping(data: Mapping, where: str, base: Mapping) -> dict:
    mapping = copy.deepcopy(dict(base))
    overrides = _table(data.get("overrides", {}), f"{where}.overrides")
    for text, value in overrides.items():
        tokens = _existing_path(mapping, text, f"{where}.overrides")
        set_value_at(mapping, tokens, value)
    declared = data.get("probes", [])
    if not isinstance(declared, list):
        raise InputError(f"{where}.probes: expected an array of tables")
    probes = mapping.setdefault("assembly", {}).setdefault("probes", [])
    for j, probe in enumerate(declared):
        probe = _table(probe, f"{where}.probes[{j}]")
        _check_keys(probe, ("name", "r", "z", "part", "time_constant"), f"{where}.probes[{j}]")
        probes.append(dict(probe))
    return mapping


def _run(data: Any, k: int, calibration: Calibration, folder: Path) -> TestRun:
    where = f"runs[{k}]"
    data = _table(data, where)
    _check_keys(data, ("name", "overrides", "probes", "traces"), where)
    name = str(data.get("name", f"run {k + 1}"))
    mapping = _run_mapping(data, where, calibration.base_mapping)
    try:
        case = case_from_mapping(mapping, calibration.base_text, calibration.base_origin, calibration.base_dir)
        case.build_model()  # a probe outside every part fails here
    except HeatstackError as exc:
        raise InputError(f"{where} ({name!r}): {exc}") from None
    probes = {p.name for p in case.assembly.probes}
    traces = data.get("traces", [])
    if not isinstance(traces, list) or not traces:
        raise InputError(f"{where}.traces: at least one measured trace is needed")
    duration = float(case.duty.duration)
    measured = tuple(_trace(t, f"{where}.traces[{j}]", name, folder, probes, duration) for j, t in enumerate(traces))
    return TestRun(name, mapping, measured, duration)


# ---------------------------------------------------------------------------- the file


def _settings(data: Any) -> FitSettings:
    data = _table(data, "fit")
    allowed = (
        "loss",
        "loss_scale",
        "max_evaluations",
        "executor",
        "workers",
        "timeout",
        "prediction_samples",
        "profile",
        "model_error",
    )
    _check_keys(data, allowed, "fit")
    loss = data.get("loss", "linear")
    if loss not in LOSSES:
        raise InputError(f"fit.loss: expected one of {', '.join(LOSSES)}, got {loss!r}")
    scale = quantity(data.get("loss_scale", 3.0), "dimensionless", "fit.loss_scale")
    timeout = quantity(data.get("timeout", 10.0), "time", "fit.timeout")
    counts = {}
    for key, default, minimum in (("max_evaluations", 40, 2), ("prediction_samples", 24, 0), ("workers", 0, 0)):
        value = data.get(key, default)
        if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
            raise InputError(f"fit.{key}: expected a whole number >= {minimum}, got {value!r}")
        counts[key] = value
    if not (scale > 0 and timeout > 0):
        raise InputError("fit: loss_scale and timeout must be > 0")
    executor = str(data.get("executor", "local"))
    profile = data.get("profile")
    model_error = data.get("model_error", "none")
    if model_error not in MODEL_ERRORS:
        raise InputError(f"fit.model_error: expected one of {', '.join(MODEL_ERRORS)}, got {model_error!r}")
    return FitSettings(
        loss, scale, counts["max_evaluations"], executor, counts["workers"] or None, timeout,
        counts["prediction_samples"], None if profile is None else str(profile), model_error,
    )  # fmt: skip


def parse_calibration(text: str, origin: str = "<string>", folder: str | Path = ".") -> Calibration:
    """Validate calibration-file text into a :class:`Calibration`.

    Parameters
    ----------
    text : str
        TOML text (layout in the module docstring).
    origin : str
        Name used in error messages.
    folder : str or Path
        Folder against which the base case and trace files are found.

    Returns
    -------
    Calibration
        The validated calibration with its base case and traces read.

    Raises
    ------
    InputError
        Naming the key at fault: unknown keys (closest suggested), a parameter path not
        in the base case (closest suggested), bounds excluding the start, a probe outside
        every part, a trace outside its run's duration or with too few points.
    """
    folder = Path(folder)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{origin}: not valid TOML: {exc}") from None
    try:
        return _calibration(data, origin, folder, text)
    except InputError as exc:
        raise type(exc)(f"{origin}: {exc}") from None


def _calibration(data: Mapping, origin: str, folder: Path, text: str) -> Calibration:
    _check_keys(data, ("calibration", "fit", "parameters", "runs"), "")
    head = _table(data.get("calibration", {}), "calibration")
    _check_keys(head, ("title", "base_case"), "calibration")
    base_path = folder / str(_required(head, "base_case", "calibration"))
    try:
        base_text = base_path.read_text(encoding="utf-8")
        base_mapping = tomllib.loads(base_text)
    except FileNotFoundError:
        raise InputError(f"calibration.base_case: {str(base_path)!r} does not exist") from None
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise InputError(f"calibration.base_case: {str(base_path)!r} cannot be read: {exc}") from None
    calibration = Calibration(
        str(head.get("title", "calibration")), base_text, base_mapping, base_path.name, base_path.parent,
        (), (), _settings(data.get("fit", {})), origin,
    )  # fmt: skip
    runs_data = data.get("runs", [])
    if not isinstance(runs_data, list) or not runs_data:
        raise InputError("runs: at least one test run ([[runs]]) is needed")
    runs = tuple(_run(r, k, calibration, folder) for k, r in enumerate(runs_data))
    names = tuple(run.name for run in runs)
    if len(set(names)) != len(names):
        raise InputError(f"runs: run names must be unique, got {', '.join(names)}")
    params_data = data.get("parameters", [])
    if not isinstance(params_data, list) or not params_data:
        raise InputError("parameters: at least one parameter to fit ([[parameters]]) is needed")
    parameters = tuple(_parameter(p, k, calibration, names) for k, p in enumerate(params_data))
    if len({p.name for p in parameters}) != len(parameters):
        raise InputError("parameters: parameter names must be unique")
    n_points = sum(t.times.size for run in runs for t in run.traces)
    if n_points < len(parameters) + 2:
        raise InputError(f"runs: {n_points} readings are too few to fit {len(parameters)} parameters")
    profile = calibration.settings.profile
    if profile is not None and profile not in {p.name for p in parameters}:
        raise InputError(f"fit.profile: no parameter named {profile!r}")
    return Calibration(
        calibration.title, base_text, base_mapping, base_path.name, base_path.parent, runs, parameters,
        calibration.settings, origin, text,
    )  # fmt: skip


def load_calibration(path: str | Path) -> Calibration:
    """Read and validate a calibration file (see :func:`parse_calibration`).

    Parameters
    ----------
    path : str or Path
        The calibration file (TOML); relative paths in it are found from its folder.

    Returns
    -------
    Calibration
        The validated calibration.

    Raises
    ------
    InputError
        If the file is missing or unreadable, or its content is not valid.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(f"calibration file {str(path)!r} does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"calibration file {str(path)!r} cannot be read: {exc}") from None
    return parse_calibration(text, path.name, path.parent)
