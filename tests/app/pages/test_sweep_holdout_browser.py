"""The Sweep page in real headless Chromium: a sweep run with a hold-out shows the chosen configuration before and
on the hold-out side by side, with the deflated Sharpe ratio; choosing another sweep changes what is shown."""

from __future__ import annotations

from typing import Any, Iterator

import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 120_000   # ms; a generous upper bound for a slow, shared machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory, panel: Any) -> Iterator[str]:
    from valuesift.core.sweep import parse_grid, run_sweep, save_sweep

    need_browser()
    ws = tmp_path_factory.mktemp("holdout-ws")
    grid = parse_grid({"study": {"min_breadth": 5, "n_quantiles": 4},
                       "vary": {"signal": ["earnings_yield", "dividend_yield"], "horizons": [1, 3]}}, "holdout-grid")
    save_sweep(run_sweep(panel, grid, holdout="2017-01"), ws / "sweeps" / "a-holdout")
    save_sweep(run_sweep(panel, grid), ws / "sweeps" / "b-in-sample")
    with running_server(ws, ready_path="/sweep", start_timeout=90) as base:
        yield base


def test_holdout_side_by_side_and_the_pick_changes_it(server: str) -> None:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=[*ARGS, "--disable-dev-shm-usage"])
        pg = browser.new_page(viewport={"width": 1280, "height": 1000})
        pg.set_default_timeout(WAIT)
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        pg.goto(server + "/sweep")
        expect(pg.locator("#sweep-statement")).to_contain_text("study configurations were tried")
        pg.locator("#sweep-pick").click()
        pg.get_by_role("option", name="a-holdout").click()
        expect(pg.locator("#sweep-deflated")).to_contain_text("deflated for 4 distinct trials")
        # the table and the heat map follow the pick too (the in-sample figures of the hold-out sweep)
        expect(pg.locator("#sweep-statement")).to_contain_text("1 after the Benjamini-Hochberg")
        expect(pg.locator("#sweep-heatmap")).to_contain_text("2.68")
        expect(pg.locator("#sweep-holdout-sentence")).to_contain_text("flattered")
        expect(pg.locator("#sweep-holdout-table .ag-center-cols-container .ag-row")).to_have_count(4)
        expect(pg.locator("#sweep-holdout-table")).to_contain_text("IC t on hold-out")
        # the configurations in words, never their hash ids
        expect(pg.locator("#sweep-holdout-table .ag-pinned-left-cols-container")).to_contain_text("signal dividend yield")
        expect(pg.locator("#sweep-table")).to_contain_text("Sharpe t, BH adjusted")
        ARTIFACTS.mkdir(exist_ok=True)
        pg.screenshot(path=str(ARTIFACTS / "sweep-holdout-1280.png"), full_page=True)
        pg.locator("#sweep-pick").click()
        pg.get_by_role("option", name="b-in-sample").click()
        expect(pg.locator("#sweep-holdout-sentence")).to_contain_text("without a hold-out")
        expect(pg.locator("#sweep-holdout-table")).to_be_hidden()          # no empty table without a hold-out
        assert not errors, errors
        browser.close()
