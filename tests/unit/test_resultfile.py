"""The HDF5 results file: round trip, self-description, atomic writes and clear errors on bad files."""

from __future__ import annotations

import dataclasses
import datetime as dt
import errno
import os
import stat

import h5py
import numpy as np
import pytest

import heatstack
import heatstack.resultfile as rf
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
from heatstack.errors import ResultFileError
from heatstack.resultfile import check_writable, write_result
from heatstack.resultformat import FORMAT_VERSION
from heatstack.resultread import read_case_text, read_resolved_inputs, read_result

CASE_TEXT = '[case]\ntitle = "two discs: rotor 1 / stator 1"\n# température initiale\ninitial_temperature = "27 degC"\n'
RESOLVED = {
    "initial_temperature": 300.15,
    "cell_size": 0.01,
    "parts": [{"name": "rotor 1", "r_inner": 0.1, "role": "rotor"}, {"name": "stator 1", "r_inner": 0.1}],
    "solver": {"snapshot_times": [50.0], "clamped": True, "note": None},
    "label with: colon": "ü",
}


@pytest.fixture(scope="module")
def result():
    """A small real run: two discs, one lagged probe, a stop then a parked phase (test case, invented)."""
    mat = simple_material("m", 2000.0, 900.0, 20.0)
    asm = Assembly(
        [
            Part("rotor 1", "m", 0.1, 0.2, 0.0, 0.01, "rotor"),
            Part("stator 1", "m", 0.1, 0.2, 0.01, 0.02, "stator"),
        ],
        probes=[Probe("sensor", 0.15, 0.005, time_constant=5.0)],
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
    """A results file of the small run with case text and resolved inputs."""
    path = tmp_path_factory.mktemp("written") / "run.h5"
    write_result(result, path, case_text=CASE_TEXT, resolved_inputs=RESOLVED)
    return path


def assert_same_result(a, b):
    """Every field of two Results equal exactly: arrays (values, dtype, shape), names and order."""
    for f in dataclasses.fields(a):
        x, y = getattr(a, f.name), getattr(b, f.name)
        if isinstance(x, np.ndarray):
            assert x.dtype == y.dtype and x.shape == y.shape, f.name
            np.testing.assert_array_equal(x, y, err_msg=f.name)
        elif isinstance(x, dict) and f.name in ("probes", "readings", "series"):
            assert list(x) == list(y), f.name
            for key in x:
                assert x[key].dtype == y[key].dtype, (f.name, key)
                np.testing.assert_array_equal(x[key], y[key], err_msg=f"{f.name}[{key}]")
        elif isinstance(x, heatstack.EnergyLedger):
            for name in ("heat_in", "convected", "radiated", "stored", "friction_split"):
                np.testing.assert_array_equal(getattr(x, name), getattr(y, name), err_msg=name)
                assert getattr(x, name).shape == getattr(y, name).shape, name
            assert tuple(x.friction_labels) == tuple(y.friction_labels)
        elif isinstance(x, heatstack.State):
            assert x.time == y.time
            np.testing.assert_array_equal(x.temperature, y.temperature)
            assert x.temperature.dtype == y.temperature.dtype
        else:
            assert x == y, f.name
            if isinstance(x, dict):
                assert list(x) == list(y), f.name


# --------------------------------------------------------------------------- round trip


def test_round_trip_of_a_real_run_is_exact(result, written):
    assert_same_result(result, read_result(written))


def test_series_names_with_spaces_colons_and_slashes_survive(result, tmp_path):
    odd = {"surface:rotor 1:inner": result.series["heat_sink_max"], "a/b: c d": result.times * 0 + 301.0}
    path = write_result(dataclasses.replace(result, series=odd), tmp_path / "odd.h5")
    back = read_result(path)
    assert list(back.series) == ["surface:rotor 1:inner", "a/b: c d"]
    np.testing.assert_array_equal(back.series["a/b: c d"], odd["a/b: c d"])


def test_case_text_and_resolved_inputs_round_trip(written):
    assert read_case_text(written) == CASE_TEXT
    assert read_resolved_inputs(written) == RESOLVED


def test_numpy_values_in_resolved_inputs_are_stored_as_plain_numbers(result, tmp_path):
    path = write_result(
        result,
        tmp_path / "np.h5",
        resolved_inputs={"h": np.float64(10.0), "n": np.int64(3), "t": np.array([1.0, 2.0])},
    )
    assert read_resolved_inputs(path) == {"h": 10.0, "n": 3, "t": [1.0, 2.0]}


def test_no_case_text_or_inputs_reads_back_empty(result, tmp_path):
    path = write_result(result, tmp_path / "bare.h5")
    assert read_case_text(path) == ""
    assert read_resolved_inputs(path) == {}


def test_a_run_without_snapshots_or_probes_round_trips(result, tmp_path):
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
    assert_same_result(bare, read_result(write_result(bare, tmp_path / "bare.h5", compression="none")))


@pytest.mark.parametrize("compression", ["gzip", "lzf", "none"])
def test_every_compression_round_trips(result, tmp_path, compression):
    path = write_result(result, tmp_path / f"{compression}.h5", compression=compression)
    np.testing.assert_array_equal(read_result(path).snapshots, result.snapshots)


# --------------------------------------------------------------------------- self-description


def test_root_attributes_describe_the_file(written):
    with h5py.File(written, "r") as h5:
        assert h5.attrs["format"] == "heatstack-result"
        assert h5.attrs["format_version"] == FORMAT_VERSION
        assert h5.attrs["heatstack_version"] == heatstack.__version__
        created = dt.datetime.fromisoformat(h5.attrs["created"])
    assert created.utcoffset() == dt.timedelta(0)
    assert abs(dt.datetime.now(dt.UTC) - created) < dt.timedelta(hours=1)


def test_every_numeric_variable_carries_units_and_every_variable_a_long_name(written):
    found: dict[str, str] = {}

    def visit(name, item):
        if isinstance(item, h5py.Dataset):
            assert item.attrs.get("long_name"), name
            if item.dtype.kind in "biuf":
                assert item.attrs.get("units"), name
                found[name] = item.attrs["units"]
            else:
                assert "units" not in item.attrs, name

    with h5py.File(written, "r") as h5:
        h5.visititems(visit)
    assert found["time"] == found["ledger/time"] == found["snapshot_time"] == "s"
    assert found["r"] == found["z"] == found["r_edge"] == found["probe_r"] == "m"
    assert found["ledger/heat_in"] == found["ledger/friction_split"] == "J"
    assert found["temperature"] == found["final_state/temperature"] == "K"
    assert found["local"] == found["reading"] == found["heat_sink_mean"] == "K"


def test_probe_position_and_time_constant_are_variables_along_probe(written):
    with h5py.File(written, "r") as h5:
        assert [name.decode() if isinstance(name, bytes) else name for name in h5["probe"][()]] == ["sensor"]
        assert (h5["probe_r"][0], h5["probe_z"][0], h5["probe_time_constant"][0]) == (0.15, 0.005, 5.0)


def test_snapshots_are_compressed_one_snapshot_per_chunk(result, written):
    with h5py.File(written, "r") as h5:
        fields = h5["temperature"]
        assert fields.chunks == (1, *result.part_map.shape)
        assert fields.compression == "gzip"


# --------------------------------------------------------------------------- atomic writes


def test_failed_write_leaves_existing_file_untouched_and_no_temp_file(result, tmp_path, monkeypatch):
    target = tmp_path / "run.h5"
    write_result(result, target, case_text="first")
    before = target.read_bytes()
    original = rf._write_content

    def fail_midway(h5, *args, **kwargs):
        original(h5, *args, **kwargs)  # every dataset is created, then the disk fills up
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(rf, "_write_content", fail_midway)
    with pytest.raises(ResultFileError, match="No space left") as info:
        write_result(result, target, case_text="second")
    assert "run.h5" in str(info.value)
    assert target.read_bytes() == before
    assert sorted(os.listdir(tmp_path)) == ["run.h5"]
    assert read_case_text(target) == "first"


def test_interrupted_write_cleans_up_and_reraises(result, tmp_path, monkeypatch):
    def interrupted(h5, *args, **kwargs):
        h5.create_dataset("partial", data=[1.0])
        raise KeyboardInterrupt

    monkeypatch.setattr(rf, "_write_content", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_result(result, tmp_path / "run.h5")
    assert os.listdir(tmp_path) == []


def test_successful_overwrite_replaces_the_file_and_leaves_no_temp_file(result, tmp_path):
    target = tmp_path / "run.h5"
    write_result(result, target, case_text="first")
    assert write_result(result, target, case_text="second") == target.absolute()
    assert read_case_text(target) == "second"
    assert os.listdir(tmp_path) == ["run.h5"]


def test_unstorable_resolved_inputs_fail_before_anything_is_written(result, tmp_path):
    with pytest.raises(ResultFileError, match=r"resolved_inputs\['bad'\].*object"):
        write_result(result, tmp_path / "run.h5", resolved_inputs={"bad": object()})
    with pytest.raises(ResultFileError, match="not a string"):
        write_result(result, tmp_path / "run.h5", resolved_inputs={1: 2.0})
    assert os.listdir(tmp_path) == []


def test_unknown_compression_is_refused(result, tmp_path):
    with pytest.raises(ResultFileError, match="compression"):
        write_result(result, tmp_path / "run.h5", compression="zip")
    assert os.listdir(tmp_path) == []


def test_write_result_needs_a_result(tmp_path):
    with pytest.raises(ResultFileError, match="needs a Result"):
        write_result({"times": [0.0]}, tmp_path / "run.h5")


# --------------------------------------------------------------------------- malformed files


def test_missing_file(tmp_path):
    path = tmp_path / "absent.h5"
    with pytest.raises(ResultFileError, match="does not exist") as info:
        read_result(path)
    assert str(path) in str(info.value)


def test_random_bytes_are_not_hdf5(tmp_path):
    path = tmp_path / "noise.h5"
    path.write_bytes(np.random.default_rng(1).bytes(4096))
    with pytest.raises(ResultFileError, match="not an HDF5 file") as info:
        read_result(path)
    assert str(path) in str(info.value)


def test_hdf5_file_of_other_content(tmp_path):
    path = tmp_path / "other.h5"
    with h5py.File(path, "w") as h5:
        h5["temperature"] = np.arange(3.0)
    with pytest.raises(ResultFileError, match="not a heatstack results file"):
        read_result(path)


def test_hdf5_file_of_another_format(tmp_path):
    path = tmp_path / "other.h5"
    with h5py.File(path, "w") as h5:
        h5.attrs["format"] = "someone-else"
    with pytest.raises(ResultFileError, match="someone-else"):
        read_case_text(path)


@pytest.mark.parametrize("fraction", [0.5, 0.9, 0.999])
def test_truncated_copy_of_a_real_file(written, tmp_path, fraction):
    data = written.read_bytes()
    path = tmp_path / "cut.h5"
    path.write_bytes(data[: int(len(data) * fraction)])
    with pytest.raises(ResultFileError) as info:
        read_result(path)
    assert str(path) in str(info.value)


def test_newer_format_version_is_refused(written, tmp_path):
    path = tmp_path / "future.h5"
    path.write_bytes(written.read_bytes())
    with h5py.File(path, "r+") as h5:
        h5.attrs["format_version"] = FORMAT_VERSION + 1
    with pytest.raises(ResultFileError, match="newer"):
        read_result(path)


def test_missing_required_dataset_is_named(written, tmp_path):
    path = tmp_path / "gap.h5"
    path.write_bytes(written.read_bytes())
    with h5py.File(path, "r+") as h5:
        del h5["ledger/radiated"]
    with pytest.raises(ResultFileError, match="/ledger/radiated") as info:
        read_result(path)
    assert str(path) in str(info.value)


def test_wrong_unit_is_refused(written, tmp_path):
    path = tmp_path / "unit.h5"
    path.write_bytes(written.read_bytes())
    with h5py.File(path, "r+") as h5:
        h5["time"].attrs["units"] = "min"
    with pytest.raises(ResultFileError, match="'min'"):
        read_result(path)


def test_reading_a_folder(tmp_path):
    with pytest.raises(ResultFileError, match="is a folder"):
        read_result(tmp_path)


# --------------------------------------------------------------------------- check_writable


def test_check_writable_accepts_a_good_path_and_creates_nothing(tmp_path):
    assert check_writable(tmp_path / "run.h5") == (tmp_path / "run.h5").absolute()
    assert os.listdir(tmp_path) == []


def test_check_writable_missing_folder(tmp_path):
    path = tmp_path / "nowhere" / "run.h5"
    with pytest.raises(ResultFileError, match="does not exist") as info:
        check_writable(path)
    assert str(path) in str(info.value)


def test_check_writable_path_under_a_regular_file(tmp_path):
    (tmp_path / "somefile.txt").write_text("not a folder")
    path = tmp_path / "somefile.txt" / "out.h5"
    with pytest.raises(ResultFileError, match="not a folder") as info:
        check_writable(path)
    assert str(path) in str(info.value)


def test_check_writable_read_only_folder(tmp_path):
    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(0o555)
    try:
        if os.access(folder, os.W_OK):
            pytest.skip("this user can write into a read-only folder (running as root?)")
        with pytest.raises(ResultFileError, match="does not accept new files") as info:
            check_writable(folder / "run.h5")
        assert str(folder / "run.h5") in str(info.value)
    finally:
        folder.chmod(0o755)


def test_check_writable_folder_refusing_new_files(tmp_path, monkeypatch):
    """The read-only case as any user (root ignores folder permissions): creating the probe fails."""

    def refuse(folder, stem):
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(heatstack.atomic, "new_temp_file", refuse)
    with pytest.raises(ResultFileError, match="does not accept new files.*Permission denied"):
        check_writable(tmp_path / "run.h5")


def test_new_file_gets_ordinary_permissions(result, tmp_path):
    umask = os.umask(0o022)
    os.umask(umask)
    path = write_result(result, tmp_path / "run.h5")
    assert stat.S_IMODE(path.stat().st_mode) == 0o666 & ~umask


def test_check_writable_on_a_directory(tmp_path):
    with pytest.raises(ResultFileError, match="is a folder"):
        check_writable(tmp_path)


def test_write_result_to_a_missing_folder_fails_cleanly(result, tmp_path):
    with pytest.raises(ResultFileError, match="does not exist"):
        write_result(result, tmp_path / "nowhere" / "run.h5")
    assert not (tmp_path / "nowhere").exists()


def test_check_writable_refuses_a_non_path():
    with pytest.raises(ResultFileError, match="path"):
        check_writable(42)
