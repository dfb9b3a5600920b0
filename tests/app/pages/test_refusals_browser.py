"""Months outside the data are refused in words on the page that asked for them, in real headless Chromium:
a split month after the last date on the Stability page, and a hold-out month after the last date on the
Sweep page. Each message names the setting and the data's span and says what to change; the page stays usable.
The demo's dates run from 2010 to 2024 (an invented market)."""

from __future__ import annotations

from typing import Any, Iterator

import pytest

from tests.browser_support import browser_page, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 120_000   # ms; a generous upper bound for a slow, shared machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("refuse-ws"), ready_path="/stability", extra=["--demo"]) as base:
        yield base


@pytest.fixture()
def page(server: str) -> Iterator[Any]:
    with browser_page(1440, 1000, WAIT) as pg:
        errors: list[str] = []
        pg.on("pageerror", lambda e: errors.append(str(e)))
        yield pg
        assert not errors, errors


def test_a_split_month_after_the_data_is_refused_on_the_stability_page(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    page.goto(server + "/stability")
    expect(page.locator("#stab-decay .bars path").first).to_be_attached()
    box = page.locator("#stab-split")
    box.fill("2035-01")
    box.press("Enter")
    alert = page.locator("#stab-alert")
    expect(alert).to_contain_text("The split month 2035-01 leaves one side empty")
    expect(alert).to_contain_text("2010-")
    expect(alert).to_contain_text("Choose a month after the first date")
    # a month inside the data is taken and the page draws again
    box.fill("2016-01")
    box.press("Enter")
    expect(page.locator("#stab-readings")).to_contain_text("Split at 2016-01")
    expect(alert).not_to_contain_text("leaves one side empty")


def test_a_holdout_after_the_data_is_refused_on_the_sweep_page(page: Any, server: str) -> None:
    from playwright.sync_api import expect

    page.goto(server + "/sweep")
    page.locator("#sweep-holdout").fill("2035-01")
    page.locator("#sweep-name").fill("too late")
    page.locator("#sweep-run-button").click()
    alert = page.locator("#sweep-run-alert")
    expect(alert).to_contain_text("The hold-out from 2035-01 begins after the last month of the data")
    expect(alert).to_contain_text("Choose an earlier first month of the hold-out")
    expect(page.locator("#sweep-run-button")).to_be_enabled()
    expect(page.locator("#sweep-pick")).not_to_contain_text("too late")    # nothing was saved
