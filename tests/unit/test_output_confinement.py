"""Writes stay where the user said: output names are plain file names in the output folder, and a
file heatstack did not write is never replaced without ``--force``."""

from __future__ import annotations

from pathlib import Path

import pytest

from heatstack.atomic import remove_stale_temp_files, write_file_atomically
from heatstack.case import parse_case
from heatstack.cli import main
from heatstack.errors import InputError, ResultFileError
from heatstack.own_files import is_own_file, replacing_own_files_only

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]

HOSTILE_NAMES = [
    "../escape.h5",
    "../../../elsewhere/x.h5",
    "/tmp/absolute.h5",
    "sub/inner.h5",
    "..",
    ".",
    "",
    "a\\..\\b.h5",
    "nul\x00byte.h5",
    "C:/windows/x.h5",
]


def _with_file(name: str) -> str:
    escaped = name.replace("\\", "\\\\").replace('"', '\\"').replace("\x00", "\\u0000")
    return SMALL + f'\n[output]\nfile = "{escaped}"\n'


@pytest.mark.parametrize("name", HOSTILE_NAMES)
def test_an_output_name_with_a_folder_part_is_an_input_error_naming_the_key(name):
    with pytest.raises(InputError, match=r"output\.file"):
        parse_case(_with_file(name))


@pytest.mark.parametrize("name", HOSTILE_NAMES)
def test_no_case_file_writes_outside_its_output_folder(tmp_path, name, capsys):
    out = tmp_path / "a" / "b" / "out"
    out.mkdir(parents=True)
    case = tmp_path / "a" / "b" / "case.toml"
    case.write_text(_with_file(name))
    before = {p for p in tmp_path.rglob("*")}
    assert main(["run", str(case), "--out", str(out), "--quiet", "--no-plots"]) == 2
    assert "output.file" in capsys.readouterr().err
    assert {p for p in tmp_path.rglob("*")} == before


def test_a_link_named_as_the_output_file_cannot_lead_outside_the_folder(tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    elsewhere = tmp_path / "elsewhere.h5"
    (out / "results.h5").symlink_to(elsewhere)
    case = tmp_path / "case.toml"
    case.write_text(SMALL)
    assert main(["run", str(case), "--out", str(out), "--quiet", "--no-plots"]) == 2
    assert "outside the output folder" in capsys.readouterr().err
    assert not elsewhere.exists()


def test_a_foreign_file_at_the_results_name_is_left_alone_before_the_run(tmp_path, capsys):
    notes = tmp_path / "notes.txt"
    notes.write_text("my own notes\n")
    case = tmp_path / "case.toml"
    case.write_text(SMALL + '\n[output]\nfile = "notes.txt"\n')
    assert main(["run", str(case), "--quiet", "--no-plots"]) == 2
    err = capsys.readouterr().err
    assert "did not write" in err and "--force" in err
    assert notes.read_text() == "my own notes\n"
    assert not (tmp_path / "report.html").exists()  # refused before the run, nothing written


def test_force_replaces_a_foreign_file_and_a_rerun_replaces_its_own(tmp_path):
    case = tmp_path / "case.toml"
    case.write_text(SMALL)
    (tmp_path / "report.md").write_text("someone else's report\n")
    assert main(["run", str(case), "--quiet"]) == 2
    assert main(["run", str(case), "--quiet", "--force"]) == 0
    written = ["results.h5", "report.md", "report.html", "case-histories.png"]
    assert all(is_own_file(tmp_path / name) for name in written)
    assert main(["run", str(case), "--quiet"]) == 0  # its own files are replaced without --force


def test_check_draws_its_layout_into_out_and_leaves_a_foreign_picture_alone(tmp_path, capsys):
    case = tmp_path / "case.toml"
    case.write_text(SMALL)
    foreign = tmp_path / "case.layout.png"
    foreign.write_bytes(b"\x89PNG\r\n\x1a\nsomeone else's picture")
    assert main(["check", str(case)]) == 2
    assert "did not write" in capsys.readouterr().err
    assert foreign.read_bytes().endswith(b"someone else's picture")
    out = tmp_path / "pictures"
    assert main(["check", str(case), "--out", str(out)]) == 0
    assert is_own_file(out / "case.layout.png")
    assert main(["check", str(case), "--out", str(out)]) == 0  # its own picture is redrawn


def test_inside_the_guard_a_foreign_file_is_refused_and_left_unchanged(tmp_path):
    target = tmp_path / "data.csv"
    target.write_text("a,b\n1,2\n")
    with replacing_own_files_only(), pytest.raises(ResultFileError, match="did not write"):
        write_file_atomically(target, lambda temp: temp.write_text("x"))
    assert target.read_text() == "a,b\n1,2\n"
    with replacing_own_files_only(force=True):
        write_file_atomically(target, lambda temp: temp.write_text("x"))
    assert target.read_text() == "x"


def test_a_stale_temporary_file_of_our_pattern_is_removed_by_the_next_write(tmp_path):
    stale = tmp_path / ".results.h5.0123456789ab.tmp"
    stale.write_bytes(b"half a file")
    other = tmp_path / ".notes.tmp"  # not our pattern: kept
    other.write_text("x")
    import os

    os.utime(stale, (1e9, 1e9))
    os.utime(other, (1e9, 1e9))
    write_file_atomically(tmp_path / "fresh.txt", lambda temp: temp.write_text("y"))
    assert not stale.exists() and other.exists()
    fresh = tmp_path / ".x.h5.abcdefabcdef.tmp"
    fresh.write_text("a write of a later process, still going")
    assert remove_stale_temp_files(tmp_path) == []
    assert fresh.exists()
