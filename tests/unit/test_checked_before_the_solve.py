"""Everything the report, plugs, tyre and limits use is checked when the case is read, before any
solve; no NaN or infinity reaches a results file or a report."""

from __future__ import annotations

import json
import re
from dataclasses import replace
from pathlib import Path

import h5py
import numpy as np
import pytest

from heatstack.case import parse_case
from heatstack.cli import main
from heatstack.cli_shipped import demo_case_path
from heatstack.errors import InputError, ResultFileError
from heatstack.report_settings import ReportSettings
from heatstack.resultfile import write_result
from heatstack.resultread import read_result

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]
TYRE = '\n[tyre]\ncold_pressure = "10 bar"\ngas_volume = "0.1 m^3"\ncavity_area = "0.3 m^2"\n'

HOSTILE = {
    "limit nan": (SMALL.replace('sensor = "300 degC"', 'sensor = "nan degC"'), "output.limits.sensor"),
    "limit below 0 K": (SMALL.replace('sensor = "300 degC"', 'sensor = "-300 degC"'), "output.limits.sensor"),
    "time constant inf": (SMALL.replace('time_constant = "5 s"', 'time_constant = "inf s"'), "time_constant"),
    "cooling below 0 K": (
        SMALL.replace("[output.limits]", '[output]\ncooling_below = "-300 degC"\n[output.limits]'),
        "output.cooling_below",
    ),
    "cooling series unknown": (
        SMALL.replace("[output.limits]", '[output]\ncooling_below = "50 degC"\ncooling_series = "x"\n[output.limits]'),
        "output.cooling_series",
    ),
    "initial 0 K": (SMALL.replace('initial_temperature = "20 degC"', 'initial_temperature = "0 K"'), "initial_temp"),
    "cold pressure negative": (SMALL + TYRE.replace('"10 bar"', '"-2 bar"'), "tyre.cold_pressure"),
    "outer conductance 1e308": (SMALL + TYRE + 'outer_conductance = "1e308 W/K"\n', "tyre.outer_conductance"),
    "h cavity 1e308": (SMALL + TYRE + 'h_cavity = "1e308 W/(m^2*K)"\n', "tyre.h_cavity"),
    "gas volume 1e-300": (SMALL + TYRE.replace('"0.1 m^3"', '"1e-300 m^3"'), "tyre.gas_volume"),
    "pressure limit nan": (SMALL + TYRE + 'pressure_limit = "nan bar"\n', "tyre.pressure_limit"),
}


@pytest.mark.parametrize("name", HOSTILE)
def test_a_bad_report_input_is_an_input_error_when_the_case_is_read(name):
    text, key = HOSTILE[name]
    with pytest.raises(InputError, match=re.escape(key)):
        parse_case(text)


def test_check_rejects_what_run_would_reject_after_the_solve(tmp_path, capsys):
    case = tmp_path / "case.toml"
    case.write_text(HOSTILE["cold pressure negative"][0])
    assert main(["check", str(case), "--out", str(tmp_path)]) == 2
    assert "tyre.cold_pressure" in capsys.readouterr().err
    assert main(["run", str(case), "--quiet"]) == 2
    assert not (tmp_path / "results.h5").exists()


def test_a_negative_plug_tolerance_is_an_input_error_naming_the_plug():
    demo = demo_case_path().read_text()
    assert 'tolerance = "3 K"' in demo
    with pytest.raises(InputError, match=r"fuse_plugs\[0\].*tolerance"):
        parse_case(demo.replace('tolerance = "3 K"', 'tolerance = "-3 K"', 1))


@pytest.mark.parametrize(
    "settings",
    [
        {"limits": {"sensor": float("nan")}},
        {"limits": {"sensor": -1.0}},
        {"cooling_below": float("inf")},
        {"cold_temperature": 0.0},
        {"band": float("nan")},
        {"unit": "Rankine"},
    ],
)
def test_report_settings_refuse_values_no_answer_can_use(settings):
    with pytest.raises(InputError):
        ReportSettings(**settings)


def test_report_settings_from_a_newer_writer_are_a_clear_error():
    with pytest.raises(InputError, match="unknown setting"):
        ReportSettings.from_mapping({"unit": "degC", "colour_scheme": "dark"})
    with pytest.raises(InputError, match="report settings"):
        ReportSettings.from_mapping({"limits": [1, 2]})


def _finite_everywhere(path: Path) -> list[str]:
    """Names of float datasets holding NaN or infinity where a value is computed, not 'unknown'."""
    bad = []
    nan_means_unknown = {"probe_r", "probe_z", "probe_time_constant"}

    def visit(name, item):
        if not isinstance(item, h5py.Dataset) or item.dtype.kind != "f" or name in nan_means_unknown:
            return
        values = item[()]
        if name == "temperature":  # the field snapshots: NaN only in void cells
            values = values[:, item.file["part_map"][()] >= 0]
        if not np.all(np.isfinite(values)):
            bad.append(name)

    with h5py.File(path, "r") as h5:
        h5.visititems(visit)
        for text in ("resolved_inputs", "run_metadata"):
            json.loads(h5["case"][text][()].decode(), parse_constant=lambda c, where=text: bad.append(f"{where}:{c}"))
    return bad


def test_no_nan_or_infinity_reaches_a_results_file_or_a_report(tmp_path, capsys):
    case = tmp_path / "case.toml"
    case.write_text(SMALL.replace("[output.limits]", '[output]\ncooling_below = "40 degC"\n[output.limits]'))
    assert main(["run", str(case), "--quiet", "--no-plots"]) == 0
    capsys.readouterr()
    assert _finite_everywhere(tmp_path / "results.h5") == []
    for fmt in ("json", "markdown", "text"):
        assert main(["report", str(tmp_path / "results.h5"), "--format", fmt]) == 0
        text = capsys.readouterr().out
        assert not re.search(r"\b(nan|NaN|inf|Infinity)\b", text), fmt
    for name in ("report.md", "report.html"):
        assert not re.search(r"\b(nan|NaN|Infinity)\b", (tmp_path / name).read_text())


def test_a_result_holding_nan_is_never_written(tmp_path):
    case = tmp_path / "case.toml"
    case.write_text(SMALL)
    assert main(["run", str(case), "--quiet", "--no-plots"]) == 0
    result = read_result(tmp_path / "results.h5")
    spoilt = {name: np.where(np.arange(v.size) == 3, np.nan, v) for name, v in result.series.items()}
    with pytest.raises(ResultFileError, match="NaN"):
        write_result(replace(result, series=spoilt), tmp_path / "spoilt.h5")
    with pytest.raises(ResultFileError, match="NaN"):
        write_result(result, tmp_path / "spoilt.h5", resolved_inputs={"x": float("nan")})
    assert not (tmp_path / "spoilt.h5").exists()


DEMO = (Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml").read_text()


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        # found by the fuzz campaign: accepted by check, refused by run (the air fits' range) ...
        (
            'ambient_temperature = "25 degC"\nwind_speed',
            'ambient_temperature = "25e300 degC"\nwind_speed',
            "duty.phases[1].environment.ambient_temperature",
        ),
        # ... and a phase name with a null byte that failed only when the finished run was written
        ('name = "held on the runway"', 'name = "held\\u0000"', "duty.phases[1].name"),
    ],
)
def test_check_refuses_what_the_run_or_its_results_file_would(tmp_path, capsys, old, new, key):
    case = tmp_path / "case.toml"
    assert old in DEMO
    case.write_text(DEMO.replace(old, new, 1))
    assert main(["check", str(case), "--out", str(tmp_path)]) == 2
    (line,) = capsys.readouterr().err.strip().splitlines()
    assert key in line
