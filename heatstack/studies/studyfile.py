"""Reading a study from a TOML ``[study]`` table or a study file.

The layout (our own) is described in :func:`study_from_mapping`; :func:`load_study`
reads a file whose ``base_case`` is relative to it. Every error names the key at fault
(``study.parameters[1].std``).
"""

from __future__ import annotations

import difflib
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import fields
from pathlib import Path
from typing import Any

from ..errors import InputError
from .description import Sampling, Study
from .distributions import DISTRIBUTIONS
from .parameters import Parameter
from .settings import RareEventSettings, ReducedModelSettings

__all__ = ["study_from_mapping", "load_study"]

_STUDY_KEYS = (
    "title",
    "base_case",
    "method",
    "cases",
    "seed",
    "cell_size",
    "target_change",
    "accuracy",
    "outputs",
    "parameters",
    "reduced_model",
    "rare_event",
)
_PARAMETER_KEYS = ("path", "name", "dimension", "values", "distribution")


def _settings_from_mapping(data: Any, cls: type, where: str) -> Any:
    if data is None:
        return None
    if not isinstance(data, Mapping):
        raise InputError(f"{where}: expected a table ([{where}])")
    _unknown(data, [f.name for f in fields(cls)], where)
    values = dict(data)
    if isinstance(values.get("outputs"), list):
        values["outputs"] = tuple(values["outputs"])
    settings = cls(**values)
    settings.checked(where)
    return settings


def _unknown(data: Mapping, allowed: Sequence[str], where: str) -> None:
    for key in data:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), allowed, n=1, cutoff=0.5)
            hint = f"; did you mean {close[0]!r}?" if close else f"; valid keys: {', '.join(allowed)}"
            raise InputError(f"{where}.{key}: unknown key{hint}")


def _parameter_from_mapping(data: Any, where: str) -> Parameter:
    if not isinstance(data, Mapping):
        raise InputError(f"{where}: expected a table ([[study.parameters]])")
    if "path" not in data:
        raise InputError(f"{where}.path: missing (required)")
    path = data["path"]
    if not (isinstance(path, str) or (isinstance(path, list) and path and all(isinstance(p, str) for p in path))):
        raise InputError(f"{where}.path: expected a key path or a list of key paths, got {path!r}")
    distribution = None
    if "distribution" in data:
        kind = data["distribution"]
        if not isinstance(kind, str):
            raise InputError(f"{where}.distribution: expected a name ({', '.join(DISTRIBUTIONS)}), got {kind!r:.80}")
        if kind not in DISTRIBUTIONS:
            close = difflib.get_close_matches(str(kind), DISTRIBUTIONS, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise InputError(
                f"{where}.distribution: unknown distribution {kind!r}{hint} (one of {', '.join(DISTRIBUTIONS)})"
            )
        cls = DISTRIBUTIONS[kind]
        names = [f.name for f in fields(cls)]
        _unknown(data, (*_PARAMETER_KEYS, *names), where)
        missing = [n for n in names if n not in data]
        if missing:
            raise InputError(f"{where}.{missing[0]}: missing (a {kind} distribution needs {', '.join(names)})")
        distribution = cls(**{n: data[n] for n in names})
    else:
        _unknown(data, _PARAMETER_KEYS, where)
    values = data.get("values")
    if values is not None and not isinstance(values, list):
        raise InputError(f"{where}.values: expected a list, got {values!r}")
    name = data.get("name")
    if name is not None and not isinstance(name, str):
        raise InputError(f"{where}.name: expected a string, got {name!r}")
    return Parameter(
        path=path if isinstance(path, str) else tuple(path),
        distribution=distribution,
        values=None if values is None else tuple(values),
        name=name,
        dimension=data.get("dimension"),
    )


def study_from_mapping(table: Mapping[str, Any], base_case_path: str | Path) -> Study:
    """A :class:`Study` from the mapping of a TOML ``[study]`` section.

    Parameters
    ----------
    table : mapping
        The ``[study]`` table (a whole document with a ``study`` key is accepted too).
        Layout (our own)::

            [study]
            title = "mass and ambient scatter"     # optional
            method = "latin_hypercube"             # grid | random | latin_hypercube | sobol (random, sobol: can grow)
            cases = 200
            seed = 7
            cell_size = "8 mm"                     # optional speed overrides
            accuracy = "0.5 K"                     # BDF2 step control: peaks within about 0.5 K
            outputs = ["sensor", "hottest rotor"]  # optional

            [study.reduced_model]                  # optional: a checked reduced model
            training = 40                          # full runs it is fitted to (Sobol' design)
            held_back = 12                         # full runs it is checked on
            tolerance_peak = "1 K"                 # accepted error of peaks and margins
            tolerance_time = "30 s"                # accepted error of peak times
            confirm_within = 3                     # re-run in full within 3 errors of a limit
            fallback = "full"                      # refused: run in full, or "stop"

            [study.rare_event]                     # optional: a rare release's probability
            event = "any_plug_released"            # or "any_limit", or a margin column
            method = "importance_sampling"         # or "monte_carlo" (the check)
            samples = 2000

            [[study.parameters]]
            path = "duty.phases[0].events[0].mass"
            name = "aircraft mass"
            distribution = "normal"                # uniform, normal, truncated_normal,
            mean = "70 t"                          # triangular, lognormal
            std = "2 t"

            [[study.parameters]]
            path = ["duty.phases[0].environment.ambient_temperature",
                    "duty.phases[1].environment.ambient_temperature"]
            values = ["15 degC", "35 degC"]

    base_case_path : str or Path
        The base case file (a ``base_case`` key in the table is ignored in favour of it).

    Returns
    -------
    Study

    Raises
    ------
    InputError
        Naming the key (``study.parameters[1].std``) for an unknown key, a missing
        field or a value of the wrong type.
    """
    if isinstance(table, Mapping) and "study" in table and isinstance(table["study"], Mapping):
        table = table["study"]
    if not isinstance(table, Mapping):
        raise InputError(f"study: expected a table, got {type(table).__name__}")
    _unknown(table, _STUDY_KEYS, "study")
    raw_parameters = table.get("parameters", [])
    if not isinstance(raw_parameters, list):
        raise InputError("study.parameters: expected an array of tables ([[study.parameters]])")
    parameters = tuple(_parameter_from_mapping(p, f"study.parameters[{k}]") for k, p in enumerate(raw_parameters))
    title = table.get("title", "untitled study")
    if not isinstance(title, str):
        raise InputError(f"study.title: expected a string, got {title!r}")
    outputs = table.get("outputs")
    if outputs is not None and not (isinstance(outputs, list) and all(isinstance(o, str) for o in outputs)):
        raise InputError(f"study.outputs: expected a list of probe or series names, got {outputs!r}")
    return Study(
        base_case=Path(base_case_path),
        parameters=parameters,
        sampling=Sampling(table.get("method", "latin_hypercube"), table.get("cases"), table.get("seed")),
        outputs=None if outputs is None else tuple(outputs),
        cell_size=table.get("cell_size"),
        target_change=table.get("target_change"),
        accuracy=table.get("accuracy"),
        title=title,
        reduced_model=_settings_from_mapping(table.get("reduced_model"), ReducedModelSettings, "study.reduced_model"),
        rare_event=_settings_from_mapping(table.get("rare_event"), RareEventSettings, "study.rare_event"),
    )


def load_study(path: str | Path) -> Study:
    """Read a study file: a TOML ``[study]`` section whose ``base_case`` is relative to the file.

    Parameters
    ----------
    path : str or Path
        The study file.

    Returns
    -------
    Study
        The validated study.

    Raises
    ------
    InputError
        If the file cannot be read, is not TOML, or lacks ``study.base_case``.
    """
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"study file {str(path)!r} does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"study file {str(path)!r} cannot be read: {exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path.name}: not valid TOML: {exc}") from None
    table = data.get("study")
    if not isinstance(table, Mapping):
        raise InputError(f"{path.name}: no [study] table")
    base = table.get("base_case")
    if not isinstance(base, str):
        raise InputError(f"{path.name}: study.base_case: missing (the case file to start from)")
    try:
        return study_from_mapping(table, path.parent / base)
    except InputError as exc:
        raise type(exc)(f"{path.name}: {exc}") from None
