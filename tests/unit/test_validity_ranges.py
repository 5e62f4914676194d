"""Ranges of validity (issue 14 item 5): every convection correlation knows the range of its source;
a run outside it carries a warning into its report; an input where extrapolation is meaningless
(a 1000 m/s wind, a ground speed of 100,000 kt, air at 0 K, an aircraft of 5e-324 kg) is an error
from ``check``, naming the key.

The ranges and their sources are listed in heatstack.operations.convection.VALIDITY_RANGES
(Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 7.38, 7.54, 9.26,
9.30-9.32, 9.34; Churchill and Bernstein 1977; Cobb and Saunders 1956; all from memory).
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest

from heatstack.cli import main
from heatstack.errors import HeatstackWarning
from heatstack.operations import convection
from heatstack.property_table import forget_warnings

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml"

#: Each correlation called with its group just inside and just outside its range.
CALLS = {
    "nu_vertical_plate": (lambda g: convection.nu_vertical_plate(g, 0.7), 1e12, 1.1e12),
    "nu_horizontal_cylinder": (lambda g: convection.nu_horizontal_cylinder(g, 0.7), 1e12, 1.1e12),
    "nu_horizontal_plate_upper": (lambda g: convection.nu_horizontal_plate(g, True), 1e11, 1.1e11),
    "nu_horizontal_plate_lower": (lambda g: convection.nu_horizontal_plate(g, False), 1e10, 1.1e10),
    "nu_cylinder_crossflow": (lambda g: convection.nu_cylinder_crossflow(g / 0.7, 0.7), 0.2, 0.19),
    "nu_cylinder_crossflow_reynolds": (lambda g: convection.nu_cylinder_crossflow(g, 0.7), 1e7, 1.1e7),
    "nu_rotating_disc": (lambda g: convection.nu_rotating_disc(g), 1e7, 1.1e7),
    "nu_flat_plate_forced": (lambda g: convection.nu_flat_plate_forced(g, 0.7), 1e8, 1.1e8),
}


def _warnings_of(call) -> list[str]:
    forget_warnings()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        call()
    return [str(w.message) for w in caught if issubclass(w.category, HeatstackWarning)]


def test_every_correlation_has_a_range_with_its_source():
    assert set(CALLS) == set(convection.VALIDITY_RANGES)
    for valid in convection.VALIDITY_RANGES.values():
        assert valid.low < valid.high and "from memory" in valid.source


@pytest.mark.parametrize("name", sorted(CALLS))
def test_a_correlation_warns_outside_its_range_and_not_inside(name):
    call, inside, outside = CALLS[name]
    assert _warnings_of(lambda: call(np.array([0.0, inside]))) == []
    (message,) = _warnings_of(lambda: call(np.array([inside, outside])))
    valid = convection.VALIDITY_RANGES[name]
    assert valid.correlation in message and valid.source in message and "extrapolated" in message


def test_no_flow_is_not_an_extrapolation():
    assert _warnings_of(lambda: convection.nu_cylinder_crossflow(np.zeros(3), 0.7)) == []


def _short_demo(folder: Path, *replacements: tuple[str, str]) -> Path:
    text = DEMO.read_text(encoding="utf-8")
    for old, new in (
        ('cell_size = "4 mm"', 'cell_size = "12 mm"'),
        ('duration = "3 h"', 'duration = "3 min"'),
        ('snapshot_times = ["1 min", "15 min", "45 min"]', 'snapshot_times = ["1 min"]'),
        ('cooling_below = "150 degC"', 'cooling_below = "30 degC"'),
        *replacements,
    ):
        assert old in text
        text = text.replace(old, new, 1)
    path = folder / "case.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.filterwarnings("default::heatstack.errors.HeatstackWarning")
def test_a_run_outside_a_correlation_range_carries_the_warning_into_its_report(tmp_path):
    # a wheel rolling at 10 micrometres a second: Re Pr of the cross-flow far below 0.2
    case = _short_demo(tmp_path, ('ground_speed = "68 kt"', 'ground_speed = "1e-5 m/s"'))
    assert main(["run", str(case), "--out", str(tmp_path / "out"), "--quiet", "--no-plots"]) == 0
    report = (tmp_path / "out" / "report.md").read_text(encoding="utf-8")
    assert "cylinder in cross-flow (Churchill and Bernstein): Re Pr = " in report
    assert "below its range of validity, Re Pr >= 0.2" in report and "eq. 7.54" in report


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ('wind_speed = "3 m/s"', 'wind_speed = "1000 m/s"', "duty.phases[1].environment"),
        ('ground_speed = "68 kt"', 'ground_speed = "100000 kt"', "duty.phases[0].environment"),
        ('reject_speed = "126 kt"', 'reject_speed = "300 kt"', "reject_speed"),
        ('headwind = "-5 kt"', 'headwind = "-500 kt"', "conditions.headwind"),
        ('air_temperature = "25 degC"', 'air_temperature = "5e-324 K"', "conditions.air_temperature"),
        ('pressure_altitude = "1500 ft"', 'pressure_altitude = "60000 ft"', "conditions.pressure_altitude"),
        ('mass = "70 t"', 'mass = "5e-324 kg"', "aircraft.mass"),
        ('mass = "70 t"', 'mass = "70e300 t"', "aircraft.mass"),
        ("braked_wheels = 4", "braked_wheels = 9223372036854775807", "aircraft.braked_wheels"),  # was MemoryError
        ('duration = "24 s"', "duration = 9223372036854775807", "duration"),  # was refused only by run
    ],
)
def test_an_input_where_extrapolation_is_meaningless_is_an_error_from_check(tmp_path, capsys, old, new, key):
    text = DEMO.read_text(encoding="utf-8")
    assert old in text
    case = tmp_path / "case.toml"
    case.write_text(text.replace(old, new, 1), encoding="utf-8")
    assert main(["check", str(case), "--out", str(tmp_path), "--force"]) == 2
    (line,) = capsys.readouterr().err.strip().splitlines()
    assert line.startswith("heatstack: error:") and key in line


@pytest.mark.filterwarnings("default::heatstack.errors.HeatstackWarning")
def test_check_warns_when_the_duty_overfills_the_heat_sink_and_not_for_the_demo(tmp_path, capsys):
    # without braked_wheels the whole stop (about 155 MJ) goes into one brake, whose 30 kg carbon
    # heat sink holds about 121 MJ up to the top of its specific-heat table: the run would fail
    text = DEMO.read_text(encoding="utf-8")
    assert "\nbraked_wheels = 4\n" in text
    case = tmp_path / "case.toml"
    case.write_text(text.replace("\nbraked_wheels = 4\n", "\n# braked_wheels = 4\n", 1), encoding="utf-8")
    assert main(["check", str(case), "--out", str(tmp_path), "--force"]) == 0
    err = capsys.readouterr().err
    assert "heatstack: warning: the duty puts 154.8 MJ into the modelled brake, more than its heat sink" in err
    assert main(["check", str(DEMO), "--out", str(tmp_path), "--force"]) == 0
    assert "heat sink can hold" not in capsys.readouterr().err
