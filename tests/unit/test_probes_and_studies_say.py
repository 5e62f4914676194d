"""Probes and studies that say what they did: a probe on a part boundary names the candidate parts,
and a study whose cases all failed exits 1 saying why the first ones failed."""

from __future__ import annotations

from pathlib import Path

import pytest

from heatstack.assembly import Assembly
from heatstack.case import parse_case
from heatstack.cli import main
from heatstack.errors import GeometryError, InputError
from heatstack.geometry import Part, Probe

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]
PARTS = [Part("rotor", "plain", 0.1, 0.2, 0.0, 0.01, "rotor"), Part("stator", "plain", 0.1, 0.2, 0.01, 0.02, "stator")]


def test_a_probe_on_the_boundary_of_two_parts_names_both_and_asks_for_part():
    with pytest.raises(GeometryError, match=r"boundary of parts 'rotor' and 'stator'.*part ="):
        Assembly(PARTS, probes=[Probe("face", 0.15, 0.01)])


def test_a_probe_on_a_boundary_with_its_part_given_is_read_in_that_part():
    assembly = Assembly(PARTS, probes=[Probe("face", 0.15, 0.01, part="stator")])
    assert assembly.owner_of(assembly.probes[0]).name == "stator"


def test_a_case_probe_on_a_boundary_is_an_input_error_before_any_solve():
    text = SMALL.replace('z = "5 mm"', 'z = "10 mm"', 1)
    with pytest.raises(InputError, match="'rotor' and 'stator'"):
        parse_case(text)
    assert parse_case(text.replace('z = "10 mm"', 'z = "10 mm"\npart = "rotor"', 1))


STUDY = """
[study]
title = "every case fails (test)"
base_case = "base.toml"
method = "grid"
accuracy = "0.5 K"

[[study.parameters]]
path = "duty.phases[0].events[0].energy"
name = "absurd energy"
values = ["1e300 J", "1e299 J"]
"""


def test_a_study_whose_cases_all_failed_exits_1_and_says_why(tmp_path, capsys):
    (tmp_path / "base.toml").write_text(SMALL)
    study = tmp_path / "study.toml"
    study.write_text(STUDY)
    assert main(["study", str(study), "--workers", "1", "--quiet"]) == 1
    err = capsys.readouterr().err
    assert "all 2 cases of the study failed" in err and "case 0:" in err
    assert "Traceback" not in err
