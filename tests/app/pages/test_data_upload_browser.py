"""Uploads and removal on the Data page, in real headless Chromium. A dropped file goes to the server as the
raw body of the upload route, never base64 inside a callback (the server then holds it once while reading it);
a file above the limit is refused at once in words. Remove answers at once and can be undone: a removed
file's card and its part of the combined panel go away, an Undo offer appears, and Undo brings the file back
in use with the panel as it was. Invented data only.
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
    with running_server(tmp_path_factory.mktemp("remove-ws"), ready_path="/data", start_timeout=90,
                        extra=["--max-upload-mb", "1"]) as base:
        yield base


def _files(folder: Path) -> list[str]:
    rng = np.random.default_rng(11)
    dates = pd.date_range("2016-01-31", periods=36, freq="ME")
    secs = [f"QR{i:02d}" for i in range(12)]
    prices = pd.DataFrame(50 + rng.normal(0, 1, (36, 12)).cumsum(axis=0).clip(-40, None), index=dates, columns=secs)
    eps = pd.DataFrame(rng.normal(3, 1, (36, 12)).round(3), index=dates, columns=secs)
    pp, ep = folder / "prices.csv", folder / "earnings.csv"
    prices.rename_axis("date").to_csv(pp)
    eps.rename_axis("date").to_csv(ep)
    return [str(pp), str(ep)]


def test_remove_then_undo(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect

    with browser_page(1440, 1000, WAIT) as page:
        page.goto(server + "/data")
        page.locator("#data-upload input[type=file]").set_input_files(_files(tmp_path))
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 2 of 2 file(s)")
        cards = page.locator(".vs-dataset")
        expect(cards).to_have_count(2)
        summary = page.locator("#data-in-use")
        expect(summary).to_contain_text("earnings.csv (earnings)")
        expect(summary).to_contain_text("prices.csv (prices)")
        before = summary.inner_text()
        # the panel's notes are in words (no flag codes such as extreme_pe)
        expect(page.locator("#data-panel-summary")).not_to_contain_text("_")
        card = page.locator(".vs-dataset", has=page.locator("h3", has_text="earnings.csv"))
        card.get_by_role("button", name="Remove").click()
        # the card goes, the panel no longer holds the earnings, and the page offers to undo
        expect(cards).to_have_count(1)
        expect(page.locator("#data-undo-box")).to_be_visible()
        expect(page.locator("#data-undo-text")).to_contain_text("earnings.csv was removed")
        expect(summary).not_to_contain_text("earnings.csv")
        expect(summary).to_contain_text("prices.csv (prices)")
        page.locator("#data-undo").click()
        expect(page.locator("#data-upload-alert")).to_contain_text("earnings.csv is back.")
        expect(cards).to_have_count(2)
        expect(page.locator("#data-undo-box")).to_be_hidden()
        card = page.locator(".vs-dataset", has=page.locator("h3", has_text="earnings.csv"))
        expect(card.locator("input[type=checkbox]").first).to_be_checked()   # back in use
        expect(summary).to_have_text(before)


def test_files_travel_raw_to_the_upload_route_and_a_large_one_is_refused_at_once(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect

    with browser_page(1440, 1000, WAIT) as page:
        sent: list[tuple[str, str]] = []
        page.on("request", lambda r: sent.append((r.url, r.post_data or "")) if r.method == "POST" else None)
        page.goto(server + "/data")
        rng = np.random.default_rng(12)
        dates = pd.date_range("2017-01-31", periods=24, freq="ME")
        path = tmp_path / "route prices.csv"
        pd.DataFrame(50 + rng.normal(0, 1, (24, 6)).cumsum(axis=0), index=dates,
                     columns=[f"QT{i:02d}" for i in range(6)]).rename_axis("date").to_csv(path)
        page.locator("#data-upload input[type=file]").set_input_files([str(path)])
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 1 of 1 file(s)")
        expect(page.locator(".vs-dataset", has=page.locator("h3", has_text="route prices.csv"))).to_be_visible()
        route = [u for u, _ in sent if u.endswith("/_valuesift/upload")]
        assert len(route) == 1, sent
        assert not any("base64," in body for u, body in sent if "_dash-update-component" in u)
        # above the 1 MB limit of this server: refused in words before anything is sent
        big = tmp_path / "big prices.csv"
        big.write_bytes(b"date,QT00\n" + b"2020-01-31,1.0\n" * 90_000)
        n_route = len(route)
        page.locator("#data-upload input[type=file]").set_input_files([str(big)])
        expect(page.locator("#data-upload-alert .vs-alert-error")).to_contain_text("big prices.csv: the file has")
        expect(page.locator("#data-upload-alert .vs-alert-error")).to_contain_text("above the limit of 1,048,576")
        assert len([u for u, _ in sent if u.endswith("/_valuesift/upload")]) == n_route
        expect(page.locator(".vs-dataset", has=page.locator("h3", has_text="route prices.csv"))).to_be_visible()


_DROP = """([name, text]) => {
    const dt = new DataTransfer();
    dt.items.add(new File([text], name, {type: 'text/csv'}));
    const zone = document.querySelector('#data-upload');
    for (const type of ['dragenter', 'dragover', 'drop']) {
        zone.dispatchEvent(new DragEvent(type, {bubbles: true, cancelable: true, dataTransfer: dt}));
    }
}"""


def test_a_file_dragged_onto_the_drop_area_is_read(server: str) -> None:
    from playwright.sync_api import expect

    with browser_page(1440, 1000, WAIT) as page:
        page.goto(server + "/data")
        expect(page.locator("#data-upload")).to_be_visible()
        rows = "\n".join(f"2019-{m:02d}-28,{10 + m},{20 + m}" for m in range(1, 13))
        page.evaluate(_DROP, ["dragged prices.csv", "date,QD01,QD02\n" + rows + "\n"])
        expect(page.locator("#data-upload-alert")).to_contain_text("Read 1 of 1 file(s)")
        expect(page.locator(".vs-dataset", has=page.locator("h3", has_text="dragged prices.csv"))).to_be_visible()
