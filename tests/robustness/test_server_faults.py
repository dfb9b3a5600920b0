"""Nothing lost: the real server (``python -m valuesift.app.cli serve`` on 127.0.0.1) under rejected uploads and SIGKILL.

The checks follow common practice for crash safety: a write goes to a
temporary file, is fsynced and renamed over the target (POSIX rename is
atomic), and the catalogue row is one sqlite transaction written after its
files; after a crash the catalogue passes sqlite's ``PRAGMA integrity_check``
and every row's files exist with the recorded hash.
"""

from __future__ import annotations

import threading
import time
from pathlib import Path

import numpy as np
import pytest
import requests

from tests.robustness._data import big_price_csv, price_eps_files
from tests.robustness._serve import DashClient, Server, check_workspace, workspace_hashes

pytestmark = pytest.mark.slow

FAULTS = {"sigkill_rounds": 0, "upload_absent_after": 0, "upload_complete_after": 0}


def _upload_ok(c: DashClient, files, sel=None, version=0):  # type: ignore[no-untyped-def]
    v = DashClient.values(c.upload(files, sel, version))
    return v["vs-selection.data"], v["data-version.data"], v


def test_rejected_uploads_leave_the_workspace_byte_for_byte_unchanged(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    with Server(ws, "--max-upload-mb", "1") as srv:
        c = DashClient(srv.base)
        prices, eps = price_eps_files(1)
        sel, ver, _ = _upload_ok(c, [("prices.csv", prices), ("eps.csv", eps)])
        assert len(sel["ids"]) == 2
        before = workspace_hashes(ws)
        assert any(k.startswith("raw/") for k in before)

        # 1. a request body above the server's limit: refused by the server itself (413), nothing read
        huge = b"date,QZA01\n" + b"2020-01-31,1\n" * 200_000          # 2.6 MB > 1 MB
        r = c.upload([("huge.csv", huge)], sel, ver)
        assert r.status_code == 413
        # 2. a file just above the limit whose base64 body fits the request limit: refused by the workspace
        over = b"date,QZA01\n" + b"2020-01-31,1\n" * 81_000            # about 1.05 MB
        v = DashClient.values(c.upload([("over.csv", over)], sel, ver))
        assert "too_large" not in str(v) and "above the limit" in str(v["data-upload-alert.children"])
        # 3. a damaged upload (not base64)
        r = c.call({"data-upload.contents": ["data:text/csv;base64,@@@notbase64"]},
                   {"data-upload.filename": ["bad.csv"], "vs-selection.data": sel, "data-version.data": ver})
        assert r.status_code in (200, 204)
        # 4. a raw POST above the limit that is not even a callback
        r = requests.post(srv.base + "/_dash-update-component", data=b"x" * (3 * 1024 * 1024),
                          headers={"Content-Type": "application/json"}, timeout=120)
        assert r.status_code == 413
        assert workspace_hashes(ws) == before
        rows = check_workspace(ws)
        assert len(rows) == 2


def test_uploaded_file_names_never_become_paths(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    with Server(ws) as srv:
        c = DashClient(srv.base)
        names = ("../../etc/passwd.csv", "..\\..\\boot.ini.csv", "/tmp/abs prices.csv", "prices\x00.csv")
        for i, name in enumerate(names):
            _upload_ok(c, [(name, price_eps_files(10 + i)[0])])
    files = list(workspace_hashes(ws))
    for f in files:   # only hash-named files in the workspace's own folders
        assert f in ("catalogue.sqlite3", "cache.key") or f.startswith(("raw/", "data/", "cache/")), f
        assert "passwd" not in f and "boot" not in f and "abs" not in f
    assert not (tmp_path / "etc").exists() and not (ws.parent.parent / "etc" / "passwd.csv").exists()
    rows = check_workspace(ws)
    # the names are kept as labels only; the two whose kind cannot be told from the name are refused and,
    # like every rejected file, leave nothing in the workspace
    assert {r["name"] for r in rows} == {"/tmp/abs prices.csv", "prices\x00.csv"}


def test_sigkill_in_the_middle_of_a_large_upload(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    rng = np.random.default_rng(20261202)
    big = big_price_csv(3)
    earlier: dict[str, str] = {}
    cookies = None
    rounds = 3
    for k in range(rounds):
        srv = Server(ws).start()
        try:
            c = DashClient(srv.base)
            if cookies is not None:
                c.http.cookies.update(cookies)
            cookies = c.http.cookies.copy()
            if k == 0:
                prices, eps = price_eps_files(4)
                _upload_ok(c, [("prices.csv", prices), ("eps.csv", eps)])
                earlier = {r["id"]: r["sha256"] for r in check_workspace(ws)}
            body = big + f"\n# round {k}\n".encode()      # new bytes each round (a new dataset)
            result: dict[str, object] = {}

            def send() -> None:
                try:
                    result["r"] = c.upload([(f"prices-big-{k}.csv", body)])
                except requests.RequestException as err:   # the server died under the request
                    result["err"] = err

            t = threading.Thread(target=send, daemon=True)
            t.start()
            time.sleep(float(rng.uniform(0.3, 8.0)))     # somewhere in decoding, writing, reading or after
            srv.kill()
            t.join(120)
            FAULTS["sigkill_rounds"] += 1
        finally:
            srv.stop()
        # restart: the workspace opens, temp files are cleared, the catalogue is consistent
        with Server(ws) as srv2:
            c2 = DashClient(srv2.base)
            c2.http.cookies.update(cookies)
            rows = check_workspace(ws)
            ids = {r["id"]: r["sha256"] for r in rows}
            for did, sha in earlier.items():           # the earlier datasets are intact
                assert ids.get(did) == sha
            assert not [p for p in ws.rglob(".tmp-*")]
            names = {r["name"] for r in rows}
            cards = str(DashClient.values(c2.call({"data-version.data": 1, "vs-selection.data": None})))
            assert "prices.csv" in cards and "eps.csv" in cards
            big_rows = [r for r in rows if r["name"] == f"prices-big-{k}.csv"]
            for r in big_rows:                          # the half-written upload: absent, or complete and readable
                assert r["status"] == "ok"
            FAULTS["upload_complete_after" if big_rows else "upload_absent_after"] += 1
            assert names >= {"prices.csv", "eps.csv"}


def test_print_faults() -> None:
    if not FAULTS["sigkill_rounds"]:
        pytest.skip("the SIGKILL test did not run in this session")
    print(f"\nfaults survived: {FAULTS['sigkill_rounds']} SIGKILLs during a large upload "
          f"(upload absent after {FAULTS['upload_absent_after']}, complete after {FAULTS['upload_complete_after']})")
