"""Layout that cannot overlap: on every page, at 1280 to 2560 px, no two cards' boxes intersect.

Two data sets: the demo (``serve --demo``) and an 8-stock file uploaded in a second browser session
(its own datasets), studied with a minimum of 5 names per date so that its charts are drawn.  The
check runs after the page's charts have been drawn, since a card that loses its height only shows
once its content arrives.  Screenshots go to ``test-artifacts/layout-*.png``.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any, Iterator

import pandas as pd
import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 90_000
WIDTHS = tuple(int(w) for w in __import__("os").environ.get("VS_WIDTHS", "1280,1920,2560").split(","))
PAGES = ("/data", "/study", "/screen", "/sweep", "/export")

_OVERLAPS = """() => {
    const boxes = [...document.querySelectorAll('.vs-card')].filter(e => e.offsetParent !== null)
        .map(e => [e, e.getBoundingClientRect()]).filter(([e, r]) => r.width > 0 && r.height > 0);
    const out = [];
    for (let i = 0; i < boxes.length; i++) for (let j = i + 1; j < boxes.length; j++) {
        const [a, ra] = boxes[i], [b, rb] = boxes[j];
        if (a.contains(b) || b.contains(a)) continue;
        const w = Math.min(ra.right, rb.right) - Math.max(ra.left, rb.left);
        const h = Math.min(ra.bottom, rb.bottom) - Math.max(ra.top, rb.top);
        if (w > 1 && h > 1) out.push([a.id || a.className, b.id || b.className, Math.round(w), Math.round(h)]);
    }
    // Content that spills out of its card (a chart taller than the card that holds it).
    for (const [e, r] of boxes) for (const g of e.querySelectorAll('.main-svg')) {
        const rg = g.getBoundingClientRect();
        if (rg.bottom > r.bottom + 1 || rg.right > r.right + 1) out.push(['spill', e.id || e.className, Math.round(rg.bottom - r.bottom)]);
    }
    return out;
}"""


def _eight_stock_files(demo_dir: Path, out: Path) -> list[Path]:
    text = (demo_dir / "prices.csv").read_text(encoding="utf-8").splitlines()
    start = next(i for i, line in enumerate(text) if line.startswith("Date,"))
    prices = pd.read_csv(io.StringIO("\n".join(text[start:])), thousands=",")
    keep = [c for c in prices.columns[2:] if prices[c].notna().all()][:8]
    prices[["Date", *keep]].to_csv(out / "prices.csv", index=False)
    eps = pd.read_csv(demo_dir / "earnings.csv", sep=";", decimal=",")
    eps[eps["code"].isin(keep)].to_csv(out / "earnings.csv", index=False)
    return [out / "prices.csv", out / "earnings.csv"]


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("layout-ws"), ready_path="/data", extra=["--demo"],
                        start_timeout=120) as base:
        yield base


def _settle(pg: Any, path: str) -> None:
    from playwright.sync_api import expect

    if path == "/study":
        expect(pg.locator("#study-results")).to_be_visible()
        pg.wait_for_function("() => document.querySelectorAll('#study-results .js-plotly-plot .main-svg').length >= 9")
    elif path == "/screen":
        expect(pg.locator("#screen-caption")).to_contain_text(" of ")
    elif path == "/data":
        expect(pg.locator(".vs-dataset").first).to_be_visible()
    pg.wait_for_timeout(400)     # let late layout (fonts, chart resizes) finish


def _check_pages(pg: Any, base: str, label: str) -> None:
    problems = []
    for width in WIDTHS:
        pg.set_viewport_size({"width": width, "height": 1100})
        for path in PAGES:
            pg.goto(base + path)
            _settle(pg, path)
            found = pg.evaluate(_OVERLAPS)
            if found:
                problems.append((label, width, path, found[:4]))
            if width in (1280, 1920):
                ARTIFACTS.mkdir(exist_ok=True)
                pg.screenshot(path=str(ARTIFACTS / f"layout-{label}-{width}-{path.strip('/')}.png"), full_page=True)
    assert not problems, problems


def test_no_two_cards_overlap_on_any_page_for_the_demo_and_an_eight_stock_file(server: str, demo_dir: Path,
                                                                               tmp_path: Path) -> None:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        try:
            demo = browser.new_context(viewport={"width": 1280, "height": 1100})
            pg = demo.new_page()
            pg.set_default_timeout(WAIT)
            _check_pages(pg, server, "demo")
            # A second browser session: its own datasets, an 8-stock universe.
            small = browser.new_context(viewport={"width": 1280, "height": 1100})
            pg = small.new_page()
            pg.set_default_timeout(WAIT)
            pg.goto(server + "/data")
            pg.locator("#data-upload input[type=file]").set_input_files(
                [str(f) for f in _eight_stock_files(demo_dir, tmp_path)])
            expect(pg.locator("#data-upload-alert")).to_contain_text("Read 2 of 2 file(s)")
            pg.locator(".vs-dataset", has=pg.locator("h3", has_text="prices.csv")).first.wait_for()
            pg.goto(server + "/study")
            # With the default minimum of 10 names per date the headline says why there is no IC, in words.
            expect(pg.locator("#study-summary")).to_contain_text("there is no information coefficient")
            box = pg.locator("#study-min-breadth")
            box.fill("5")
            box.press("Enter")
            expect(pg.locator("#study-summary")).to_contain_text("8 names on average")
            _check_pages(pg, server, "eight")
        finally:
            browser.close()
