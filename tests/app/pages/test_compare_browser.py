"""The Compare and Stability pages in real headless Chromium: every control changes what is drawn."""

from __future__ import annotations

from typing import Any, Iterator

import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 120_000   # ms; a generous upper bound for a slow, shared machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("compare-ws"), ready_path="/compare", extra=["--demo"]) as base:
        yield base


@pytest.fixture()
def page(server: str) -> Iterator[Any]:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=[*ARGS, "--disable-dev-shm-usage"])
        pg = browser.new_page(viewport={"width": 1400, "height": 1000})
        pg.set_default_timeout(WAIT)
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        yield pg
        assert not errors, errors
        browser.close()


def _column_in_row_order(page: Any, col: str) -> list[float]:
    """The numbers of one grid column in the order the rows are drawn (row-index), the U+2212 minus read."""
    cells = page.evaluate(
        "(col) => Array.from(document.querySelectorAll('#compare-table .ag-center-cols-container .ag-row'))"
        ".map(r => [Number(r.getAttribute('row-index')), r.querySelector(`[col-id=${col}]`).innerText])", col)
    return [float(text.replace("\u2212", "-").replace(",", "")) for _, text in sorted(cells)]


def test_compare_signals_heatmap_horizon_and_saved_study(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    page.goto(server + "/compare")
    page.locator("#compare-run").click()
    expect(page.locator("#compare-table")).to_contain_text("Earnings yield".lower(), ignore_case=True)
    # three signals: a 3 x 3 heat map with a value in every cell
    expect(page.locator("#compare-heatmap .yaxislayer-above g.ytick")).to_have_count(3)
    expect(page.locator("#compare-table .ag-center-cols-container .ag-row")).to_have_count(3)
    # a data grid: the signal pinned, and a number column sorts as numbers (ascending, then descending)
    expect(page.locator("#compare-table .ag-pinned-left-cols-container .ag-row")).to_have_count(3)
    for order in ("ascending", "descending"):
        page.locator("#compare-table .ag-header-cell[col-id=mean_ic] .ag-header-cell-label").click()
        expect(page.locator(f"#compare-table .ag-header-cell[col-id=mean_ic][aria-sort={order}]")).to_have_count(1)
        shown = _column_in_row_order(page, "mean_ic")
        assert len(shown) == 3 and shown == sorted(shown, reverse=order == "descending"), shown
    # the horizon control redraws the bar chart for that horizon
    page.locator("#compare-horizon label", has_text="12 m").click()
    expect(page.locator("#compare-ic .gtitle")).to_contain_text("12 months")
    expect(page.locator("#compare-sentences")).to_contain_text("At 12 months")
    # fewer signals: the matrix shrinks and the composite note goes
    page.locator("#compare-signals label", has_text="Composite").click()
    page.locator("#compare-run").click()
    expect(page.locator("#compare-heatmap .yaxislayer-above g.ytick")).to_have_count(2)
    expect(page.locator("#compare-table .ag-center-cols-container .ag-row")).to_have_count(2)
    # save the Study page's study under a name and add it to the comparison
    page.locator("#compare-save-name").fill("house view")
    page.locator("#compare-save").click()
    expect(page.locator("#compare-save-note")).to_contain_text("Saved as 'house view'")
    page.locator("#compare-saved").click()
    page.get_by_role("option", name="house view").first.click()
    page.keyboard.press("Escape")
    page.locator("#compare-run").click()
    expect(page.locator("#compare-table .ag-center-cols-container .ag-row")).to_have_count(3)
    expect(page.locator("#compare-table")).to_contain_text("saved: house view")
    expect(page.locator("#compare-heatmap .yaxislayer-above g.ytick")).to_have_count(3)
    for w in (1280, 1920):
        page.set_viewport_size({"width": w, "height": 1000})
        page.wait_for_timeout(500)          # the charts and the grid follow the new width
        ARTIFACTS.mkdir(exist_ok=True)
        page.screenshot(path=str(ARTIFACTS / f"compare-{w}.png"), full_page=True)


def test_stability_page_draws_every_chart_and_follows_the_horizon(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    page.goto(server + "/stability")
    expect(page.locator("#stab-relative")).to_contain_text("Information ratio")
    expect(page.locator("#stab-periods .gtitle")).to_contain_text("months")
    expect(page.locator("#stab-decay .bars path").first).to_be_attached()
    assert page.locator("#stab-decay .bars path").count() == 24          # one bar per month ahead
    expect(page.locator("#stab-sectors .gtitle")).to_contain_text("inside every sector")
    page.locator("#stab-horizon label", has_text="3 m").click()
    expect(page.locator("#stab-periods .gtitle")).to_contain_text("3 months")
    expect(page.locator("#stab-sectors .gtitle")).to_contain_text("3 months")
    expect(page.locator("#stab-readings")).to_contain_text("At 3 months")
    page.locator("#stab-horizon label", has_text="12 m").click()
    expect(page.locator("#stab-periods .gtitle")).to_contain_text("12 months")
    expect(page.locator("#stab-controls")).to_contain_text("12 m")
    for w in (1280, 1920):
        page.set_viewport_size({"width": w, "height": 1000})
        ARTIFACTS.mkdir(exist_ok=True)
        page.screenshot(path=str(ARTIFACTS / f"stability-{w}.png"), full_page=True)
