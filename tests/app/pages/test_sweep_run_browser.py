"""A sweep built from the Sweep page's controls and run from the browser, on the demo, in real headless Chromium.

The server is the real command line (``python -m valuesift.app.cli serve --demo``) on a free 127.0.0.1 port
with a temporary workspace.  One test builds a 2 x 2 grid from the controls, runs it, and follows the result
into the table, the heat map and the Study page; the other cancels a running sweep.
"""

from __future__ import annotations

import json
import re
import time
from pathlib import Path
from typing import Iterator
from urllib.parse import parse_qs, urlsplit

import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 120_000   # ms; a generous upper bound for a slow, shared machine, not a speed check
_NUMBER = re.compile(r"^[\u2212-]?\d[\d,]*(\.\d+)?%?$")


@pytest.fixture(scope="module")
def workspace(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return tmp_path_factory.mktemp("sweep-run-ws")


@pytest.fixture(scope="module")
def server(workspace: Path) -> Iterator[str]:
    need_browser()
    with running_server(workspace, ready_path="/sweep", extra=["--demo"], start_timeout=90) as base:
        yield base


@pytest.fixture(scope="module")
def page(server: str) -> Iterator[object]:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=[*ARGS, "--disable-dev-shm-usage"])
        context = browser.new_context(viewport={"width": 1280, "height": 1000})
        pg = context.new_page()
        pg.set_default_timeout(WAIT)
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        pg.errors = errors  # type: ignore[attr-defined]
        yield pg
        context.close()
        browser.close()


def _tick(pg, control: str, value: str, on: bool) -> None:  # type: ignore[no-untyped-def]
    box = pg.locator(f"#{control} label", has_text=re.compile(rf"^\s*{re.escape(value)}\s*$")).locator("input")
    if box.is_checked() != on:
        box.click()


def test_a_grid_built_from_the_controls_runs_and_opens_as_a_study(page, server: str, workspace: Path) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    from valuesift.app.settings import config_from_settings
    from valuesift.core.sweep import load_sweep

    pg = page
    pg.goto(server + "/sweep")
    expect(pg.locator("#sweep-statement")).to_contain_text("No finished sweep")
    expect(pg.locator("#sweep-results")).to_be_hidden()      # no empty grid or empty card before a sweep
    expect(pg.locator("#sweep-count")).to_contain_text("1 configuration × 2 horizons = 2 signal tests")
    # an empty control is refused in a sentence naming it, and the button cannot run it
    _tick(pg, "sweep-quantiles", "5", False)
    expect(pg.locator("#sweep-count")).to_contain_text("Quantiles: nothing is chosen")
    expect(pg.locator("#sweep-run-button")).to_be_disabled()
    # 2 quantile choices x 2 horizons (1 and 3 months)
    _tick(pg, "sweep-quantiles", "4", True)
    _tick(pg, "sweep-quantiles", "6", True)
    _tick(pg, "sweep-horizons", "12", False)
    _tick(pg, "sweep-horizons", "3", True)
    expect(pg.locator("#sweep-count")).to_contain_text("2 configurations × 2 horizons = 4 signal tests")
    expect(pg.locator("#sweep-base")).to_contain_text("universe every security")
    pg.locator("#sweep-name").fill("two by two")
    expect(pg.locator("#sweep-run-button")).to_be_enabled()
    pg.locator("#sweep-run-button").click()
    expect(pg.locator("#sweep-run-alert")).to_contain_text("The sweep two by two is finished and saved")
    expect(pg.locator("#sweep-run-progress-box")).to_be_hidden()
    expect(pg.locator("#sweep-run-button")).to_be_enabled()

    # the picker offers it and the page shows it: 2 configurations x 2 horizons = 4 rows
    expect(pg.locator("#sweep-pick")).to_contain_text("two by two")
    expect(pg.locator("#sweep-statement")).to_contain_text("2 study configurations were tried")
    expect(pg.locator("#sweep-results")).to_be_visible()
    rows = pg.locator("#sweep-table .ag-center-cols-container .ag-row")
    expect(rows).to_have_count(4)
    pinned = pg.locator("#sweep-table .ag-pinned-left-cols-container .ag-row")
    expect(pinned).to_have_count(4)
    expect(pg.locator("#sweep-table .ag-header")).to_contain_text("t, BH adjusted")
    expect(pg.locator("#sweep-table .ag-header")).to_contain_text("p, Bonferroni")
    assert set(pinned.all_inner_texts()) == {"earnings yield"}                       # words, pinned first
    text = pg.locator("#sweep-table").inner_text()
    res = load_sweep(workspace / "sweeps" / "two by two")
    for code in ("earnings_yield", "mean_std", "[1, 99]", "true", "false", "n_quantiles", *res.configs):
        assert code not in text, code                                                # no codes, no hash ids
    quantiles = pg.locator("#sweep-table .ag-center-cols-container [col-id=quantiles]").all_inner_texts()
    assert sorted(quantiles) == ["4", "4", "6", "6"]
    for col in ("ic_t", "ic_t_bh", "mean_ic"):
        cells = pg.locator(f"#sweep-table .ag-center-cols-container [col-id={col}]").all_inner_texts()
        assert len(cells) == 4 and all(_NUMBER.match(c.strip()) for c in cells), (col, cells)
    # probabilities below the last decimal read "< 0.001", never "0.000" (the demo's signal is strong)
    cells = pg.locator("#sweep-table .ag-center-cols-container [col-id=ic_p_bh]").all_inner_texts()
    tiny = int((res.table["ic_p_bh"] < 0.001).sum())
    assert len(cells) == 4 and sum(c.strip() == "< 0.001" for c in cells) == tiny, cells
    assert all(c.strip() == "< 0.001" or _NUMBER.match(c.strip()) for c in cells) and "0.000" not in cells, cells
    assert len(res.table) == 4 and set(res.table["horizon"]) == {1, 3}

    # the heat map's colour scale is symmetric around zero and reaches the largest |t| of the data
    expect(pg.locator("#sweep-heatmap .main-svg").first).to_be_visible()
    # plotly.js's full (drawn) trace: the colour range it used and the z values decoded from the figure
    trace = pg.evaluate("() => { const g = document.querySelector('#sweep-heatmap .js-plotly-plot');"
                        " const t = g._fullData[0]; return {type: t.type, zmin: t.zmin, zmax: t.zmax,"
                        " z: Array.from(t.z, r => Array.from(r))}; }")
    assert trace["type"] == "heatmap"
    zs = [abs(v) for row in trace["z"] for v in row if v is not None]
    assert trace["zmin"] == -trace["zmax"] and trace["zmax"] == pytest.approx(max(max(zs), 1.96))
    assert max(zs) > 4      # the demo's earnings yield is strong: its cells sit at the far end, not at the neutral middle

    for width in (1280, 1920):
        pg.set_viewport_size({"width": width, "height": 1000})
        pg.wait_for_timeout(400)
        ARTIFACTS.mkdir(exist_ok=True)
        pg.screenshot(path=str(ARTIFACTS / f"sweep-run-{width}.png"), full_page=True)
        # the grid fits the page: no wider than its card
        box = pg.locator("#sweep-table").bounding_box()
        assert box is not None and box["x"] >= 0 and box["x"] + box["width"] <= width
    pg.set_viewport_size({"width": 1280, "height": 1000})

    # open a row with 6 quantiles at 3 months as a study: the Study page holds exactly that configuration
    row = pinned.nth(0)
    row_index = row.get_attribute("row-index")
    q_cell = pg.locator(f"#sweep-table .ag-center-cols-container .ag-row[row-index='{row_index}'] [col-id=quantiles]")
    wanted_q = int(q_cell.inner_text())
    wanted_h = int(pg.locator(f"#sweep-table .ag-center-cols-container .ag-row[row-index='{row_index}'] "
                              "[col-id=horizon]").inner_text())
    row.locator("[col-id=signal]").click()
    pg.wait_for_url("**/study?sweep=*&point=*")
    point = parse_qs(urlsplit(pg.url).query)["point"][0]
    want = res.configs[point]
    assert want["n_quantiles"] == wanted_q
    pg.wait_for_function(f"() => {{ const s = JSON.parse(localStorage.getItem('vs-settings') || 'null');"
                         f" return s && s.n_quantiles === {wanted_q} && s.horizons && s.horizons.length === 2; }}")
    stored = pg.evaluate("() => JSON.parse(localStorage.getItem('vs-settings'))")
    assert config_from_settings(stored).to_dict() == want
    expect(pg.locator("#study-n-quantiles")).to_contain_text(str(wanted_q))
    # the row's horizon is the one drawn
    expect(pg.locator("#study-summary")).to_contain_text(f"At {wanted_h} month{'s' if wanted_h != 1 else ''} the mean rank IC is")
    assert not pg.errors, pg.errors  # type: ignore[attr-defined]


def test_cancel_stops_a_running_sweep(page, server: str, workspace: Path) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    pg = page
    pg.goto(server + "/sweep")
    expect(pg.locator("#sweep-count")).to_contain_text("1 configuration")
    for s in ("Earnings yield", "Dividend yield", "Composite"):
        _tick(pg, "sweep-signals", s, True)
    for q in ("3", "4", "5", "6"):
        _tick(pg, "sweep-quantiles", q, True)
    for v in ("off", "on"):
        _tick(pg, "sweep-neutral", v, True)
    for lag in ("0", "3"):
        _tick(pg, "sweep-lags", lag, True)
    expect(pg.locator("#sweep-count")).to_contain_text("48 configurations")
    pg.locator("#sweep-name").fill("to be cancelled")
    pg.locator("#sweep-run-button").click()
    expect(pg.locator("#sweep-run-progress-text")).to_contain_text(re.compile(r"[1-9]\d* of 48 configurations"))
    expect(pg.locator("#sweep-run-button")).to_be_disabled()      # the form is locked while it runs
    pg.locator("#sweep-run-cancel").click()
    expect(pg.locator("#sweep-run-alert")).to_contain_text("The sweep to be cancelled was cancelled; nothing was saved")
    expect(pg.locator("#sweep-run-button")).to_be_enabled()
    # the work stopped: the finished points stop growing well short of the 48, and no sweep folder appears
    cache = workspace / "sweeps" / ".cache"

    def finished() -> int:
        return sum(1 for _ in cache.rglob("*.json"))

    first = finished()
    time.sleep(3)
    assert finished() == first and first < 2 + 48 - 10     # 2 points of the first test, most of these never ran
    assert not (workspace / "sweeps" / "to be cancelled").exists()
    assert "to be cancelled" not in pg.locator("#sweep-pick").inner_text()
    assert not pg.errors, pg.errors  # type: ignore[attr-defined]


def test_outliers_costs_and_a_hold_out_month_reach_the_table(page, server: str, workspace: Path) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    from valuesift.core.sweep import load_sweep

    pg = page
    pg.goto(server + "/sweep")
    expect(pg.locator("#sweep-count")).to_contain_text("1 configuration")
    _tick(pg, "sweep-horizons", "1", False)              # one horizon: 12 months
    _tick(pg, "sweep-outliers", "Winsorise at percentiles 5 and 95", True)
    _tick(pg, "sweep-outliers", "Winsorise at percentiles 1 and 99", False)
    _tick(pg, "sweep-outliers", "Leave as they are", True)
    _tick(pg, "sweep-costs", "25", True)
    expect(pg.locator("#sweep-count")).to_contain_text("4 configurations × 1 horizon = 4 signal tests")
    # a month not written YYYY-MM is refused, naming the control
    pg.locator("#sweep-holdout").fill("2018/01")
    expect(pg.locator("#sweep-count")).to_contain_text("Hold-out from (month): '2018/01' is not a month written YYYY-MM")
    expect(pg.locator("#sweep-run-button")).to_be_disabled()
    pg.locator("#sweep-holdout").fill("2018-01")
    expect(pg.locator("#sweep-count")).to_contain_text("4 configurations")
    pg.locator("#sweep-name").fill("costs and outliers")
    pg.locator("#sweep-run-button").click()
    expect(pg.locator("#sweep-run-alert")).to_contain_text("The sweep costs and outliers is finished")
    expect(pg.locator("#sweep-table .ag-center-cols-container .ag-row")).to_have_count(4)
    # the rows and their columns are drawn in separate steps: wait for the cells, then read them
    outl_cells = pg.locator("#sweep-table .ag-center-cols-container [col-id=outliers]")
    expect(outl_cells).to_have_count(4)
    expect(pg.locator("#sweep-table .ag-center-cols-container [col-id=cost_bps]")).to_have_count(4)
    outl = outl_cells.all_inner_texts()
    assert sorted(outl) == ["leave as they are"] * 2 + ["winsorise at percentiles 5 and 95"] * 2
    costs = pg.locator("#sweep-table .ag-center-cols-container [col-id=cost_bps]").all_inner_texts()
    assert sorted(costs) == ["0", "0", "25", "25"]
    expect(pg.locator("#sweep-table .ag-header")).to_contain_text("Trading cost (basis points)")
    # the hold-out: the best in-sample configuration beside its figures from 2018-01 on
    expect(pg.locator("#sweep-holdout-sentence")).to_contain_text("on the hold-out from 2018-01")
    expect(pg.locator("#sweep-holdout-table .ag-center-cols-container .ag-row")).to_have_count(4)
    expect(pg.locator("#sweep-holdout-table .ag-pinned-left-cols-container")).to_contain_text("trading cost (basis points) 25")
    res = load_sweep(workspace / "sweeps" / "costs and outliers")
    assert res.holdout == "2018-01" and res.horizons == (12,)
    got = {(c["outlier_rule"], tuple(c["winsor_percentiles"]), c["transaction_cost_bps"]) for c in res.configs.values()}
    assert got == {("winsorise", (5.0, 95.0), 0), ("winsorise", (5.0, 95.0), 25), ("none", (1.0, 99.0), 0),
                   ("none", (1.0, 99.0), 25)}
    assert not pg.errors, pg.errors  # type: ignore[attr-defined]
