"""The results file in its netCDF-4 / CF layout: xarray opens it with named coordinates; tables and CSV export."""

from __future__ import annotations

import csv
import dataclasses
import sys
from pathlib import Path

import h5py
import numpy as np
import pytest

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)
from heatstack.cli import main
from heatstack.errors import OptionalDependencyError
from heatstack.resultexport import HISTORIES_FILE, LEDGER_FILE, RECORD_FILE
from heatstack.resultfile import write_result
from heatstack.resultformat import FORMAT_VERSION
from heatstack.resultread import read_case_text, read_result

xr = pytest.importorskip("xarray")
pytest.importorskip("h5netcdf")
pd = pytest.importorskip("pandas")

OLD_FILE = Path(__file__).resolve().parents[1] / "data" / "result-format-1.h5"
ODD_PROBE = "capteur n°2, jante"  # spaces, a comma and non-ASCII text in a probe name


@pytest.fixture(scope="module")
def result():
    """A small real run: two discs, a lagged sensor and a second probe, a stop then parked (test case, invented)."""
    mat = simple_material("m", 2000.0, 900.0, 20.0)
    asm = Assembly(
        [
            Part("rotor 1", "m", 0.1, 0.2, 0.0, 0.01, "rotor"),
            Part("stator 1", "m", 0.1, 0.2, 0.01, 0.02, "stator"),
        ],
        probes=[Probe("sensor", 0.15, 0.005, time_constant=5.0), Probe(ODD_PROBE, 0.19, 0.015)],
    )
    model = Model.build(asm, 0.01, materials={"m": mat})
    sched = Schedule(
        PowerHistory([0.0, 10.0], [1e4, 0.0]),
        [
            Phase("stop", 0, 10, {"*": FixedConvection(10.0, 300.0)}, clamped=True),
            Phase("parked", 10, 100, {"*": FixedConvection(10.0, 300.0)}),
        ],
    )
    return model.run(sched, 300.0, SolverOptions(snapshot_times=(50.0,)))


@pytest.fixture(scope="module")
def written(result, tmp_path_factory):
    path = tmp_path_factory.mktemp("cf") / "run.h5"
    write_result(result, path, case_text="[case]\n")
    return path


def _open(path, **kw):
    return xr.open_dataset(path, engine="h5netcdf", **kw)


# --------------------------------------------------------------------------- xarray opens the file


def test_root_opens_with_named_dimensions_and_no_phony_dims(written):
    with _open(written) as ds:
        assert not [d for d in ds.sizes if str(d).startswith("phony_dim")]
        assert {"time", "probe", "snapshot_time", "r", "z"} <= set(ds.coords)
        assert ds.reading.dims == ("time", "probe")
        assert ds.temperature.dims == ("snapshot_time", "z", "r")


def test_reading_selects_by_probe_name(result, written):
    with _open(written) as ds:
        np.testing.assert_array_equal(ds.reading.sel(probe="sensor").values, result.readings["sensor"])
        np.testing.assert_array_equal(ds.local.sel(probe=ODD_PROBE).values, result.probes[ODD_PROBE])
        assert list(ds.probe.values) == ["sensor", ODD_PROBE]


def test_variables_are_named_for_what_they_are_with_units_and_long_name(result, written):
    with _open(written) as ds:
        np.testing.assert_array_equal(ds.heat_sink_mean.values, result.series["heat_sink_mean"])
        np.testing.assert_array_equal(
            ds.surface_temperature.sel(surface="rotor 1:inner").values, result.series["surface:rotor 1:inner"]
        )
        for name in ("time", "reading", "local", "heat_sink_mean", "temperature", "r", "z", "snapshot_time"):
            assert ds[name].attrs["units"] in {"s", "K", "m"}, name
            assert ds[name].attrs["long_name"], name
        assert ds.attrs["Conventions"].startswith("CF-")


def test_r_and_z_are_the_cell_centres(result, written):
    with _open(written) as ds:
        np.testing.assert_allclose(ds.r.values, 0.5 * (result.r_edges[1:] + result.r_edges[:-1]), rtol=0, atol=1e-15)
        np.testing.assert_allclose(ds.z.values, 0.5 * (result.z_edges[1:] + result.z_edges[:-1]), rtol=0, atol=1e-15)
        field = ds.temperature.sel(snapshot_time=50.0)
        assert field.shape == result.part_map.shape


@pytest.mark.parametrize(
    ("group", "coordinates"),
    [
        ("ledger", {"time", "rubbing_interface", "side"}),
        ("phases", {"phase"}),
        ("final_state", {"cell", "lagged_probe"}),
    ],
)
def test_each_group_opens_alone_with_named_coordinates(written, group, coordinates):
    with _open(written, group=group) as ds:
        assert coordinates <= set(ds.coords)
        assert not [d for d in ds.sizes if str(d).startswith("phony_dim")]


def test_ledger_group_holds_the_accounts_in_joules(result, written):
    with _open(written, group="ledger") as ds:
        np.testing.assert_array_equal(ds.heat_in.values, result.ledger.heat_in)
        assert ds.heat_in.attrs["units"] == "J"
        assert ds.friction_split.dims == ("rubbing_interface", "side")


def test_probe_names_are_variable_length_utf8_strings(written):
    with h5py.File(written, "r") as h5:
        assert h5py.check_string_dtype(h5["probe"].dtype).length is None
        assert h5py.check_string_dtype(h5["probe"].dtype).encoding == "utf-8"


def test_format_version_is_bumped(written):
    with h5py.File(written, "r") as h5:
        assert FORMAT_VERSION == 2
        assert h5.attrs["format_version"] == 2


# --------------------------------------------------------------------------- the previous version still reads


def test_stored_format_1_file_reads(tmp_path):
    with h5py.File(OLD_FILE, "r") as h5:
        assert h5.attrs["format_version"] == 1
    old = read_result(OLD_FILE)
    assert list(old.readings) == ["sensor", "rim seat"]
    assert old.probe_time_constants == {"sensor": 5.0, "rim seat": 0.0}
    assert old.snapshots.shape == (3, *old.part_map.shape)
    assert "heat_sink_mean" in old.series and "surface:rotor 1:inner" in old.series
    assert old.ledger.relative_closure_error < 1e-9
    assert "format 1 reference file" in read_case_text(OLD_FILE)
    # written again, it becomes a format-2 file holding the same run
    again = read_result(write_result(old, tmp_path / "again.h5"))
    for name in old.readings:
        np.testing.assert_array_equal(again.readings[name], old.readings[name])
    assert list(again.series) == list(old.series)
    with _open(tmp_path / "again.h5") as ds:
        assert float(ds.reading.sel(probe="rim seat").max()) == pytest.approx(float(old.readings["rim seat"].max()))


def test_stored_format_1_file_is_small():
    assert OLD_FILE.stat().st_size < 200_000


# --------------------------------------------------------------------------- to_dataframe / to_xarray


def test_to_dataframe_is_tidy_with_units(result):
    frame = result.to_dataframe()
    assert list(frame.columns) == ["time_s", "name", "kind", "value_K"]
    histories = len(result.readings) + len(result.probes) + len(result.series)
    assert len(frame) == result.times.size * histories
    assert frame.attrs["units"]["value_K"] == "K" and frame.attrs["units"]["time_s"] == "s"
    sensor = frame[(frame.name == "sensor") & (frame.kind == "reading")]
    np.testing.assert_array_equal(sensor.value_K.to_numpy(), result.readings["sensor"])
    np.testing.assert_array_equal(sensor.time_s.to_numpy(), result.times)
    assert set(frame.kind) == {"reading", "local", "series"}


def test_to_xarray_matches_the_file_opened_with_xarray(result, written):
    ds = result.to_xarray()
    with _open(written) as stored:
        for name in ("reading", "local", "heat_sink_mean", "surface_temperature", "temperature", "part_map"):
            xr.testing.assert_identical(ds[name].reset_coords(drop=True), stored[name].load().reset_coords(drop=True))


def test_to_dataframe_without_pandas_says_how_to_install_it(result, monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)  # makes `import pandas` fail
    with pytest.raises(OptionalDependencyError, match=r'pip install "heatstack\[data\]"'):
        result.to_dataframe()


def test_to_xarray_without_xarray_says_how_to_install_it(result, monkeypatch):
    monkeypatch.setitem(sys.modules, "xarray", None)
    with pytest.raises(OptionalDependencyError, match=r'pip install "heatstack\[data\]"'):
        result.to_xarray()


# --------------------------------------------------------------------------- heatstack export --csv


def _rows(path):
    with open(path, newline="", encoding="utf-8") as handle:
        return list(csv.reader(handle))


def test_export_writes_histories_and_ledger_with_units_in_the_header(result, written, tmp_path, capsys):
    out = tmp_path / "csv" / "nested"
    assert main(["export", str(written), "--csv", str(out), "--unit", "K"]) == 0
    printed = capsys.readouterr().out
    assert "CAUTION" in printed and HISTORIES_FILE in printed
    rows = _rows(out / HISTORIES_FILE)
    assert rows[0][:3] == ["time [s]", "sensor reading [K]", f"{ODD_PROBE} reading [K]"]
    assert "heat_sink_mean [K]" in rows[0]
    assert len(rows) == result.times.size + 1
    column = rows[0].index("sensor reading [K]")
    np.testing.assert_array_equal([float(r[column]) for r in rows[1:]], result.readings["sensor"])
    ledger = _rows(out / LEDGER_FILE)
    assert ledger[0] == ["time [s]", "heat_in [J]", "convected [J]", "radiated [J]", "stored [J]", "closure_error [J]"]
    np.testing.assert_array_equal([float(r[1]) for r in ledger[1:]], result.ledger.heat_in)


def test_export_in_degrees_celsius_names_the_unit(result, written, tmp_path):
    assert main(["export", str(written), "--csv", str(tmp_path), "--unit", "degC"]) == 0
    rows = _rows(tmp_path / HISTORIES_FILE)
    column = rows[0].index("sensor reading [degC]")
    assert float(rows[1][column]) == pytest.approx(result.readings["sensor"][0] - 273.15)


def test_export_again_replaces_its_own_files(written, tmp_path):
    assert main(["export", str(written), "--csv", str(tmp_path), "--unit", "K"]) == 0
    assert main(["export", str(written), "--csv", str(tmp_path), "--unit", "degF"]) == 0
    assert "[degF]" in (tmp_path / HISTORIES_FILE).read_text(encoding="utf-8").splitlines()[0]


@pytest.mark.parametrize("name", [HISTORIES_FILE, LEDGER_FILE])
def test_export_never_overwrites_a_file_it_did_not_write(written, tmp_path, capsys, name):
    (tmp_path / name).write_text("my own notes\n", encoding="utf-8")
    assert main(["export", str(written), "--csv", str(tmp_path)]) == 2
    assert name in capsys.readouterr().err
    assert (tmp_path / name).read_text(encoding="utf-8") == "my own notes\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]  # nothing else written


def test_export_does_not_overwrite_its_own_file_once_edited(written, tmp_path, capsys):
    assert main(["export", str(written), "--csv", str(tmp_path)]) == 0
    edited = (tmp_path / LEDGER_FILE).read_text(encoding="utf-8") + "note,1\n"
    (tmp_path / LEDGER_FILE).write_text(edited, encoding="utf-8")
    assert main(["export", str(written), "--csv", str(tmp_path)]) == 2
    assert "changed since" in capsys.readouterr().err
    assert (tmp_path / LEDGER_FILE).read_text(encoding="utf-8") == edited


def test_export_refuses_a_foreign_record_file(written, tmp_path, capsys):
    (tmp_path / RECORD_FILE).write_text("{}", encoding="utf-8")
    assert main(["export", str(written), "--csv", str(tmp_path)]) == 2
    assert RECORD_FILE in capsys.readouterr().err


def test_export_of_a_file_that_is_not_a_results_file_exits_2(tmp_path, capsys):
    bad = tmp_path / "bad.h5"
    bad.write_text("not hdf5", encoding="utf-8")
    assert main(["export", str(bad), "--csv", str(tmp_path / "out")]) == 2
    assert "bad.h5" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_export_into_a_path_that_is_a_file_exits_2(written, tmp_path, capsys):
    target = tmp_path / "plain"
    target.write_text("x", encoding="utf-8")
    assert main(["export", str(written), "--csv", str(target)]) == 2
    assert "is not a folder" in capsys.readouterr().err


def test_export_of_an_old_format_file(tmp_path):
    assert main(["export", str(OLD_FILE), "--csv", str(tmp_path), "--unit", "K"]) == 0
    assert _rows(tmp_path / HISTORIES_FILE)[0][1] == "sensor reading [K]"


def test_odd_series_names_go_to_temperature_series(result, tmp_path):
    odd = {**result.series, "a/b: c d": result.times * 0 + 301.0, "reading": result.times * 0 + 302.0}
    path = write_result(dataclasses.replace(result, series=odd), tmp_path / "odd.h5")
    with _open(path) as ds:
        assert ds.temperature_series.sel(series="a/b: c d").values[0] == 301.0
        assert ds.temperature_series.sel(series="reading").values[0] == 302.0
    assert list(read_result(path).series) == list(odd)


def test_demo_results_file_opens_in_xarray_with_named_coordinates(tmp_path):
    from heatstack import load_case, run_case
    from heatstack.cli_shipped import demo_case_path

    case = load_case(demo_case_path())
    path = write_result(run_case(case, case.build_model()), tmp_path / "demo.h5", case_text=case.text)
    with _open(path) as ds:
        assert not [d for d in ds.sizes if str(d).startswith("phony_dim")]
        assert {"time", "probe", "snapshot_time", "r", "z", "part", "surface"} <= set(ds.coords)
        assert "sensor" in list(ds.probe.values)
        sensor = ds.reading.sel(probe="sensor")
        assert sensor.dims == ("time",) and float(sensor.max()) > float(sensor[0])
        assert ds.heat_sink_mean.attrs["units"] == "K"
    with _open(path, group="ledger") as ledger:
        assert ledger.heat_in.attrs["units"] == "J" and ledger.sizes["rubbing_interface"] > 0


def test_help_lists_the_export_verb(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    assert "export" in capsys.readouterr().out


def test_a_file_with_empty_dimensions_opens_in_xarray(result, tmp_path):
    bare = dataclasses.replace(
        result,
        snapshot_times=np.zeros(0),
        snapshots=np.zeros((0, *result.part_map.shape)),
        probes={},
        readings={},
        probe_positions={},
        probe_time_constants={},
        phases=(),
    )
    path = write_result(bare, tmp_path / "bare.h5")
    with _open(path) as ds:
        assert ds.sizes["probe"] == 0 and ds.sizes["snapshot_time"] == 0
        assert ds.reading.shape == (result.times.size, 0)
    with _open(path, group="phases") as phases:
        assert phases.sizes["phase"] == 0
