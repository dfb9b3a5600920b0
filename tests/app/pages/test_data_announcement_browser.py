"""The Data page's announcement-date choice takes effect: in real headless Chromium, an earnings file whose
publication-date column has a name the detector does not know is read by period date; naming the column on
the card reads it again dated by publication, and the card says so. Invented data only.
"""

from __future__ import annotations

from pathlib import Path
from typing import Iterator

import numpy as np
import pandas as pd
import pytest

from tests.browser_support import CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 90_000  # ms; an upper bound for a slow machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("pubdate-ws"), ready_path="/data", start_timeout=90) as base:
        yield base


def _files(folder: Path) -> list[str]:
    rng = np.random.default_rng(4)
    dates = pd.date_range("2016-01-31", periods=36, freq="ME")
    secs = [f"QZ{i:02d}" for i in range(12)]
    prices = pd.DataFrame(50 + rng.normal(0, 1, (36, 12)).cumsum(axis=0).clip(-40, None), index=dates, columns=secs)
    rows = [{"period": q.date().isoformat(), "code": s, "went_public": (q + pd.Timedelta(days=45)).date().isoformat(),
             "eps": round(float(rng.normal(3, 1)), 3)} for q in pd.date_range("2015-12-31", "2018-09-30", freq="QE")
            for s in secs]
    pp, ep = folder / "prices.csv", folder / "earnings.csv"
    prices.rename_axis("date").to_csv(pp)
    pd.DataFrame(rows).to_csv(ep, index=False)
    return [str(pp), str(ep)]


def test_naming_the_publication_date_column_rereads_the_earnings(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=WAIT)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        page = browser.new_page(viewport={"width": 1440, "height": 1000})
        page.set_default_timeout(WAIT)
        page.goto(server + "/data")
        page.locator("#data-upload input[type=file]").set_input_files(_files(tmp_path))
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 2 of 2 file(s)")
        card = page.locator(".vs-dataset", has=page.locator("h3", has_text="earnings.csv"))
        expect(card).not_to_contain_text("dated by the announcement column")
        card.locator("summary", has_text="Change how this file is read").click()
        card.locator("input[id*='ds-pubdate']").fill("went_public")
        card.get_by_role("button", name="Read again with these choices").click()
        expect(page.locator("#data-upload-alert")).to_contain_text("earnings.csv was read again.")
        card = page.locator(".vs-dataset", has=page.locator("h3", has_text="earnings.csv"))
        expect(card).to_contain_text("dated by the announcement column 'went_public'")
        browser.close()
