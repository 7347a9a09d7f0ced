"""The demo report as a hand-over document, measured in headless chromium (Debian's package, via playwright).

Checks the layout promises of the report: findings first with a link each, detail folded but printed expanded,
an initial page no taller than 15,000 px at 1300 px, no table wider than its container on screen or on A4,
and a single-file report that needs nothing beyond itself.
"""
from __future__ import annotations

from pathlib import Path

import pytest

from .test_browser import CHROMIUM, LAUNCH_ARGS

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's chromium at /usr/bin/chromium "
                       "(apt-get install -y chromium)"),
]

#: the page height the demo report may start at, 1300 px wide (the hand-over goal)
MAX_INITIAL_HEIGHT = 15_000
#: A4 at 96 px per inch less the print margins of the page's stylesheet (14 mm each side)
A4_CONTENT_WIDTH = round((210 - 2 * 14) / 25.4 * 96)

OVERFLOWING_TABLES = """() => Array.from(document.querySelectorAll('table'))
    .filter(t => t.getClientRects().length > 0)
    .filter(t => t.scrollWidth > t.parentElement.clientWidth + 1
                 || t.getBoundingClientRect().right > document.querySelector('main').getBoundingClientRect().right + 1)
    .map(t => (t.caption ? t.caption.textContent : '?') + ' ' + t.scrollWidth + '>' + t.parentElement.clientWidth)"""


@pytest.fixture(scope="module")
def demo_folders(tmp_path_factory, demo_run) -> tuple[Path, Path]:
    from scalewright.cli import main

    root = tmp_path_factory.mktemp("handover")
    folder = demo_run.folder  # the session's demo (conftest.py): one full demo report for the whole suite
    single = root / "single"
    assert main(["report", str(folder / "staff-climate.csv"), "--scales", str(folder / "staff-climate.yaml"),
                 "--out", str(single), "--single-file", "--iterations", "5", "--quiet"]) == 0
    return folder, single


@pytest.fixture(scope="module")
def browser():
    playwright_api = pytest.importorskip("playwright.sync_api")
    with playwright_api.sync_playwright() as driver:
        launched = driver.chromium.launch(executable_path=str(CHROMIUM), args=LAUNCH_ARGS)
        try:
            yield launched
        finally:
            launched.close()


def _open(browser, path: Path, width: int = 1300):
    page = browser.new_page(viewport={"width": width, "height": 900})
    requests: list[str] = []
    page.on("request", lambda request: requests.append(request.url))
    page.goto(path.resolve().as_uri(), wait_until="load")
    return page, requests


def test_initial_height_and_nothing_overflows_on_screen(demo_folders, browser):
    page, _ = _open(browser, demo_folders[0] / "index.html")
    height = page.evaluate("document.documentElement.scrollHeight")
    assert height <= MAX_INITIAL_HEIGHT, f"the demo report starts {height} px tall"
    assert page.evaluate(OVERFLOWING_TABLES) == []
    # and with every detail opened
    page.evaluate("document.querySelectorAll('details').forEach(d => d.open = true)")
    assert page.evaluate(OVERFLOWING_TABLES) == []
    # flags stay visible: every flag badge lies inside the content column
    hidden_flags = page.evaluate("""() => { const right = document.querySelector('main').getBoundingClientRect().right;
        return Array.from(document.querySelectorAll('.flag')).filter(f => f.getBoundingClientRect().right > right + 1)
                    .length; }""")
    assert hidden_flags == 0
    page.close()


def test_findings_come_first_each_with_a_link_that_resolves(demo_folders, browser):
    page, _ = _open(browser, demo_folders[0] / "index.html")
    first_section = page.evaluate("document.querySelector('main section').id")
    assert first_section == "findings"
    findings = page.evaluate("""() => Array.from(document.querySelectorAll('#findings ol.findings > li')).map(li => {
        const link = li.querySelector('a[href^="#"]');
        return {text: li.textContent, target: link ? link.getAttribute('href').slice(1) : null}; })""")
    assert 5 <= len(findings) <= 12
    for finding in findings:
        assert finding["target"], finding
        assert page.evaluate("id => document.getElementById(id) !== null", finding["target"]), finding
    # the demo's material result: night shift reports the highest workload strain
    assert any("Workload strain" in f["text"] and "night" in f["text"] for f in findings)
    page.close()


def test_details_fold_on_screen_and_open_on_click(demo_folders, browser):
    page, _ = _open(browser, demo_folders[0] / "index.html")
    assert page.evaluate("document.querySelectorAll('details').length") >= 10
    assert page.evaluate("document.querySelectorAll('details[open]').length") == 0
    first = page.locator("details").first
    inner = first.locator("table, figure, p").first
    assert not inner.is_visible()
    first.locator("summary").click()
    assert inner.is_visible()
    page.close()


def test_print_layout_expands_details_and_cuts_no_table(demo_folders, browser, tmp_path):
    page, _ = _open(browser, demo_folders[0] / "index.html", width=A4_CONTENT_WIDTH)
    page.emulate_media(media="print")
    closed_but_printed = page.evaluate("""() => Array.from(document.querySelectorAll('details:not([open])'))
        .filter(d => { const c = d.querySelector('table, figure'); return c && c.getClientRects().length > 0; })
        .length""")
    assert closed_but_printed == page.evaluate("""() => Array.from(document.querySelectorAll('details'))
        .filter(d => d.querySelector('table, figure')).length""") > 0
    assert page.evaluate(OVERFLOWING_TABLES) == []
    pdf = page.pdf(format="A4", path=str(tmp_path / "report.pdf"))
    assert pdf[:5] == b"%PDF-"
    assert len(pdf) > 50_000
    page.close()


def test_single_file_report_needs_nothing_beyond_itself(demo_folders, browser):
    single = demo_folders[1]
    assert sorted(p.name for p in single.iterdir()) == ["index.html"]
    page, requests = _open(browser, single / "index.html")
    assert requests == [(single / "index.html").resolve().as_uri()]
    drawn = page.evaluate("document.querySelectorAll('figure svg').length")
    assert drawn >= 8
    assert page.evaluate("document.scripts.length") == 0
    page.close()
