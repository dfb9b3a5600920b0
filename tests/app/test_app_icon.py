"""The app shows its own icon (tab and header), never the web framework's stock icon."""

from __future__ import annotations

import pkgutil
import re
from pathlib import Path

from valuesift.app.server import assets_folder, create_app


def test_every_icon_request_gets_our_icon(tmp_path: Path) -> None:
    app = create_app(tmp_path)
    client = app.server.test_client()
    ours = (assets_folder() / "favicon.ico").read_bytes()
    stock = pkgutil.get_data("dash", "favicon.ico")
    assert ours != stock
    html = client.get("/data").get_data(as_text=True)
    link = re.search(r'<link rel="icon"[^>]*href="([^"?]+)', html)
    assert link and link.group(1) == "/assets/favicon.ico"
    for path in (link.group(1), "/favicon.ico", "/_favicon.ico"):
        resp = client.get(path)
        assert resp.status_code == 200 and resp.get_data() == ours, path


def test_header_carries_the_icon(tmp_path: Path) -> None:
    from valuesift.app import shell

    create_app(tmp_path)

    text = str(shell.layout())
    assert "valuesift-icon.svg" in text
    svg = (assets_folder() / "valuesift-icon.svg").read_text(encoding="utf-8")
    assert svg.startswith("<svg") and "ValueSift" in svg
