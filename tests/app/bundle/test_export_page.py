"""The Export page without a browser: it says how to get the images (the same hint as the report)."""

from __future__ import annotations

import sys
from pathlib import Path

import dash
import pytest

from valuesift.app.bundle import NO_BROWSER_HINT


def test_export_page_shows_the_no_browser_hint(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from valuesift.app.server import create_app

    create_app(tmp_path / "ws")
    page = next(p for p in dash.page_registry.values() if p["name"] == "Export")
    assert page["path"] == "/export"
    module = sys.modules[page["module"]]
    monkeypatch.setenv("BROWSER_PATH", str(tmp_path / "no-such-chromium"))
    text = str(module.layout())
    assert NO_BROWSER_HINT in text and "BROWSER_PATH" in text
    monkeypatch.setenv("BROWSER_PATH", sys.executable)      # any executable file counts as found
    assert NO_BROWSER_HINT not in str(module.layout())


def test_export_page_offers_the_workspace_sweeps(tmp_path: Path) -> None:
    from valuesift.app.server import create_app

    app = create_app(tmp_path / "ws")
    done = tmp_path / "ws" / "sweeps" / "spring-grid"
    done.mkdir(parents=True)
    (done / "sweep.json").write_text("{}", encoding="utf-8")
    (done / "comparison.parquet").write_bytes(b"")
    (tmp_path / "ws" / "sweeps" / "half-written").mkdir()          # no sweep.json: not offered
    page = next(p for p in dash.page_registry.values() if p["name"] == "Export")
    module = sys.modules[page["module"]]
    with app.server.test_request_context("/export"):
        options = module._sweep_options()
    assert [o["value"] for o in options] == ["", "spring-grid"]
