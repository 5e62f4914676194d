"""Material files: reading a :class:`~heatstack.materials.Material` from a TOML file or a mapping.

A material file (``materials/<name>.toml``, one material a file) names the unit of
every value and gives a source beside every table. The same layout, as a mapping,
describes a material written inline in a case file. Values are converted to SI
(K, J, kg, m, W) and checked as they are read; loaded files are cached.
"""

from __future__ import annotations

import difflib
import tomllib
from collections.abc import Mapping
from functools import cache
from pathlib import Path
from typing import Any

from .errors import InputError, MaterialError
from .materials import Material
from .property_table import EXTRAPOLATIONS, PropertyTable, is_real_number
from .units import quantity, quantity_array

__all__ = [
    "load_material",
    "available_materials",
    "material_from_mapping",
    "materials_directory",
]


_TOP_KEYS = (
    "name",
    "description",
    "extrapolation",
    "density",
    "specific_heat",
    "conductivity",
    "conductivity_in_plane",
    "conductivity_through_thickness",
    "emissivity",
)
_DENSITY_KEYS = ("value", "unit", "source")
_TABLE_KEYS = ("unit", "temperature_unit", "source", "table")
_TABLE_DIMENSIONS = {
    "specific_heat": "specific_heat",
    "conductivity": "conductivity",
    "conductivity_in_plane": "conductivity",
    "conductivity_through_thickness": "conductivity",
    "emissivity": "dimensionless",
}


def _section(data: Mapping[str, Any], key: str, allowed: tuple[str, ...], where: str) -> Mapping:
    section = data[key]
    if not isinstance(section, Mapping):
        raise MaterialError(f"{where}: [{key}] must be a table of keys, got {section!r}")
    for sub in section:
        if sub not in allowed:
            raise MaterialError(f"{where}: unknown key {sub!r} in [{key}] (allowed: {', '.join(allowed)})")
    for sub in allowed:
        if sub not in section:
            raise MaterialError(f"{where}: [{key}] is missing the key {sub!r}")
    for sub in ("unit", "temperature_unit", "source"):
        if sub in section and not isinstance(section[sub], str):
            raise MaterialError(f"{where}: [{key}] {sub} must be a string, got {section[sub]!r}")
    if not section["source"].strip():
        raise MaterialError(f"{where}: [{key}] source must name where the values come from")
    return section


def _one_line(text: str) -> str:
    """Collapse the line breaks and indentation of a multi-line TOML string."""
    return " ".join(text.split())


def _read_density(data: Mapping[str, Any], where: str) -> float:
    section = _section(data, "density", _DENSITY_KEYS, where)
    if not is_real_number(section["value"]):
        raise MaterialError(f"{where}: [density] value must be a number, got {section['value']!r}")
    return quantity(section["value"], "density", f"{where}: [density] unit", unit=section["unit"])


def _read_table(
    data: Mapping[str, Any], key: str, prop: str, name: str, extrapolation: str, where: str
) -> PropertyTable:
    section = _section(data, key, _TABLE_KEYS, where)
    rows = section["table"]
    if not isinstance(rows, list | tuple) or len(rows) < 2:
        raise MaterialError(f"{where}: [{key}] table must be a list of at least 2 rows, got {rows!r}")
    for i, row in enumerate(rows, start=1):
        if not (isinstance(row, list | tuple) and len(row) == 2 and all(map(is_real_number, row))):
            raise MaterialError(f"{where}: [{key}] table row {i} must be [temperature, value] numbers, got {row!r}")
    temperature = quantity_array(
        [row[0] for row in rows], "temperature", f"{where}: [{key}] temperature_unit", unit=section["temperature_unit"]
    )
    value = quantity_array(
        [row[1] for row in rows], _TABLE_DIMENSIONS[key], f"{where}: [{key}] unit", unit=section["unit"]
    )
    return PropertyTable(prop, name, temperature, value, extrapolation, _one_line(section["source"]))


def _build(data: Any, origin: str, source_file: str) -> Material:
    """Validate a parsed material mapping and build the :class:`Material`."""
    if not isinstance(data, Mapping):
        raise MaterialError(f"{origin}: a material must be a table of keys, got {type(data).__name__}")
    name = data.get("name")
    if not isinstance(name, str) or not name.strip():
        raise MaterialError(f"{origin}: the key 'name' must be a non-empty string, got {name!r}")
    where = f"{origin}: material {name!r}"
    for key in data:
        if key not in _TOP_KEYS:
            close = difflib.get_close_matches(str(key), _TOP_KEYS, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise MaterialError(f"{where}: unknown key {key!r}{hint} (allowed: {', '.join(_TOP_KEYS)})")
    description = data.get("description", "")
    if not isinstance(description, str):
        raise MaterialError(f"{where}: description must be a string, got {description!r}")
    extrapolation = data.get("extrapolation", "error")
    if extrapolation not in EXTRAPOLATIONS:
        raise MaterialError(f"{where}: extrapolation must be 'error' or 'clamp', got {extrapolation!r}")
    for key in ("density", "specific_heat", "emissivity"):
        if key not in data:
            raise MaterialError(f"{where}: missing the section [{key}]")
    split = ("conductivity_in_plane", "conductivity_through_thickness")
    given = [key for key in split if key in data]
    if "conductivity" in data and given:
        raise MaterialError(
            f"{where}: give either [conductivity] (isotropic) or [conductivity_in_plane] and "
            f"[conductivity_through_thickness], not both (found also {', '.join(given)})"
        )
    if "conductivity" not in data and len(given) != 2:
        missing = [key for key in split if key not in data]
        raise MaterialError(
            f"{where}: missing [conductivity], or [{'] and ['.join(missing)}] for an anisotropic material"
        )
    try:
        density = _read_density(data, where)

        def table(key: str, prop: str) -> PropertyTable:
            return _read_table(data, key, prop, name, extrapolation, where)

        if "conductivity" in data:
            in_plane = through = table("conductivity", "conductivity")
        else:
            in_plane = table("conductivity_in_plane", "conductivity_in_plane")
            through = table("conductivity_through_thickness", "conductivity_through_thickness")
        return Material(
            name=name,
            description=_one_line(description),
            density=density,
            specific_heat=table("specific_heat", "specific_heat"),
            conductivity_in_plane=in_plane,
            conductivity_through_thickness=through,
            emissivity=table("emissivity", "emissivity"),
            extrapolation=extrapolation,
            source_file=source_file,
        )
    except InputError as exc:  # MaterialError, and UnitError from a unit key
        message = str(exc)
        if not message.startswith(origin):
            message = f"{origin}: {message}"
        raise MaterialError(message) from exc


def material_from_mapping(data: Mapping[str, Any], origin: str) -> Material:
    """Build a material from a mapping with the layout of a material file.

    Used for materials written inline in a case file.

    Parameters
    ----------
    data : Mapping
        The keys of a material file: ``name``, ``density``, ``specific_heat`` ...
    origin : str
        Where the mapping comes from (e.g. ``"case.toml [materials.pad]"``); every
        error message starts with it.

    Returns
    -------
    Material
        The validated material, with ``source_file = "<inline>"``.

    Raises
    ------
    MaterialError
        If a key is unknown or missing, a unit has the wrong dimension, a row is
        malformed or out of order, or a value is out of its physical range.
    """
    return _build(data, origin, "<inline>")


def materials_directory() -> Path:
    """Directory of the shipped material files.

    Returns
    -------
    Path
        ``_materials`` beside this module if it exists (an installed wheel), otherwise
        ``materials`` at the top of the source tree (a checkout or editable install).
    """
    packaged = Path(__file__).parent / "_materials"
    if packaged.is_dir():
        return packaged
    return Path(__file__).resolve().parents[1] / "materials"


def _directory(directory: str | Path | None) -> Path:
    path = materials_directory() if directory is None else Path(directory)
    if not path.is_dir():
        raise MaterialError(f"materials directory {path} does not exist")
    return path


def available_materials(directory: str | Path | None = None) -> list[str]:
    """Names of the materials in a directory (its ``*.toml`` files, without suffix).

    Parameters
    ----------
    directory : str or Path, optional
        Directory to list; defaults to :func:`materials_directory`.

    Returns
    -------
    list of str
        Sorted material names.

    Raises
    ------
    MaterialError
        If the directory does not exist.
    """
    return sorted(path.stem for path in _directory(directory).glob("*.toml") if path.is_file())


def load_material(name: str, directory: str | Path | None = None) -> Material:
    """Load ``<directory>/<name>.toml``; each resolved path is read once and cached.

    Parameters
    ----------
    name : str
        Material name, e.g. ``"carbon-carbon"``.
    directory : str or Path, optional
        Directory holding the files; defaults to :func:`materials_directory`.

    Returns
    -------
    Material
        The material. Repeated calls return the same object.

    Raises
    ------
    MaterialError
        If the material is unknown (the message lists the available ones and the
        closest match) or its file is malformed.
    """
    folder = _directory(directory)
    valid = isinstance(name, str) and name and Path(name).name == name and not name.startswith(".")
    path = folder / f"{name}.toml" if valid else None
    if path is None or not path.is_file():
        names = available_materials(folder)
        close = difflib.get_close_matches(str(name), names, n=1, cutoff=0.0)
        hint = f" Did you mean {close[0]!r}?" if close else ""
        raise MaterialError(
            f"unknown material {name!r} in {folder}.{hint} Available: {', '.join(names) if names else '(none)'}"
        )
    return _load_file(path.resolve())


@cache
def _load_file(path: Path) -> Material:
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise MaterialError(f"{path}: cannot read the material file: {exc}") from exc
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise MaterialError(f"{path}: not valid TOML: {exc}") from exc
    material = _build(data, str(path), str(path))
    if material.name != path.stem:
        raise MaterialError(f"{path}: name = {material.name!r} does not match the file name {path.stem!r}")
    return material
