"""Layout that cannot overlap: on every page, at 1280 to 2560 px, no two cards' boxes intersect, no chart
spills out of its card, no data-grid header breaks inside a word or cell is cut short, and no code word shows.

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
WIDTHS = tuple(int(w) for w in __import__("os").environ.get("VS_WIDTHS", "1280,1440,1920,2560").split(","))
PAGES = ("/data", "/study", "/screen", "/company", "/compare", "/stability", "/sweep", "/export")
SHOT_WIDTHS = (1280, 1440, 1920)

# Words a person reads must not be codes: a run of lower-case letters joined by underscores (such as
# earnings_yield or hac_lag_rule) in the visible text of a page. A name quoted from the user's own file
# ('eps_ttm') and file names set as code (the workspace folder, a bundle's table files) are not codes.
_CODES = r"""() => {
    const skip = new Set([...document.querySelectorAll('code, #data-workspace')]);
    const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
    const out = [];
    for (let n = walker.nextNode(); n; n = walker.nextNode()) {
        let el = n.parentElement, hidden = false;
        for (let e = el; e; e = e.parentElement) { if (skip.has(e)) { hidden = true; break; } }
        if (hidden || !el || el.offsetParent === null) continue;
        const m = n.textContent.replace(/'[^']*'|"[^"]*"/g, '').match(/\b[a-z]+_[a-z0-9_]+\b/g);
        if (m) out.push(...m);
    }
    return [...new Set(out)];
}"""

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


# A data grid's header broken inside a word ("Holdi / ng") or a cell cut short ("not m..."): each header
# word measured in the header's own font against the room the header has, and each cell's text against its box.
_GRID_CLIPS = r"""() => {
    const out = [];
    const probe = document.createElement('span');
    probe.style.cssText = 'position:absolute;visibility:hidden;white-space:nowrap';
    document.body.appendChild(probe);
    for (const el of document.querySelectorAll('.ag-header-cell-text')) {
        if (el.offsetParent === null) continue;
        const room = el.parentElement.getBoundingClientRect().width;
        probe.style.font = getComputedStyle(el).font;
        for (const word of el.textContent.split(/\s+/).filter(Boolean)) {
            probe.textContent = word;
            if (probe.getBoundingClientRect().width > room + 1) out.push(['header', el.textContent]);
        }
    }
    for (const el of document.querySelectorAll('.ag-cell-value, .ag-cell .ag-cell-wrapper')) {
        if (el.offsetParent === null) continue;
        if (el.scrollWidth > el.clientWidth + 1) out.push(['cell', el.textContent]);
    }
    probe.remove();
    return [...new Set(out.map(JSON.stringify))].map(JSON.parse);
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
    elif path.startswith("/company"):
        pg.wait_for_function("() => document.querySelectorAll('.js-plotly-plot .main-svg').length >= 2")
    elif path == "/compare":
        pg.locator("#compare-run").click()
        expect(pg.locator("#compare-heatmap .yaxislayer-above g.ytick").first).to_be_attached()
    elif path == "/stability":
        expect(pg.locator("#stab-decay .bars path").first).to_be_attached()
    pg.wait_for_timeout(400)     # let late layout (fonts, chart resizes) finish


def _lasting_overlaps(pg: Any, seconds: float = 5.0) -> list[Any]:
    """Overlaps and spills still there after the charts' own resizing has had ``seconds`` to settle (a chart
    first drawn while a neighbouring grid is still sizing itself is redrawn to its card within a moment)."""
    found = pg.evaluate(_OVERLAPS)
    for _ in range(int(seconds / 0.25)):
        if not found:
            break
        pg.wait_for_timeout(250)
        found = pg.evaluate(_OVERLAPS)
    return list(found)


def _company_path(pg: Any, base: str) -> str:
    """The company page of the screen's first row (the cheapest name)."""
    pg.goto(base + "/screen")
    _settle(pg, "/screen")
    from valuesift.app.ids import company_path

    pg.locator(".ag-row[row-id]").first.wait_for()
    return company_path(str(pg.locator(".ag-row[row-id]").first.get_attribute("row-id")))


def _check_pages(pg: Any, base: str, label: str) -> None:
    problems, codes = [], []
    company = _company_path(pg, base)
    for width in WIDTHS:
        pg.set_viewport_size({"width": width, "height": 1100})
        for page_path in PAGES:
            path = company if page_path == "/company" else page_path
            pg.goto(base + path)
            _settle(pg, path)
            found = _lasting_overlaps(pg)
            if found:
                problems.append((label, width, page_path, found[:4]))
            clipped = pg.evaluate(_GRID_CLIPS)
            if clipped:
                problems.append((label, width, page_path, "grid", clipped[:4]))
            words = pg.evaluate(_CODES)
            if words:
                codes.append((label, width, page_path, words[:6]))
            if width in SHOT_WIDTHS:
                ARTIFACTS.mkdir(exist_ok=True)
                pg.screenshot(path=str(ARTIFACTS / f"layout-{label}-{width}-{page_path.strip('/')}.png"),
                              full_page=True)
    assert not problems, problems
    assert not codes, codes


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
