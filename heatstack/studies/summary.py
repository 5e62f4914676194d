"""The Markdown section that summarises a study: counts, release probabilities, margins, sensitivities.

:func:`study_report` reads a :class:`~heatstack.studies.table.StudyTable` and lists the case
counts, the fuse-plug release probabilities with their Wilson and Clopper-Pearson intervals,
percentiles of every margin and plug peak, the sensitivity ranking of one output, the
warnings raised in the cases and the first failed cases; the statistics come from
:mod:`heatstack.studies.analysis`. The section carries the caution of every results output.
"""

from __future__ import annotations

import math
import re

import numpy as np

from ..errors import InputError
from ..report import CAUTION
from ..units import from_si
from .analysis import check_confidence, governing_plugs, margin_percentiles, release_probability, sensitivity
from .labels import output_label, plug_names
from .table import StudyTable

__all__ = ["study_report"]


def _fmt(value: float, digits: int = 1) -> str:
    return "n/a" if not math.isfinite(value) else f"{value:.{digits}f}"


def study_report(
    table: StudyTable,
    confidence: float = 0.95,
    output: str | None = None,
    temperature_unit: str = "degC",
    max_failures: int = 10,
) -> str:
    """A Markdown section summarising a study.

    Contents: case counts; fuse-plug release probability (any plug and per plug) with
    Wilson and Clopper-Pearson intervals; 5th/50th/95th percentiles of every margin;
    the sensitivity ranking of ``output``; the first failed cases.

    Parameters
    ----------
    table : StudyTable
    confidence : float
    output : str, optional
        Output ranked for sensitivity (see :func:`sensitivity`).
    temperature_unit : {"degC", "degF", "K"}
        Unit of the peak temperatures listed (margins are always in K).
    max_failures : int
        Failed cases listed.

    Returns
    -------
    str
        The Markdown section, ending in a newline.
    """
    confidence = check_confidence(confidence)
    counts = table.counts()
    lines = [
        f"## Study: {table.title or 'untitled'}",
        "",
        f"*{CAUTION}*",
        "",
        f"Cases: {table.n_cases} ({counts['ok']} finished, {counts['failed']} failed, "
        f"{counts['pending']} not run); sampling: {table.method or 'unknown'}.",
    ]
    lines.append(_numerics_line(table))
    if table.method == "grid":
        lines.append("Grid sampling: the release fractions below are fractions of grid points, not probabilities.")
    if counts["ok"]:
        lines += _release_lines(table, confidence)
        lines += _margin_lines(table)
        lines += _plug_peak_lines(table, temperature_unit)
    if counts["ok"] > len(table.parameter_names) + 1:
        lines += _sensitivity_lines(table, output)
    lines += _warning_lines(table)
    lines += _failure_lines(table, max_failures)
    return "\n".join(lines) + "\n"


def _numerics_line(table: StudyTable) -> str:
    """How the cases were computed: the study's cell size and step control, or each case's own; median steps."""
    settings = []
    if table.cell_size is not None:
        settings.append(f"cells of {1e3 * table.cell_size:g} mm")
    if table.accuracy is not None:
        settings.append(
            f"BDF2 time steps at accuracy {table.accuracy:g} K (peaks within about this of the converged answer on "
            "that grid)"
        )
    if table.target_change is not None:
        settings.append(f"backward-Euler steps aimed at a change of {table.target_change:g} K")
    text = (
        "Numerics: " + " and ".join(settings) + ", set by the study for every case"
        if settings
        else "Numerics: each case's own cell size and solver settings (the study overrides none)"
    )
    if table.cell_size is None and settings:
        text += " (cell size: each case's own)"
    if "solver:steps" in table and np.any(np.isfinite(table["solver:steps"])):
        text += f"; median {np.nanmedian(table['solver:steps']):.0f} time steps per case"
    return text + "."


_TABLE_EDGE = re.compile(r"temperature (-?\d+(?:\.\d+)?) K is outside")


def _warning_lines(table: StudyTable) -> list[str]:
    """Each distinct warning raised in the cases, with how many cases raised it; empty if none.

    Warnings that differ only in the temperature that left a material table are one line,
    with the range of those temperatures.
    """
    if "warnings" not in table.columns:
        return []
    counts: dict[str, int] = {}
    values: dict[str, list[float]] = {}
    for text in table["warnings"]:
        for line in dict.fromkeys(str(text).splitlines()):
            if not line.strip():
                continue
            found = _TABLE_EDGE.search(line)
            escaped = line.replace("{", "{{").replace("}", "}}")
            key = _TABLE_EDGE.sub("temperature {} K is outside", escaped) if found else escaped
            counts[key] = counts.get(key, 0) + 1
            if found:
                values.setdefault(key, []).append(float(found.group(1)))
    if not counts:
        return []
    lines = ["", "### Warnings raised in the cases", ""]
    for key, n in counts.items():
        seen = values.get(key)
        if seen:
            key = key.format(f"{seen[0]:.1f}" if min(seen) == max(seen) else f"{min(seen):.1f} to {max(seen):.1f}")
        else:
            key = key.format()
        lines.append(f"- {key} ({n} {'case' if n == 1 else 'cases'})")
    return lines


def _release_lines(table: StudyTable, confidence: float) -> list[str]:
    """Fuse-plug release table (any plug, then each plug) with both intervals; empty without plugs."""
    plugs = [n.split(":", 1)[1] for n in table.output_names if n.startswith("plug_released:")]
    if not plugs:
        return []
    level = f"{100 * confidence:g} %"
    lines = [
        "",
        "### Fuse-plug release",
        "",
        f"| plug | released / cases | estimate | Wilson {level} | Clopper-Pearson {level} |",
        "|---|---|---|---|---|",
    ]
    for plug in [None, *plugs]:
        est = release_probability(table, plug, confidence)
        lines.append(
            f"| {est.label} | {est.events} / {est.trials} | {est.estimate:.3f} | "
            f"{est.wilson[0]:.3f} - {est.wilson[1]:.3f} | "
            f"{est.clopper_pearson[0]:.3f} - {est.clopper_pearson[1]:.3f} |"
        )
    return lines


def _margin_lines(table: StudyTable) -> list[str]:
    """Percentiles of every plug and limit margin [K]; empty without margins."""
    margins = [n for n in table.output_names if n.startswith(("plug_margin", "limit_margin:"))]
    if not margins:
        return []
    lines = [
        "",
        "### Margins [K] (positive: below the release temperature or limit)",
        "",
        "| quantity | P5 | P50 | P95 |",
        "|---|---|---|---|",
    ]
    for name in margins:
        p = margin_percentiles(table, name)
        lines.append(f"| {output_label(name)} | {_fmt(p[5.0])} | {_fmt(p[50.0])} | {_fmt(p[95.0])} |")
    return lines


def _plug_peak_lines(table: StudyTable, temperature_unit: str) -> list[str]:
    """Percentiles of each fuse plug's peak temperature in ``temperature_unit``; empty without plugs."""
    peaks = [n for n in table.output_names if n.startswith("plug_peak:")]
    if not peaks:
        return []
    lines = [
        "",
        f"### Fuse-plug peak temperatures [{temperature_unit}]",
        "",
        "| plug | P5 | P50 | P95 |",
        "|---|---|---|---|",
    ]
    for name in peaks:
        p = margin_percentiles(table, name)
        shown = [from_si(p[q], "temperature", temperature_unit) for q in (5.0, 50.0, 95.0)]
        lines.append(f"| {name.split(':', 1)[1]} | " + " | ".join(_fmt(v) for v in shown) + " |")
    return lines


def _sensitivity_lines(table: StudyTable, output: str | None) -> list[str]:
    """The sensitivity ranking of ``output``, or why it was not computed."""
    try:
        result = sensitivity(table, output)
    except InputError as exc:
        return ["", f"Sensitivity not computed: {exc}"]
    lines = [
        "",
        f"### Sensitivity of {output_label(result.output, plug_names(table.output_names))} "
        f"({result.cases} cases, R^2 of the linear fit = {result.r_squared:.2f})",
        "",
    ]
    lines += [f"**Warning:** {w}." for w in result.warnings]
    if result.output == "plug_margin_min":
        governing = governing_plugs(table)
        if governing:
            shares = ", ".join(f"{name} in {count}" for name, count in governing.items())
            lines.append(
                f"The smallest margin is that of {shares} of {sum(governing.values())} cases; a parameter of another "
                "plug cannot move it."
            )
    if len(lines) > 3:
        lines.append("")
    lines += [
        "| parameter | Spearman rank correlation | its 95 % interval | p-value | standardised regression coefficient |",
        "|---|---|---|---|---|",
    ]
    for e in result.entries:
        low, high = e.spearman_interval
        mark = "" if e.distinguishable else " (holds 0)"
        lines.append(
            f"| {e.parameter} | {e.spearman:+.3f} | {low:+.2f} to {high:+.2f}{mark} | {e.p_value:.2g} | {e.src:+.3f} |"
        )
    if result.skipped:
        lines.append(f"Constant over the cases (left out): {', '.join(result.skipped)}.")
    return lines


def _failure_lines(table: StudyTable, max_failures: int) -> list[str]:
    """The first line of the error of the first ``max_failures`` failed cases; empty if none failed."""
    failed = np.flatnonzero(table["status"] == "failed")
    if not failed.size:
        return []
    lines = ["", "### Failed cases", ""]
    for index in failed[:max_failures]:
        first = str(table["error"][index]).splitlines()[0] if table["error"][index] else "no error text"
        lines.append(f"- case {int(index)}: {first}")
    if failed.size > max_failures:
        lines.append(f"- ... and {failed.size - max_failures} more")
    return lines
