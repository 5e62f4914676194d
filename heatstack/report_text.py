"""The report's numbers for reading: temperatures in degC, degF or K, times in minutes, the
tables and the sentences shared by the text, Markdown and HTML forms of the report.

Everything here reads the data of :func:`heatstack.report.build_report` (SI, full
precision) and turns it into text; nothing is computed again.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN, RUBBING_FACE_MAX, WHEEL_MAX
from .units import from_si

__all__ = [
    "SERIES_LABELS",
    "report_tables",
    "end_of_braking_sentence",
    "sensor_sentences",
    "tyre_sentences",
    "cooling_sentences",
    "energy_sentence",
    "numerics_sentence",
    "stop_sentences",
    "shown_temperature",
    "shown_difference",
    "shown_minutes",
    "unit_symbols",
]

#: How the report names the global series (other names are shown as they are).
SERIES_LABELS = {
    HEAT_SINK_MEAN: "heat sink mean (mass-weighted)",
    HEAT_SINK_MAX: "heat sink, hottest cell",
    RUBBING_FACE_MAX: "heat sink, hottest rubbing surface",
    WHEEL_MAX: "wheel, hottest cell",
}


def shown_temperature(value: float | None, unit: str) -> str:
    """A temperature for reading, in ``unit``, one decimal; ``-`` for None.

    Parameters
    ----------
    value : float or None
        Temperature [K].
    unit : str
        ``"degC"``, ``"degF"`` or ``"K"``.

    Returns
    -------
    str
        The text.
    """
    return "-" if value is None else f"{float(from_si(value, 'temperature', unit)):.1f}"


def shown_difference(value: float | None, unit: str) -> str:
    """A temperature difference for reading (in °F when ``unit`` is degF), one decimal.

    Parameters
    ----------
    value : float or None
        Temperature difference [K].
    unit : str
        ``"degC"``, ``"degF"`` or ``"K"``.

    Returns
    -------
    str
        The text; ``-`` for None.
    """
    return "-" if value is None else f"{float(value) * (1.8 if unit == 'degF' else 1.0):.1f}"


def shown_minutes(seconds: float | None) -> str:
    """A time in minutes, two decimals; ``-`` for None.

    Parameters
    ----------
    seconds : float or None
        Time [s].

    Returns
    -------
    str
        The text.
    """
    return "-" if seconds is None else f"{seconds / 60.0:.2f}"


def unit_symbols(unit: str) -> tuple[str, str]:
    """(symbol of a temperature, symbol of a temperature difference) for ``unit``.

    Parameters
    ----------
    unit : str
        ``"degC"``, ``"degF"`` or ``"K"``.

    Returns
    -------
    temperature, difference : str
        E.g. ``"°C"`` and ``"K"``.
    """
    symbol = {"degC": "°C", "degF": "°F", "K": "K"}[unit]
    return symbol, "°F" if unit == "degF" else "K"


def report_tables(report: Mapping[str, Any]) -> dict[str, tuple[list[str], list[list[str]]]]:
    """The report's tables for reading: name -> (column heads, rows of cell text).

    Shared by the Markdown, text and HTML forms so they show the same numbers.

    Parameters
    ----------
    report : mapping
        The report (:func:`heatstack.report.build_report`), values in SI.

    Returns
    -------
    dict of str to (list of str, list of list of str)
        ``"peaks"``, and ``"fuse_plugs"`` and ``"limits"`` when the report has them;
        temperatures in the report's unit, times in minutes.
    """
    unit = report["temperature_unit"]
    u, du = unit_symbols(unit)

    def delay(row: Mapping[str, Any]) -> str:
        return "during braking" if row["during_braking"] else shown_minutes(row["delay_after_braking_s"])

    tables = {
        "peaks": (
            ["probe / series", f"peak [{u}]", "at [min]", "after braking [min]"],
            [
                [r["label"], shown_temperature(r["peak_K"], unit), shown_minutes(r["time_of_peak_s"]), delay(r)]
                for r in report["peaks"]
            ],
        )
    }
    if report["fuse_plugs"]:
        tables["fuse_plugs"] = (
            ["plug", f"plug peak [{u}]", "at [min]", f"release [{u}]", f"margin [{du}]", "releases",
             "release at [min]", f"rim at seat peak [{u}]"],
            [
                [
                    r["name"], shown_temperature(r["peak_K"], unit), shown_minutes(r["time_of_peak_s"]),
                    shown_temperature(r["release_temperature_K"], unit), shown_difference(r["margin_K"], unit),
                    "yes" if r["releases"] else "no", shown_minutes(r["release_time_s"]),
                    shown_temperature(r["rim_at_seat_peak_K"], unit),
                ]
                for r in report["fuse_plugs"]
            ],
        )  # fmt: skip
    if report["limits"]:
        tables["limits"] = (
            ["probe / series", "judged on", f"limit [{u}]", f"peak [{u}]", f"margin [{du}]", "exceeded",
             "crossed [min]"],
            [
                [
                    r["name"], r["assessed"], shown_temperature(r["limit_K"], unit),
                    shown_temperature(r["peak_K"], unit), shown_difference(r["margin_K"], unit),
                    "yes" if r["exceeded"] else "no", _crossed(r["crossings"]),
                ]
                for r in report["limits"]
            ],
        )  # fmt: skip
    return tables


def _crossed(crossings: list[dict]) -> str:
    marks = {"up": "above", "down": "below"}
    return ", ".join(f"{marks[c['direction']]} {shown_minutes(c['time_s'])}" for c in crossings) or "never"


def end_of_braking_sentence(report: Mapping[str, Any]) -> str:
    """What "end of braking" means in this report, and when it is.

    Parameters
    ----------
    report : mapping
        The report.

    Returns
    -------
    str
        The sentence (time in minutes).
    """
    return (
        f"End of braking: {shown_minutes(report['end_of_braking_s'])} min (end of the stop that loaded the "
        "brake; later small events do not move it). Delays below count from it."
    )


def sensor_sentences(report: Mapping[str, Any]) -> list[str]:
    """Why the gauge lags, in words.

    Parameters
    ----------
    report : mapping
        The report (its ``sensor`` section).

    Returns
    -------
    list of str
        Two sentences: the peak and its delays, and the offsets from the heat sink.
    """
    s, unit = report["sensor"], report["temperature_unit"]
    u, du = unit_symbols(unit)
    band_time = s["within_band_of_mean_s"]
    within = "no time in the record" if band_time is None else f"{shown_minutes(band_time)} min"
    return [
        f"The sensor reading peaks at {shown_temperature(s['peak_K'], unit)} {u}, "
        f"{shown_minutes(s['delay_after_braking_s'])} min after the end of braking "
        f"({shown_minutes(s['conduction_delay_s'])} min of conduction to the sensor location, "
        f"{shown_minutes(s['instrument_delay_s'])} min of instrument lag, time constant {s['time_constant_s']:g} s).",
        f"At its peak it reads {_off(s['offset_to_heat_sink_mean_at_peak_K'], unit, du)} the "
        f"heat-sink mass-mean and {_off(s['offset_to_hottest_cell_at_peak_K'], unit, du)} the "
        f"hottest heat-sink cell; at worst it reads {_off(s['largest_under_reading_K'], unit, du)} the mean. "
        f"It first comes within {shown_difference(s['band_K'], unit)} {du} of the mean at {within}.",
    ]


def _off(offset: float, unit: str, du: str) -> str:
    """``reading - reference`` [K] in words: "99.7 K below" or "3.1 K above"."""
    return f"{shown_difference(abs(offset), unit)} {du} {'below' if offset < 0 else 'above'}"


def tyre_sentences(report: Mapping[str, Any]) -> list[str]:
    """Tyre gas pressure peak, when the limit is first reached and left, and whether a plug releases first.

    Parameters
    ----------
    report : mapping
        The report (its ``tyre`` section).

    Returns
    -------
    list of str
        The sentences (pressures in bar, times in minutes).
    """
    t, unit = report["tyre"], report["temperature_unit"]
    g = t["outer_conductance_W_per_K"]
    lines = [
        f"Cold {t['cold_pressure_Pa_gauge'] / 1e5:.2f} bar gauge (against {t['ambient_pressure_Pa'] / 100:.0f} hPa "
        f"ambient); peak {t['peak_pressure_Pa_gauge'] / 1e5:.2f} bar gauge at {shown_minutes(t['time_of_peak_s'])} min "
        f"(gas {shown_temperature(t['peak_gas_temperature_K'], unit)} {unit_symbols(unit)[0]}). Carcass conductance "
        f"{g:.1f} W/K" + (" (estimated from the tyre's outer surface, 6 W/(m² K))." if t["outer_conductance_estimated"]
                           else "."),
    ]  # fmt: skip
    if "pressure_limit_Pa_gauge" in t:
        if t["limit_first_reached_s"] is None:
            when = "is not reached within the record"
        else:
            back = t["back_below_limit_s"]
            when = f"is first reached at {shown_minutes(t['limit_first_reached_s'])} min and " + (
                "not left within the record" if back is None else f"left at {shown_minutes(back)} min"
            )
        lines.append(
            f"Limit {t['pressure_limit_Pa_gauge'] / 1e5:.2f} bar gauge {when}; margin "
            f"{t['pressure_margin_Pa'] / 1e5:.2f} bar{' - EXCEEDED' if t['limit_exceeded'] else ''}."
        )
        if "plug_releases_before_pressure_limit" in t:
            lines.append(
                "A fuse plug releases before the pressure limit is reached "
                "(pressures after a release assume no deflation)."
                if t["plug_releases_before_pressure_limit"]
                else "No fuse plug releases before the pressure limit is reached."
            )
    return lines


def cooling_sentences(report: Mapping[str, Any]) -> list[str]:
    """When the cooling series falls below its threshold, or that it does not within the record.

    Parameters
    ----------
    report : mapping
        The report (its ``cooling`` section).

    Returns
    -------
    list of str
        One sentence.
    """
    c, unit = report["cooling"], report["temperature_unit"]
    u = unit_symbols(unit)[0]
    below = f"{shown_temperature(c['below_K'], unit)} {u}"
    series = SERIES_LABELS.get(c["series"], c["series"])
    if c["reached"]:
        return [
            f"The {series} falls below {below} at {shown_minutes(c['time_s'])} min "
            f"({shown_minutes(c['after_braking_s'])} min after braking)."
        ]
    return [
        f"The {series} does not fall below {below} within the record (ends at {shown_minutes(c['record_end_s'])} "
        f"min at {shown_temperature(c['value_at_record_end_K'], unit)} {u})."
    ]


def energy_sentence(e: Mapping[str, Any]) -> str:
    """The energy ledger in one sentence [MJ].

    Parameters
    ----------
    e : mapping
        The report's energy section (heat in, convected, radiated, stored [J], closure error).

    Returns
    -------
    str
        The sentence.
    """
    return (
        f"in {e['heat_in_J'] / 1e6:.3f}, convected {e['convected_J'] / 1e6:.3f}, "
        f"radiated {e['radiated_J'] / 1e6:.3f}, stored {e['stored_J'] / 1e6:.3f}; "
        f"closure error {e['relative_closure_error']:.1e} of the input."
    )


def numerics_sentence(n: Mapping[str, Any]) -> str:
    """How the run was computed, in one sentence: the grid, the time stepping and its effort.

    Parameters
    ----------
    n : mapping
        The report's numerics section (cells, cell widths [m], scheme and its control [K or
        s], steps, retried steps, Newton iterations).

    Returns
    -------
    str
        The sentence.
    """
    (r_lo, r_hi), (z_lo, z_hi) = n["radial_width_m"], n["axial_width_m"]
    grid = (
        f"{n['cell_count']} cells, {1e3 * r_lo:.2g}-{1e3 * r_hi:.2g} mm wide radially and "
        f"{1e3 * z_lo:.2g}-{1e3 * z_hi:.2g} mm axially"
    )
    if n.get("fixed_step_s") is not None:
        control = f"{'BDF2' if n['scheme'] == 'bdf2' else 'backward Euler'} at fixed steps of {n['fixed_step_s']:g} s"
    elif n["scheme"] == "bdf2":
        control = (
            f"BDF2 under error control at accuracy {n['accuracy_K']:g} K (peaks within about this of the converged "
            "answer on this grid; the grid's own error is not in it)"
        )
    else:
        control = f"backward Euler, steps aimed at a change of {n['target_change_K']:g} K"
    effort = ""
    if n.get("step_count") is not None:
        retried, iterations = n.get("retried_step_count", 0), n.get("newton_iteration_count", 0)
        effort = f"; {n['step_count']} steps ({retried} retried), {iterations} Newton iterations"
    return f"{grid}; time stepping: {control}{effort}."


_STOP_TERMS = (
    ("brakes_J", "brakes"),
    ("reverse_thrust_J", "reverse thrust"),
    ("drag_J", "aerodynamic drag"),
    ("rolling_resistance_J", "rolling resistance"),
    ("potential_energy_J", "potential energy gained"),
    ("forward_thrust_J", "forward thrust work (taken off)"),
)


def stop_sentences(report: Mapping[str, Any]) -> list[str]:
    """One paragraph per ground-roll stop: distance, time, where the kinetic energy went, energy per brake.

    Parameters
    ----------
    report : mapping
        The report (its ``stops`` list).

    Returns
    -------
    list of str
        The paragraphs, separated by empty strings.
    """
    out = []
    for stop in report.get("stops", []):
        terms = ", ".join(f"{label} {stop[key] / 1e6:.2f}" for key, label in _STOP_TERMS)
        per_brake = ", ".join(f"{e / 1e6:.2f}" for e in stop["energy_per_brake_J"])
        out.append(
            f"{stop['event']} ({stop['phase']}): from {stop['brake_on_speed_m_per_s'] / 0.514444:.1f} kt ground "
            f"speed, {stop['stopping_distance_m']:.0f} m in {stop['stopping_time_s']:.1f} s. Kinetic energy "
            f"removed {stop['kinetic_energy_removed_J'] / 1e6:.2f} MJ: {terms} MJ (closure "
            f"{stop['closure_J']:.2g} J). Energy per brake [MJ]: {per_brake}."
        )
        out.append("")
    return out[:-1] if out else out
