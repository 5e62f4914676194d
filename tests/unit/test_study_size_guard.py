"""Study sizes are checked against memory before any array is made: an absurd ``cases`` is refused
with the estimate, in one line, exit 2."""

from __future__ import annotations

from pathlib import Path

import pytest

from heatstack.cli import main
from heatstack.errors import InputError
from heatstack.studies.description import MAX_STUDY_CASES, check_study_size, study_memory_estimate

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def _study(tmp_path: Path, cases: str) -> Path:
    (tmp_path / "demo_rto.toml").write_bytes((EXAMPLES / "demo_rto.toml").read_bytes())
    path = tmp_path / "study.toml"
    path.write_text((EXAMPLES / "demo_study.toml").read_text().replace("cases = 200", f"cases = {cases}"))
    return path


@pytest.mark.parametrize("cases", ["1_000_000_000", "18446744073709551616", "1000000000000000000"])
def test_a_study_with_absurd_cases_is_refused_with_the_estimate(tmp_path, capsys, cases):
    assert main(["study", str(_study(tmp_path, cases)), "--check"]) == 2
    (line,) = capsys.readouterr().err.strip().splitlines()
    assert line.startswith("heatstack: error: study.cases:") and "GiB" in line and "fewer cases" in line


def test_the_estimate_grows_with_cases_and_parameters():
    assert study_memory_estimate(2000, 5) == 2 * study_memory_estimate(1000, 5)
    assert study_memory_estimate(1000, 10) > study_memory_estimate(1000, 5)


def test_a_study_that_fits_in_memory_but_not_in_a_lifetime_is_refused():
    check_study_size(MAX_STUDY_CASES, 5)
    with pytest.raises(InputError, match="more than the 1,000,000"):
        check_study_size(MAX_STUDY_CASES + 1, 5)


def test_a_small_memory_refuses_a_study_a_large_one_takes():
    need = study_memory_estimate(10_000, 5)
    check_study_size(10_000, 5, memory=need)
    with pytest.raises(InputError, match="GiB for their tables"):
        check_study_size(10_000, 5, memory=need - 1)


def test_study_check_plans_the_demo_study_and_runs_nothing(tmp_path, capsys):
    assert main(["study", str(_study(tmp_path, "200")), "--check", "--store", str(tmp_path / "store")]) == 0
    assert "200 cases" in capsys.readouterr().out
    assert not (tmp_path / "store").exists()


@pytest.mark.parametrize(
    ("old", "new", "words"),
    [
        ("seed = 2026", "seed = 18446744073709551616", "study.seed"),  # was a store TypeError (object dtype)
        ('accuracy = "0.5 K"', 'accuracy = "10e-30 K"', "study.accuracy"),  # a hang (as target_change was)
    ],
)
def test_a_seed_or_target_change_no_study_can_use_is_refused_by_check(tmp_path, capsys, old, new, words):
    path = _study(tmp_path, "200")
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new))
    assert main(["study", str(path), "--check"]) == 2
    (line,) = capsys.readouterr().err.strip().splitlines()
    assert line.startswith("heatstack: error:") and words in line


def test_an_error_quoting_a_nested_array_is_still_one_line(tmp_path, capsys):
    path = _study(tmp_path, "200")
    path.write_text(path.read_text().replace('std = "1.5 K"', "std = [[1, 2], [3, 4]]"))
    assert main(["study", str(path), "--check"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1
