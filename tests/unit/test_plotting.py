"""Figures are written for a real (short, invented) run of the reference wheel and brake."""

from __future__ import annotations

import subprocess
import sys

import matplotlib
import pytest

from heatstack import FixedConvection, Model, Phase, PowerHistory, Schedule, SolverOptions
from heatstack.answers.fuse_plugs import FusePlug, plug_temperature
from heatstack.builders import build_wheel_brake
from heatstack.errors import InputError, ResultFileError
from heatstack.plotting import (
    CAPTION,
    SERIES_STYLES,
    Threshold,
    plot_field,
    plot_histories,
    plot_layout,
    plot_sensor_offset,
    plot_why_the_gauge_lags,
)
from heatstack.plotting.common import OKABE_ITO, style_for

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


@pytest.fixture(scope="module")
def run():
    """An invented 20 s stop of 20 MJ peak-power shape, then parked cooling to 30 min."""
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.008)
    air = {"*": FixedConvection(10.0, 288.15)}
    schedule = Schedule(
        PowerHistory([0.0, 20.0], [2e6, 0.0]),
        [Phase("stop", 0.0, 20.0, air, clamped=True), Phase("parked", 20.0, 1800.0, air)],
    )
    result = model.run(schedule, 288.15, SolverOptions(snapshot_times=(600.0,)))
    return built, model, result


def _draw(kind, run, path, **kwargs):
    built, model, result = run
    if kind == "histories":
        return plot_histories(result, path, **kwargs)
    if kind == "field":
        return plot_field(result, path, 600.0, **kwargs)
    if kind == "offset":
        return plot_sensor_offset(result, path, **kwargs)
    if kind == "layout":
        return plot_layout(built.assembly, path, grid=model.grid)
    return plot_why_the_gauge_lags(result, path, **kwargs)


KINDS = ("histories", "field", "offset", "layout", "gauge")


@pytest.mark.parametrize("kind", KINDS)
def test_each_figure_is_written_as_png_and_svg(kind, run, tmp_path):
    png = _draw(kind, run, tmp_path / f"{kind}.png")
    svg = _draw(kind, run, tmp_path / f"{kind}.svg")
    assert png == tmp_path / f"{kind}.png" and svg == tmp_path / f"{kind}.svg"
    assert png.read_bytes()[:8] == PNG_SIGNATURE and png.stat().st_size > 10_000
    text = svg.read_text(encoding="utf-8")
    assert "<svg" in text and text.rstrip().endswith("</svg>")
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted([png.name, svg.name])  # no temp files left


@pytest.mark.parametrize("kind", KINDS)
def test_every_figure_carries_the_caption(kind, run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):  # keep text as text to search it
        svg = _draw(kind, run, tmp_path / "figure.svg")
    assert CAPTION.split(".")[0] in svg.read_text(encoding="utf-8")


@pytest.mark.parametrize(("unit", "symbol"), [("degC", "°C"), ("degF", "°F"), ("K", "[K]")])
def test_temperature_unit_is_shown_on_the_axis(unit, symbol, run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_histories(run[2], tmp_path / "h.svg", unit=unit).read_text(encoding="utf-8")
    assert symbol in text and "Time [min]" in text


def test_histories_default_names_skip_surface_series(run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_histories(run[2], tmp_path / "h.svg").read_text(encoding="utf-8")
    assert "fuse plug 1" in text and "heat-sink mean" in text and "rim bore surface" not in text


def test_a_fuse_plug_is_drawn_as_its_own_lagged_temperature_with_its_own_peak(run, tmp_path):
    result = run[2]
    plug = FusePlug("fuse plug 1", 450.15, 5.0, 900.0)  # a slow plug, invented
    own = plug_temperature(result, plug)
    assert own.max() < result.readings[plug.name].max() - 2.0  # the lag shows: the rim's peak is another number
    for draw in (plot_histories, plot_why_the_gauge_lags):
        with matplotlib.rc_context({"svg.fonttype": "none"}):
            text = draw(result, tmp_path / "h.svg", plugs=[plug]).read_text(encoding="utf-8")
        assert f"{plug.name} itself (lag {plug.time_constant:.0f} s)" in text
        assert f"plug {own.max() - 273.15:.0f} °C at" in text
        assert ">fuse plug 1<" not in text  # never a bare plug name on a rim curve


def test_a_fuse_plug_probe_without_its_plug_is_labelled_the_rim_at_its_seat(run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_histories(run[2], tmp_path / "h.svg").read_text(encoding="utf-8")
    assert "rim at the seat of fuse plug 1" in text and "itself" not in text


def test_a_plug_whose_probe_the_result_lacks_is_an_input_error(run, tmp_path):
    stray = FusePlug("fuse plug 9", 450.0, 5.0)
    with pytest.raises(InputError, match="fuse plug 9"):
        plot_histories(run[2], tmp_path / "h.png", plugs=[stray])
    assert list(tmp_path.iterdir()) == []


def test_an_existing_figure_is_replaced(run, tmp_path):
    target = tmp_path / "h.png"
    target.write_bytes(b"old")
    plot_histories(run[2], target, names=["sensor"])
    assert target.read_bytes()[:8] == PNG_SIGNATURE


def test_unknown_probe_or_series_name_is_an_input_error(run, tmp_path):
    result = run[2]
    with pytest.raises(InputError, match="thermocouple 9"):
        plot_histories(result, tmp_path / "h.png", names=["sensor", "thermocouple 9"])
    with pytest.raises(InputError, match="gauge"):
        plot_sensor_offset(result, tmp_path / "o.png", sensor="gauge")
    with pytest.raises(InputError, match="gauge"):
        plot_why_the_gauge_lags(result, tmp_path / "g.png", sensor="gauge")
    with pytest.raises(InputError, match="nose wheel"):
        plot_why_the_gauge_lags(result, tmp_path / "g.png", names=["nose wheel"])
    assert list(tmp_path.iterdir()) == []


def test_missing_folder_is_a_result_file_error(run, tmp_path):
    built, _, result = run
    missing = tmp_path / "no such folder"
    with pytest.raises(ResultFileError, match="no such folder"):
        plot_histories(result, missing / "h.png")
    with pytest.raises(ResultFileError, match="no such folder"):
        plot_field(result, missing / "f.svg", 600.0)
    with pytest.raises(ResultFileError, match="no such folder"):
        plot_layout(built.assembly, missing / "l.png")


def test_time_outside_the_record_is_an_input_error(run, tmp_path):
    with pytest.raises(InputError, match="outside the record"):
        plot_field(run[2], tmp_path / "f.png", 3600.0)
    with pytest.raises(InputError, match="outside the record"):
        plot_field(run[2], tmp_path / "f.png", -1.0)


def test_field_takes_the_nearest_snapshot(run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_field(run[2], tmp_path / "f.svg", 650.0).read_text(encoding="utf-8")
    assert "10.0 min" in text and "nearest stored snapshot" in text


def test_bad_unit_suffix_or_argument_type_is_an_input_error(run, tmp_path):
    built, _, result = run
    with pytest.raises(InputError, match="degR"):
        plot_histories(result, tmp_path / "h.png", unit="degR")
    with pytest.raises(InputError, match=r"\.pdf"):
        plot_histories(result, tmp_path / "h.pdf")
    with pytest.raises(InputError, match="Assembly"):
        plot_layout(result, tmp_path / "l.png")
    with pytest.raises(InputError, match="Grid"):
        plot_layout(built.assembly, tmp_path / "l.png", grid="fine")


def test_layout_without_grid(run, tmp_path):
    path = plot_layout(run[0].assembly, tmp_path / "layout.png")
    assert path.read_bytes()[:8] == PNG_SIGNATURE


def test_plotting_leaves_pyplot_alone():
    code = "import sys, heatstack.plotting; sys.exit('matplotlib.pyplot' in sys.modules)"
    assert subprocess.run([sys.executable, "-c", code], check=False).returncode == 0


def test_a_series_kind_keeps_one_palette_colour_and_its_variants_differ_by_dash():
    plug_1, plug_2 = style_for("fuse plug 1"), style_for("fuse plug 2")
    assert plug_1[0] == plug_2[0] and plug_1[1] != plug_2[1]
    assert style_for("sensor") == style_for("sensor")  # no state: the same in every figure and run
    assert style_for("heat_sink_mean")[0] != style_for("sensor")[0]
    palette = set(OKABE_ITO.values())
    for kind in ("heat_sink_mean", "heat_sink_max", "wheel_max", "sensor_reading", "fuse_plug", "bead_seat"):
        assert SERIES_STYLES[kind].colour in palette


def test_thresholds_are_drawn_and_labelled_once_per_value(run, tmp_path):
    lines = [Threshold("fuse plug 1", 450.15, "release"), Threshold("fuse plug 2", 450.15, "release")]
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_histories(run[2], tmp_path / "h.svg", thresholds=lines).read_text(encoding="utf-8")
    assert text.count("fuse plug 1, 2 release 177 °C") == 1


def test_a_threshold_of_unknown_kind_is_an_input_error():
    with pytest.raises(InputError, match="fuse plug 1"):
        Threshold("fuse plug 1", 450.0, "melt")


def test_a_short_stop_gets_its_own_expanded_time_panel(run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_why_the_gauge_lags(run[2], tmp_path / "g.svg").read_text(encoding="utf-8")
    assert "braking, expanded" in text and "end of braking" in text


def test_field_maps_share_the_run_scale_and_name_the_parts(run, tmp_path):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_field(run[2], tmp_path / "f.svg", 600.0).read_text(encoding="utf-8")
    assert "one scale for every snapshot of the run" in text and "torque tube" in text


def test_every_part_is_named_on_the_field_map(run, tmp_path):
    """A part too small for its name inside (the thin heat shield) is named beside it, never left out."""
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        text = plot_field(run[2], tmp_path / "f.svg", 600.0).read_text(encoding="utf-8")
    missing = [name for name in run[2].part_names if not all(word in text for word in name.split())]
    assert not missing


def test_crowded_peak_labels_get_leaders_that_do_not_cross():
    """Eight anchors packed on a band of curves: every label needs a leader, and no two leaders cross."""
    import numpy as np

    from heatstack.plotting.common import new_figure
    from heatstack.plotting.labels import LabelPlacer

    fig = new_figure(6.0, 4.0)
    ax = fig.add_subplot()
    x = np.linspace(0.0, 10.0, 200)
    for offset in np.linspace(-0.3, 0.3, 7):
        ax.plot(x, 5.0 + offset + 0.0 * x, color="0.5")
    ax.set_xlim(0, 10)
    ax.set_ylim(0, 10)
    anchors = [(4.0 + 0.25 * k, 5.0 + 0.08 * (-1) ** k) for k in range(8)]
    placer = LabelPlacer(fig, ax)
    placer.block_points(np.array(anchors))
    labels = [placer.place(xy, f"peak {k} at {xy[0]:.2f} min") for k, xy in enumerate(anchors)]
    fig.draw_without_rendering()
    segments = []
    for label, xy in zip(labels, anchors, strict=True):
        if label.arrow_patch is None:
            continue
        start = ax.transData.transform(xy)
        segments.append((start, start + np.array(label.xyann) * fig.dpi / 72.0))

    def turn(a, b, c):
        return (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])

    crossings = [
        (i, j)
        for i, (p1, p2) in enumerate(segments)
        for j, (q1, q2) in enumerate(segments[:i])
        if turn(p1, p2, q1) * turn(p1, p2, q2) < 0 and turn(q1, q2, p1) * turn(q1, q2, p2) < 0
    ]
    assert len(segments) >= 4 and not crossings
