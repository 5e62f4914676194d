"""The public API: every name in ``heatstack.__all__`` is importable, and nothing else public is exported."""

from __future__ import annotations

import subprocess
import sys
import types
from pathlib import Path

import heatstack

ROOT = Path(__file__).resolve().parents[2]


def test_every_name_in_all_is_an_attribute():
    missing = [name for name in heatstack.__all__ if not hasattr(heatstack, name)]
    assert missing == []


def test_all_has_no_duplicates():
    assert len(heatstack.__all__) == len(set(heatstack.__all__))


def test_every_public_top_level_name_is_listed_in_all():
    public = {
        name
        for name, value in vars(heatstack).items()
        if not name.startswith("_") and not isinstance(value, types.ModuleType)
    }
    assert public == set(heatstack.__all__) - {"__version__"}


def test_the_back_end_names_are_exported_at_top_level():
    for name in (
        "WheelBrakeDesign",
        "build_wheel_brake",
        "FusePlugSpec",
        "DutyCycle",
        "DutyPhase",
        "Environment",
        "stop_from_energy",
        "stop_from_aircraft",
        "stop_from_speed_trace",
        "taxi_snubs",
        "gear_retraction",
        "load_case",
        "run_case",
        "build_report",
        "sensor_lag",
        "assess_fuse_plugs",
        "cooling_time_in_result",
        "cooling_time_from_state",
        "tyre_gas",
        "what_if",
        "estimate_energy",
    ):
        assert name in heatstack.__all__, name


def _fresh_python(code: str) -> subprocess.CompletedProcess:
    env_path = str(ROOT)
    return subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        cwd=ROOT,
        env={"PYTHONPATH": env_path, "PATH": "/usr/bin:/bin"},
        timeout=120,
    )


def test_star_import_works_in_a_fresh_interpreter():
    done = _fresh_python("from heatstack import *; print(Model.__name__, run_case.__name__, what_if.__name__)")
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["Model", "run_case", "what_if"]


def test_every_module_imports_first_in_a_fresh_interpreter():
    """No import circle bites whichever module a program imports first."""
    names = sorted(
        ".".join(path.relative_to(ROOT).with_suffix("").parts).removesuffix(".__init__")
        for path in (ROOT / "heatstack").rglob("*.py")
    )
    code = (
        "import importlib, sys\n"
        f"for name in {names!r}:\n"
        "    for loaded in [m for m in sys.modules if m == 'heatstack' or m.startswith('heatstack.')]:\n"
        "        del sys.modules[loaded]\n"
        "    importlib.import_module(name)\n"
        "print('ok')\n"
    )
    done = _fresh_python(code)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "ok"


def test_every_sub_package_and_the_type_marker_are_shipped():
    import tomllib

    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]
    on_disk = {".".join(init.parent.relative_to(ROOT).parts) for init in (ROOT / "heatstack").rglob("__init__.py")}
    assert on_disk <= set(config["packages"])
    assert (ROOT / "heatstack" / "py.typed").is_file()
    assert "py.typed" in config["package-data"]["heatstack"]
