"""The Sweep page in real headless Chromium: the table renders, sorts, and a click opens the Study page."""

from __future__ import annotations

from typing import Any, Iterator

import pytest

from tests.browser_support import CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 90_000   # ms; a generous upper bound for a slow machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory, panel: Any) -> Iterator[str]:
    from valuesift.core.sweep import parse_grid, run_sweep, save_sweep

    need_browser()
    ws = tmp_path_factory.mktemp("sweep-ws")
    grid = parse_grid({"study": {"min_breadth": 5, "n_quantiles": 4},
                       "vary": {"signal": ["earnings_yield", "dividend_yield"], "horizons": [1, 3],
                                "sector_neutral": [False, True]}}, "browser-grid")
    save_sweep(run_sweep(panel, grid), ws / "sweeps" / "browser-sweep")
    with running_server(ws, ready_path="/sweep", start_timeout=90) as base:
        yield base


def test_sweep_table_sorts_and_a_click_opens_the_study(server: str) -> None:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        pg = browser.new_page(viewport={"width": 1500, "height": 1000})
        pg.set_default_timeout(WAIT)
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        pg.goto(server + "/sweep")
        expect(pg.locator("#sweep-statement")).to_contain_text("4 study configurations were tried")
        expect(pg.locator("#sweep-table .ag-center-cols-container .ag-row")).to_have_count(8)
        expect(pg.locator("#sweep-table")).to_contain_text("t, BH adjusted")
        expect(pg.locator("#sweep-heatmap .main-svg").first).to_be_visible()
        # sort by signal (words, pinned first), then click a dividend-yield, sector-neutral row
        pg.locator("#sweep-table .ag-header-cell[col-id=signal] .ag-header-cell-label").click()
        pinned = pg.locator("#sweep-table .ag-pinned-left-cols-container .ag-row")
        expect(pg.locator("#sweep-table .ag-pinned-left-cols-container .ag-row[row-index='0']")).to_have_text(
            "dividend yield")                                              # d before e: sorted as words
        expect(pg.locator("#sweep-table .ag-pinned-left-cols-container .ag-row[row-index='7']")).to_have_text(
            "earnings yield")
        target = None
        for i in range(pinned.count()):
            r = pinned.nth(i)
            idx = r.get_attribute("row-index")
            neutral = pg.locator(f"#sweep-table .ag-center-cols-container .ag-row[row-index='{idx}'] "
                                 "[col-id=sector_neutral]").inner_text()
            if r.inner_text().strip() == "dividend yield" and neutral.strip() == "on":
                target = r
                break
        assert target is not None
        target.locator("[col-id=signal]").click()
        pg.wait_for_url("**/study?sweep=browser-sweep&point=*")
        expect(pg.locator("#study-signal")).to_contain_text("Dividend yield")
        expect(pg.locator("#study-neutral input[type=checkbox]")).to_be_checked()
        assert not errors, errors
        browser.close()
