"""The report tells one story: one peak per fuse plug, end of braking at the stop that loaded
the brake, the tyre's first limit crossing at the case's own ambient pressure, the run's
warnings, full-precision SI data, and the caution on every verb that shows results."""

from __future__ import annotations

import dataclasses
import html
import json
import math
from pathlib import Path

import pytest

from heatstack.answers.tyre import default_outer_conductance
from heatstack.case import parse_case, run_case
from heatstack.cli import main
from heatstack.errors import InputError
from heatstack.geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN, RUBBING_FACE_MAX
from heatstack.report import HOTTEST_CELL_NOTE, PLUG_NOTE, RUBBING_SURFACE_NOTE, build_report, format_report
from heatstack.report_html import html_report

SMALL = (Path(__file__).parent / "test_case.py").read_text().split('SMALL = """', 1)[1].split('"""', 1)[0]
DEMO = (Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml").read_text()

# A stop, a turnaround, then a departure whose last braking is the gear retraction after lift-off.
DEPARTURE = SMALL.replace(
    """[[duty.phases]]
name = "parked"
duration = "10 min"
""",
    """[[duty.phases]]
name = "parked"
duration = "10 min"
[[duty.phases]]
name = "take-off roll"
duration = "30 s"
[[duty.phases.events]]
kind = "gear_retraction"
moment_of_inertia = "10 kg*m^2"
lift_off_speed = "80 m/s"
tyre_rolling_radius = "0.5 m"
spin_down_time = "5 s"
start = "20 s"
[[duty.phases]]
name = "climb"
duration = "10 min"
""",
)


def _named(text: str, event: str) -> str:
    """The case with ``[output] reference_event`` set."""
    return text.replace("[output.limits]", f'[output]\nreference_event = "{event}"\n\n[output.limits]', 1)


INTERNAL_NAMES = ("plug_margin_min", "limit_margin:", "plug_peak:", "plug_margin:")


@pytest.fixture(scope="module")
def demo_run():
    """The demonstration case on a coarser grid (same story, faster)."""
    case = parse_case(DEMO.replace('cell_size = "4 mm"', 'cell_size = "8 mm"'), "demo (coarse)")
    return case, run_case(case)


@pytest.fixture(scope="module")
def demo_report(demo_run):
    case, result = demo_run
    return build_report(result, case.report_settings())


@pytest.fixture(scope="module")
def departure_run():
    case = parse_case(DEPARTURE, "departure")
    return case, run_case(case)


# ---------------------------------------------------------------------------- end of braking


def test_gear_retraction_after_the_stop_does_not_move_the_end_of_braking():
    case = parse_case(DEPARTURE, "departure")
    # the stop ends at 20 s; the gear retraction at 20 s + 600 s + 25 s
    assert case.duty.end_of_braking() == pytest.approx(20.0)
    assert case.duty.power().end_of_heating == pytest.approx(645.0, abs=0.01)


def test_no_delay_is_negative_on_a_departure_ending_in_gear_retraction(departure_run):
    case, result = departure_run
    assert result.end_of_braking == pytest.approx(20.0)
    assert result.end_of_heating > 600.0
    report = build_report(result, case.report_settings())
    for row in report["peaks"]:
        assert row["during_braking"] or row["delay_after_braking_s"] >= 0.0, row
    assert report["sensor"]["delay_after_braking_s"] > 0.0
    assert report["end_of_braking_s"] == pytest.approx(20.0)


def test_a_case_may_name_the_reference_event():
    case = parse_case(_named(DEPARTURE, "gear retraction"), "departure")
    assert case.output.reference_event == "gear retraction"
    assert case.duty.end_of_braking(case.output.reference_event) == pytest.approx(645.0)


def test_an_unknown_reference_event_is_named_with_its_key():
    with pytest.raises(InputError, match=r"output\.reference_event 'landing'.*'stop', 'gear retraction'"):
        parse_case(_named(DEPARTURE, "landing"), "departure")


def test_the_end_of_braking_survives_the_results_file(departure_run, tmp_path):
    from heatstack.resultfile import write_result
    from heatstack.resultread import read_result

    _, result = departure_run
    path = write_result(result, tmp_path / "departure.h5")
    assert read_result(path).end_of_braking == result.end_of_braking


# ---------------------------------------------------------------------------- one peak per plug


def test_a_fuse_plug_has_one_peak_in_every_section(demo_report):
    plugs = {row["name"]: row for row in demo_report["fuse_plugs"]}
    assert set(plugs) == {"fuse plug 1", "fuse plug 2"}
    for limit in demo_report["limits"]:
        if limit["name"] in plugs:
            assert limit["assessed"] == "fuse plug temperature"
            assert limit["peak_K"] == plugs[limit["name"]]["peak_K"]
    labels = [row["label"] for row in demo_report["peaks"]]
    assert "fuse plug 1" not in labels and "rim at the seat of fuse plug 1" in labels


def test_the_plug_lags_the_rim_at_its_seat_and_the_report_says_why(demo_report):
    for row in demo_report["fuse_plugs"]:
        assert row["peak_K"] <= row["rim_at_seat_peak_K"]
        assert row["time_of_peak_s"] >= row["rim_at_seat_time_of_peak_s"]
    text = format_report(demo_report, "text")
    assert PLUG_NOTE in text


def test_the_hottest_cell_and_the_rubbing_surface_are_explained_under_the_peaks(demo_run, demo_report):
    # The cell next to a rubbing face reads below the friction surface by about q dz / (2 k); the
    # rubbing surface series adds it back (tests/validation/test_analytic_solutions.py checks both
    # against Carslaw & Jaeger's constant-flux surface rise). Every form says so under the peaks.
    names = [row["name"] for row in demo_report["peaks"]]
    assert names.index(HEAT_SINK_MAX) + 1 == names.index(RUBBING_FACE_MAX)
    rows = {row["name"]: row for row in demo_report["peaks"]}
    assert rows[RUBBING_FACE_MAX]["peak_K"] > rows[HEAT_SINK_MAX]["peak_K"]
    assert rows[RUBBING_FACE_MAX]["label"] == "heat sink, hottest rubbing surface"
    both = f"{HOTTEST_CELL_NOTE} {RUBBING_SURFACE_NOTE}"
    for form in ("text", "markdown"):
        text = format_report(demo_report, form)
        assert text.index(both) < text.index("Why the gauge lags")
    assert json.loads(format_report(demo_report, "json"))["peak_note"] == both
    assert html.escape(both) in html_report(demo_report)
    case, result = demo_run
    settings = dataclasses.replace(case.report_settings(), cooling_below=None)  # the cooling time reads the mean
    # no heat-sink parts: neither heat-sink series, so no hottest cell to explain
    series = {name: values for name, values in result.series.items() if name not in (HEAT_SINK_MAX, HEAT_SINK_MEAN)}
    without = build_report(dataclasses.replace(result, series=series), settings)
    assert without["peak_note"] == RUBBING_SURFACE_NOTE
    # and no rubbing faces either: nothing to explain
    series.pop(RUBBING_FACE_MAX)
    neither = build_report(dataclasses.replace(result, series=series), settings)
    assert neither["peak_note"] == "" and HOTTEST_CELL_NOTE not in format_report(neither, "text")


def test_no_internal_name_reaches_any_report_form(demo_report):
    forms = [format_report(demo_report, fmt) for fmt in ("text", "markdown", "json")]
    forms.append(html_report(demo_report))
    for form in forms:
        for name in INTERNAL_NAMES:
            assert name not in form


# ---------------------------------------------------------------------------- tyre


def test_the_tyre_limit_first_reached_and_left_is_reported(demo_report):
    tyre = demo_report["tyre"]
    assert tyre["limit_exceeded"]
    assert 0.0 < tyre["limit_first_reached_s"] < tyre["time_of_peak_s"] < tyre["back_below_limit_s"]
    assert "is first reached at" in format_report(demo_report, "text")


def test_gauge_pressures_are_read_against_the_case_ambient(demo_run):
    high = DEMO.replace(
        'ambient_temperature = "25 degC"\n', 'ambient_temperature = "25 degC"\nambient_pressure = "756 hPa"\n', 1
    )
    case = parse_case(high, "demo at altitude")
    assert case.tyre.ambient_pressure == pytest.approx(75600.0)
    _, result = demo_run
    report = build_report(result, case.report_settings())
    assert report["tyre"]["ambient_pressure_Pa"] == pytest.approx(75600.0)
    assert report["tyre"]["cold_pressure_Pa_gauge"] == pytest.approx(13.5e5)
    assert "756 hPa" in format_report(report, "text")


def test_default_outer_conductance_hand_value():
    # Hand: torus with R = 3a holding 0.09 m^3: a = (0.09 / (6 pi^2))^(1/3) = 0.11497 m,
    # A = 12 pi^2 a^2 = 1.5655 m^2; G = 6 W/(m^2 K) * A = 9.393 W/K.
    assert default_outer_conductance(0.09) == pytest.approx(9.393, rel=1e-3)


def test_a_tyre_without_outer_conductance_gets_the_estimate(demo_run):
    text = DEMO.replace('outer_conductance = "4 W/K"\n', "")
    case = parse_case(text, "demo")
    assert case.tyre.outer_conductance is None
    _, result = demo_run
    tyre = build_report(result, case.report_settings())["tyre"]
    assert tyre["outer_conductance_estimated"]
    assert tyre["outer_conductance_W_per_K"] == pytest.approx(default_outer_conductance(0.09))


# ---------------------------------------------------------------------------- data and warnings


def _unnamed_numbers(node, key=""):
    """Keys of numeric leaves that do not name a unit."""
    units = ("_K", "_s", "_J", "_Pa", "_Pa_gauge", "_W_per_K", "_kg", "_m", "_count")
    if isinstance(node, dict):
        return [bad for k, v in node.items() for bad in _unnamed_numbers(v, k)]
    if isinstance(node, list):
        return [bad for v in node for bad in _unnamed_numbers(v, key)]
    if isinstance(node, float | int) and not isinstance(node, bool):
        return [] if key.endswith(units) or key == "relative_closure_error" else [key]
    return []


def test_json_report_is_full_precision_si_with_units_in_the_keys(demo_run, demo_report):
    _, result = demo_run
    data = json.loads(format_report(demo_report, "json"))
    sensor = next(row for row in data["peaks"] if row["name"] == "sensor")
    assert sensor["peak_K"] == result.peak("sensor")[0]  # exact, not display-rounded
    assert data["energy"]["heat_in_J"] == float(result.ledger.heat_in[-1])
    assert _unnamed_numbers(data) == []
    assert all(math.isfinite(v) for v in (sensor["peak_K"], sensor["time_of_peak_s"]))


def test_a_material_leaving_its_table_is_in_the_report():
    # the table starts at 300 K; the case starts at 293.15 K, so the clamp warns
    text = SMALL.replace('extrapolation = "error"', 'extrapolation = "clamp"').replace(
        "table = [[200.0, 900.0], [2000.0, 900.0]]", "table = [[300.0, 900.0], [2000.0, 900.0]]"
    )
    case = parse_case(text, "clamped")
    with pytest.warns(Warning):
        result = run_case(case)
    report = build_report(result, case.report_settings())
    assert any("plain" in w for w in report["warnings"]), report["warnings"]
    assert "Warnings that bear on these answers" in format_report(report, "markdown")
    assert html.escape(report["warnings"][0]) in html_report(report)


def test_a_run_again_in_the_same_process_still_reports_its_warning():
    text = SMALL.replace('extrapolation = "error"', 'extrapolation = "clamp"').replace(
        "table = [[200.0, 900.0], [2000.0, 900.0]]", "table = [[300.0, 900.0], [2000.0, 900.0]]"
    )
    case = parse_case(text, "clamped")
    with pytest.warns(Warning):
        run_case(case)
    with pytest.warns(Warning):
        second = run_case(case)
    assert second.metadata["warnings"]


def test_settings_with_a_replaced_tyre_still_round_trip():
    case = parse_case(DEMO, "demo")
    settings = case.report_settings()
    again = type(settings).from_mapping(json.loads(json.dumps(settings.to_mapping())))
    assert again.tyre == settings.tyre and dataclasses.asdict(again) == dataclasses.asdict(settings)


# ---------------------------------------------------------------------------- caution on every verb


def test_materials_and_check_carry_the_caution(tmp_path, capsys):
    assert main(["materials"]) == 0
    assert "not certified data" in capsys.readouterr().out
    case = tmp_path / "small.toml"
    case.write_text(SMALL)
    assert main(["check", str(case)]) == 0
    assert "local regulations" in capsys.readouterr().out


def test_the_report_gives_each_stops_energy_accounts(demo_run, demo_report):
    # the demo's rejected take-off comes from the equation of motion: its accounts reach every report, and the
    # energy its modelled brake takes is what the thermal model was given (the ledger's heat in)
    _, result = demo_run
    (stop,) = demo_report["stops"]
    assert stop["stopping_distance_m"] > 0 and stop["stopping_time_s"] > 0
    assert abs(stop["closure_J"]) <= 1e-9 * stop["kinetic_energy_removed_J"]
    assert stop["energy_per_brake_J"][0] == pytest.approx(float(result.ledger.heat_in[-1]), rel=1e-6)
    text = format_report(demo_report, "text")
    assert "where the kinetic energy went" in text and "reverse thrust" in text
    assert json.loads(format_report(demo_report, "json"))["stops"][0]["brakes_J"] == stop["brakes_J"]


def test_gauge_pressures_default_to_the_airfield_air_of_the_stop():
    # the demo stop states pressure_altitude = 1500 ft (457.2 m) and no ambient_pressure:
    # ISO 2533 troposphere p = 101325 (1 - 2.25577e-5 h)^5.25588 Pa (from memory) = 95 952 Pa
    case = parse_case(DEMO, "demo")
    assert case.tyre.ambient_pressure == pytest.approx(95952.0, abs=20.0)
    # a tyre-level value wins over the airfield's
    given = DEMO.replace('cold_pressure = "13.5 bar"', 'ambient_pressure = "1000 hPa"\ncold_pressure = "13.5 bar"', 1)
    assert parse_case(given, "demo, tyre ambient").tyre.ambient_pressure == pytest.approx(1.0e5)
    # with no stated altitude the standard sea-level pressure is kept
    level = DEMO.replace('pressure_altitude = "1500 ft"\n', "", 1)
    assert parse_case(level, "demo at sea level").tyre.ambient_pressure == pytest.approx(101325.0)


# ---------------------------------------------------------------------------- how it was computed


def test_every_report_form_says_how_the_run_was_computed(demo_run, demo_report, tmp_path):
    from heatstack.resultfile import write_result
    from heatstack.resultread import read_result

    case, result = demo_run
    numerics = demo_report["numerics"]
    assert numerics["cell_count"] == case.build_model().n_cells
    assert numerics["scheme"] == "bdf2" and numerics["accuracy_K"] == case.solver.accuracy
    assert numerics["step_count"] == result.metadata["solver"]["steps"] > 0
    assert numerics["radial_width_m"][1] <= 0.008 + 1e-12 and numerics["axial_width_m"][1] <= 0.008 + 1e-12
    sentence = f"{numerics['cell_count']} cells"
    for text in (format_report(demo_report), format_report(demo_report, "markdown"), html_report(demo_report)):
        assert "How this was computed" in text and sentence in text
        assert f"accuracy {case.solver.accuracy:g} K" in text and f"{numerics['step_count']} steps" in text
    # and it survives the results file, from which `heatstack report` rebuilds the report
    again = build_report(read_result(write_result(result, tmp_path / "demo.h5")), case.report_settings())
    assert again["numerics"] == numerics


def test_a_fixed_step_run_is_reported_as_such():
    from heatstack.report_text import numerics_sentence

    fixed = {"cell_count": 9, "scheme": "euler", "fixed_step_s": 2.0, "accuracy_K": None, "target_change_K": None}
    widths = {"radial_width_m": [0.001, 0.002], "axial_width_m": [0.001, 0.001]}
    assert "backward Euler at fixed steps of 2 s" in numerics_sentence({**fixed, **widths})
    controlled = {**fixed, "fixed_step_s": None, "target_change_K": 4.0}
    assert "steps aimed at a change of 4 K" in numerics_sentence({**controlled, **widths})
