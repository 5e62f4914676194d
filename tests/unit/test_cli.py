"""The command line: verbs, exit codes, clear errors and no tracebacks for user mistakes."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from heatstack.cli import main
from heatstack.cli_shipped import demo_case_path

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]


@pytest.fixture(scope="module")
def small_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("run")
    case = folder / "small.toml"
    case.write_text(SMALL)
    assert main(["run", str(case), "--quiet"]) == 0
    return folder


def test_run_writes_results_and_plots(small_run):
    assert (small_run / "results.h5").is_file()
    assert (small_run / "small-histories.png").stat().st_size > 0  # figures carry the case name


def test_report_formats_agree(small_run, capsys):
    assert main(["report", str(small_run / "results.h5"), "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["energy"]["heat_in_J"] == pytest.approx(1e6, rel=1e-9)
    assert main(["report", str(small_run / "results.h5"), "--format", "markdown", "--unit", "degF"]) == 0
    assert "| probe / series |" in capsys.readouterr().out


def test_plot_writes_into_an_existing_folder(small_run, capsys):
    assert main(["plot", str(small_run / "results.h5"), "--out", str(small_run)]) == 0
    assert "histories.png" in capsys.readouterr().out


def test_two_cases_of_one_run_writing_one_results_file_is_an_error_naming_both(tmp_path, capsys):
    first, second = tmp_path / "first.toml", tmp_path / "second.toml"
    first.write_text(SMALL)
    second.write_text(SMALL)
    assert main(["run", str(first), str(second), "--quiet", "--no-plots"]) == 2
    err = capsys.readouterr().err
    assert "first.toml" in err and "second.toml" in err and "results.h5" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["first.toml", "second.toml"]  # nothing written


def test_a_case_never_overwrites_the_results_file_another_case_wrote(tmp_path, capsys):
    first, second = tmp_path / "first.toml", tmp_path / "second.toml"
    first.write_text(SMALL)
    second.write_text(SMALL)
    assert main(["run", str(first), "--quiet", "--no-plots"]) == 0
    before = (tmp_path / "results.h5").read_bytes()
    assert main(["run", str(second), "--quiet", "--no-plots"]) == 2
    err = capsys.readouterr().err
    assert "first.toml" in err and "second.toml" in err
    assert (tmp_path / "results.h5").read_bytes() == before
    assert main(["run", str(first), "--quiet", "--no-plots"]) == 0  # the same case may run again


def test_several_cases_of_distinct_results_files_run_into_one_folder_with_their_own_reports(tmp_path, capsys):
    first, second = tmp_path / "first.toml", tmp_path / "second.toml"
    first.write_text(SMALL)
    second.write_text(SMALL.replace("[case]", '[output]\nfile = "second.h5"\n\n[case]', 1))
    out = tmp_path / "out"
    assert main(["run", str(first), str(second), "--out", str(out), "--quiet", "--no-plots"]) == 0
    names = sorted(p.name for p in out.iterdir())
    assert names == [
        "first-report.html",
        "first-report.md",
        "results.h5",
        "second-report.html",
        "second-report.md",
        "second.h5",
    ]


def test_check_prints_cells_and_draws_the_layout(tmp_path, capsys):
    case = tmp_path / "small.toml"
    case.write_text(SMALL)
    assert main(["check", str(case)]) == 0
    out = capsys.readouterr().out
    assert "cells:" in out and (tmp_path / "small.layout.png").is_file()


def test_bad_case_exits_2_with_the_key_path(tmp_path, capsys):
    case = tmp_path / "bad.toml"
    case.write_text(SMALL.replace('r_outer = "200 mm"', 'r_outer = "200 kg"', 1))
    assert main(["run", str(case), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "assembly.parts[0].r_outer" in err and "Traceback" not in err


def test_unwritable_output_fails_before_the_run(tmp_path, capsys):
    case = tmp_path / "small.toml"
    case.write_text(SMALL)
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("")
    assert main(["run", str(case), "--out", str(blocker), "--quiet"]) == 2
    assert "not-a-folder" in capsys.readouterr().err


def test_malformed_results_file_is_a_clear_error(tmp_path, capsys):
    junk = tmp_path / "junk.h5"
    junk.write_bytes(b"not hdf5 at all")
    assert main(["report", str(junk)]) == 2
    assert "junk.h5" in capsys.readouterr().err


def test_demo_case_ships_with_the_package():
    assert demo_case_path().is_file()


def test_command_line_entry_point_exits_non_zero_without_traceback(tmp_path):
    proc = subprocess.run(
        [sys.executable, "-m", "heatstack.cli", "run", str(tmp_path / "missing.toml")],
        capture_output=True,
        text=True,
    )
    assert proc.returncode == 2 and "does not exist" in proc.stderr and "Traceback" not in proc.stderr


def test_study_verb_runs_resumes_and_reports(tmp_path, capsys):
    study = tmp_path / "study.toml"
    text = (demo_case_path().parent / "demo_study.toml").read_text().replace("cases = 200", "cases = 4")
    study.write_text(text.replace('base_case = "demo_rto.toml"', f'base_case = "{demo_case_path()}"'))
    store = tmp_path / "store"
    assert main(["study", str(study), "--store", str(store), "--workers", "2", "--quiet"]) == 0
    first = capsys.readouterr().out
    assert "4 cases run" in first and "Wilson" in first
    assert main(["study", str(study), "--store", str(store), "--workers", "1", "--quiet"]) == 0
    assert "0 cases run, 4 already in the store" in capsys.readouterr().out


def test_study_with_a_bad_parameter_path_exits_2(tmp_path, capsys):
    study = tmp_path / "study.toml"
    text = (demo_case_path().parent / "demo_study.toml").read_text()
    text = text.replace('base_case = "demo_rto.toml"', f'base_case = "{demo_case_path()}"')
    study.write_text(text.replace("events[0].aircraft.mass", "events[0].aircraft.mas"))
    assert main(["study", str(study), "--store", str(tmp_path / "s"), "--quiet"]) == 2
    assert "mass" in capsys.readouterr().err
