"""Security: loopback by default, token for any other bind, debug only with --dev, formula-safe exports, text-only ids.

Formula injection follows the OWASP "CSV Injection" guidance: a text cell
starting with ``=``, ``+``, ``-``, ``@``, tab or carriage return is prefixed
with a single quote so a spreadsheet shows it as text.  No test binds
anything but 127.0.0.1: a non-loopback bind is checked up to the point where
the server would listen (waitress is replaced by a recorder).
"""

from __future__ import annotations

import csv
import io
import re
from pathlib import Path
from typing import Any

import openpyxl
import pandas as pd
import pytest

import valuesift.app.server as server_mod
from valuesift.app import screen_table
from valuesift.app.cli import build_parser, main
from valuesift.app.ids import encode_id
from valuesift.app.server import TOKEN_COOKIE, create_app

HOSTILE_IDS = ['=HYPERLINK("http://127.0.0.1/x","go")', "<script>alert(1)</script>", "+QZB02", "-QZC03",
               "@SUM(A1)", "\tQZD04", "\rQZE05", "<b>QZF06</b>", "[link](javascript:x)", "QZG07"]


def test_default_bind_is_loopback() -> None:
    args = build_parser().parse_args(["serve"])
    assert args.host == "127.0.0.1" and not args.allow_remote and not args.dev


@pytest.mark.parametrize("host", ["0.0.0.0", "192.0.2.10", "::"])
def test_non_loopback_bind_needs_the_explicit_flag(host: str, capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    code = main(["serve", "--host", host, "--workspace", str(tmp_path)])
    err = capsys.readouterr().err
    assert code == 2 and "--allow-remote" in err and "Traceback" not in err


def _client(wsgi_app: Any, host: str = "127.0.0.1:8999") -> Any:
    """A test client whose requests carry ``Host: host`` (the server answers only its own names)."""
    from flask.testing import FlaskClient

    class _HostClient(FlaskClient):
        def open(self, *args: Any, **kw: Any) -> Any:
            kw.setdefault("base_url", f"http://{host}")
            return super().open(*args, **kw)

    return _HostClient(wsgi_app, wsgi_app.response_class, use_cookies=True)


class _Recorder:
    def __init__(self) -> None:
        self.calls: list[dict[str, Any]] = []

    def __call__(self, wsgi_app: Any, **kw: Any) -> None:
        self.calls.append({"app": wsgi_app, **kw})


def test_remote_bind_warns_and_requires_a_token_on_every_request(monkeypatch: pytest.MonkeyPatch, tmp_path: Path,
                                                                 capsys: pytest.CaptureFixture[str]) -> None:
    import waitress

    rec = _Recorder()
    monkeypatch.setattr(waitress, "serve", rec)
    assert server_mod.serve(host="0.0.0.0", port=8999, workspace=str(tmp_path), allow_remote=True) == 0
    out, err = capsys.readouterr()
    assert "WARNING" in err and "0.0.0.0" in err
    token = re.search(r"\?token=([A-Za-z0-9_\-]+)", out).group(1)     # generated and printed at start
    assert len(token) >= 24
    [call] = rec.calls
    assert call["host"] == "0.0.0.0"
    client = _client(call["app"])
    for path in ("/", "/data", "/_dash-layout", "/_dash-dependencies", "/assets/style.css"):
        assert client.get(path).status_code == 403, path
    assert client.post("/_dash-update-component", json={}).status_code == 403
    assert client.get("/data?token=wrong").status_code == 403
    r = client.get(f"/data?token={token}")
    assert r.status_code == 303 and TOKEN_COOKIE in r.headers.get("Set-Cookie", "")
    assert "HttpOnly" in r.headers["Set-Cookie"]
    assert client.get("/_dash-layout").status_code == 200               # the cookie now carries the token
    other = _client(call["app"])
    assert other.get("/_dash-layout").status_code == 403                # another browser without it


def test_user_token_is_used_when_given(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    import waitress

    rec = _Recorder()
    monkeypatch.setattr(waitress, "serve", rec)
    own = "Kq3vZ8-pW1xN5rT0yB7cD2eF9gH4jL6m"          # 32 characters of base64url: about 190 bits
    server_mod.serve(host="0.0.0.0", port=8999, workspace=str(tmp_path), allow_remote=True, token=own)
    client = _client(rec.calls[0]["app"])
    assert client.get(f"/data?token={own}").status_code == 303


def test_debug_only_with_dev(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    import dash
    import waitress

    rec = _Recorder()
    monkeypatch.setattr(waitress, "serve", rec)
    ran: list[dict[str, Any]] = []
    monkeypatch.setattr(dash.Dash, "run", lambda self, **kw: ran.append(kw))
    server_mod.serve(port=8999, workspace=str(tmp_path / "a"))
    assert rec.calls and not ran and rec.calls[0]["host"] == "127.0.0.1"
    assert not rec.calls[0]["app"].debug
    assert not rec.calls[0]["app"].config["VALUESIFT_DEV"]
    server_mod.serve(port=8999, workspace=str(tmp_path / "b"), dev=True)
    assert ran and ran[0]["debug"] is True and ran[0]["host"] == "127.0.0.1"


def _screen() -> pd.DataFrame:
    """A screen as core returns it (codes and numbers), with hostile identifiers and a hostile sector."""
    n = len(HOSTILE_IDS)
    df = pd.DataFrame({"sector": ["=1+1"] + ["Mills"] * (n - 1), "signal": [0.05 + i / 100 for i in range(n)],
                       "zscore": [float(i) - 4 for i in range(n)], "flags": [""] * n,
                       "pe": [10.0 + i for i in range(n)], "quantile": [float(1 + i % 5) for i in range(n)],
                       "months_since_price": [0.0] * n, "months_since_eps": [0.0] * n},
                      index=pd.Index(HOSTILE_IDS, name="security"))
    df.attrs["n_quantiles"] = 5
    df.attrs["date"] = "2024-12-31"
    return df


def test_exported_csv_neutralises_formulas() -> None:
    df = screen_table.display_frame(_screen())
    rows = list(csv.reader(io.StringIO(screen_table.to_csv_bytes(df).decode("utf-8"), newline="")))
    head, body = rows[0], rows[1:]
    sec = [r[head.index("Security")] for r in body]
    for raw, got in zip(HOSTILE_IDS, sec):
        if raw.startswith(("=", "+", "-", "@", "\t", "\r")):
            assert got == "'" + raw
        else:
            assert got == raw
    assert body[0][head.index("Sector")] == "'=1+1"
    # numbers stay numbers (a negative z-score is not a formula)
    assert float(body[0][head.index("Z-score")]) == -4.0


def test_exported_xlsx_holds_text_not_formulas() -> None:
    df = screen_table.display_frame(_screen())
    wb = openpyxl.load_workbook(io.BytesIO(screen_table.to_xlsx_bytes(df)))
    ws = wb.active
    head = [c.value for c in ws[1]]
    col = head.index("Security") + 1
    for i, raw in enumerate(HOSTILE_IDS, start=2):
        cell = ws.cell(row=i, column=col)
        assert cell.data_type == "s"                                    # a string cell, never "f" (formula)
        want = "'" + raw if raw.startswith(("=", "+", "-", "@", "\t", "\r")) else raw
        # a CR survives as written (escaped in the XML) or as LF (XML 1.0 section 2.11: a parser reads CR as LF)
        assert cell.value in (want, want.replace("\r", "\n"))


def test_identifiers_are_text_in_the_screen_table_and_company_page(tmp_path: Path) -> None:
    """The screen table's rows carry the identifier as a plain string in a text column; the company title is a text node."""
    df = screen_table.display_frame(_screen())
    rows, _ = screen_table.page(df, 0, 50)
    assert [r["security"] for r in rows] == HOSTILE_IDS                  # unchanged text, shown by the table as text
    app = create_app(tmp_path / "ws")
    from valuesift.app.pages import screen

    with app.server.test_request_context("/"):
        cols = screen.layout().children
        table = _find(cols, "screen-table")
        assert table is not None
        # the data grid renders cells as text: no markdown or HTML renderer, no code allowed in cells
        for c in table.columnDefs:
            assert c.get("cellRenderer") in (None, "agAnimateShowChangeCellRenderer"), c
            assert "markdown" not in str(c).lower()
        assert not getattr(table, "dangerously_allow_code", False)
        from valuesift.app.pages import company

        for raw in HOSTILE_IDS:
            page = company.layout(code=encode_id(raw))
            title = _find(page.children, "company-title")
            assert title is not None and title.children == raw          # a string child: React escapes it


def _find(children: Any, cid: str) -> Any:
    stack = list(children) if isinstance(children, (list, tuple)) else [children]
    while stack:
        node = stack.pop()
        if getattr(node, "id", None) == cid:
            return node
        kids = getattr(node, "children", None)
        if isinstance(kids, (list, tuple)):
            stack.extend(kids)
        elif kids is not None and hasattr(kids, "children"):
            stack.append(kids)
    return None
