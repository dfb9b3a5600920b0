"""The Data page's column choices take effect: in real headless Chromium, a long price file with two date
columns, two identifier columns, two value columns and one repeated row is read; naming the other date,
security and value column on the card, and asking a repeated row to stop the read, each change what the card
shows. Invented data only.
"""

from __future__ import annotations

from pathlib import Path
from typing import Iterator

import numpy as np
import pandas as pd
import pytest

from tests.browser_support import browser_page, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 90_000  # ms; an upper bound for a slow machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("columns-ws"), ready_path="/data", start_timeout=90) as base:
        yield base


def _file(folder: Path) -> str:
    rng = np.random.default_rng(9)
    dates = pd.date_range("2017-01-31", periods=30, freq="ME")
    rows = [{"date": d.date().isoformat(), "booked": (d + pd.offsets.MonthEnd(1)).date().isoformat(),
             "code": f"QZK{i:02d}", "alt_code": f"ALT{i:02d}", "close_price": round(float(40 + i + rng.normal()), 2),
             "open_price": round(float(30 + i + rng.normal()), 2)} for d in dates for i in range(6)]
    rows.append(dict(rows[-1]))  # one repeated date and security
    path = folder / "prices_long.csv"
    pd.DataFrame(rows).to_csv(path, index=False)
    return str(path)


def _reread(page: object, fill: dict[str, str], pick: tuple[str, str] | None = None) -> object:
    from playwright.sync_api import expect

    card = page.locator(".vs-dataset", has=page.locator("h3", has_text="prices_long.csv"))  # type: ignore[attr-defined]
    details = card.locator("details.vs-overrides")
    if details.get_attribute("open") is None:
        card.locator("summary", has_text="Change how this file is read").click()
    for cid, value in fill.items():
        card.locator(f"input[id*='{cid}']").fill(value)
    if pick:
        card.locator(f"[id*='{pick[0]}']").first.click()
        page.locator(".dash-dropdown-content").get_by_role("option", name=pick[1], exact=True).click()  # type: ignore[attr-defined]
    card.get_by_role("button", name="Read again with these choices").click()
    return expect


def test_column_choices_on_the_card_change_the_reading(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect

    with browser_page(timeout_ms=WAIT) as page:
        page.goto(server + "/data")
        page.locator("#data-upload input[type=file]").set_input_files([_file(tmp_path)])
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 1 of 1 file(s)")
        card = lambda: page.locator(".vs-dataset", has=page.locator("h3", has_text="prices_long.csv"))  # noqa: E731
        expect(card()).to_contain_text("2017-01-31 to 2019-06-30")      # the first date column, as detected
        expect(card()).to_contain_text("columns not used: 'booked', 'alt_code', 'open_price'")   # the value column not used
        # The labels come from the one table of reading choices.
        card().locator("summary", has_text="Change how this file is read").click()
        for label in ("Date column", "Security column (long layout)", "Value column (long layout)",
                      "Repeated date and security"):
            expect(card().get_by_text(label, exact=True)).to_be_visible()
        # Date column: the other date column moves every date one month on.
        _reread(page, {"ds-datecol": "booked"})
        expect(page.locator("#data-upload-alert")).to_contain_text("prices_long.csv was read again.")
        expect(card()).to_contain_text("2017-02-28 to 2019-07-31")
        # Value column: the other value column is read, the first is the one not used.
        _reread(page, {"ds-valcol": "open_price"})
        expect(card()).to_contain_text("columns not used: 'date', 'alt_code', 'close_price'")
        expect(card()).not_to_contain_text("columns not used: 'date', 'alt_code', 'open_price'")
        # Security column: the other identifiers.
        _reread(page, {"ds-seccol": "alt_code"})
        expect(card()).to_contain_text("column 'alt_code'")
        expect(card()).to_contain_text("columns not used: 'date', 'code', 'close_price'")
        # The examples of cells not used are in words, never reason codes.
        expect(card()).not_to_contain_text("unused_column")
        # A repeated row stops the read when asked to; the card says why and names the choice to change.
        _reread(page, {}, ("ds-dups", "stop with an error"))
        expect(page.locator("#data-upload-alert")).to_contain_text("Repeated date and security")


def test_earnings_read_as_pe_on_the_card(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect

    rng = np.random.default_rng(3)
    dates = pd.date_range("2017-01-31", periods=24, freq="ME")
    path = tmp_path / "figures_q.csv"      # a name that says neither EPS nor P/E: read as EPS, "assumed"
    pd.DataFrame(rng.uniform(8, 20, (24, 4)).round(2), index=dates,
                 columns=[f"QZK{i:02d}" for i in range(4)]).rename_axis("date").to_csv(path)
    with browser_page(timeout_ms=WAIT) as page:
        page.goto(server + "/data")
        page.locator("#data-upload input[type=file]").set_input_files([str(path)])
        # Neither the name nor the header says what the file holds: the upload fails and names the choice ...
        expect(page.locator("#data-upload-alert")).to_contain_text("Choose what it holds under 'File holds'")
        expect(page.locator(".vs-dataset", has=page.locator("h3", has_text="figures_q.csv"))).to_have_count(0)
        # ... which sits by the drop area: the same file dropped as earnings is read.
        page.locator("#data-upload-kind").click()
        page.locator(".dash-dropdown-content").get_by_role("option", name="earnings", exact=True).click()
        expect(page.locator("#data-upload-kind")).to_contain_text("earnings")
        again = tmp_path / "again"
        again.mkdir()
        (again / path.name).write_bytes(path.read_bytes())   # the same file (a new path: the input fires again)
        page.locator("#data-upload input[type=file]").set_input_files([str(again / path.name)])
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 1 of 1 file(s)")
        card = lambda: page.locator(".vs-dataset", has=page.locator("h3", has_text="figures_q.csv"))  # noqa: E731
        expect(card()).to_contain_text("earnings read as EPS (assumed; if these are P/E ratios, set 'Earnings read as'")
        card().locator("summary", has_text="Change how this file is read").click()
        card().locator("[id*='ds-earnform']").first.click()
        page.locator(".dash-dropdown-content").get_by_role("option", name="P/E", exact=True).click()
        card().get_by_role("button", name="Read again with these choices").click()
        expect(page.locator("#data-upload-alert")).to_contain_text("figures_q.csv was read again.")
        expect(card()).to_contain_text("P/E")
        expect(card()).not_to_contain_text("earnings read as EPS")
