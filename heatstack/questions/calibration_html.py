"""The calibration report as one self-contained HTML page (``report.html`` of ``heatstack calibrate``).

The page holds the caution, the fit's outcome, per test run the measured and fitted
traces with their residuals (figures embedded as base64 data URIs), the trace table with
the runs test, the parameter table (bounds, prior, estimate, interval, uncertainty,
verdict), the identifiability statement with the singular values and the correlation
matrix, the profile when one was asked for, the predicted answers with their intervals,
the calibration and base case texts and the software versions. It loads nothing from the
network; it is built from the page pieces of :mod:`heatstack.report_html`.
"""

from __future__ import annotations

import html
from collections.abc import Sequence
from pathlib import Path

from .. import __version__
from ..report import CAUTION
from ..report_html import html_figure, html_page, html_paragraphs, html_table, library_versions
from .calibration import CalibrationFit
from .calibration_records import Calibration
from .calibration_report import (
    CALIBRATION_NOTE,
    WHITE_LEVEL,
    CalibrationAnswers,
    answer_table,
    correlation_table,
    parameter_table,
    trace_table,
    uncertainty_statement,
)
from .identifiability import DETERMINED_RELATIVE_SD, UNDETERMINED_RELATIVE_SD, Identifiability, Profile

__all__ = ["calibration_html"]


def _outcome(calibration: Calibration, fit: CalibrationFit) -> str:
    lines = [
        f"Base case {calibration.base_origin}; {len(calibration.runs)} test runs, {calibration.n_points} readings, "
        f"{len(fit.parameters)} fitted parameters.",
        f"{fit.message}. Reduced chi-square {fit.reduced_chi_square:.3g}; {fit.model_runs} model runs.",
    ]
    body = html_paragraphs(lines) + html_paragraphs(uncertainty_statement(fit), "note")
    if not fit.converged:
        body += html_paragraphs(["The fit did not converge: the values below are its best estimate."], "warnings")
    return body


def _identifiability(ident: Identifiability) -> str:
    rule = (
        f"Determined: relative standard deviation from the traces alone at most {DETERMINED_RELATIVE_SD:.0%} and "
        "little weight in combinations the traces barely see; poorly determined: at most "
        f"{UNDETERMINED_RELATIVE_SD:.0%}; not determined: wider, or not seen at all."
    )
    singular = "Scaled singular values: " + ", ".join(f"{s:.3g}" for s in ident.singular_values)
    return (
        html_paragraphs(ident.statement.splitlines())
        + html_paragraphs([rule, singular], "note")
        + "<h3>Correlation matrix</h3>"
        + html_table(*correlation_table(ident))
    )


def _profile(profile: Profile) -> str:
    rows = [[f"{v:.5g}", f"{c:.4g}"] for v, c in zip(profile.values, profile.chi_square, strict=True)]
    interval = f"Likelihood-ratio 95 % interval: {profile.lower_95:.4g} to {profile.upper_95:.4g}."
    return html_table([f"{profile.name} [SI]", "chi-square"], rows) + html_paragraphs([interval])


def calibration_html(
    calibration: Calibration,
    fit: CalibrationFit,
    ident: Identifiability,
    answers: CalibrationAnswers | None,
    profile: Profile | None,
    run_figures: Sequence[Path],
) -> str:
    """The calibration report as one self-contained HTML page.

    Parameters
    ----------
    calibration, fit, ident, answers, profile
        What :func:`heatstack.questions.calibrate.calibrate` found.
    run_figures : sequence of Path
        One PNG per test run (measured and fitted traces with residuals), embedded.

    Returns
    -------
    str
        The page (UTF-8 text); it refers to no other file.
    """
    white = f"Runs test: Wald-Wolfowitz on the residual signs, two-sided; white when p > {WHITE_LEVEL:g}."
    sections = [
        ("caution", "", html_paragraphs([CAUTION, CALIBRATION_NOTE], "caution")),
        ("fit", "The fit", _outcome(calibration, fit)),
        ("runs", "Measured and fitted traces, with residuals", "".join(html_figure(f) for f in run_figures)),
        ("traces", "Traces", html_table(*trace_table(calibration, fit)) + html_paragraphs([white], "note")),
        ("parameters", "Parameters (95 % linearised intervals)", html_table(*parameter_table(fit, ident))),
        ("identifiability", "What the traces determine", _identifiability(ident)),
    ]
    if profile is not None:
        sections.append(("profile", f"Profile of {profile.name}", _profile(profile)))
    if answers is not None:
        head = f"Predicted answers for the base case, with 95 % intervals ({answers.samples} parameter draws)"
        sections.append(("answers", head, html_table(*answer_table(answers))))
    sections.append(("calibration-file", "Calibration file", _pre(calibration.text)))
    sections.append(("case", "Base case file", _pre(calibration.base_text)))
    versions = library_versions()
    table = html_table(["software", "version"], [[k, v] for k, v in versions.items()])
    sections.append(("versions", "Versions", table))
    return html_page(calibration.title, __version__, sections)


def _pre(text: str) -> str:
    return f"<pre>{html.escape(text, quote=True)}</pre>"
