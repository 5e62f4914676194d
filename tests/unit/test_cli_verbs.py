"""The command line's folders, examples, material tables, loudness flags and per-verb help."""

from __future__ import annotations

import logging
import tomllib
from pathlib import Path

import pytest

from heatstack.cli import main
from heatstack.cli_shipped import EXAMPLES
from heatstack.resultread import read_result
from heatstack.studies import load_study

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]
VERBS = ("run", "demo", "check", "report", "plot", "fit", "study", "materials", "example")


@pytest.fixture(scope="module")
def two_cases(tmp_path_factory):
    """Two different cases run into one new nested folder."""
    folder = tmp_path_factory.mktemp("cases")
    out = folder / "new" / "nested"
    (folder / "first.toml").write_text(SMALL)
    second = SMALL.replace('energy = "1 MJ"', 'energy = "2 MJ"').replace(
        "[case]", '[output]\nfile = "second.h5"\n\n[case]', 1
    )
    (folder / "second.toml").write_text(second)
    assert main(["run", str(folder / "first.toml"), "--out", str(out), "--quiet"]) == 0
    first = (out / "first-histories.png").read_bytes()
    assert main(["run", str(folder / "second.toml"), "--out", str(out), "--quiet"]) == 0
    return out, first


def test_run_creates_its_out_folder(two_cases):
    out, _ = two_cases
    assert out.is_dir() and (out / "results.h5").is_file()


def test_a_second_case_keeps_the_first_cases_figures(two_cases):
    out, first = two_cases
    assert (out / "first-histories.png").read_bytes() == first
    assert (out / "second-histories.png").read_bytes() != first


def test_plot_time_names_the_file_by_the_snapshot_drawn(two_cases, capsys):
    out, _ = two_cases
    snapshots = read_result(out / "results.h5").snapshot_times
    assert snapshots.size >= 2
    shown = float(snapshots[1])
    requested = (shown - 0.2 * (shown - float(snapshots[0]))) / 60.0  # nearer snapshot 1 than 0, not on it
    assert main(["plot", str(out / "results.h5"), "--time", f"{requested:.4f}", "--quiet"]) == 0
    captured = capsys.readouterr()
    name = f"results-field-{shown / 60.0:06.1f}min.png"
    assert name in captured.out and (out / name).is_file()
    assert f"nearest stored snapshot, {shown / 60.0:.1f} min" in captured.err


def test_plot_time_outside_the_record_names_the_option(two_cases, capsys):
    out, _ = two_cases
    assert main(["plot", str(out / "results.h5"), "--time", "999"]) == 2
    assert "--time 999" in capsys.readouterr().err


def test_out_that_is_a_file_is_a_clear_error(tmp_path, capsys):
    blocker = tmp_path / "taken"
    blocker.write_text("keep me")
    assert main(["demo", "--out", str(blocker / "inside")]) == 2
    assert "taken" in capsys.readouterr().err and blocker.read_text() == "keep me"


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_example_copies_the_shipped_files(name, tmp_path, capsys):
    assert main(["example", name, str(tmp_path / "mine")]) == 0
    copied = sorted(p.name for p in (tmp_path / "mine").iterdir())
    assert copied == sorted(EXAMPLES[name])
    assert all(f"example: {tmp_path / 'mine' / n}" in capsys.readouterr().out for n in [copied[0]])


def test_example_study_loads_with_its_base_case(tmp_path):
    assert main(["example", "study", str(tmp_path)]) == 0
    assert load_study(tmp_path / "demo_study.toml").sampling.cases == 200


def test_example_calibration_loads_with_its_base_case_and_traces(tmp_path, capsys):
    from heatstack.questions.calibration_file import load_calibration

    shipped = Path(__file__).resolve().parents[2] / "examples" / "calibration"
    assert sorted(EXAMPLES["calibration"]) == sorted(p.name for p in shipped.iterdir())  # every file, none missed
    assert main(["example", "calibration", str(tmp_path)]) == 0
    calibration = load_calibration(tmp_path / "dyno_campaign.toml")
    assert len(calibration.runs) == 3 and len(calibration.parameters) == 4
    assert all(Path(t.source).parent == tmp_path for r in calibration.runs for t in r.traces)
    # never overwrites: an edited trace stays as it is and nothing else is copied
    edited = tmp_path / "stop2_sensor.csv"
    edited.write_text("my own edits")
    (tmp_path / "dyno_brake.toml").unlink()
    assert main(["example", "calibration", str(tmp_path)]) == 2
    assert "will not overwrite" in capsys.readouterr().err
    assert edited.read_text() == "my own edits" and not (tmp_path / "dyno_brake.toml").exists()


def test_example_never_overwrites(tmp_path, capsys):
    (tmp_path / "demo_rto.toml").write_text("my own edits")
    assert main(["example", "demo", str(tmp_path)]) == 2
    assert "will not overwrite" in capsys.readouterr().err
    assert (tmp_path / "demo_rto.toml").read_text() == "my own edits"


def test_unknown_example_names_the_choices(tmp_path, capsys):
    assert main(["example", "landing", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "'landing'" in err and "demo, study, api" in err and not list(tmp_path.iterdir())


def test_examples_are_listed_for_shipping():
    data = tomllib.loads((Path(__file__).resolve().parents[2] / "pyproject.toml").read_text())
    shipped = data["tool"]["setuptools"]["package-data"]["heatstack._examples"]
    assert {"*.toml", "*.py"} <= set(shipped)


def test_materials_name_shows_tables_with_sources(capsys):
    assert main(["materials", "carbon-carbon"]) == 0
    out = capsys.readouterr().out
    assert "specific heat [J/(kg*K)]" in out and "emissivity [-]" in out
    assert "Incropera" in out  # the specific-heat source written in the material file
    assert out.count("source:") == 5  # density and the four tables


def test_unknown_material_suggests_the_nearest(capsys):
    assert main(["materials", "carbon-carbn"]) == 2
    assert "Did you mean 'carbon-carbon'" in capsys.readouterr().err


@pytest.mark.parametrize("verb", VERBS)
def test_help_shows_an_example_of_the_verb(verb, capsys):
    with pytest.raises(SystemExit) as stop:
        main([verb, "--help"])
    out = capsys.readouterr().out
    assert stop.value.code == 0
    assert f"example: heatstack {verb}" in out and "--verbose" in out and "--quiet" in out


@pytest.mark.parametrize(
    ("flag", "level"), [("--verbose", logging.INFO), ("--quiet", logging.ERROR), (None, logging.WARNING)]
)
def test_loudness_flags_set_the_log_level(flag, level):
    assert main(["materials", *([flag] if flag else [])]) == 0
    assert logging.getLogger("heatstack").level == level


def test_verbose_and_quiet_together_are_refused(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["materials", "--verbose", "--quiet"])
    assert stop.value.code == 2 and "--quiet" in capsys.readouterr().err
