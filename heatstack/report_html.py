"""The report files of a run: one self-contained HTML file, and Markdown beside the figures.

``report.html`` holds everything in one file that opens offline in any browser: the
caution, the warnings of the run, every table and sentence of the text report, the
energy ledger with the split of each rubbing interface, every figure embedded as a
base64 data URI, the case text and the versions of heatstack and its libraries. It
loads nothing from the network. On load, a few lines of script check that every figure
decoded and mark the page (``data-figures-decoded``, ``data-sections`` on ``<body>``), so
a test in a headless browser can read the result from the page.

``report.md`` is the same report in Markdown with links to the figure files beside it.
Both are written with :func:`heatstack.atomic.write_file_atomically`.
"""

from __future__ import annotations

import base64
import html
import platform
from collections.abc import Mapping, Sequence
from importlib import metadata
from pathlib import Path
from typing import Any

from .atomic import write_file_atomically
from .own_files import HTML_GENERATOR
from .report import format_report
from .report_text import (
    cooling_sentences,
    end_of_braking_sentence,
    numerics_sentence,
    report_tables,
    sensor_sentences,
    stop_sentences,
    tyre_sentences,
    unit_symbols,
)

__all__ = [
    "SECTIONS",
    "html_report",
    "html_page",
    "html_table",
    "html_paragraphs",
    "html_figure",
    "write_report_files",
    "library_versions",
]

#: Section ids of the HTML report, in page order (those of absent answers are left out).
SECTIONS = (
    "caution",
    "warnings",
    "peaks",
    "sensor",
    "fuse-plugs",
    "limits",
    "tyre",
    "cooling",
    "stops",
    "energy",
    "numerics",
    "figures",
    "case",
    "versions",
)

_LIBRARIES = ("numpy", "scipy", "h5py", "matplotlib", "pint", "fipy")

_STYLE = """
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: #1d1d1f;
       max-width: 62rem; margin: 0 auto; padding: 1.5rem 2rem 4rem; line-height: 1.45; }
h1 { font-size: 1.6rem; margin-bottom: 0.3rem; }
h2 { font-size: 1.2rem; margin-top: 2.2rem; border-bottom: 1px solid #d0d0d5; padding-bottom: 0.2rem; }
.caution { background: #fff4e5; border-left: 5px solid #d55e00; padding: 0.7rem 1rem; font-weight: 600; }
.warnings { background: #fdecea; border-left: 5px solid #b00020; padding: 0.5rem 1rem 0.5rem 2rem; }
table { border-collapse: collapse; margin: 0.6rem 0; font-variant-numeric: tabular-nums; }
th, td { border: 1px solid #d0d0d5; padding: 0.25rem 0.6rem; text-align: left; vertical-align: top; }
th { background: #f1f1f4; font-weight: 600; }
td.number, th.number { text-align: right; }
td.number, td:first-child { white-space: nowrap; }
figure { margin: 1.2rem 0; }
figure img { max-width: 100%; height: auto; border: 1px solid #e4e4e8; }
figcaption { font-size: 0.85rem; color: #555; }
pre { background: #f6f6f8; padding: 0.8rem; overflow-x: auto; font-size: 0.8rem; }
.note { color: #444; }
nav { font-size: 0.85rem; margin: 0.8rem 0 0; }
nav a { margin-right: 0.8rem; }
"""

# Checks, once the page has loaded, that every figure decoded; marks <body> for tests.
_SCRIPT = """
window.addEventListener("load", function () {
  var images = Array.prototype.slice.call(document.images);
  var decoded = images.filter(function (im) { return im.complete && im.naturalWidth > 0; });
  document.body.setAttribute("data-figures", String(images.length));
  document.body.setAttribute("data-figures-decoded", String(decoded.length));
  var ids = Array.prototype.map.call(document.querySelectorAll("section[id]"), function (s) { return s.id; });
  document.body.setAttribute("data-sections", ids.join(" "));
  images.forEach(function (im) { if (!(im.naturalWidth > 0)) { im.alt = "FIGURE DID NOT DECODE: " + im.alt; } });
});
"""

_TITLES = {
    "caution": "Caution",
    "warnings": "Warnings that bear on these answers",
    "peaks": "Peak temperatures",
    "sensor": "Why the gauge lags: sensor against the true heat-sink temperature",
    "fuse-plugs": "Fuse plugs",
    "limits": "Limits",
    "tyre": "Tyre gas",
    "cooling": "Cooling time",
    "stops": "The stops: where the kinetic energy went",
    "energy": "Energy ledger",
    "numerics": "How this was computed",
    "figures": "Figures",
    "case": "Case file",
    "versions": "Versions",
}


def library_versions() -> dict[str, str]:
    """Versions of Python, heatstack and the libraries it computes with (``"not installed"`` if absent).

    Returns
    -------
    dict of str to str
        ``python``, ``platform``, ``heatstack`` and each library's version.
    """
    out = {"python": platform.python_version(), "platform": platform.platform()}
    for name in ("heatstack", *_LIBRARIES):
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    return out


def _esc(text: Any) -> str:
    return html.escape(str(text), quote=True)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def html_table(head: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    """A table of text cells (escaped here); a column holding any number is right-aligned, the first never wraps.

    Parameters
    ----------
    head : sequence of str
        Column titles.
    rows : sequence of sequence of str
        The cells, row by row.

    Returns
    -------
    str
        The HTML ``<table>`` element.
    """
    numeric = [any(_is_number(row[k]) for row in rows) for k in range(len(head))]
    heads = "".join(
        f'<th class="{"number" if n else "text"}">{_esc(h)}</th>' for h, n in zip(head, numeric, strict=True)
    )
    body = "".join(
        "<tr>"
        + "".join(f'<td class="{"number" if n else "text"}">{_esc(c)}</td>' for c, n in zip(row, numeric, strict=True))
        + "</tr>"
        for row in rows
    )
    return f"<table><thead><tr>{heads}</tr></thead><tbody>{body}</tbody></table>"


def html_paragraphs(lines: Sequence[str], css: str = "") -> str:
    """One paragraph per line of text (escaped here), with an optional CSS class.

    Parameters
    ----------
    lines : sequence of str
        The lines of text.
    css : str, optional
        CSS class of every paragraph; none when empty.

    Returns
    -------
    str
        The HTML paragraphs.
    """
    attribute = f' class="{css}"' if css else ""
    return "".join(f"<p{attribute}>{_esc(line)}</p>" for line in lines)


def html_figure(path: Path) -> str:
    """One figure file as an embedded image with its file name as caption.

    Parameters
    ----------
    path : Path
        A PNG or SVG figure file.

    Returns
    -------
    str
        The HTML ``<figure>`` element, the image as a data URI.
    """
    kind = "image/svg+xml" if path.suffix.lower() == ".svg" else "image/png"
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    name = _esc(path.name)
    return (
        f'<figure><img src="data:{kind};base64,{data}" alt="{name}" loading="eager">'
        f"<figcaption>{name}</figcaption></figure>"
    )


def _energy_html(energy: Mapping[str, Any]) -> str:
    rows = [
        [name, f"{energy[key] / 1e6:.3f}"]
        for name, key in (
            ("friction heat in", "heat_in_J"),
            ("convected", "convected_J"),
            ("radiated", "radiated_J"),
            ("stored", "stored_J"),
        )
    ]
    closure = f"Closure error {energy['relative_closure_error']:.1e} of the input (stored - in + convected + radiated)."
    text = html_table(["account", "energy [MJ]"], rows) + html_paragraphs([closure], "note")
    if energy["interfaces"]:
        split = [
            [i["interface"], f"{i['first_side_J'] / 1e6:.3f}", f"{i['second_side_J'] / 1e6:.3f}"]
            for i in energy["interfaces"]
        ]
        text += html_table(["rubbing interface", "first side [MJ]", "second side [MJ]"], split)
    return text


def _section_bodies(report: Mapping[str, Any], figures: Sequence[Path], case_text: str) -> dict[str, str]:
    """The HTML body of every section present, by section id."""
    tables = report_tables(report)
    bodies = {"caution": f'<p class="caution">{_esc(report["caution"])}</p>'}
    if report["warnings"]:
        items = "".join(f"<li>{_esc(w)}</li>" for w in report["warnings"])
        bodies["warnings"] = f'<ul class="warnings">{items}</ul>'
    bodies["peaks"] = html_paragraphs([end_of_braking_sentence(report)]) + html_table(*tables["peaks"])
    if report.get("peak_note"):
        bodies["peaks"] += html_paragraphs([report["peak_note"]], "note")
    if report.get("sensor"):
        bodies["sensor"] = html_paragraphs(sensor_sentences(report))
    if report["fuse_plugs"]:
        bodies["fuse-plugs"] = html_table(*tables["fuse_plugs"]) + html_paragraphs([report["fuse_plug_note"]], "note")
    if report["limits"]:
        bodies["limits"] = html_table(*tables["limits"])
    if report.get("tyre"):
        bodies["tyre"] = html_paragraphs(tyre_sentences(report))
    if report.get("cooling"):
        bodies["cooling"] = html_paragraphs(cooling_sentences(report))
    if report.get("stops"):
        bodies["stops"] = html_paragraphs([t for t in stop_sentences(report) if t])
    bodies["energy"] = _energy_html(report["energy"])
    if report.get("numerics"):
        bodies["numerics"] = html_paragraphs([numerics_sentence(report["numerics"])])
    if figures:
        bodies["figures"] = "".join(html_figure(Path(f)) for f in figures)
    if case_text:
        bodies["case"] = f"<pre>{_esc(case_text)}</pre>"
    versions = library_versions()
    bodies["versions"] = html_table(["software", "version"], [[k, v] for k, v in versions.items()])
    return bodies


def html_report(report: Mapping[str, Any], figures: Sequence[Path] = (), case_text: str = "") -> str:
    """The report as one self-contained HTML page.

    Parameters
    ----------
    report : mapping
        :func:`heatstack.report.build_report` output.
    figures : sequence of Path
        PNG or SVG figure files to embed (base64), in order.
    case_text : str
        The case file's text, shown verbatim.

    Returns
    -------
    str
        The page (UTF-8 text); it refers to no other file.
    """
    bodies = _section_bodies(report, figures, case_text)
    present = [key for key in SECTIONS if key in bodies]
    unit = unit_symbols(report["temperature_unit"])[0]
    titles = {**_TITLES, "peaks": f"Peak temperatures [{unit}]"}
    sections = [(key, "" if key == "caution" else titles[key], bodies[key]) for key in present]
    return html_page(report["title"] or "heatstack report", report["heatstack_version"], sections)


def html_page(title: str, version: str, sections: Sequence[tuple[str, str, str]]) -> str:
    """One self-contained HTML page: title, navigation, the sections, the figure-decoding check.

    Parameters
    ----------
    title : str
        Page title (escaped here).
    version : str
        heatstack version shown under the title.
    sections : sequence of (str, str, str)
        Section id, heading (escaped here; "" for none and no navigation link) and body
        (HTML, already escaped), in page order.

    Returns
    -------
    str
        The page (UTF-8 text); it refers to no other file.
    """
    nav = "".join(f'<a href="#{key}">{_esc(head)}</a>' for key, head, _ in sections if head)
    parts = "".join(
        f'<section id="{key}">{f"<h2>{_esc(head)}</h2>" if head else ""}{body}</section>'
        for key, head, body in sections
    )
    title = _esc(title)
    return (
        '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
        f"{HTML_GENERATOR}"
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{title}</title><style>{_STYLE}</style></head>"
        f"<body><h1>{title}</h1><p class='note'>heatstack {_esc(version)}</p>"
        f"<nav>{nav}</nav>{parts}<script>{_SCRIPT}</script></body></html>\n"
    )


def _markdown(report: Mapping[str, Any], figures: Sequence[Path], folder: Path) -> str:
    """The Markdown report with links to the figure files (relative to ``folder`` where they lie in it)."""
    lines = [format_report(report, "markdown").rstrip("\n")]
    if figures:
        lines += ["", "## Figures", ""]
        for figure in figures:
            figure = Path(figure)
            try:
                link = figure.resolve().relative_to(folder.resolve()).as_posix()
            except ValueError:
                link = figure.resolve().as_posix()
            lines += [f"![{figure.stem}]({link})", ""]
    return "\n".join(lines).rstrip("\n") + "\n"


def write_report_files(
    report: Mapping[str, Any],
    folder: str | Path,
    figures: Sequence[Path] = (),
    case_text: str = "",
    name: str = "report",
) -> tuple[Path, Path]:
    """Write ``NAME.html`` (self-contained) and ``NAME.md`` (linking the figures) into ``folder``.

    Parameters
    ----------
    report : mapping
        :func:`heatstack.report.build_report` output.
    folder : str or Path
        An existing folder.
    figures : sequence of Path
        The figure files of the run.
    case_text : str
        The case file's text.
    name : str
        The files' name without suffix (``report``; ``CASE-report`` when several cases share a folder).

    Returns
    -------
    (Path, Path)
        The HTML and the Markdown file written.

    Raises
    ------
    ResultFileError
        If a file cannot be written (the message names it).
    """
    folder = Path(folder)
    page = html_report(report, figures, case_text)
    markdown = _markdown(report, figures, folder)
    html_path = write_file_atomically(
        folder / f"{name}.html", lambda temp: temp.write_text(page, encoding="utf-8"), "report file"
    )
    md_path = write_file_atomically(
        folder / f"{name}.md", lambda temp: temp.write_text(markdown, encoding="utf-8"), "report file"
    )
    return html_path, md_path
