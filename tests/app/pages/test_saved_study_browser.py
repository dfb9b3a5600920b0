"""Saved studies in real headless Chromium: saved on the Study page, reopened there with their settings and data
(what is drawn changes back), and the Compare and Stability pages showing their job's progress while it runs."""

from __future__ import annotations

import json
from typing import Any, Iterator

import pytest

from tests.browser_support import ARTIFACTS, browser_page, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 120_000   # ms; a generous upper bound for a slow, shared machine, not a speed check

# Records every text the page's progress line shows (its first text too), so a test can tell the job reported
# progress even when it finished between two looks. Installed with add_init_script, it runs before the page's
# own scripts on each later navigation, so a job that starts with the page's first render is not missed.
_WATCH = """([id, what]) => { window.vsSeen = window.vsSeen || {}; window.vsSeen[id] = [];
  const seen = window.vsSeen[id];
  const value = (el) => what === 'hidden' ? String(el.hidden) : el.textContent;
  // watches the whole document, not one node: the page's renderer may replace the element after a first render
  const look = () => { const el = document.getElementById(id);
    if (el && (seen.length === 0 || seen[seen.length - 1] !== value(el))) { seen.push(value(el)); } };
  const start = () => { if (!document.documentElement) { return setTimeout(start, 5); }
    new MutationObserver(look).observe(document.documentElement, {childList: true, characterData: true,
      attributes: true, subtree: true}); look(); };
  start(); }"""


def _watch_next_page(pg: Any, element_id: str, what: str = "text") -> None:
    """Record ``element_id``'s text (or, with ``what="hidden"``, whether it is hidden) on the next pages."""
    pg.add_init_script(f"({_WATCH})({json.dumps([element_id, what])})")


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("saved-ws"), ready_path="/study", extra=["--demo"]) as base:
        yield base


@pytest.fixture()
def page(server: str) -> Iterator[Any]:
    with browser_page(1400, 1000, WAIT) as pg:
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        yield pg
        assert not errors, errors


def _pick(pg: Any, control: str, option: str) -> None:
    pg.locator(f"#{control}").click()
    pg.locator(".dash-dropdown-content").get_by_role("option", name=option, exact=True).click()


def _settings(pg: Any) -> dict[str, Any]:
    return json.loads(pg.evaluate("localStorage.getItem('vs-settings')") or "{}")


def test_save_change_and_reopen_a_study(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    bars = page.locator("#study-quantiles .trace.bars .point")
    page.goto(server + "/study")
    expect(bars).to_have_count(5)
    _pick(page, "study-n-quantiles", "7")
    expect(bars).to_have_count(7)
    page.locator("#study-save-name").fill("seven bands")
    page.locator("#study-save").click()
    expect(page.locator("#study-save-note")).to_contain_text("Saved as 'seven bands'")
    # back to five: the chart follows
    _pick(page, "study-n-quantiles", "5")
    expect(bars).to_have_count(5)
    assert _settings(page)["n_quantiles"] == 5
    # open the saved study: its seven bands are drawn again and the control shows 7
    page.locator("#study-saved-pick").click()
    page.locator(".dash-dropdown-content").get_by_role("option").filter(has_text="seven bands").first.click()
    page.locator("#study-open-saved").click()
    expect(page.locator("#study-saved-opened")).to_contain_text("Opened the saved study 'seven bands'")
    expect(bars).to_have_count(7)
    expect(page.locator("#study-n-quantiles")).to_contain_text("7")
    assert _settings(page)["n_quantiles"] == 7
    # the opened study stays in force: the Study page opened again later shows its settings, not older ones
    page.goto(server + "/study")
    expect(page.locator("#study-n-quantiles")).to_contain_text("7")
    expect(bars).to_have_count(7)
    # a name that is not saved says so and keeps the page usable
    page.goto(server + "/study?saved=nothing%20here")
    expect(page.locator("#study-saved-missing")).to_contain_text("There is no saved study called 'nothing here'")
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "study-saved-1400.png"), full_page=True)


def test_compare_and_stability_show_their_progress(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    # settings no study of this server has used (a comparison of studies already in memory finishes before
    # the page's first look at its progress)
    page.goto(server + "/compare")
    settings = _settings(page) or {}
    page.evaluate("(s) => localStorage.setItem('vs-settings', s)", json.dumps({**settings, "n_quantiles": 7}))
    _watch_next_page(page, "compare-progress-text")
    page.reload()
    page.locator("#compare-run").click()
    expect(page.locator("#compare-heatmap .yaxislayer-above g.ytick")).to_have_count(3)
    seen = page.evaluate("window.vsSeen['compare-progress-text']")
    # the comparison ran as a job whose progress line moved (the unit tests check each study's step by name;
    # on a quick machine the studies can finish between two looks)
    assert any(s.startswith("comparing:") for s in seen), seen
    expect(page.locator("#compare-progress-box")).to_be_hidden()
    # the stability page's study with settings not run before: its progress line moves, then the charts
    settings = _settings(page) or {}
    page.evaluate("(s) => localStorage.setItem('vs-settings', s)", json.dumps({**settings, "n_quantiles": 9}))
    _watch_next_page(page, "stab-progress-box", "hidden")
    page.goto(server + "/stability")
    expect(page.locator("#stab-relative")).to_contain_text("Information ratio")
    expect(page.locator("#stab-progress-box")).to_be_hidden()
    expect(page.locator("#stab-decay .bars path").first).to_be_attached()
    seen = page.evaluate("window.vsSeen['stab-progress-box']")
    # the progress box was shown while the study ran, then hidden (a short study can finish before the first
    # look at its progress line, so the box, shown at launch, is what is checked)
    assert "false" in seen and seen[-1] == "true", seen


def test_export_includes_the_latest_comparison_when_ticked(server: str, tmp_path: Any) -> None:
    import zipfile

    from playwright.sync_api import expect, sync_playwright

    from tests.browser_support import CHROMIUM, CHROMIUM_ARGS

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        context = browser.new_context(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
        page = context.new_page()
        page.set_default_timeout(WAIT)
        try:
            page.goto(server + "/export")          # no comparison yet in this browser: the choice is disabled
            expect(page.locator("#export-compare")).to_contain_text("no comparison in this browser yet")
            expect(page.locator("#export-compare input")).to_be_disabled()
            page.goto(server + "/compare")
            page.locator("#compare-run").click()
            expect(page.locator("#compare-heatmap .yaxislayer-above g.ytick")).to_have_count(3)
            page.goto(server + "/export")
            expect(page.locator("#export-compare")).to_contain_text("the latest comparison: earnings yield")
            expect(page.locator("#export-study-line")).to_contain_text("Exporting")
            page.locator("#export-compare input").check()
            with page.expect_download(timeout=WAIT) as dl:
                page.get_by_role("button", name="Build the bundle").click()
            path = tmp_path / dl.value.suggested_filename
            dl.value.save_as(path)
        finally:
            context.close()
            browser.close()
    with zipfile.ZipFile(path) as z:
        names = {n.split("/", 1)[1] for n in z.namelist()}
    assert {"tables/comparison.csv", "tables/signal_correlation.csv", "tables/joint_fm.csv",
            "charts/compare_correlation.html"} <= names


def test_the_split_month_on_the_stability_page_moves_the_split(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    page.goto(server + "/stability")
    periods = page.locator("#stab-periods")
    expect(periods).to_contain_text("from ")
    box = page.locator("#stab-split")
    box.fill("2013/05")
    box.press("Enter")
    expect(page.locator("#stab-split-note")).to_contain_text("Split month")     # refused, naming the control
    box.fill("2013-05")
    box.press("Enter")
    expect(periods).to_contain_text("from 2013-05")
    expect(periods).to_contain_text("before 2013-05")
    assert _settings(page)["split_month"] == "2013-05"
    # the Study page keeps it (one study for every page) and a return to the Stability page shows it
    page.goto(server + "/study")
    expect(page.locator("#study-summary")).to_contain_text("t =")
    assert _settings(page)["split_month"] == "2013-05"
    page.goto(server + "/stability")
    expect(page.locator("#stab-split")).to_have_value("2013-05")
    expect(periods).to_contain_text("from 2013-05")
    ARTIFACTS.mkdir(exist_ok=True)
    periods.screenshot(path=str(ARTIFACTS / "stability-periods-split.png"))
