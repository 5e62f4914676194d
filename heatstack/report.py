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

from .answers.analysis import cooling_time_in_result, margins, peak, sensor_lag, threshold_crossings
from .answers.fuse_plugs import PlugAnswer, assess_fuse_plugs
from .answers.tyre import plug_releases_before_limit, tyre_gas, tyre_pressure_margin
from .builders import FusePlugSpec
from .errors import InputError
from .geometry import GLOBAL_SERIES, HEAT_SINK_MEAN
from .result import Result
from .units import convert_declared, declared, from_si

__all__ = ["TyreSettings", "ReportSettings", "build_report", "format_report", "CAUTION"]

CAUTION = (
    "CAUTION: engineering model output, not certified data. Defer to the wheel and brake "
    "manufacturer's maintenance data, the aircraft's approved documentation, local regulations "
    "and licensed practice. Hot brakes, wheels and tyres are dangerous to approach."
)


@dataclass(frozen=True)
class TyreSettings:
    """Tyre gas node inputs (SI; pressures gauge), as :func:`~heatstack.answers.tyre.tyre_gas` takes them.

    Parameters
    ----------
    cold_pressure : float
        Cold inflation pressure [Pa gauge].
    gas_volume : float
        Gas volume of the tyre [m^3].
    cavity_area : float
        Rim exterior wetted by the tyre gas [m^2].
    h_cavity : float
        Heat transfer coefficient rim -> gas [W/(m^2 K)].
    outer_conductance : float
        Conductance from the gas through the carcass to ambient [W/K].
    pressure_limit : float or None
        Pressure limit [Pa gauge] to assess against, or None for no limit.
    """

    cold_pressure: float = declared("pressure")
    gas_volume: float = declared("volume", positive=True)
    cavity_area: float = declared("area", positive=True)
    h_cavity: float = declared("heat_transfer_coefficient", 15.0, minimum=0.0)
    outer_conductance: float = declared("thermal_conductance", 0.0, minimum=0.0)
    pressure_limit: float | None = declared("pressure", None)

    def __post_init__(self) -> None:
        convert_declared(self, "tyre")


@dataclass(frozen=True)
class ReportSettings:
    """What the report assesses. Temperatures [K].

    Parameters
    ----------
    unit : str
        Temperature unit of the report: ``"degC"``, ``"degF"`` or ``"K"``.
    limits : mapping of str to float
        Temperature limit [K] per probe or series name, for the margins.
    fuse_plugs : tuple of FusePlugSpec
        Fuse plugs to assess (release temperature [K], tolerance [K], lag [s]).
    tyre : TyreSettings or None
        Tyre gas node inputs, or None for no tyre section.
    cold_temperature : float
        Tyre gas temperature [K] at which the cold inflation pressure holds.
    cooling_below : float or None
        Temperature [K] for the cooling time of ``cooling_series``, or None for none.
    cooling_series : str
        Probe or series whose cooling time is reported.
    band : float
        Half-width [K] of the band around the heat-sink mean for the sensor section.
    sensor : str
        Name of the brake-temperature-sensor probe.
    title : str
        Title printed at the head of the report.
    """

    unit: str = "degC"
    limits: Mapping[str, float] = field(default_factory=dict)
    fuse_plugs: tuple[FusePlugSpec, ...] = ()
    tyre: TyreSettings | None = None
    cold_temperature: float = 288.15
    cooling_below: float | None = None
    cooling_series: str = HEAT_SINK_MEAN
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
    """The report as a plain, JSON-able mapping (temperatures in ``settings.unit``).

    Parameters
    ----------
    result : Result
        A finished run [K, s, J].
    settings : ReportSettings, optional
        What to assess; the defaults (degC, no limits, no fuse plugs, no tyre) when None.

    Returns
    -------
    dict
        Sections ``peaks``, ``sensor``, ``fuse_plugs``, ``margins``, ``tyre``,
        ``cooling`` and ``ledger`` (and the title, caution and phases), with
        temperatures in ``settings.unit``, differences in K or °F and times in minutes
        (keys ending ``_min``); ready for :func:`format_report` or ``json.dumps``.

    Raises
    ------
    InputError
        If ``settings.unit`` is not ``"degC"``, ``"degF"`` or ``"K"``, or a limit,
        fuse plug or the cooling series names a history the result does not hold.
    """
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
    report["peaks"] = _peak_rows(result, unit)
    if settings.sensor in result.readings and HEAT_SINK_MEAN in result.series:
        report["sensor"] = _sensor_section(result, settings)
    plugs = assess_fuse_plugs(result, settings.fuse_plugs) if settings.fuse_plugs else []
    report["fuse_plugs"] = [_fuse_plug_row(a, unit) for a in plugs]
    report["limits"] = _limit_rows(result, settings)
    report["tyre"] = _tyre_section(result, settings, plugs)
    if settings.cooling_below is not None:
        report["cooling"] = _cooling_section(result, settings)
    report["energy"] = _energy_section(result)
    return report


def _peak_rows(result: Result, unit: str) -> list[dict[str, Any]]:
    """Peak, its time and its delay after braking of every reading and of the summary series present."""
    names = list(result.readings) + [s for s in GLOBAL_SERIES if s in result.series]
    return [
        {
            "name": p.name,
            "peak": _shown(p.temperature, unit),
            "time_min": _minutes(p.time),
            "delay_after_braking_min": _minutes(p.delay_after_braking),
        }
        for p in (peak(result, name) for name in names)
    ]


def _sensor_section(result: Result, settings: ReportSettings) -> dict[str, Any]:
    """The sensor reading against the true heat-sink temperature: its peak, delays and offsets."""
    unit = settings.unit
    lag = sensor_lag(result, settings.sensor, settings.band)
    return {
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


def _fuse_plug_row(a: PlugAnswer, unit: str) -> dict[str, Any]:
    """One fuse plug's peak, release temperature, margin and release times."""
    return {
        "name": a.name,
        "peak": _shown(a.peak, unit),
        "time_of_peak_min": _minutes(a.time_of_peak),
        "release_temperature": _shown(a.release_temperature, unit),
        "margin": _difference(a.margin, unit),
        "releases": a.releases,
        "release_time_min": _minutes(a.release_time),
        "earliest_release_time_min": _minutes(a.earliest_release_time),
    }


def _limit_rows(result: Result, settings: ReportSettings) -> list[dict[str, Any]]:
    """Each limited probe or series: limit, peak, margin and the times it crosses the limit."""
    unit = settings.unit
    return [
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


def _cooling_section(result: Result, settings: ReportSettings) -> dict[str, Any]:
    """When the cooling series falls below its threshold, or where the record ends if it does not."""
    unit = settings.unit
    answer = cooling_time_in_result(result, settings.cooling_series, settings.cooling_below)
    return {
        "series": answer.name,
        "below": _shown(answer.below, unit),
        "reached": answer.reached,
        "time_min": _minutes(answer.time_below),
        "after_braking_min": _minutes(answer.duration),
        "value_at_record_end": _shown(answer.value_at_record_end, unit),
        "record_end_min": _minutes(answer.record_end),
    }


def _energy_section(result: Result) -> dict[str, Any]:
    """The energy ledger at the end of the record [MJ] and the split of each rubbing interface."""
    ledger = result.ledger
    return {
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
    """Render :func:`build_report` output as ``"text"``, ``"markdown"`` or ``"json"``.

    Parameters
    ----------
    report : mapping
        The output of :func:`build_report`.
    fmt : str
        ``"text"`` (plain columns), ``"markdown"`` (tables) or ``"json"``.

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
        return json.dumps(report, indent=2)
    if fmt not in ("text", "markdown"):
        raise InputError(f"report format must be 'text', 'markdown' or 'json', got {fmt!r}")
    md = fmt == "markdown"
    u = {"degC": "°C", "degF": "°F", "K": "K"}[report["temperature_unit"]]
    du = "°F" if u == "°F" else "K"  # unit of a temperature difference
    lines = [
        f"# {report['title']}" if md else report["title"],
        "",
        f"> {report['caution']}" if md else report["caution"],
    ]
    lines += ["", f"End of braking: {report['end_of_braking_min']} min."]
    if report.get("heat_sink_mass_kg") is not None:
        lines += [f"Heat-sink mass: {report['heat_sink_mass_kg']:.2f} kg."]
    lines += _peaks_lines(report["peaks"], u, md)
    if "sensor" in report:
        lines += _sensor_lines(report["sensor"], u, du, md)
    if report["fuse_plugs"]:
        lines += _fuse_plug_lines(report["fuse_plugs"], u, du, md)
    if report["limits"]:
        lines += _limit_lines(report["limits"], u, du, md)
    if report.get("tyre"):
        lines += _tyre_lines(report["tyre"], u, md)
    if "cooling" in report:
        lines += _cooling_lines(report["cooling"], u, md)
    lines += _energy_lines(report["energy"], md)
    return "\n".join(lines) + "\n"


def _heading(text: str, markdown: bool) -> list[str]:
    """A section heading: Markdown level 2, or the text underlined with '='."""
    return ["", f"## {text}", ""] if markdown else ["", text, "=" * len(text)]


def _peaks_lines(rows: list[dict], u: str, md: bool) -> list[str]:
    """The peak temperatures table; ``u`` is the shown temperature unit."""
    return _heading(f"Peak temperatures [{u}]", md) + _table(
        rows,
        [
            ("name", "probe / series"),
            ("peak", f"peak {u}"),
            ("time_min", "at [min]"),
            ("delay_after_braking_min", "after braking [min]"),
        ],
        md,
    )


def _sensor_lines(s: Mapping[str, Any], u: str, du: str, md: bool) -> list[str]:
    """Why the gauge lags, in words; ``du`` is the unit of a temperature difference."""
    return _heading("Why the gauge lags: sensor against the true heat-sink temperature", md) + [
        f"The sensor reading peaks at {s['peak']} {u}, {s['delay_after_braking_min']} min after the end of braking",
        f"({s['conduction_delay_min']} min of conduction to the sensor location, "
        f"{s['instrument_delay_min']} min of instrument lag, time constant {s['time_constant_s']} s).",
        f"At its peak it reads {s['offset_to_heat_sink_mean_at_peak']} {du} against the heat-sink mass-mean "
        f"and {s['offset_to_hottest_cell_at_peak']} {du} against the hottest heat-sink cell;",
        f"the largest under-reading is {s['largest_under_reading']} {du}. It first comes within {s['band']} {du} "
        f"of the mean at {_or_never(s['within_band_of_mean_min'])}.",
    ]


def _fuse_plug_lines(rows: list[dict], u: str, du: str, md: bool) -> list[str]:
    """The fuse plugs table."""
    return _heading("Fuse plugs", md) + _table(
        rows,
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


def _limit_lines(rows: list[dict], u: str, du: str, md: bool) -> list[str]:
    """The limits table, with the times each limit is crossed."""
    return _heading("Limits", md) + _table(
        [{**row, "crossed": _crossed(row["crossings"])} for row in rows],
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


def _tyre_lines(t: Mapping[str, Any], u: str, md: bool) -> list[str]:
    """Tyre gas pressure peak, its margin to the limit and whether a fuse plug releases first."""
    lines = _heading("Tyre gas", md) + [
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
    return lines


def _cooling_lines(c: Mapping[str, Any], u: str, md: bool) -> list[str]:
    """When the cooling series falls below its threshold, or that it does not within the record."""
    if c["reached"]:
        sentence = (
            f"{c['series']} falls below {c['below']} {u} at {c['time_min']} min "
            f"({c['after_braking_min']} min after braking)."
        )
    else:
        sentence = (
            f"{c['series']} does not fall below {c['below']} {u} within the record "
            f"(ends at {c['record_end_min']} min at {c['value_at_record_end']} {u})."
        )
    return _heading("Cooling time", md) + [sentence]


def _energy_lines(e: Mapping[str, Any], md: bool) -> list[str]:
    """The energy ledger in one sentence [MJ]."""
    return _heading("Energy ledger [MJ]", md) + [
        f"in {e['in_MJ']:.3f}, convected {e['convected_MJ']:.3f}, radiated {e['radiated_MJ']:.3f}, "
        f"stored {e['stored_MJ']:.3f}; closure error {e['relative_closure_error']:.1e} of the input."
    ]
