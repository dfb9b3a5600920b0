"""The Data page's upload route (``POST /_valuesift/upload``) against a real server on 127.0.0.1.

A file arrives as the raw request body (no base64 inside a JSON callback), so
the server holds it once while intake reads it.  The checks follow common
practice for web upload endpoints (OWASP file-upload and CSRF guidance: a
custom request header that a cross-site page cannot set, an ``Origin`` check,
the size refused before the body is read, nothing stored for a rejected file,
object-level ownership).  Invented data only.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path
from typing import Iterator

import pytest

from tests.robustness._data import price_eps_files
from tests.robustness._serve import DashClient, Server, workspace_hashes

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def srv(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Server]:
    with Server(tmp_path_factory.mktemp("route") / "ws", "--max-upload-mb", "1") as s:
        yield s


def _rows(ws: Path) -> list[tuple[str, str, str]]:
    with sqlite3.connect(ws / "catalogue.sqlite3") as con:
        return con.execute("SELECT name, kind, owner FROM datasets WHERE removed_at IS NULL").fetchall()


def test_a_file_sent_raw_is_read_and_owned_by_its_session(srv: Server) -> None:
    a, b = DashClient(srv.base), DashClient(srv.base)
    prices, eps = price_eps_files(71, n_sec=6, prefix="QU")
    r = a.upload_raw("route prices.csv", prices)
    assert r.status_code == 200 and r.json()["ok"] is True, r.text
    did = r.json()["id"]
    names = {n for n, _, owner in _rows(srv.workspace) if owner == a.http.cookies.get("valuesift_session")}
    assert "route prices.csv" in names
    # the page words the route's answer and puts the file in use
    v = DashClient.values(a.call({"data-upload-done.data": {"results": [r.json()], "at": 1}},
                                 {"vs-selection.data": None, "data-version.data": 0}))
    assert "Read 1 of 1 file(s)" in str(v["data-upload-alert.children"])
    assert did in v["vs-selection.data"]["ids"]
    # the same bytes again: recognised, not catalogued twice
    again = a.upload_raw("copy of route prices.csv", prices)
    assert again.json()["ok"] is True and again.json()["known"] == "route prices.csv" and again.json()["id"] == did
    # another session cannot use the first one's dataset id
    v = DashClient.values(b.call({"data-upload-done.data": {"results": [r.json()], "at": 2}},
                                 {"vs-selection.data": None, "data-version.data": 0}))
    assert "no longer in the workspace" in str(v["data-upload-alert.children"])
    assert did not in (v["vs-selection.data"] or {}).get("ids", [])


def test_requests_a_cross_site_page_could_send_are_refused_and_store_nothing(srv: Server) -> None:
    c = DashClient(srv.base)
    prices, _ = price_eps_files(72, n_sec=5, prefix="QW")
    before = workspace_hashes(srv.workspace)
    # without the page script's header (a plain form post of another site)
    r = c.http.post(srv.base + "/_valuesift/upload", data=prices, headers={"Content-Type": "text/plain"}, timeout=60)
    assert r.status_code == 403 and "own Data page" in r.json()["message"]
    # with the header but from another origin
    r = c.upload_raw("x.csv", prices, headers={"Origin": "http://attacker.invalid"})
    assert r.status_code == 403
    assert workspace_hashes(srv.workspace) == before


def test_too_large_unreadable_and_unknown_kind_are_said_and_store_nothing(srv: Server) -> None:
    c = DashClient(srv.base)
    before = workspace_hashes(srv.workspace)
    r = c.upload_raw("huge.csv", b"date,QA1\n" + b"2020-01-31,1\n" * 120_000)   # about 1.6 MB, limit 1 MB
    assert r.status_code == 413 and "above the limit of 1,048,576" in r.json()["message"]
    r = c.upload_raw("empty prices.csv", b"")
    assert r.json()["ok"] is False and "empty prices.csv" in r.json()["message"]
    r = c.upload_raw("prices.csv", b"date,QA1\n2020-01-31,1\n", kind="spreadsheet")
    assert r.status_code == 400 and "kind of file 'spreadsheet'" in r.json()["message"]
    assert workspace_hashes(srv.workspace) == before
    # the server still answers, and the page words a failed answer as an error
    v = DashClient.values(c.call({"data-upload-done.data": {"results": [r.json()], "at": 3}},
                                 {"vs-selection.data": None, "data-version.data": 0}))
    assert "vs-alert-error" in str(v["data-upload-alert.children"])
