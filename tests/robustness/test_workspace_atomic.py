"""The workspace's write path: temp file + fsync + os.replace, one sqlite transaction, crash leftovers cleared.

Besides the real-server SIGKILL test (test_server_faults.py), a helper process
saving a large dataset is SIGKILLed at random points after it starts writing,
several times over, and the catalogue is checked after every kill.
"""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from valuesift.app.workspace import Workspace
from valuesift.core.intake import ReadOptions
from tests.robustness._data import big_price_csv, price_eps_files
from tests.robustness._serve import ROOT, check_workspace, workspace_hashes

KILLS = {"helper_sigkills": 0}

_HELPER = """
import sys
from valuesift.app.workspace import Workspace
from valuesift.core.intake import ReadOptions
ws = Workspace(sys.argv[1])
raw = open(sys.argv[2], "rb").read()
print("writing", flush=True)
ws.add_upload(sys.argv[3], raw, ReadOptions(kind="prices"))
print("done", flush=True)
"""


def test_crash_leftovers_are_removed_at_open_but_not_a_live_writers(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True)
    dead_pid = int(dead.stdout)                          # a process that has ended
    (tmp_path / "raw" / f".tmp-{dead_pid}-abc.bin").write_bytes(b"half")
    (tmp_path / "data" / ".tmp-garbage.parquet").write_bytes(b"half")
    live = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        (tmp_path / "raw" / f".tmp-{live.pid}-xyz.bin").write_bytes(b"in progress")
        again = Workspace(tmp_path)
        assert again.removed_temp_files == 2
        assert [p.name for p in (tmp_path / "raw").glob(".tmp-*")] == [f".tmp-{live.pid}-xyz.bin"]
    finally:
        live.kill()
        live.wait(30)
    assert ws.records() == []


def test_an_upload_above_the_limit_changes_nothing(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    prices, _ = price_eps_files(3)
    ws.add_upload("prices.csv", prices)
    before = workspace_hashes(tmp_path)
    rec = ws.add_upload("big.csv", prices * 3, ReadOptions(max_bytes=len(prices) + 10))
    assert not rec.ok and "above the limit" in (rec.error or "")
    assert workspace_hashes(tmp_path) == before
    assert [r.name for r in ws.records()] == ["prices.csv"]


def test_owners_see_their_own_and_the_shared_datasets(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    p1, _ = price_eps_files(1)
    p2, _ = price_eps_files(2)
    shared = ws.add_upload("prices-shared.csv", p1)
    a = ws.add_upload("prices-a.csv", p2, owner="a" * 32)
    b = ws.add_upload("prices-b.csv", p2, owner="b" * 32)      # the same bytes: another dataset, another file
    assert len({shared.id, a.id, b.id}) == 3
    assert {r.id for r in ws.records(owner="a" * 32)} == {shared.id, a.id}
    assert {r.id for r in ws.records()} == {shared.id, a.id, b.id}
    with pytest.raises(KeyError):
        ws.get(b.id, owner="a" * 32)
    ws.delete(b.id, owner="b" * 32)
    assert ws.get(a.id, owner="a" * 32).ok                # the shared raw bytes stay for A
    assert ws.parsed_file(a.id).data.shape[0] > 0


def test_a_workspace_from_before_owners_opens_and_its_rows_are_shared(tmp_path: Path) -> None:
    con = sqlite3.connect(tmp_path / "catalogue.sqlite3")
    con.executescript("""CREATE TABLE datasets (id TEXT PRIMARY KEY, name TEXT NOT NULL, kind TEXT, sha256 TEXT NOT NULL,
        size INTEGER NOT NULL, uploaded_at TEXT NOT NULL, options_json TEXT NOT NULL, report_json TEXT,
        status TEXT NOT NULL, error TEXT, demo INTEGER NOT NULL DEFAULT 0);
        INSERT INTO datasets VALUES ('x1', 'old.csv', 'prices', 'ab', 1, '2026-01-01T00:00:00+00:00', '{}', NULL, 'failed', 'e', 0);""")
    con.commit()
    con.close()
    ws = Workspace(tmp_path)
    assert [r.id for r in ws.records(owner="c" * 32)] == ["x1"]


@pytest.mark.slow
def test_sigkill_of_a_saving_process_at_random_points(tmp_path: Path) -> None:
    ws_dir = tmp_path / "ws"
    ws = Workspace(ws_dir)
    prices, eps = price_eps_files(8)
    first = ws.add_upload("prices.csv", prices)
    second = ws.add_upload("eps.csv", eps)
    kept = {first.id: first.sha256, second.id: second.sha256}
    rng = np.random.default_rng(7)
    big = tmp_path / "big.csv"
    base = big_price_csv(5, n_sec=120, n_days=8000)
    rounds = 5
    for k in range(rounds):
        big.write_bytes(base + f"\n# {k}\n".encode())
        proc = subprocess.Popen([sys.executable, "-c", _HELPER, str(ws_dir), str(big), f"big-{k}.csv"], cwd=ROOT,
                                stdout=subprocess.PIPE, text=True)
        try:
            assert proc.stdout is not None and proc.stdout.readline().strip() == "writing"
            time.sleep(float(rng.uniform(0.0, 2.5)))     # a random point after it starts writing
            if proc.poll() is None:
                os.kill(proc.pid, signal.SIGKILL)
                KILLS["helper_sigkills"] += 1
            proc.wait(60)
        finally:
            if proc.poll() is None:
                proc.kill()
                proc.wait(30)
        again = Workspace(ws_dir)                          # what a restarted server does first
        assert not list(ws_dir.rglob(".tmp-*"))
        rows = check_workspace(ws_dir)
        ids = {r["id"]: r["sha256"] for r in rows}
        for did, sha in kept.items():
            assert ids[did] == sha
            assert again.parsed_file(did).data.shape[0] > 0
        for r in rows:
            if r["name"].startswith("big-"):
                assert r["status"] == "ok"                 # present only when complete
    print(f"\nhelper SIGKILLs survived: {KILLS['helper_sigkills']} of {rounds} rounds")
