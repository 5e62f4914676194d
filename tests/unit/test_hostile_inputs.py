"""Every exception path mapped: hostile or damaged inputs end in one line and exit 2 (bad input) or
1 (computation), never a traceback; an unexpected error saves its traceback to a file."""

from __future__ import annotations

from pathlib import Path

import h5py
import numpy as np
import pytest

from heatstack.cli import main

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]


@pytest.fixture(scope="module")
def small_results(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    (folder / "case.toml").write_text(SMALL)
    assert main(["run", str(folder / "case.toml"), "--quiet", "--no-plots"]) == 0
    return folder / "results.h5"


def _check(tmp_path, text, capsys) -> tuple[int, str]:
    case = tmp_path / "case.toml"
    case.write_text(text)
    code = main(["check", str(case), "--out", str(tmp_path)])
    return code, capsys.readouterr().err


@pytest.mark.parametrize("opening", ["{a=", "["])
def test_deeply_nested_tables_or_arrays_are_an_input_error(tmp_path, capsys, opening):
    closing = "}" if opening == "{a=" else "]"
    code, err = _check(tmp_path, SMALL + "\n[extra]\nx = " + opening * 5000 + "1" + closing * 5000 + "\n", capsys)
    assert code == 2 and "nested too deeply" in err and len(err.splitlines()) == 1


def test_a_list_where_a_name_belongs_names_the_key(tmp_path, capsys):
    code, err = _check(tmp_path, SMALL.replace('material = "plain"', 'material = ["plain"]', 1), capsys)
    assert code == 2 and "assembly.parts[0].material" in err


def test_a_null_byte_in_a_path_is_an_input_error(tmp_path, capsys):
    assert main(["check", str(tmp_path / "a\x00b.toml")]) == 2
    assert main(["report", str(tmp_path / "a\x00b.h5")]) == 2
    code, err = _check(tmp_path, SMALL.replace("[case]", '[case]\ninitial_state = "a\\u0000b.h5"'), capsys)
    assert code == 2 and "case.initial_state" in err


def test_a_dataset_declaring_10_to_the_12_elements_is_a_damaged_file(small_results, tmp_path, capsys):
    damaged = tmp_path / "damaged.h5"
    damaged.write_bytes(small_results.read_bytes())
    with h5py.File(damaged, "a") as h5:
        del h5["time"]
        h5.create_dataset("time", shape=(10**12,), dtype="f8", chunks=(1024,), maxshape=(None,))
        h5["time"].attrs["units"] = "s"
    assert main(["report", str(damaged)]) == 2
    err = capsys.readouterr().err
    assert "declares" in err and "damaged" in err and len(err.splitlines()) == 1


def test_unknown_report_settings_and_a_huge_attribute_give_short_errors(small_results, tmp_path, capsys):
    newer = tmp_path / "newer.h5"
    newer.write_bytes(small_results.read_bytes())
    with h5py.File(newer, "a") as h5:
        text = h5["case"]["resolved_inputs"][()].decode()
        del h5["case"]["resolved_inputs"]
        h5["case"]["resolved_inputs"] = text.replace('"report": {', '"report": {"colour_scheme": "dark", ', 1)
    assert main(["report", str(newer)]) == 2
    assert "colour_scheme" in capsys.readouterr().err
    huge = tmp_path / "huge.h5"
    huge.write_bytes(small_results.read_bytes())
    with h5py.File(huge, "a") as h5:
        h5.attrs["format"] = np.bytes_(b"x" * 60_000)
    assert main(["report", str(huge)]) == 2
    err = capsys.readouterr().err
    assert len(err) < 1000


@pytest.mark.parametrize(
    ("error", "code", "words"),
    [
        (MemoryError(), 1, "out of memory"),
        (OverflowError("int too large to convert to float"), 2, "too large"),
        (SystemError("gstrf was called with invalid arguments"), 1, "linear solver"),
        (RecursionError("maximum recursion depth exceeded"), 2, "nested too deeply"),
        (OSError(13, "Permission denied", "/some/file"), 2, "Permission denied"),
    ],
)
def test_each_library_exception_is_one_line_and_its_exit_code(monkeypatch, tmp_path, capsys, error, code, words):
    def fail(path):
        raise error

    monkeypatch.setattr("heatstack.case.load_case", fail)
    assert main(["check", str(tmp_path / "case.toml")]) == code
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1 and "Traceback" not in err


def test_an_unexpected_error_says_please_report_and_saves_the_traceback(monkeypatch, tmp_path, capsys):
    def fail(path):
        raise ZeroDivisionError("a bug")

    monkeypatch.setattr("heatstack.case.load_case", fail)
    import tempfile

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    assert main(["check", "x.toml"]) == 1
    err = capsys.readouterr().err
    assert "please report" in err and "Traceback" not in err and len(err.strip().splitlines()) == 1
    saved = list(tmp_path.glob("heatstack-traceback-*.txt"))
    assert len(saved) == 1 and "ZeroDivisionError: a bug" in saved[0].read_text()


def test_a_damaged_study_manifest_is_a_clear_error(tmp_path):
    from heatstack.errors import ResultFileError
    from heatstack.studies.store import StudyStore

    store = StudyStore(tmp_path / "store")
    store.root.mkdir()
    with h5py.File(store.manifest_path, "w") as h5:
        from heatstack.studies import store as store_module

        h5.attrs["format"] = store_module.FORMAT
        h5.attrs["description"] = "{not json"
        h5.attrs["parameters"] = "[]"
        h5.attrs["outputs"] = "[]"
        h5.attrs["n_cases"] = 1
        h5["samples"] = np.zeros((1, 0))
    with pytest.raises(ResultFileError, match="damaged"):
        store.read_manifest()


def test_the_cell_count_is_checked_before_any_grid_is_built(tmp_path, capsys):
    from heatstack.cli_shipped import demo_case_path

    demo = demo_case_path().read_text()
    code, err = _check(tmp_path, demo.replace('cell_size = "4 mm"', 'cell_size = "1e-9 m"'), capsys)
    assert code == 2 and "about 6.4" in err and "assembly.max_cells" in err
    code, err = _check(tmp_path, demo.replace("rotors = 4", "rotors = 1000000000000"), capsys)
    assert code == 2 and "assembly.design.rotors" in err
    tight = demo.replace('cell_size = "4 mm"', 'cell_size = "4 mm"\nmax_cells = 1000')
    code, err = _check(tmp_path, tight, capsys)
    assert code == 2 and "about 4.98e+03 cells" in err


def test_the_cell_estimate_is_the_grid_the_builder_makes():
    from heatstack import Model
    from heatstack.case import parse_case
    from heatstack.case_guards import estimated_cells

    case = parse_case(SMALL)
    for cell_size, min_cells in (((0.005, 0.005), 3), ((0.004, 0.0015), 7)):
        grid = Model.build(case.assembly, cell_size, min_cells, case.materials).grid
        assert estimated_cells(case.assembly, cell_size, min_cells) == grid.shape[0] * grid.shape[1]


def test_a_run_removes_the_temporary_file_a_killed_earlier_write_left(tmp_path):
    import os

    (tmp_path / "case.toml").write_text(SMALL)
    left = tmp_path / ".results.h5.0123456789ab.tmp"  # what a run killed during its write leaves
    left.write_bytes(b"\x89HDF half a file")
    os.utime(left, (1e9, 1e9))
    assert main(["run", str(tmp_path / "case.toml"), "--quiet", "--no-plots"]) == 0
    assert list(tmp_path.glob(".*.tmp")) == []


@pytest.mark.parametrize(
    ("setting", "words"), [("max_steps = 5", "budget of 5 steps"), ('max_wall_time = "1 ms"', "wall time")]
)
def test_a_run_past_its_budget_stops_saying_how_far_it_got(tmp_path, capsys, setting, words):
    (tmp_path / "case.toml").write_text(SMALL + f"\n[solver]\n{setting}\n")
    assert main(["run", str(tmp_path / "case.toml"), "--quiet", "--no-plots"]) == 1
    err = capsys.readouterr().err
    assert words in err and "% of the duty" in err and "no results file was written" in err
    assert not (tmp_path / "results.h5").exists()
