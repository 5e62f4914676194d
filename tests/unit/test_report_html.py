"""report.html of the demo: one self-contained file, read in a real headless browser."""

from __future__ import annotations

import html
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from heatstack.cli import main
from heatstack.cli_shipped import demo_case_path
from heatstack.report import CAUTION, build_report
from heatstack.report_html import SECTIONS, html_report

BROWSERS = ("chromium", "chromium-browser", "google-chrome")
# every section the demo's answers fill (it has no warnings)
DEMO_SECTIONS = set(SECTIONS) - {"warnings"}


def _browser() -> str:
    for name in BROWSERS:
        found = shutil.which(name)
        if found:
            return found
    pytest.skip("no Chromium-family browser on this machine (Debian: apt-get install chromium)")


def _dom_after_load(page: Path, profile: Path) -> str:
    """The page's DOM after its load handler ran, from a headless browser started here."""
    command = [
        _browser(),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        f"--user-data-dir={profile}",
        "--virtual-time-budget=10000",
        "--dump-dom",
        page.resolve().as_uri(),
    ]
    done = subprocess.run(command, capture_output=True, text=True, timeout=180, check=False)
    assert done.returncode == 0, done.stderr[-2000:]
    return done.stdout


def _body_attributes(dom: str) -> dict[str, str]:
    body = re.search(r"<body([^>]*)>", dom)
    assert body, dom[:500]
    return dict(re.findall(r'(data-[\w-]+)="([^"]*)"', body.group(1)))


@pytest.fixture(scope="module")
def demo_folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    assert main(["demo", "--out", str(folder), "--quiet"]) == 0
    return folder


def test_demo_writes_one_self_contained_html_file(demo_folder):
    page = (demo_folder / "report.html").read_text(encoding="utf-8")
    sources = re.findall(r'<img src="([^"]{0,40})', page)
    figures = sorted(demo_folder.glob("*.png"))
    assert figures and len(sources) == len(figures)
    assert all(src.startswith("data:image/png;base64,") for src in sources)
    assert "http://" not in page and "https://" not in page and "<link" not in page


def test_the_demo_html_opens_in_a_browser_with_every_figure_decoded(demo_folder, tmp_path):
    attributes = _body_attributes(_dom_after_load(demo_folder / "report.html", tmp_path / "profile"))
    figures = len(list(demo_folder.glob("*.png")))
    assert attributes["data-figures"] == str(figures)
    assert attributes["data-figures-decoded"] == str(figures)
    assert set(attributes["data-sections"].split()) >= DEMO_SECTIONS


def test_a_figure_that_does_not_decode_is_caught(demo_folder, tmp_path):
    broken = tmp_path / "broken.png"
    broken.write_bytes(b"\x89PNG\r\n\x1a\n not really a picture")
    from heatstack.resultread import read_result

    result = read_result(demo_folder / "demo-results.h5")
    page = tmp_path / "report.html"
    good = sorted(demo_folder.glob("*.png"))[0]
    page.write_text(html_report(build_report(result), [good, broken]), encoding="utf-8")
    attributes = _body_attributes(_dom_after_load(page, tmp_path / "profile"))
    assert (attributes["data-figures"], attributes["data-figures-decoded"]) == ("2", "1")


def test_the_html_holds_caution_case_text_versions_and_ledger(demo_folder):
    page = (demo_folder / "report.html").read_text(encoding="utf-8")
    assert html.escape(CAUTION) in page
    assert html.escape('title = "Invented heavy rejected take-off') in page
    assert demo_case_path().read_text(encoding="utf-8").splitlines()[0] in html.unescape(page)
    for text in ("numpy", "scipy", "heatstack", "rubbing interface", "friction heat in", "Closure error"):
        assert text in page


def test_the_markdown_report_links_figure_files_that_exist(demo_folder):
    text = (demo_folder / "report.md").read_text(encoding="utf-8")
    links = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", text)
    assert links and all((demo_folder / link).is_file() for link in links)
    assert CAUTION in text
