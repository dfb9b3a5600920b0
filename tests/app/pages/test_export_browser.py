"""End-to-end in real headless Chromium: the Export page builds the bundle of the study on screen and downloads it.

The server is the real command line (``python -m valuesift.app.cli serve --demo``) on a free
127.0.0.1 port with a temporary workspace, started the way ``tests/app/test_app_browser.py``
starts it; it is stopped when the module's tests end.
"""

from __future__ import annotations

import json
import zipfile
from pathlib import Path
from typing import Iterator

import pytest

from tests.browser_support import ARTIFACTS, CHROMIUM, CHROMIUM_ARGS as ARGS, need_browser, running_server

pytestmark = pytest.mark.browser

WAIT = 180_000   # ms; a generous upper bound for a slow, shared machine, not a speed check


@pytest.fixture(scope="module")
def server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    need_browser()
    with running_server(tmp_path_factory.mktemp("export-ws"), ready_path="/export", extra=["--demo"]) as base:
        yield base


def test_export_downloads_the_bundle_of_the_study_on_screen(server: str, tmp_path: Path) -> None:
    from playwright.sync_api import expect, sync_playwright

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        context = browser.new_context(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
        page = context.new_page()
        page.set_default_timeout(WAIT)
        errors: list[str] = []
        page.on("pageerror", lambda e: errors.append(str(e)))
        try:
            # The Study page's study first, then its navigation link to Export: the same key is used.
            page.goto(server + "/study")
            expect(page.locator("#study-summary")).to_contain_text("Hansen-Hodrick t", timeout=WAIT)
            page.locator("#nav-export").click()
            expect(page.locator("#export-study-line")).to_contain_text("Exporting: earnings yield", timeout=WAIT)
            page.locator("#export-name").fill("Spring committee")
            page.locator("#export-note").fill("Draft for discussion.")
            with page.expect_download(timeout=WAIT) as dl:
                page.get_by_role("button", name="Build the bundle").click()
                expect(page.locator("#export-build-box")).to_be_visible(timeout=WAIT)     # the progress indicator
            download = dl.value
            assert download.suggested_filename.startswith("Spring-committee_earnings_yield_all_")
            path = tmp_path / download.suggested_filename
            download.save_as(path)
            expect(page.locator("#export-thumbs img").first).to_be_visible(timeout=WAIT)
            assert page.locator("#export-thumbs img").count() >= 6           # thumbnails of the report's pages
            ARTIFACTS.mkdir(exist_ok=True)
            page.screenshot(path=str(ARTIFACTS / "export.png"), full_page=True)
            assert not errors
        finally:
            context.close()
            browser.close()

    with zipfile.ZipFile(path) as z:
        names = z.namelist()
        root = path.stem
        manifest = json.loads(z.read(f"{root}/manifest.json"))
        assert z.read(f"{root}/report.pdf").startswith(b"%PDF-")
    assert manifest["study_name"] == "Spring committee" and manifest["note"] == "Draft for discussion."
    from valuesift.app.settings import config_from_settings

    # The dashboard's default settings, i.e. the study that was on the Study page.
    assert manifest["configuration"] == config_from_settings({}).to_dict()
    listed = {f["path"] for f in manifest["files"]}
    assert {n[len(root) + 1:] for n in names} == listed | {"manifest.json"}
    assert {"prices.csv", "earnings.csv"} <= {i["name"] for i in manifest["inputs"]}
