"""The app factory and serve(): loopback by default, a token off loopback, limits, pages, the caution."""

from __future__ import annotations

from pathlib import Path

import dash
import pytest

from valuesift.app.caution import CAUTION
from valuesift.app.server import TOKEN_COOKIE, _is_loopback, create_app, serve
from valuesift.core.errors import ConfigError


@pytest.fixture()
def plain_app(tmp_path: Path) -> dash.Dash:
    return create_app(tmp_path, max_upload_mb=3)


def test_pages_and_navigation(plain_app: dash.Dash) -> None:
    names = {p["name"]: p for p in dash.page_registry.values()}
    assert {"Data", "Study", "Screen", "Company", "Export"} <= set(names)
    assert names["Company"]["path_template"] == "/company/<code>"
    from valuesift.app.shell import nav_links

    assert [link.children for link in nav_links()] == ["Data", "Study", "Screen", "Sweep", "Export", "Compare",
                                                      "Stability"]


def test_footer_caution_on_every_page(plain_app: dash.Dash) -> None:
    c = plain_app.server.test_client()
    layout = c.get("/_dash-layout").get_json()
    text = str(layout)
    assert CAUTION in text
    assert "not investment advice" in CAUTION


def test_limits_and_no_debug(plain_app: dash.Dash) -> None:
    cfg = plain_app.server.config
    assert cfg["MAX_CONTENT_LENGTH"] >= 3 * 1024 * 1024 and cfg["MAX_CONTENT_LENGTH"] < 5 * 1024 * 1024
    assert not plain_app.server.debug and not cfg.get("VALUESIFT_DEV")
    st = plain_app.server.extensions["valuesift"]
    assert st.max_upload_bytes == 3 * 1024 * 1024
    c = plain_app.server.test_client()
    r = c.post("/_dash-update-component", data=b"x" * (cfg["MAX_CONTENT_LENGTH"] + 10),
               headers={"Content-Type": "application/json"})
    assert r.status_code == 413                       # enforced on the server, not only in the browser


def test_root_goes_to_data_without_files_and_to_study_with_them(tmp_path: Path) -> None:
    empty = create_app(tmp_path / "a").server.test_client()
    assert empty.get("/").headers["Location"].endswith("/data")
    demo = create_app(tmp_path / "b", demo=True).server.test_client()
    assert demo.get("/").headers["Location"].endswith("/study")


def test_token_once_in_the_address_then_a_cookie(tmp_path: Path) -> None:
    app = create_app(tmp_path, token="s3cret-token")
    c = app.server.test_client()
    assert c.get("/data").status_code == 403
    assert c.get("/data?token=wrong").status_code == 403
    r = c.get("/data?token=s3cret-token")
    assert r.status_code == 303 and r.headers["Location"].endswith("/data")
    assert TOKEN_COOKIE in r.headers.get("Set-Cookie", "") and "HttpOnly" in r.headers["Set-Cookie"]
    assert c.get("/data").status_code == 200          # the cookie now carries it
    assert c.get("/_dash-layout").status_code == 200


def test_serve_refuses_a_remote_address_without_permission(tmp_path: Path) -> None:
    with pytest.raises(ConfigError, match="allow-remote"):
        serve(host="0.0.0.0", port=1, workspace=str(tmp_path))
    assert _is_loopback("127.0.0.1") and _is_loopback("::1") and _is_loopback("localhost")
    assert not _is_loopback("0.0.0.0") and not _is_loopback("192.168.1.20")


def test_two_apps_in_one_process_each_get_the_page_callbacks(tmp_path: Path) -> None:
    a = create_app(tmp_path / "one")
    b = create_app(tmp_path / "two")
    assert len(a.callback_map) == len(b.callback_map) > 10
    assert a.server.extensions["valuesift"].workspace.root != b.server.extensions["valuesift"].workspace.root


def test_company_page_renders_identifiers_as_text(plain_app: dash.Dash) -> None:
    import sys

    from valuesift.app.ids import encode_id

    page = sys.modules["valuesift.app.pages.company"]
    nasty = "<img src=x onerror=alert(1)>"
    layout = page.layout(code=encode_id(nasty))
    title = next(c for c in layout.children if getattr(c, "id", None) == "company-title")
    assert title.children == nasty                  # a plain string child: React renders it as text
    bad = page.layout(code="a/b")
    assert "does not name a security" in str(bad.children[1].children)
