"""The calibrated case: the base case with the fitted values written in, as a new TOML case file.

The file opens with comment lines giving each fitted value with its 95 % interval and
whether the traces determine it, then one machine-readable comment line::

    # heatstack-calibration: {"parameters": [{"name": ..., "paths": [...], "value": ..., ...}], ...}

(JSON after the prefix :data:`MACHINE_PREFIX`; SI units), then the case itself. The case
keeps every key of the base case; parameters that apply to one run only are left at
their base values (they describe that run, not the brake).
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from ..atomic import write_file_atomically
from ..errors import InputError
from ..report import CAUTION
from ..studies.paths import format_path
from ..units import SI_UNITS
from .calibration import CalibrationFit
from .calibration_records import Calibration
from .calibration_runs import parameter_mapping
from .identifiability import Identifiability

__all__ = [
    "MACHINE_PREFIX",
    "toml_text",
    "calibrated_case_text",
    "write_calibrated_case",
    "read_calibration_block",
    "values_by_name",
]

#: Prefix of the machine-readable comment line of a calibrated case.
MACHINE_PREFIX = "# heatstack-calibration: "
_BARE = re.compile(r"[A-Za-z0-9_\-]+")


def _key(key: str) -> str:
    return key if _BARE.fullmatch(key) else json.dumps(key)


def _value(value: Any, where: str) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError(f"{where}: {value} cannot be written to a case file")
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, list):
        return "[" + ", ".join(_value(v, where) for v in value) + "]"
    if isinstance(value, Mapping):
        return "{" + ", ".join(f"{_key(k)} = {_value(v, where)}" for k, v in value.items()) + "}"
    raise InputError(f"{where}: a {type(value).__name__} cannot be written to a case file")


def _is_table_array(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, Mapping) for v in value)


def _table(mapping: Mapping, prefix: str, lines: list[str]) -> None:
    for key, value in mapping.items():
        if not (isinstance(value, Mapping) or _is_table_array(value)):
            lines.append(f"{_key(key)} = {_value(value, prefix + key)}")
    for key, value in mapping.items():
        name = f"{prefix}{_key(key)}"
        if isinstance(value, Mapping):
            lines += ["", f"[{name}]"]
            _table(value, name + ".", lines)
        elif _is_table_array(value):
            for item in value:
                lines += ["", f"[[{name}]]"]
                _table(item, name + ".", lines)


def toml_text(mapping: Mapping) -> str:
    """TOML text of a mapping as :mod:`tomllib` reads it (tables, arrays of tables, scalars).

    Parameters
    ----------
    mapping : mapping
        Nested tables of scalars, lists and tables.

    Returns
    -------
    str
        The TOML text, ending in a newline.
    """
    lines: list[str] = []
    _table(mapping, "", lines)
    return "\n".join(lines).lstrip("\n") + "\n"


def _interval_text(value: float, low: float, high: float, unit: str, verdict: str) -> str:
    if not (math.isfinite(low) and math.isfinite(high)):
        return f"{value:.5g} {unit} (not determined by the traces)"
    return f"{value:.5g} {unit} (95 % interval {low:.4g} to {high:.4g}; {verdict} by the traces)"


def calibrated_case_text(calibration: Calibration, fit: CalibrationFit, ident: Identifiability) -> str:
    """The calibrated case file's text (see the module docstring).

    Parameters
    ----------
    calibration : Calibration
        The calibration (base case, file names, title).
    fit : CalibrationFit
        The fit whose shared values are written into the case.
    ident : Identifiability
        Which parameters the traces determine, recorded in the machine-readable block.

    Returns
    -------
    str
        Comment header, machine-readable block and the base case's TOML with the fitted values.
    """
    shared = [p.run is None for p in fit.parameters]
    mapping = parameter_mapping(calibration.base_mapping, fit.parameters, list(fit.values), None)
    title = mapping.setdefault("case", {}).get("title", "untitled case")
    mapping["case"]["title"] = f"{title} (calibrated: {calibration.title})"
    lines = [
        f"# heatstack calibrated case: {calibration.base_origin} fitted to {calibration.origin}",
        f"# fit: {fit.message}; reduced chi-square {fit.reduced_chi_square:.3g}",
        f"# {CAUTION}",
    ]
    records = []
    for k, p in enumerate(fit.parameters):
        unit = SI_UNITS.get(p.dimension, "")
        where = ", ".join(format_path(path) for path in p.paths)
        note = "" if shared[k] else f" (run {p.run!r} only; not written below)"
        value = _interval_text(fit.values[k], fit.lower_95[k], fit.upper_95[k], unit, ident.verdicts[k])
        lines.append(f"#   {p.name} [{where}] = {value}{note}")
        records.append({
            "name": p.name, "paths": [format_path(path) for path in p.paths], "unit": unit, "run": p.run,
            "value": float(fit.values[k]),
            "lower_95": float(fit.lower_95[k]) if math.isfinite(fit.lower_95[k]) else None,
            "upper_95": float(fit.upper_95[k]) if math.isfinite(fit.upper_95[k]) else None,
            "log": p.log, "determined": bool(ident.determined[k]), "verdict": ident.verdicts[k],
            "relative_sd_traces": float(ident.relative_sd[k]) if math.isfinite(ident.relative_sd[k]) else None,
        })  # fmt: skip
    covariance = [[float(x) if math.isfinite(x) else None for x in row] for row in fit.covariance]
    block = {"parameters": records, "covariance_internal": covariance, "converged": fit.converged}
    lines.append(MACHINE_PREFIX + json.dumps(block, separators=(",", ":")))
    return "\n".join(lines) + "\n\n" + toml_text(mapping)


def write_calibrated_case(
    path: str | Path, calibration: Calibration, fit: CalibrationFit, ident: Identifiability
) -> Path:
    """Write the calibrated case atomically (the whole file or nothing).

    Parameters
    ----------
    path : str or Path
        File to write.
    calibration : Calibration
        The calibration.
    fit : CalibrationFit
        The fit.
    ident : Identifiability
        Which parameters the traces determine.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    ResultFileError
        If the file cannot be written.
    """
    text = calibrated_case_text(calibration, fit, ident)
    return write_file_atomically(path, lambda temp: Path(temp).write_text(text, encoding="utf-8"), "calibrated case")


def read_calibration_block(text: str) -> dict:
    """The machine-readable block of a calibrated case's text.

    Parameters
    ----------
    text : str
        The calibrated case file's text.

    Returns
    -------
    dict
        The decoded JSON block (parameters, internal covariance, convergence).

    Raises
    ------
    InputError
        If the text holds no such line.
    """
    for line in text.splitlines():
        if line.startswith(MACHINE_PREFIX):
            return json.loads(line[len(MACHINE_PREFIX) :])
    raise InputError(f"no {MACHINE_PREFIX.strip()!r} line: not a calibrated case")


def values_by_name(block: Mapping) -> dict[str, float]:
    """Fitted values by parameter name, from a machine-readable block.

    Parameters
    ----------
    block : mapping
        A block from :func:`read_calibration_block`.

    Returns
    -------
    dict of str to float
        Fitted value of each parameter [SI].
    """
    return {p["name"]: float(p["value"]) for p in block["parameters"]}
