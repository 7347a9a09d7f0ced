"""The report page in a real browser (Debian's chromium, headless, driven by playwright).

Opens index.html from a file:// URL with hostile text in the inputs and checks: no console errors, every
figure drawn, no request beyond the page itself, the hostile text shown literally, and no script ever ran.
"""
from __future__ import annotations

from pathlib import Path

import pytest

from .test_report import HOSTILE, HOSTILE_IMG, hostile_inputs

CHROMIUM = Path("/usr/bin/chromium")
LAUNCH_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
               "--disable-background-networking", "--disable-component-update", "--disable-sync"]

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's chromium at /usr/bin/chromium "
                       "(apt-get install -y chromium)"),
]


@pytest.fixture(scope="module")
def report_folder(tmp_path_factory) -> Path:
    from scalewright.cli import main

    folder = tmp_path_factory.mktemp("browser")
    data, scales = hostile_inputs(folder, n=90)
    out = folder / "report"
    assert main(["report", str(data), "--scales", str(scales), "--out", str(out), "--iterations", "5",
                 "--quiet"]) == 0
    return out


def test_page_in_headless_chromium(report_folder, tmp_path):
    playwright_api = pytest.importorskip("playwright.sync_api")
    page_url = (report_folder / "index.html").resolve().as_uri()
    console_errors: list[str] = []
    page_errors: list[str] = []
    requests: list[str] = []
    with playwright_api.sync_playwright() as driver:
        browser = driver.chromium.launch(executable_path=str(CHROMIUM), args=LAUNCH_ARGS)
        try:
            page = browser.new_page(viewport={"width": 1280, "height": 900})
            page.on("console", lambda message: console_errors.append(message.text)
                    if message.type == "error" else None)
            page.on("pageerror", lambda error: page_errors.append(str(error)))
            page.on("request", lambda request: requests.append(request.url))
            page.goto(page_url, wait_until="load")
            page.screenshot(path=str(tmp_path / "report-top.png"))
            page.screenshot(path=str(tmp_path / "report-full.png"), full_page=True)

            assert console_errors == []
            assert page_errors == []
            assert requests == [page_url], f"requests beyond the page itself: {requests}"
            assert page.evaluate("typeof window.__pwned") == "undefined"
            assert page.evaluate("document.scripts.length") == 0
            assert page.evaluate("document.querySelectorAll('img, iframe, object, embed').length") == 0

            figure_files = sorted((report_folder / "figures").glob("*.svg"))
            drawn = page.evaluate("""() => Array.from(document.querySelectorAll('figure svg')).map(svg => {
                const box = svg.getBoundingClientRect();
                return {w: box.width, h: box.height, shapes: svg.querySelectorAll('path, rect, use').length,
                        label: svg.getAttribute('aria-labelledby'),
                        title: svg.querySelector('title') ? svg.querySelector('title').textContent : ''};
            })""")
            assert len(drawn) == len(figure_files) >= 4
            for figure in drawn:
                assert figure["w"] > 100, figure
                assert figure["h"] > 50, figure
                assert figure["shapes"] > 5, figure
                assert figure["label"]
                assert figure["title"]

            # folded detail holds some of the hostile texts: open it all, as a reader would
            page.evaluate("document.querySelectorAll('details').forEach(d => d.open = true)")
            text = page.inner_text("body")
            assert HOSTILE in text
            assert HOSTILE_IMG in text
            assert page.title().startswith("Team survey <script>")
            headings = page.evaluate("Array.from(document.querySelectorAll('h1,h2,h3,h4,h5,h6'))"
                                     ".map(h => Number(h.tagName[1]))")
            assert headings[0] == 1
            assert all(after <= before + 1 for before, after in zip(headings, headings[1:], strict=False))

            page.emulate_media(media="print")
            page.pdf(path=str(tmp_path / "report.pdf"), format="A4") if hasattr(page, "pdf") else None
        finally:
            browser.close()
    assert (tmp_path / "report-full.png").stat().st_size > 10_000
