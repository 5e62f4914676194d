"""The report of a run: peaks and delays, sensor against the true heat sink, fuse plugs,
tyre bead and pressure, cooling time, the energy ledger and the warnings of the run.

:func:`build_report` gives the report as data: every value in SI at full precision,
each key naming its unit (``peak_K``, ``time_of_peak_s``, ``heat_in_J``,
``peak_pressure_Pa_gauge``). That mapping is the JSON report. :func:`format_report`
renders it as text or Markdown for reading, with temperatures in degC (default), degF
or K and times in minutes (the tables and sentences of :mod:`heatstack.report_text`);
:mod:`heatstack.report_html` renders it as one HTML file.

The report is built from a Result and its :class:`~heatstack.report_settings.ReportSettings` (stored with the
result, so ``heatstack report results.h5`` gives the same report as the run).
"""

from __future__ import annotations

import json
import warnings
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from . import __version__
from .answers.analysis import cooling_time_in_result, margins, peak, threshold_crossings
from .answers.fuse_plugs import PlugAnswer, assess_fuse_plugs, plug_temperature
from .answers.histories import level_crossings, record_times
from .answers.sensor import sensor_lag
from .answers.tyre import plug_releases_before_limit, tyre_pressure_margin
from .errors import InputError
from .geometry import GLOBAL_SERIES, HEAT_SINK_MAX, HEAT_SINK_MEAN, RUBBING_FACE_MAX
from .report_settings import ReportSettings, tyre_gas_for
from .report_text import (
    SERIES_LABELS,
    cooling_sentences,
    end_of_braking_sentence,
    energy_sentence,
    numerics_sentence,
    report_tables,
    sensor_sentences,
    stop_sentences,
    tyre_sentences,
    unit_symbols,
)
from .result import Result

__all__ = [
    "build_report",
    "format_report",
    "CAUTION",
    "HOTTEST_CELL_NOTE",
    "PLUG_NOTE",
    "RUBBING_SURFACE_NOTE",
]

CAUTION = (
    "CAUTION: engineering model output, not certified data. Defer to the wheel and brake "
    "manufacturer's maintenance data, the aircraft's approved documentation, local regulations "
    "and licensed practice. Hot brakes, wheels and tyres are dangerous to approach."
)

#: Why a fuse plug's peak differs from the rim's at its seat (one sentence for the report).
PLUG_NOTE = (
    "A fuse plug's own temperature lags the rim at its seat (the plug's small mass heats through "
    "its contact with the rim, with the time constant given), so it peaks lower and later than the "
    "rim; release, peak and margin are judged on the plug's own temperature."
)

#: What a hottest cell's peak is, and why it moves with the cell size (one sentence for the report).
HOTTEST_CELL_NOTE = (
    "A hottest cell's temperature is the mean over that cell: next to a rubbing face, where the temperature "
    "falls steeply into the part, it reads below the friction surface itself, and a run with smaller cells "
    "reads hotter; compare runs at two cell sizes before relying on it."
)
#: What the hottest rubbing surface is (added to the note when the run has rubbing faces).
RUBBING_SURFACE_NOTE = (
    "The hottest rubbing surface is estimated from the two cells beside each rubbing face and the friction heat "
    "crossing their half-widths; it moves much less with the cell size, and on coarse cells it reads high."
)


def _non_finite(value: Any, path: str) -> str | None:
    """The key path of the first non-finite number in the report data ``value``, or None."""
    if isinstance(value, float | np.floating) and not np.isfinite(value):
        return path
    if isinstance(value, Mapping):
        items = value.items()
    elif isinstance(value, list | tuple):
        items = enumerate(value)
    else:
        return None
    for key, item in items:
        found = _non_finite(item, f"{path}.{key}" if isinstance(key, str) else f"{path}[{key}]")
        if found:
            return found
    return None


def _float(value: float | None) -> float | None:
    return None if value is None else float(value)


def build_report(
    result: Result, settings: ReportSettings | None = None, warnings_seen: Sequence[str] = ()
) -> dict[str, Any]:
    """The report as plain, JSON-able data: SI values at full precision, units in the keys.

    Parameters
    ----------
    result : Result
        A finished run [K, s, J]. Warnings recorded in ``result.metadata["warnings"]``
        (by :func:`heatstack.case.run_case`) are reported.
    settings : ReportSettings, optional
        What to assess; the defaults (degC, no limits, no fuse plugs, no tyre) when None.
    warnings_seen : sequence of str
        More warnings that bear on the answer, to report.

    Returns
    -------
    dict
        ``title``, ``caution``, ``heatstack_version``, ``end_of_braking_s``, ``phases``
        and the sections ``peaks``, ``sensor``, ``fuse_plugs``, ``limits``, ``tyre``,
        ``cooling``, ``energy``, ``numerics`` (how the run was computed; None for a results
        file written before it was kept) and ``warnings``. Every key names its unit (``_K``,
        ``_s``, ``_J``, ``_Pa``, ``_Pa_gauge``, ``_m``) or is a count (``_count``);
        ``temperature_unit`` is the unit the text forms show.

    Raises
    ------
    InputError
        If ``settings.unit`` is not ``"degC"``, ``"degF"`` or ``"K"``, or a limit,
        fuse plug or the cooling series names a history the result does not hold.
    """
    settings = settings or ReportSettings()
    if settings.unit not in ("degC", "degF", "K"):
        raise InputError(f"report unit must be 'degC', 'degF' or 'K', got {settings.unit!r}")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        report = _sections(result, settings)
    for item in caught:  # still shown where warnings are shown, and kept in the report
        warnings.warn_explicit(item.message, item.category, item.filename, item.lineno)
    seen = [*result.metadata.get("warnings", ()), *warnings_seen, *(str(w.message) for w in caught)]
    report["warnings"] = list(dict.fromkeys(str(w) for w in seen))
    bad = _non_finite(report, "report")
    if bad:  # never print a NaN or an infinity as an answer
        raise InputError(f"{bad}: the answer is not a finite number; check the inputs it is computed from")
    return report


def _sections(result: Result, settings: ReportSettings) -> dict[str, Any]:
    report: dict[str, Any] = {
        "title": settings.title,
        "caution": CAUTION,
        "heatstack_version": __version__,
        "temperature_unit": settings.unit,
        "end_of_braking_s": float(result.end_of_braking),
        "heat_sink_mass_kg": result.metadata.get("heat_sink_mass_kg"),
        "phases": [{"name": n, "start_s": float(a), "end_s": float(b)} for n, a, b in result.phases],
    }
    plugs = assess_fuse_plugs(result, settings.fuse_plugs) if settings.fuse_plugs else []
    report["peaks"] = _peak_rows(result, {p.name for p in plugs})
    notes = [HOTTEST_CELL_NOTE] if HEAT_SINK_MAX in result.series else []
    notes += [RUBBING_SURFACE_NOTE] if RUBBING_FACE_MAX in result.series else []
    report["peak_note"] = " ".join(notes)
    if settings.sensor in result.readings and HEAT_SINK_MEAN in result.series:
        report["sensor"] = _sensor_section(result, settings)
    report["fuse_plugs"] = [_fuse_plug_row(result, a) for a in plugs]
    report["fuse_plug_note"] = PLUG_NOTE if plugs else ""
    report["limits"] = _limit_rows(result, settings)
    report["tyre"] = _tyre_section(result, settings, plugs)
    if settings.cooling_below is not None:
        report["cooling"] = _cooling_section(result, settings)
    report["energy"] = _energy_section(result)
    report["stops"] = list(result.metadata.get("stops", []))
    report["numerics"] = _numerics_section(result)
    return report


def _numerics_section(result: Result) -> dict[str, Any] | None:
    """How the run was computed (cells, cell widths [m], time stepping, steps); None for a results file without it."""
    numerics = result.metadata.get("numerics")
    if not numerics:
        return None
    dr, dz = np.diff(result.r_edges), np.diff(result.z_edges)
    stats = result.metadata.get("solver", {})
    counts = {"steps": "step_count", "rejected_steps": "retried_step_count", "iterations": "newton_iteration_count"}
    return {
        **numerics,
        "radial_width_m": [float(dr.min()), float(dr.max())],
        "axial_width_m": [float(dz.min()), float(dz.max())],
        **{name: int(stats[key]) for key, name in counts.items() if key in stats},
    }


def _delay(time: float, end_of_braking: float) -> tuple[float | None, bool]:
    """(delay after the end of braking [s], or None for a peak during braking; during braking)."""
    during = time < end_of_braking
    return (None if during else float(time - end_of_braking)), during


def _peak_rows(result: Result, plug_names: set[str]) -> list[dict[str, Any]]:
    """Peak, its time and its delay after braking of every reading and summary series present.

    The probe at a fuse plug reads the rim at the plug's seat, and is labelled so.
    """
    names = list(result.readings) + [s for s in GLOBAL_SERIES if s in result.series]
    rows = []
    for p in (peak(result, name) for name in names):
        delay, during = _delay(p.time, result.end_of_braking)
        rows.append(
            {
                "name": p.name,
                "label": f"rim at the seat of {p.name}" if p.name in plug_names else SERIES_LABELS.get(p.name, p.name),
                "peak_K": p.temperature,
                "time_of_peak_s": p.time,
                "delay_after_braking_s": delay,
                "during_braking": during,
            }
        )
    return rows


def _sensor_section(result: Result, settings: ReportSettings) -> dict[str, Any]:
    """The sensor reading against the true heat-sink temperature: its peak, delays and offsets."""
    lag = sensor_lag(result, settings.sensor, settings.band)
    return {
        "name": lag.sensor,
        "time_constant_s": lag.time_constant,
        "peak_K": lag.reading_peak,
        "time_of_peak_s": lag.time_of_peak,
        "delay_after_braking_s": lag.delay,
        "conduction_delay_s": lag.conduction_delay,
        "instrument_delay_s": lag.instrument_delay,
        "offset_to_heat_sink_mean_at_peak_K": lag.offset_to_mean_at_peak,
        "offset_to_hottest_cell_at_peak_K": lag.offset_to_max_at_peak,
        "largest_under_reading_K": float(np.min(lag.offset_to_mean)),
        "band_K": lag.band,
        "within_band_of_mean_s": _float(lag.within_band_time),
    }


def _fuse_plug_row(result: Result, a: PlugAnswer) -> dict[str, Any]:
    """One fuse plug's own peak, release temperature, margin and release times; the rim at its seat."""
    rim_peak, rim_time = result.peak(a.name) if a.name in result.readings else (None, None)
    return {
        "name": a.name,
        "peak_K": a.peak,
        "time_of_peak_s": a.time_of_peak,
        "release_temperature_K": a.release_temperature,
        "tolerance_K": a.tolerance,
        "time_constant_s": a.time_constant,
        "margin_K": a.margin,
        "releases": a.releases,
        "release_time_s": _float(a.release_time),
        "earliest_release_time_s": _float(a.earliest_release_time),
        "rim_at_seat_peak_K": rim_peak,
        "rim_at_seat_time_of_peak_s": rim_time,
    }


def _limit_rows(result: Result, settings: ReportSettings) -> list[dict[str, Any]]:
    """Each limited probe or series: limit, peak, margin and the times it crosses the limit.

    A limit on a fuse plug's name is judged on the plug's own temperature, so it agrees
    with the fuse plug section.
    """
    if not settings.limits:
        return []
    plugs = {p.name: p for p in settings.fuse_plugs}
    times = record_times(result)
    rows = []
    for m in margins(result, settings.limits):
        if m.name in plugs:
            values = plug_temperature(result, plugs[m.name])
            k = int(np.argmax(values))
            top, when, crossings = float(values[k]), float(times[k]), level_crossings(times, values, m.limit)
            assessed = "fuse plug temperature"
        else:
            top, when, crossings = m.peak, m.time_of_peak, threshold_crossings(result, m.name, m.limit)
            assessed = "reading" if m.name in result.readings else "series"
        rows.append(
            {
                "name": m.name,
                "assessed": assessed,
                "limit_K": m.limit,
                "peak_K": top,
                "margin_K": m.limit - top,
                "time_of_peak_s": when,
                "exceeded": bool(top > m.limit),
                "crossings": [{"time_s": t, "direction": d} for t, d in crossings],
            }
        )
    return rows


def _cooling_section(result: Result, settings: ReportSettings) -> dict[str, Any]:
    """When the cooling series falls below its threshold, or where the record ends if it does not."""
    answer = cooling_time_in_result(result, settings.cooling_series, settings.cooling_below)
    return {
        "series": answer.name,
        "below_K": answer.below,
        "reached": answer.reached,
        "time_s": _float(answer.time_below),
        "after_braking_s": _float(answer.duration),
        "value_at_record_end_K": answer.value_at_record_end,
        "record_end_s": answer.record_end,
    }


def _energy_section(result: Result) -> dict[str, Any]:
    """The energy ledger at the end of the record [J] and the split of each rubbing interface."""
    ledger = result.ledger
    return {
        "heat_in_J": float(ledger.heat_in[-1]),
        "convected_J": float(ledger.convected[-1]),
        "radiated_J": float(ledger.radiated[-1]),
        "stored_J": float(ledger.stored[-1]),
        "relative_closure_error": ledger.relative_closure_error,
        "interfaces": [
            {"interface": label, "first_side_J": float(a), "second_side_J": float(b)}
            for label, (a, b) in zip(ledger.friction_labels, ledger.friction_split, strict=True)
        ],
    }


def _tyre_section(result: Result, settings: ReportSettings, plugs: list) -> dict[str, Any] | None:
    """Tyre gas: peak pressure, the first time the limit is reached and when it falls back."""
    gas = tyre_gas_for(result, settings)
    if gas is None:
        return None
    tyre = settings.tyre
    section: dict[str, Any] = {
        "ambient_pressure_Pa": gas.ambient_pressure,
        "cold_pressure_Pa_gauge": gas.cold_pressure - gas.ambient_pressure,
        "outer_conductance_W_per_K": gas.outer_conductance,
        "outer_conductance_estimated": tyre.outer_conductance is None,
        "peak_pressure_Pa_gauge": gas.peak_pressure - gas.ambient_pressure,
        "time_of_peak_s": gas.time_of_peak,
        "peak_gas_temperature_K": gas.peak_temperature,
    }
    if tyre.pressure_limit is not None:
        margin = tyre_pressure_margin(gas, tyre.pressure_limit)
        section.update(
            {
                "pressure_limit_Pa_gauge": margin.limit - gas.ambient_pressure,
                "pressure_margin_Pa": margin.margin,
                "limit_exceeded": margin.exceeded,
                "limit_first_reached_s": _float(margin.time_limit_reached),
                "back_below_limit_s": _float(margin.time_back_below_limit),
            }
        )
        if plugs:
            race = plug_releases_before_limit(plugs, gas, tyre.pressure_limit)
            section["plug_releases_before_pressure_limit"] = race.releases_first
    return section


def _table_lines(head: list[str], body: list[list[str]], markdown: bool) -> list[str]:
    if markdown:
        lines = ["| " + " | ".join(head) + " |", "|" + "|".join("---" for _ in head) + "|"]
        return lines + ["| " + " | ".join(r) + " |" for r in body]
    widths = [max(len(h), *(len(r[k]) for r in body)) if body else len(h) for k, h in enumerate(head)]
    lines = ["  ".join(h.ljust(w) for h, w in zip(head, widths, strict=True))]
    lines.append("  ".join("-" * w for w in widths))
    return lines + ["  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)) for r in body]


def format_report(report: Mapping[str, Any], fmt: str = "text") -> str:
    """Render :func:`build_report` output as ``"text"``, ``"markdown"`` or ``"json"``.

    Parameters
    ----------
    report : mapping
        The output of :func:`build_report`.
    fmt : str
        ``"text"`` (plain columns), ``"markdown"`` (tables) or ``"json"`` (the data
        itself: SI, full precision).

    Returns
    -------
    str
        The report, opening with its caution.

    Raises
    ------
    InputError
        If ``fmt`` is none of the three.
    """
    if fmt == "json":
        return json.dumps(report, indent=2) + "\n"
    if fmt not in ("text", "markdown"):
        raise InputError(f"report format must be 'text', 'markdown' or 'json', got {fmt!r}")
    md = fmt == "markdown"
    tables = report_tables(report)
    lines = [
        f"# {report['title']}" if md else report["title"],
        "",
        f"> {report['caution']}" if md else report["caution"],
    ]
    if report["warnings"]:
        lines += _heading("Warnings that bear on these answers", md)
        lines += [f"- {w}" for w in report["warnings"]]
    lines += ["", end_of_braking_sentence(report)]
    if report.get("heat_sink_mass_kg") is not None:
        lines += [f"Heat-sink mass: {report['heat_sink_mass_kg']:.2f} kg."]
    lines += _heading(f"Peak temperatures [{unit_symbols(report['temperature_unit'])[0]}]", md)
    lines += _table_lines(*tables["peaks"], md)
    if report.get("peak_note"):
        lines += ["", report["peak_note"]]
    for key, title, sentences in (
        ("sensor", "Why the gauge lags: sensor against the true heat-sink temperature", sensor_sentences),
        ("fuse_plugs", "Fuse plugs", None),
        ("limits", "Limits", None),
        ("tyre", "Tyre gas", tyre_sentences),
        ("cooling", "Cooling time", cooling_sentences),
    ):
        if not report.get(key):
            continue
        lines += _heading(title, md)
        if key in tables:
            lines += _table_lines(*tables[key], md)
        if key == "fuse_plugs":
            lines += ["", report["fuse_plug_note"]]
        if sentences is not None:
            lines += sentences(report)
    if report.get("stops"):
        lines += _heading("The stops: where the kinetic energy went", md) + stop_sentences(report)
    lines += _heading("Energy ledger [MJ]", md) + [energy_sentence(report["energy"])]
    if report.get("numerics"):
        lines += _heading("How this was computed", md) + [numerics_sentence(report["numerics"])]
    return "\n".join(lines) + "\n"


def _heading(text: str, markdown: bool) -> list[str]:
    """A section heading: Markdown level 2, or the text underlined with '='."""
    return ["", f"## {text}", ""] if markdown else ["", text, "=" * len(text)]
