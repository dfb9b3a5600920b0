"""End-to-end in real headless Chromium: upload the demo files, run and change a study, screen, export, company.

The server is the real command line (``python -m valuesift.app.cli serve``) on a free
127.0.0.1 port with a temporary workspace; it is stopped when the module's
tests end.  Screenshots of each page go to ``test-artifacts/`` (git-ignored).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Iterator

import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 90_000   # ms; a generous upper bound for a slow machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("browser-ws"), ready_path="/data", start_timeout=90) as base:
        yield base


@pytest.fixture(scope="module")
def page(server: str) -> Iterator[object]:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        context = browser.new_context(viewport={"width": 1500, "height": 1000}, accept_downloads=True)
        pg = context.new_page()
        pg.set_default_timeout(WAIT)
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        pg.errors = errors  # type: ignore[attr-defined]
        yield pg
        context.close()
        browser.close()


def _shot(pg: object, name: str) -> None:
    ARTIFACTS.mkdir(exist_ok=True)
    pg.screenshot(path=str(ARTIFACTS / f"{name}.png"), full_page=True)  # type: ignore[attr-defined]


def _title(pg: object, graph_id: str) -> object:
    return pg.locator(f"#{graph_id} .gtitle")  # type: ignore[attr-defined]


def test_upload_the_demo_files(page, server: str, demo_dir: Path) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    page.goto(server + "/data")
    files = [str(demo_dir / n) for n in ("prices.csv", "earnings.csv", "dividends.csv", "sectors.csv",
                                         "holdings.csv", "benchmark.csv")]
    page.locator("#data-upload input[type=file]").set_input_files(files)
    expect(page.locator("#data-upload-alert")).to_contain_text("Read 6 of 6 file(s)")
    expect(page.locator(".vs-dataset")).to_have_count(6)
    prices = page.locator(".vs-dataset", has=page.locator("h3", has_text="prices.csv"))
    expect(prices).to_contain_text("Looks like an index, not a security: Maren All-Share")
    # Leave the index column out and read again, without uploading again.
    prices.locator("summary", has_text="Change how this file is read").click()
    expect(prices.get_by_role("button", name="Leave out Maren All-Share")).to_be_visible()   # the one-click way
    prices.locator("input[id*='ds-exclude']").fill("Maren All-Share")                         # the general way
    prices.get_by_role("button", name="Read again with these choices").click()
    expect(page.locator("#data-upload-alert")).to_contain_text("prices.csv was read again.")
    prices = page.locator(".vs-dataset", has=page.locator("h3", has_text="prices.csv"))
    expect(prices).to_contain_text("columns left out")
    expect(prices).to_contain_text("Maren All-Share")
    expect(page.locator("#data-splits")).to_contain_text("not applied")
    # A wrong date order leaves nothing usable: the read fails loudly and the file keeps its reading.
    prices.locator("summary", has_text="Change how this file is read").click()
    prices.locator("button[id*='ds-dates']").click()
    page.locator(".dash-dropdown-content").get_by_role("option", name="month/day/year").click()
    prices.get_by_role("button", name="Read again with these choices").click()
    expect(page.locator("#data-upload-alert .vs-alert-error")).to_contain_text("nothing in prices.csv could be used")
    expect(page.locator("#data-upload-alert .vs-alert-error")).to_contain_text("not a date")
    expect(prices).to_contain_text("columns left out")          # the earlier reading is still in use
    expect(prices).not_to_contain_text("None")
    # Confirm the suspected split: the adjustment is applied to the panel.
    page.locator("#data-split-pick input[type=checkbox]").first.check()
    page.get_by_role("button", name="Apply the adjustment to the confirmed splits").click()
    expect(page.locator("#data-splits")).to_contain_text("applied")
    expect(page.locator("#data-splits")).not_to_contain_text("not applied")
    expect(_title(page, "data-coverage")).to_contain_text("Coverage")
    expect(page.locator("#data-panel-summary")).to_contain_text("listed after the first month")   # flags in words
    # A bad file gets its own specific message; the earlier uploads stay.
    bad = demo_dir.parent / "broken-prices.csv"
    bad.write_bytes(b"")
    page.locator("#data-upload input[type=file]").set_input_files([str(bad)])
    expect(page.locator("#data-upload-alert .vs-alert-error")).to_contain_text("broken-prices.csv")
    expect(page.locator(".vs-dataset")).to_have_count(6)          # a rejected file stores nothing
    expect(page.locator(".vs-dataset-failed")).to_have_count(0)
    _shot(page, "data")
    assert not page.errors


def test_study_updates_with_horizon_and_universe(page, server: str) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    page.goto(server + "/study")
    expect(_title(page, "study-ic-horizon")).to_contain_text("Rank IC by horizon")
    expect(_title(page, "study-ic-time")).to_contain_text("12-month horizon")
    expect(page.locator("#study-ic-time .gtitle-subtitle, #study-ic-time .gtitle")).not_to_have_count(0)
    assert page.locator("#study-ic-time .trace.bars .point").count() > 100
    expect(page.locator("#study-summary")).to_contain_text("Hansen-Hodrick t")
    first_summary = page.locator("#study-summary").inner_text()
    page.locator("#study-horizon").get_by_text("3 m", exact=True).click()
    expect(_title(page, "study-ic-time")).to_contain_text("3-month horizon")
    expect(_title(page, "study-quantiles")).to_contain_text("3-month")
    expect(_title(page, "study-scatter")).to_contain_text("3-month")
    # A different universe: the holdings.
    page.locator("#study-universe").get_by_text("The holdings", exact=True).click()
    expect(page.locator("#study-summary")).not_to_have_text(first_summary)
    expect(page.locator("#study-summary")).to_contain_text("30 names on average")
    # The minimum-breadth control takes effect: above the 30 holdings no date has an IC, and the chart says so.
    breadth = page.locator("#study-min-breadth input, input#study-min-breadth").first
    breadth.fill("31")
    breadth.press("Enter")
    expect(page.locator("#study-ic-horizon .annotation-text")).to_contain_text("No horizon has enough dates")
    breadth.fill("10")
    breadth.press("Enter")
    expect(page.locator("#study-ic-horizon .annotation-text")).to_have_count(0)
    assert page.locator("#study-ic-horizon .trace.bars .point").count() == 6     # one bar per default horizon
    expect(_title(page, "study-growth")).to_contain_text("Growth of 1")
    # One date's scatter.
    page.locator("#study-scatter-date").click()
    page.locator(".dash-dropdown-content input.dash-dropdown-search").fill("Dec 2020")
    page.locator(".dash-dropdown-content").get_by_role("option", name="Dec 2020").click()
    expect(_title(page, "study-scatter")).to_contain_text("Dec 2020")
    _shot(page, "study")
    # A degenerate study gives the engine's message, never a traceback.
    box = page.locator("#study-min-history input, input#study-min-history").first
    box.fill("240")
    box.press("Enter")
    expect(page.locator("#study-alert")).to_contain_text("Not enough data")
    expect(page.locator("#study-results")).to_be_hidden()      # no stale charts beside the message
    assert "Traceback" not in page.locator("#study-alert").inner_text()
    _shot(page, "study-error")
    box.fill("0")
    box.press("Enter")
    expect(page.locator("#study-alert")).to_have_text("")
    expect(page.locator("#study-results")).to_be_visible()
    assert not page.errors


def test_screen_export_and_company_page(page, server: str, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect
    import openpyxl

    page.goto(server + "/screen")
    expect(page.locator("#screen-caption")).to_contain_text("30 of 30 holdings")
    cells = page.locator("#screen-table .ag-pinned-left-cols-container .ag-row:not(.ag-row-loading) .ag-cell")
    expect(cells.first).not_to_have_text("")
    expect(cells).to_have_count(25)              # server-side paging, 25 a page; the identifier column pinned
    shown = [c.inner_text().strip() for c in cells.all()]
    # P/E sorts as a number: sort it ascending in the grid (server-side) and read the first page.
    page.locator("#screen-table .ag-header-cell[col-id=pe] .ag-header-cell-label").click()
    expect(page.locator("#screen-table .ag-header-cell[col-id=pe]")).to_have_attribute("aria-sort", "ascending")
    page.wait_for_function("""() => { const c = [...document.querySelectorAll(
        '#screen-table .ag-center-cols-container .ag-row .ag-cell[col-id=pe]')].map(e => e.innerText);
        return c.length >= 25 && c.every((t, i) => i == 0 || parseFloat(c[i-1].replace('\u2212','-')) <=
        parseFloat(t.replace('\u2212','-')) || isNaN(parseFloat(t))); }""")
    page.locator("#screen-table .ag-header-cell[col-id=pe] .ag-header-cell-label").click()   # descending
    page.locator("#screen-table .ag-header-cell[col-id=pe] .ag-header-cell-label").click()   # back to cheapest first
    expect(cells.first).to_have_text(shown[0])
    with page.expect_download() as dl:
        page.get_by_role("button", name="Download CSV").click()
    path = tmp_path / "screen.csv"
    dl.value.save_as(path)
    rows = list(csv.DictReader(io.StringIO(path.read_text(encoding="utf-8"))))
    assert len(rows) == 30
    assert [r["Security"] for r in rows[:25]] == shown
    assert {"P/E", "Z-score", "Z within sector", "Quantile (cheapest first)", "Flags"} <= set(rows[0])
    assert rows[0]["Quantile (cheapest first)"].endswith("(cheapest)")
    with page.expect_download() as dl:
        page.get_by_role("button", name="Download XLSX").click()
    xpath = tmp_path / "screen.xlsx"
    dl.value.save_as(xpath)
    ws = openpyxl.load_workbook(xpath)["screen"]
    assert ws.max_row == 31 and ws.cell(row=2, column=1).value == shown[0]
    _shot(page, "screen")
    # Click a row: its company page.
    target = shown[2]
    cells.nth(2).click()
    page.wait_for_url(f"**/company/{target}")
    expect(page.locator("#company-title")).to_have_text(target)
    expect(_title(page, "company-signal")).to_contain_text(target)
    expect(_title(page, "company-returns")).to_contain_text("forward returns")
    expect(page.locator("#company-flags")).to_contain_text("coverage")
    expect(page.locator("#vs-caution")).to_contain_text("not investment advice")
    _shot(page, "company")
    assert not page.errors


def _settings(pg: object) -> dict:  # type: ignore[type-arg]
    import json

    return json.loads(pg.evaluate("localStorage.getItem('vs-settings')") or "{}")  # type: ignore[attr-defined]


def _drawn(pg: object) -> str:
    """Every text the Study page draws: the summary and all charts' titles, subtitles, ticks and labels."""
    return pg.evaluate("(document.querySelector('#study-summary') || {}).textContent + "  # type: ignore[attr-defined]
                       "(document.querySelector('#study-results') || {}).textContent")


def _wait_redrawn(pg: object, before: str) -> str:
    pg.wait_for_function("""(before) => {  // a finished study with other numbers than before
        const r = document.querySelector('#study-results'); const s = document.querySelector('#study-summary');
        const box = document.querySelector('#study-progress-box');
        // ... and settled: no callback still pending (a value typed while the page redraws is the next step's)
        return r && !r.hidden && box && box.hidden && (s.textContent + r.textContent) != before &&
            !document.querySelector('[data-dash-is-loading="true"]'); }""",
                         arg=before)  # type: ignore[attr-defined]
    return _drawn(pg)


def _pick(pg: object, control: str, option: str) -> None:
    pg.locator(f"#{control}").click()  # type: ignore[attr-defined]
    pg.locator(".dash-dropdown-content").get_by_role("option", name=option, exact=True).click()  # type: ignore[attr-defined]


def _number(pg: object, control: str, value: str) -> None:
    from playwright.sync_api import expect

    box = pg.locator(f"#{control} input, input#{control}").first  # type: ignore[attr-defined]
    expect(box).to_be_enabled()            # not while a study runs (the controls are disabled then)
    box.fill(value)
    box.press("Enter")
    box.press("Tab")                       # a debounced number input commits on Enter or on leaving it


def test_every_study_control_changes_what_is_drawn_and_what_is_stored(page, server: str) -> None:  # type: ignore[no-untyped-def]
    from playwright.sync_api import expect

    page.goto(server + "/study")
    expect(_title(page, "study-quantiles")).to_contain_text("by quantile")
    page.locator("#study-universe").get_by_text("Every security", exact=True).click()
    expect(page.locator("#study-quantiles .trace.bars .point")).to_have_count(5)
    drawn = _drawn(page)
    # Quantiles: 10 bars on the Study page, 10 bands on the Screen, 10 in the stored settings.
    _pick(page, "study-n-quantiles", "10")
    expect(page.locator("#study-quantiles .trace.bars .point")).to_have_count(10)
    assert _settings(page)["n_quantiles"] == 10
    drawn = _wait_redrawn(page, drawn)
    page.goto(server + "/screen")
    expect(page.locator("#screen-caption")).to_contain_text("10 quantiles")
    first_q = page.locator("#screen-table .ag-center-cols-container .ag-row[row-index='0'] .ag-cell[col-id=quantile_label]")
    expect(first_q).to_have_text("10 of 10 (cheapest)")
    page.goto(server + "/study")
    expect(page.locator("#study-quantiles .trace.bars .point")).to_have_count(10)
    drawn = _drawn(page)
    # A horizon: ticking 60 months adds it to the charts' horizons; choosing it retitles and redraws the charts.
    page.locator("#study-horizons").get_by_text("60", exact=True).click()
    expect(page.locator("#study-horizon").get_by_text("60 m", exact=True)).to_be_visible()
    assert 60 in _settings(page)["horizons"]
    expect(page.locator("#study-ic-horizon .trace.bars .point")).to_have_count(len(_settings(page)["horizons"]))
    page.locator("#study-horizon").get_by_text("60 m", exact=True).click()
    for chart in ("study-ic-time", "study-quantiles", "study-spread", "study-scatter"):
        expect(_title(page, chart)).to_contain_text("60-month")
    drawn = _drawn(page)
    # A universe: one chosen sector has far fewer names than the whole universe.
    page.locator("#study-universe").get_by_text("Chosen sectors", exact=True).click()
    page.locator("#study-sectors").click()
    page.locator(".dash-dropdown-content").get_by_role("option", name="Banks", exact=True).click()
    page.keyboard.press("Escape")
    # the stored settings follow the controls (a callback away: wait for it, then read)
    page.wait_for_function("() => { const s = JSON.parse(localStorage.getItem('vs-settings') || '{}'); "
                           "return s.universe === 'sectors' && (s.universe_sectors || []).length === 1; }")
    stored = _settings(page)
    assert stored["universe"] == "sectors" and stored["universe_sectors"] == ["Banks"]
    drawn = _wait_redrawn(page, drawn)
    names = float(page.locator("#study-summary").inner_text().split(" names on average")[0].split(", ")[-1])
    assert names < 40
    page.locator("#study-universe").get_by_text("Every security", exact=True).click()
    drawn = _wait_redrawn(page, drawn)
    # Every other Study control: a value away from the default changes the drawn numbers and is stored.
    steps = [
        ("min_breadth", lambda: _number(page, "study-min-breadth", "120"), 120),   # above most dates
        ("min_breadth", lambda: _number(page, "study-min-breadth", "10"), 10),     # back, for the steps below
        ("min_history_months", lambda: _number(page, "study-min-history", "24"), 24),
        ("outlier_rule", lambda: _pick(page, "study-outliers", "Leave as they are"), "none"),
        ("zscore_method", lambda: page.locator("#study-zscore").get_by_text("Median and absolute deviation",
                                                                              exact=True).click(), "median_mad"),
        ("sector_neutral", lambda: page.locator("#study-neutral").get_by_text("on", exact=True).click(), True),
        ("reporting_lag_months", lambda: _number(page, "study-lag", "3"), 3),
        ("dividend_treatment", lambda: page.locator("#study-dividends").get_by_text("Held as cash",
                                                                                    exact=True).click(), "uninvested"),
        ("excess_over", lambda: page.locator("#study-excess").get_by_text("Over the universe", exact=True).click(),
         "universe"),
        ("holding_months", lambda: _number(page, "study-holding", "3"), 3),
        ("transaction_cost_bps", lambda: _number(page, "study-cost", "25"), 25),
        ("winsor_lower", lambda: _number(page, "study-winsor", "5"), 5),
    ]
    for name, act, value in steps:
        if name == "winsor_lower":           # winsorising has to be the outlier rule again
            _pick(page, "study-outliers", "Winsorise at percentiles")
            drawn = _wait_redrawn(page, drawn)
        act()
        try:
            page.wait_for_function(f"() => JSON.parse(localStorage.getItem('vs-settings') || '{{}}')['{name}'] == "
                                   f"{str(value).lower() if isinstance(value, bool) else repr(value)}")
        except Exception as err:  # noqa: BLE001 - name the control in the failure
            raise AssertionError(f"{name} not stored as {value!r}: {_settings(page)}") from err
        expect(page.locator("#study-alert")).to_have_text("")      # the study ran (a failure would say why)
        try:
            drawn = _wait_redrawn(page, drawn)
        except Exception as err:  # noqa: BLE001 - name the control in the failure
            _shot(page, f"study-control-{name}")
            raise AssertionError(f"changing {name} to {value!r} changed nothing that is drawn") from err
    _shot(page, "study-all-controls")
    # Minimum breadth above every date's number of names: one rule for every chart and table, so the headline
    # says why there is no IC and every chart says why it is empty (never "nan", never a quantile chart drawn
    # from dates the IC leaves out).
    _number(page, "study-min-breadth", "5000")
    expect(page.locator("#study-summary")).to_contain_text("there is no information coefficient")
    expect(page.locator("#study-quantiles")).to_contain_text("No date has returns for every quantile")
    expect(page.locator("#study-spread")).to_contain_text("No date has both the cheapest and the dearest")
    assert "nan" not in page.locator("#study-summary").inner_text().replace(",", " ").split()
    _number(page, "study-min-breadth", "10")
    expect(page.locator("#study-summary")).to_contain_text("the mean rank IC is")
    assert not page.errors


def test_missing_browser_skips_locally_and_fails_under_ci(monkeypatch: pytest.MonkeyPatch) -> None:
    # Needs no browser: checks the policy itself (skip with a reason locally, fail when CI is set).
    import tests.browser_support as support

    monkeypatch.setattr(support, "CHROMIUM", "/nonexistent/chromium")
    monkeypatch.delenv("CI", raising=False)
    with pytest.raises(pytest.skip.Exception, match="not installed"):
        need_browser()
    monkeypatch.setenv("CI", "true")
    with pytest.raises(pytest.fail.Exception, match="CI must run"):
        need_browser()
