"""The report of a run: peaks and delays, sensor against the true heat sink, fuse plugs,
tyre bead and pressure, cooling time and the energy ledger, as text, Markdown or JSON.

The report is built from a Result and its :class:`ReportSettings` (stored with the
result, so ``heatstack report results.h5`` gives the same report as the run).
Temperatures are SI inside and shown in degC (default), degF or K.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np

from .answers.analysis import cooling_time, margins, peak, sensor_lag, threshold_crossings
from .answers.fuse_plugs import assess_fuse_plugs
from .answers.tyre import plug_releases_before_limit, tyre_gas, tyre_pressure_margin
from .builders import FusePlugSpec
from .errors import InputError
from .result import Result
from .units import from_si

__all__ = ["TyreSettings", "ReportSettings", "build_report", "format_report", "CAUTION"]

CAUTION = (
    "CAUTION: engineering model output, not certified data. Defer to the wheel and brake "
    "manufacturer's maintenance data, the aircraft's approved documentation, local regulations "
    "and licensed practice. Hot brakes, wheels and tyres are dangerous to approach."
)


@dataclass(frozen=True)
class TyreSettings:
    """Tyre gas node inputs (SI; pressures gauge).

    cold_pressure [Pa gauge], gas_volume [m^3], cavity_area [m^2] of rim exterior inside
    the tyre, h_cavity [W/(m^2 K)], outer_conductance [W/K] from the gas through the
    carcass to ambient, pressure_limit [Pa gauge] or None.
    """

    cold_pressure: float
    gas_volume: float
    cavity_area: float
    h_cavity: float = 15.0
    outer_conductance: float = 0.0
    pressure_limit: float | None = None


@dataclass(frozen=True)
class ReportSettings:
    """What the report assesses. Temperatures [K]."""

    unit: str = "degC"
    limits: Mapping[str, float] = field(default_factory=dict)
    fuse_plugs: tuple[FusePlugSpec, ...] = ()
    tyre: TyreSettings | None = None
    cold_temperature: float = 288.15
    cooling_below: float | None = None
    cooling_series: str = "heat_sink_mean"
    band: float = 10.0
    sensor: str = "sensor"
    title: str = ""

    def to_mapping(self) -> dict[str, Any]:
        """Plain JSON-able form (for the results file)."""
        return asdict(self)

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any]) -> ReportSettings:
        """Inverse of :meth:`to_mapping`."""
        data = dict(data)
        data["fuse_plugs"] = tuple(FusePlugSpec(**p) for p in data.get("fuse_plugs", ()))
        tyre = data.get("tyre")
        data["tyre"] = TyreSettings(**tyre) if tyre else None
        return cls(**data)


def _shown(value: float | None, unit: str) -> float | None:
    return None if value is None else round(float(from_si(value, "temperature", unit)), 1)


def _difference(value: float, unit: str) -> float:
    return round(float(value) * (1.8 if unit == "degF" else 1.0), 1)


def _minutes(seconds: float | None) -> float | None:
    return None if seconds is None else round(seconds / 60.0, 2)


def build_report(result: Result, settings: ReportSettings | None = None) -> dict[str, Any]:
    """The report as a plain, JSON-able mapping (temperatures in ``settings.unit``)."""
    settings = settings or ReportSettings()
    unit = settings.unit
    if unit not in ("degC", "degF", "K"):
        raise InputError(f"report unit must be 'degC', 'degF' or 'K', got {unit!r}")
    report: dict[str, Any] = {
        "title": settings.title,
        "caution": CAUTION,
        "temperature_unit": unit,
        "end_of_braking_min": _minutes(result.end_of_heating),
        "heat_sink_mass_kg": result.metadata.get("heat_sink_mass_kg"),
        "phases": [{"name": n, "start_min": _minutes(a), "end_min": _minutes(b)} for n, a, b in result.phases],
    }
    names = list(result.readings) + [s for s in ("heat_sink_mean", "heat_sink_max", "wheel_max") if s in result.series]
    report["peaks"] = [
        {
            "name": p.name,
            "peak": _shown(p.temperature, unit),
            "time_min": _minutes(p.time),
            "delay_after_braking_min": _minutes(p.delay_after_braking),
        }
        for p in (peak(result, name) for name in names)
    ]
    if settings.sensor in result.readings and "heat_sink_mean" in result.series:
        lag = sensor_lag(result, settings.sensor, settings.band)
        report["sensor"] = {
            "name": lag.sensor,
            "time_constant_s": lag.time_constant,
            "peak": _shown(lag.reading_peak, unit),
            "time_of_peak_min": _minutes(lag.time_of_peak),
            "delay_after_braking_min": _minutes(lag.delay),
            "conduction_delay_min": _minutes(lag.conduction_delay),
            "instrument_delay_min": _minutes(lag.instrument_delay),
            "offset_to_heat_sink_mean_at_peak": _difference(lag.offset_to_mean_at_peak, unit),
            "offset_to_hottest_cell_at_peak": _difference(lag.offset_to_max_at_peak, unit),
            "largest_under_reading": _difference(float(np.min(lag.offset_to_mean)), unit),
            "band": _difference(lag.band, unit),
            "within_band_of_mean_min": _minutes(lag.within_band_time),
        }
    plugs = assess_fuse_plugs(result, settings.fuse_plugs) if settings.fuse_plugs else []
    report["fuse_plugs"] = [
        {
            "name": a.name,
            "peak": _shown(a.peak, unit),
            "time_of_peak_min": _minutes(a.time_of_peak),
            "release_temperature": _shown(a.release_temperature, unit),
            "margin": _difference(a.margin, unit),
            "releases": a.releases,
            "release_time_min": _minutes(a.release_time),
            "earliest_release_time_min": _minutes(a.earliest_release_time),
        }
        for a in plugs
    ]
    report["limits"] = [
        {
            "name": m.name,
            "limit": _shown(m.limit, unit),
            "peak": _shown(m.peak, unit),
            "margin": _difference(m.margin, unit),
            "time_of_peak_min": _minutes(m.time_of_peak),
            "exceeded": m.exceeded,
            "crossings": [
                {"time_min": _minutes(t), "direction": d} for t, d in threshold_crossings(result, m.name, m.limit)
            ],
        }
        for m in (margins(result, settings.limits) if settings.limits else [])
    ]
    report["tyre"] = _tyre_section(result, settings, plugs)
    if settings.cooling_below is not None:
        answer = cooling_time(result, settings.cooling_series, settings.cooling_below)
        report["cooling"] = {
            "series": answer.name,
            "below": _shown(answer.below, unit),
            "reached": answer.reached,
            "time_min": _minutes(answer.time_below),
            "after_braking_min": _minutes(answer.duration),
            "value_at_record_end": _shown(answer.value_at_record_end, unit),
            "record_end_min": _minutes(answer.record_end),
        }
    ledger = result.ledger
    report["energy"] = {
        "in_MJ": ledger.heat_in[-1] / 1e6,
        "convected_MJ": ledger.convected[-1] / 1e6,
        "radiated_MJ": ledger.radiated[-1] / 1e6,
        "stored_MJ": ledger.stored[-1] / 1e6,
        "relative_closure_error": ledger.relative_closure_error,
        "interfaces": [
            {"interface": label, "first_side_MJ": float(a) / 1e6, "second_side_MJ": float(b) / 1e6}
            for label, (a, b) in zip(ledger.friction_labels, ledger.friction_split, strict=True)
        ],
    }
    return report


def _tyre_section(result: Result, settings: ReportSettings, plugs: list) -> dict[str, Any] | None:
    tyre = settings.tyre
    if tyre is None or "surface:tyre cavity" not in result.series:
        return None
    gas = tyre_gas(
        result,
        tyre.cold_pressure,
        tyre.gas_volume,
        tyre.cavity_area,
        tyre.h_cavity,
        settings.cold_temperature,
        tyre.outer_conductance,
    )
    section = {
        "cold_pressure_bar_gauge": tyre.cold_pressure / 1e5,
        "peak_pressure_bar_gauge": round((gas.peak_pressure - gas.ambient_pressure) / 1e5, 3),
        "time_of_peak_min": _minutes(gas.time_of_peak),
        "peak_gas_temperature": _shown(gas.peak_temperature, settings.unit),
    }
    if tyre.pressure_limit is not None:
        margin = tyre_pressure_margin(gas, tyre.pressure_limit)
        section.update(
            {
                "pressure_limit_bar_gauge": tyre.pressure_limit / 1e5,
                "pressure_margin_bar": round(margin.margin / 1e5, 3),
                "limit_exceeded": margin.exceeded,
            }
        )
        if plugs:
            race = plug_releases_before_limit(plugs, gas, tyre.pressure_limit)
            section["plug_releases_before_pressure_limit"] = race.releases_first
    return section


def _table(rows: list[dict], columns: list[tuple[str, str]], markdown: bool) -> list[str]:
    def cell(value: Any) -> str:
        if value is None:
            return "-"
        if isinstance(value, bool):
            return "yes" if value else "no"
        if isinstance(value, float):
            return f"{value:.2f}" if abs(value) < 100 else f"{value:.1f}"
        return str(value)

    head = [title for _, title in columns]
    body = [[cell(row.get(key)) for key, _ in columns] for row in rows]
    if markdown:
        lines = ["| " + " | ".join(head) + " |", "|" + "|".join("---" for _ in head) + "|"]
        return lines + ["| " + " | ".join(r) + " |" for r in body]
    widths = [max(len(h), *(len(r[k]) for r in body)) if body else len(h) for k, h in enumerate(head)]
    lines = ["  ".join(h.ljust(w) for h, w in zip(head, widths, strict=True))]
    lines.append("  ".join("-" * w for w in widths))
    return lines + ["  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)) for r in body]


def _crossed(crossings: list[dict]) -> str:
    marks = {"up": "above", "down": "below"}
    return ", ".join(f"{marks[c['direction']]} {c['time_min']}" for c in crossings) or "never"


def _or_never(minutes: float | None) -> str:
    return "no time in the record" if minutes is None else f"{minutes} min"


def format_report(report: Mapping[str, Any], fmt: str = "text") -> str:
    """Render :func:`build_report` output as ``"text"``, ``"markdown"`` or ``"json"``."""
    if fmt == "json":
        return json.dumps(report, indent=2)
    if fmt not in ("text", "markdown"):
        raise InputError(f"report format must be 'text', 'markdown' or 'json', got {fmt!r}")
    md = fmt == "markdown"
    u = {"degC": "°C", "degF": "°F", "K": "K"}[report["temperature_unit"]]
    du = "°F" if u == "°F" else "K"  # unit of a temperature difference

    def heading(text: str) -> list[str]:
        return ["", f"## {text}", ""] if md else ["", text, "=" * len(text)]

    lines = [
        f"# {report['title']}" if md else report["title"],
        "",
        f"> {report['caution']}" if md else report["caution"],
    ]
    lines += ["", f"End of braking: {report['end_of_braking_min']} min."]
    if report.get("heat_sink_mass_kg") is not None:
        lines += [f"Heat-sink mass: {report['heat_sink_mass_kg']:.2f} kg."]
    lines += heading(f"Peak temperatures [{u}]")
    lines += _table(
        report["peaks"],
        [
            ("name", "probe / series"),
            ("peak", f"peak {u}"),
            ("time_min", "at [min]"),
            ("delay_after_braking_min", "after braking [min]"),
        ],
        md,
    )
    if "sensor" in report:
        s = report["sensor"]
        lines += heading("Why the gauge lags: sensor against the true heat-sink temperature")
        lines += [
            f"The sensor reading peaks at {s['peak']} {u}, {s['delay_after_braking_min']} min after the end of braking",
            f"({s['conduction_delay_min']} min of conduction to the sensor location, "
            f"{s['instrument_delay_min']} min of instrument lag, time constant {s['time_constant_s']} s).",
            f"At its peak it reads {s['offset_to_heat_sink_mean_at_peak']} {du} against the heat-sink mass-mean "
            f"and {s['offset_to_hottest_cell_at_peak']} {du} against the hottest heat-sink cell;",
            f"the largest under-reading is {s['largest_under_reading']} {du}. It first comes within {s['band']} {du} "
            f"of the mean at {_or_never(s['within_band_of_mean_min'])}.",
        ]
    if report["fuse_plugs"]:
        lines += heading("Fuse plugs")
        lines += _table(
            report["fuse_plugs"],
            [
                ("name", "plug"),
                ("peak", f"peak {u}"),
                ("time_of_peak_min", "at [min]"),
                ("release_temperature", f"release {u}"),
                ("margin", f"margin {du}"),
                ("releases", "releases"),
                ("release_time_min", "release at [min]"),
            ],
            md,
        )
    if report["limits"]:
        lines += heading("Limits")
        lines += _table(
            [{**row, "crossed": _crossed(row["crossings"])} for row in report["limits"]],
            [
                ("name", "probe / series"),
                ("limit", f"limit {u}"),
                ("peak", f"peak {u}"),
                ("margin", f"margin {du}"),
                ("exceeded", "exceeded"),
                ("crossed", "crossed [min]"),
            ],
            md,
        )
    if report.get("tyre"):
        t = report["tyre"]
        lines += heading("Tyre gas")
        lines += [
            f"Cold {t['cold_pressure_bar_gauge']:.2f} bar gauge; peak {t['peak_pressure_bar_gauge']:.2f} bar gauge "
            f"at {t['time_of_peak_min']} min (gas {t['peak_gas_temperature']} {u})."
        ]
        if "pressure_limit_bar_gauge" in t:
            lines += [
                f"Limit {t['pressure_limit_bar_gauge']:.2f} bar gauge: margin {t['pressure_margin_bar']:.2f} bar"
                f"{' - EXCEEDED' if t['limit_exceeded'] else ''}."
            ]
            if "plug_releases_before_pressure_limit" in t:
                lines += [
                    "A fuse plug releases before the pressure limit is reached "
                    "(pressures after a release assume no deflation)."
                    if t["plug_releases_before_pressure_limit"]
                    else "No fuse plug releases before the pressure limit is reached."
                ]
    if "cooling" in report:
        c = report["cooling"]
        lines += heading("Cooling time")
        if c["reached"]:
            lines += [
                f"{c['series']} falls below {c['below']} {u} at {c['time_min']} min "
                f"({c['after_braking_min']} min after braking)."
            ]
        else:
            lines += [
                f"{c['series']} does not fall below {c['below']} {u} within the record "
                f"(ends at {c['record_end_min']} min at {c['value_at_record_end']} {u})."
            ]
    e = report["energy"]
    lines += heading("Energy ledger [MJ]")
    lines += [
        f"in {e['in_MJ']:.3f}, convected {e['convected_MJ']:.3f}, radiated {e['radiated_MJ']:.3f}, "
        f"stored {e['stored_MJ']:.3f}; closure error {e['relative_closure_error']:.1e} of the input."
    ]
    return "\n".join(lines) + "\n"
