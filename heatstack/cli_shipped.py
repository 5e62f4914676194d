"""Shipped data on the command line: the examples folder, the invented demo case, and the verbs
``materials`` (list or show the shipped materials) and ``example`` (copy a shipped example).
"""

from __future__ import annotations

import argparse
import shutil
from importlib import resources
from pathlib import Path

from .cli_runplan import make_folder
from .errors import InputError, ResultFileError
from .report import CAUTION

__all__ = ["EXAMPLES", "EXAMPLE_FOLDERS", "demo_case_path", "cmd_materials", "cmd_example"]


def _examples_folder() -> Path:
    """The shipped examples: the installed ``heatstack._examples``, else the source tree's ``examples``."""
    shipped = Path(str(resources.files("heatstack"))) / "_examples"
    if (shipped / "demo_rto.toml").is_file():
        return shipped
    return Path(__file__).resolve().parents[1] / "examples"


def demo_case_path() -> Path:
    """The invented demonstration case shipped with heatstack.

    Returns
    -------
    Path
        ``demo_rto.toml`` in the examples folder.
    """
    return _examples_folder() / "demo_rto.toml"


#: ``heatstack example NAME``: the files each shipped example copies (a study or a calibration needs its base case).
EXAMPLES = {
    "demo": ("demo_rto.toml",),
    "study": ("demo_study.toml", "demo_rto.toml"),
    "api": ("turnaround.py",),
    "day": ("operations.toml", "flights.csv", "demo_rto.toml"),
    "calibration": (
        "dyno_campaign.toml",
        "dyno_brake.toml",
        "stop1_sensor.csv",
        "stop1_tc_stator.csv",
        "stop1_tc_rotor.csv",
        "stop2_sensor.csv",
        "stop2_tc_stator.csv",
        "stop2_tc_rotor.csv",
        "stop3_sensor.csv",
        "stop3_tc_stator.csv",
        "stop3_tc_rotor.csv",
    ),
}
#: The examples whose files sit in a sub-folder of the examples folder (copied flat into the target folder).
EXAMPLE_FOLDERS = {"calibration": "calibration"}


def cmd_materials(args: argparse.Namespace) -> int:
    """The ``materials`` verb: list the shipped materials, or show one with its tables and their sources.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (an optional material name).

    Returns
    -------
    int
        0 (an unknown name raises).
    """
    from .material_files import available_materials, load_material

    print(CAUTION)
    if args.name:
        _show_material(load_material(args.name))
        return 0
    for name in available_materials():
        material = load_material(name)
        low, high = material.specific_heat.temperature_range
        kind = "anisotropic" if material.anisotropic else "isotropic"
        print(f"{name:32s} {material.density:7.0f} kg/m^3  {low:5.0f}-{high:5.0f} K  {kind}")
    return 0


def _show_material(material) -> None:
    """Print one material: its description, density and every property table with its source."""
    import tomllib

    print(f"{material.name}  ({material.source_file})")
    if material.description:
        print(material.description.strip())
    density_source = ""
    if material.source_file and Path(material.source_file).is_file():
        with open(material.source_file, "rb") as handle:
            density_source = tomllib.load(handle).get("density", {}).get("source", "")
    print(f"\ndensity: {material.density:.0f} kg/m^3")
    if density_source:
        print(f"  source: {' '.join(density_source.split())}")
    tables = (
        ("specific heat", "J/(kg*K)", material.specific_heat),
        ("conductivity, in plane", "W/(m*K)", material.conductivity_in_plane),
        ("conductivity, through thickness", "W/(m*K)", material.conductivity_through_thickness),
        ("emissivity", "-", material.emissivity),
    )
    for title, unit, table in tables:
        print(f"\n{title} [{unit}], outside the table: {table.extrapolation}")
        print(f"  {'T [K]':>8s}  {'T [degC]':>8s}  {'value':>10s}")
        for temperature, value in zip(table.temperature, table.value, strict=True):
            print(f"  {temperature:8.1f}  {temperature - 273.15:8.1f}  {value:10.4g}")
        print(f"  source: {' '.join(table.source.split()) or '(none given)'}")


def cmd_example(args: argparse.Namespace) -> int:
    """The ``example`` verb: copy the files of a shipped example into a folder, never overwriting.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (example name and folder).

    Returns
    -------
    int
        0 when every file was copied.

    Raises
    ------
    InputError, ResultFileError
        For an unknown example, or a file that exists already.
    """
    if args.name not in EXAMPLES:
        raise InputError(f"example {args.name!r} is not one of: {', '.join(EXAMPLES)}")
    folder = make_folder(Path(args.dir), "example folder")
    source = _examples_folder() / EXAMPLE_FOLDERS.get(args.name, "")
    targets = [(source / name, folder / name) for name in EXAMPLES[args.name]]
    existing = [str(target) for _, target in targets if target.exists()]
    if existing:
        raise ResultFileError(f"example {args.name!r}: will not overwrite {', '.join(existing)}")
    for origin, target in targets:
        shutil.copyfile(origin, target)
        print(f"example: {target}")
    return 0
