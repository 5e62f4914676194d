"""The report of a run: peaks and delays, sensor against the true heat sink, fuse plugs,
tyre bead and pressure, cooling time, the energy ledger and the warnings of the run.

:func:`build_report` gives the report as data: every value in SI at full precision,
each key naming its unit (``peak_K``, ``time_of_peak_s``, ``heat_in_J``,
``peak_pressure_Pa_gauge``). That mapping is the JSON report. :func:`format_report`
renders it as text or Markdown for reading, with temperatures in degC (default), degF
or K and times in minutes (the tables and sentences of :mod:`heatstack.report_text`);
:mod:`heatstack.report_html` renders it as one HTML file.

The report is built from a Result and its :class:`ReportSettings` (stored with the
result, so ``heatstack report results.h5`` gives the same report as the run).
"""

from __future__ import annotations

import json
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import asdict, dataclass, field, fields
from typing import Any

import numpy as np

from . import __version__
from .answers.analysis import (
    cooling_time_in_result,
    level_crossings,
    margins,
    peak,
    record_times,
    sensor_lag,
    threshold_crossings,
)
from .answers.fuse_plugs import PlugAnswer, assess_fuse_plugs, plug_temperature
from .answers.tyre import TyreGas, plug_releases_before_limit, tyre_gas, tyre_pressure_margin, with_tyre_gas_state
from .builders import FusePlugSpec
from .errors import InputError
from .geometry import GLOBAL_SERIES, HEAT_SINK_MEAN
from .report_text import (
    SERIES_LABELS,
    cooling_sentences,
    end_of_braking_sentence,
    energy_sentence,
    report_tables,
    sensor_sentences,
    stop_sentences,
    tyre_sentences,
    unit_symbols,
)
from .result import Result
from .unit_declarations import convert_declared, declared

__all__ = [
    "TyreSettings",
    "ReportSettings",
    "build_report",
    "tyre_gas_for",
    "with_tyre_gas_carried",
    "format_report",
    "CAUTION",
    "PLUG_NOTE",
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
    outer_conductance : float or None
        Conductance from the gas through the carcass to ambient [W/K]; None for the
        estimate of :func:`~heatstack.answers.tyre.default_outer_conductance` (about
        6 W/(m^2 K) over the tyre's outer surface, from the gas volume).
    pressure_limit : float or None
        Pressure limit [Pa gauge] to assess against, or None for no limit.
    ambient_pressure : float
        Air pressure [Pa] the gauge pressures are read against (the case's own ambient).

    Notes
    -----
    The bounds keep the gas node's arithmetic finite while leaving every real tyre inside:
    a gas volume of 1 cm^3 to 100 m^3, a rim-to-gas coefficient up to 10^4 W/(m^2 K) (gas
    convection stays far below it), a carcass conductance up to 10^6 W/K, a gauge cold
    pressure >= 0 and a gauge limit > 0 (common practice, no source).
    """

    cold_pressure: float = declared("pressure", minimum=0.0)
    gas_volume: float = declared("volume", minimum=1e-6, maximum=100.0)
    cavity_area: float = declared("area", minimum=1e-6, maximum=100.0)
    h_cavity: float = declared("heat_transfer_coefficient", 15.0, minimum=0.0, maximum=1e4)
    outer_conductance: float | None = declared("thermal_conductance", None, minimum=0.0, maximum=1e6)
    pressure_limit: float | None = declared("pressure", None, positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, minimum=1.0, maximum=1e7)

    def __post_init__(self) -> None:
        convert_declared(self, "tyre")


@dataclass(frozen=True)
class ReportSettings:
    """What the report assesses. Temperatures [K].

    Parameters
    ----------
    unit : str
        Temperature unit of the text report: ``"degC"``, ``"degF"`` or ``"K"``.
    limits : mapping of str to float
        Temperature limit [K] per probe or series name, for the margins; a limit on a
        fuse plug's name is judged on the plug's own (lagged) temperature.
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

    def __post_init__(self) -> None:
        if self.unit not in ("degC", "degF", "K"):
            raise InputError(f"report unit must be 'degC', 'degF' or 'K', got {str(self.unit)[:80]!r}")
        for name, value in dict(self.limits).items():
            _check_temperature(value, f"limits[{str(name)[:80]!r}]")
        _check_temperature(self.cold_temperature, "cold_temperature")
        if self.cooling_below is not None:
            _check_temperature(self.cooling_below, "cooling_below")
        if not (isinstance(self.band, int | float) and np.isfinite(self.band) and self.band >= 0.0):
            raise InputError(f"band: must be a finite temperature difference >= 0 K, got {self.band!r}")

    def to_mapping(self) -> dict[str, Any]:
        """Plain JSON-able form (for the results file).

        Returns
        -------
        dict
            The fields as plain values (:func:`dataclasses.asdict`), SI units.
        """
        return asdict(self)

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any]) -> ReportSettings:
        """Inverse of :meth:`to_mapping`.

        Parameters
        ----------
        data : mapping
            A mapping written by :meth:`to_mapping`.

        Returns
        -------
        ReportSettings
            The settings, fuse plugs and tyre rebuilt as records.

        Raises
        ------
        InputError
            If ``data`` is not a mapping of known settings (a newer writer's, or damaged),
            naming the unknown or bad setting.
        """
        if not isinstance(data, Mapping):
            raise InputError(f"report settings: expected a mapping, got {type(data).__name__}")
        data = dict(data)
        _known_keys(data, cls, "report settings")
        plugs = data.get("fuse_plugs", ())
        if not isinstance(plugs, list | tuple) or not all(isinstance(p, Mapping) for p in plugs):
            raise InputError("report settings: fuse_plugs must be a list of mappings")
        for p in plugs:
            _known_keys(p, FusePlugSpec, "report settings: fuse plug")
        tyre = data.get("tyre")
        if tyre is not None and not isinstance(tyre, Mapping):
            raise InputError("report settings: tyre must be a mapping or null")
        if tyre:
            _known_keys(tyre, TyreSettings, "report settings: tyre")
        limits = data.get("limits", {})
        if not isinstance(limits, Mapping):
            raise InputError("report settings: limits must be a mapping of names to temperatures [K]")
        try:
            data["fuse_plugs"] = tuple(FusePlugSpec(**p) for p in plugs)
            data["tyre"] = TyreSettings(**tyre) if tyre else None
            return cls(**data)
        except (TypeError, ValueError) as exc:
            if isinstance(exc, InputError):
                raise InputError(f"report settings: {exc}") from None
            raise InputError(f"report settings: {type(exc).__name__}: {str(exc)[:80]}") from None


def _known_keys(data: Mapping[str, Any], cls: type, what: str) -> None:
    """InputError naming the keys of ``data`` that are not fields of dataclass ``cls``."""
    names = {f.name for f in fields(cls)}
    unknown = sorted(str(k)[:40] for k in data if k not in names)
    if unknown:
        raise InputError(
            f"{what}: unknown setting(s) {', '.join(unknown[:5])} (written by a newer heatstack, or damaged)"
        )


def _check_temperature(value: Any, where: str) -> None:
    """InputError unless ``value`` is a finite absolute temperature > 0 K."""
    if isinstance(value, bool) or not isinstance(value, int | float | np.floating | np.integer):
        raise InputError(f"{where}: expected a temperature [K], got {type(value).__name__}")
    if not (np.isfinite(value) and value > 0.0):
        raise InputError(f"{where}: must be a finite absolute temperature > 0 K, got {float(value)!r} K")


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
        ``cooling``, ``energy`` and ``warnings``. Every key names its unit (``_K``,
        ``_s``, ``_J``, ``_Pa``, ``_Pa_gauge``); ``temperature_unit`` is the unit the
        text forms show.

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
    return report


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


def tyre_gas_for(result: Result, settings: ReportSettings) -> TyreGas | None:
    """The tyre gas of a run under the report's tyre settings.

    Parameters
    ----------
    result : Result
    settings : ReportSettings
        Its ``tyre`` and ``cold_temperature`` [K] (the gas starts from the state a chained
        run carried, else cold).

    Returns
    -------
    TyreGas or None
        None without tyre settings or without the tyre-cavity series.
    """
    tyre = settings.tyre
    if tyre is None or "surface:tyre cavity" not in result.series:
        return None
    return tyre_gas(
        result,
        tyre.cold_pressure,
        tyre.gas_volume,
        tyre.cavity_area,
        tyre.h_cavity,
        settings.cold_temperature,
        tyre.outer_conductance,
        ambient_pressure=tyre.ambient_pressure,
    )


def with_tyre_gas_carried(result: Result, settings: ReportSettings) -> Result:
    """``result`` whose final state carries the tyre gas temperature (from :func:`tyre_gas_for`) on to a
    chained run; ``result`` itself without tyre settings or tyre-cavity series.

    Parameters
    ----------
    result : Result
        A finished run.
    settings : ReportSettings
        The report settings holding the tyre inputs (cold pressure, gas volume, conductances).

    Returns
    -------
    Result
        ``result`` with the tyre gas temperature [K] in its final state, or ``result`` unchanged.
    """
    gas = tyre_gas_for(result, settings)
    return result if gas is None else with_tyre_gas_state(result, gas)


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
    return "\n".join(lines) + "\n"


def _heading(text: str, markdown: bool) -> list[str]:
    """A section heading: Markdown level 2, or the text underlined with '='."""
    return ["", f"## {text}", ""] if markdown else ["", text, "=" * len(text)]
