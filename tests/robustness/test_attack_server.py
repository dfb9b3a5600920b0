"""The attack review of issue 14 against a real server (``python -m valuesift.app.cli serve`` on 127.0.0.1).

One test per finding, each reproducing the attack as reported and failing on
the code before the fix.  All traffic goes to 127.0.0.1; the remote bind is
``0.0.0.0`` reached through 127.0.0.1 only; every loop is bounded in count
and time.  Checks follow common practice for web services (OWASP: Host
header validation, brute-force throttling, object-level authorisation) and
the review's own measurements.
"""

from __future__ import annotations

import json
import os
import pickle
import resource
import sqlite3
import subprocess
import sys
import threading
import time
from pathlib import Path
from typing import Any

import pytest
import requests

from tests.robustness._data import price_eps_files
from tests.robustness._serve import ROOT, DashClient, Server, free_port, workspace_hashes
from tests.robustness.test_attack_intake import bomb_parquet

pytestmark = pytest.mark.slow

MARKUP_ID = '<a href="https://x.invalid/phish">CLICKME</a>'


# -- helpers -----------------------------------------------------------------------------
def _pattern_spec(c: DashClient, kind: str) -> dict[str, Any]:
    for spec in c.deps:
        first = spec["inputs"][0]["id"]
        if isinstance(first, str) and f'"type":"{kind}"' in first.replace(" ", ""):
            return spec
    raise LookupError(kind)


def pattern_call(c: DashClient, kind: str, did: str, values: dict[str, Any], plain: dict[str, Any]) -> requests.Response:
    """Fire the pattern-matching callback whose trigger is ``{"type": kind, "id": ALL}`` for one dataset card."""
    spec = _pattern_spec(c, kind)

    def entry(dep: dict[str, Any], value: Any) -> Any:
        pid = dep["id"]
        if isinstance(pid, str) and pid.startswith("{"):
            t = json.loads(pid)["type"]
            own = {"id": did, "type": t}
            val = own if dep["property"] == "id" else values.get(t, value)
            return [{"id": own, "property": dep["property"], "value": val}]
        return {"id": pid, "property": dep["property"], "value": plain.get(f"{pid}.{dep['property']}")}

    trig = spec["inputs"][0]
    body = {
        "output": spec["output"],
        "outputs": [{"id": o.split(".")[0], "property": o.split(".", 1)[1].split("@")[0]}
                    for o in spec["output"].strip(".").split("...")],
        "inputs": [entry(trig, 1)],
        "changedPropIds": [json.dumps({"id": did, "type": kind}, separators=(",", ":"), sort_keys=True)
                           + "." + trig["property"]],
        "state": [entry(s, None) for s in spec["state"]],
    }
    return c.http.post(c.base + "/_dash-update-component", json=body, timeout=c.timeout)


def _launch(c: DashClient, sel: Any, settings: Any, prev: Any = None) -> dict[str, Any]:
    return DashClient.values(c.call({"vs-selection.data": sel, "vs-settings.data": settings}, {"study-job.data": prev},
                                    output_has="..study-job.data...study-poll"))


def _poll(c: DashClient, job: Any) -> dict[str, Any]:
    return DashClient.values(c.call({"study-poll.n_intervals": 1}, {"study-job.data": job}))


def _wait_done(c: DashClient, job: dict[str, Any], limit: float = 240.0,
               last: dict[str, Any] | None = None) -> dict[str, Any]:
    """Poll until the job leaves "running" (``last`` receives the final poll's outputs, alert included)."""
    end = time.monotonic() + limit
    while job.get("status") == "running" and time.monotonic() < end:
        v = _poll(c, job)
        if last is not None:
            last.update(v)
        job = v.get("study-job.data", job)
        if job.get("status") == "running":
            time.sleep(0.3)
    return job


def _cards(c: DashClient, sel: Any = None) -> str:
    return json.dumps(DashClient.values(c.call({"data-version.data": 1, "vs-selection.data": sel})))


def _demo_sel(ws: Path) -> dict[str, Any]:
    """The demo's selection as the server made it (every shared demo dataset)."""
    return {"ids": [r["id"] for r in _catalogue(ws) if r["demo"] and r["owner"] == ""], "splits": []}


def _catalogue(ws: Path) -> list[dict[str, Any]]:
    con = sqlite3.connect(ws / "catalogue.sqlite3")
    con.row_factory = sqlite3.Row
    try:
        return [dict(r) for r in con.execute("SELECT * FROM datasets").fetchall()]
    finally:
        con.close()


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Any:
    ws = tmp_path_factory.mktemp("attack") / "ws"
    with Server(ws, "--demo") as srv:
        yield srv


# -- 1. a 548 KB Parquet file crashed the server ---------------------------------------------------
def test_parquet_bomb_upload_is_refused_and_the_server_stays_small(demo: Server, tmp_path: Path) -> None:
    raw = bomb_parquet(tmp_path / "bomb.parquet").read_bytes()
    c = DashClient(demo.base)
    before = workspace_hashes(demo.workspace)
    v = DashClient.values(c.upload([("bomb.parquet", raw)]))
    msg = str(v["data-upload-alert.children"])
    assert "data rows, above the limit" in msg
    assert demo.proc is not None and demo.proc.poll() is None
    assert demo.peak_rss_mb() < 1500              # 5.4 GB and an abort before the fix
    assert workspace_hashes(demo.workspace) == before
    print(f"\nParquet bomb: {len(raw) / 1024:.0f} KB file, server peak RSS {demo.peak_rss_mb():.0f} MB")


# -- 2. one cell froze the whole server -------------------------------------------------------------
def test_dash_run_cell_does_not_freeze_other_sessions(demo: Server) -> None:
    attacker, other = DashClient(demo.base), DashClient(demo.base)
    raw = ("date," + "-" * 60_000 + "x,QZB02\n2020-01-31,1,2\n").encode()
    result: dict[str, Any] = {}

    def attack() -> None:
        result["v"] = DashClient.values(attacker.upload([("slow.csv", raw)]))

    t = threading.Thread(target=attack, daemon=True)
    t.start()
    r = other.http.get(demo.base + "/_dash-layout", timeout=30)     # waited 63 s behind the match before
    t.join(60)
    assert r.status_code == 200 and not t.is_alive()
    assert "characters, above the limit" in str(result["v"]["data-upload-alert.children"])


# -- 3. any session could delete or change shared datasets ------------------------------------------
def test_shared_datasets_are_read_only_to_sessions(demo: Server) -> None:
    a, b = DashClient(demo.base), DashClient(demo.base)
    shared = {r["name"]: r for r in _catalogue(demo.workspace) if r["owner"] == ""}
    holdings, dividends = shared["holdings.csv"], shared["dividends.csv"]
    v = DashClient.values(pattern_call(a, "ds-delete", holdings["id"], {}, {"vs-selection.data": None,
                                                                           "data-version.data": 1}))
    assert "shared by every browser" in str(v.get("data-upload-alert.children"))
    assert holdings["id"] in {r["id"] for r in _catalogue(demo.workspace)}
    # A reads the shared dividends as prices: A gets its own copy, B still sees dividends
    v = DashClient.values(pattern_call(a, "ds-reread", dividends["id"], {"ds-kind": "prices", "ds-exclude": ""},
                                       {"vs-selection.data": None, "data-version.data": 1}))
    assert "your own copy" in str(v.get("data-upload-alert.children"))
    rows = _catalogue(demo.workspace)
    original = [r for r in rows if r["id"] == dividends["id"]]
    assert original and original[0]["kind"] == "dividends" and original[0]["owner"] == ""
    copies = [r for r in rows if r["name"] == "dividends.csv" and r["owner"] not in ("",)]
    assert len(copies) == 1 and copies[0]["kind"] == "prices"
    assert dividends["id"] in _cards(b) and copies[0]["id"] not in _cards(b)


# -- 6. identifiers became markup in charts -----------------------------------------------------------
def test_identifiers_reach_charts_as_text(demo: Server) -> None:
    c = DashClient(demo.base)
    prices, eps = price_eps_files(61, n_sec=6)
    prices = prices.replace(b"QZ000", MARKUP_ID.replace('"', '""').join(['"', '"']).encode())
    sel = DashClient.values(c.upload([("prices.csv", prices)]))["vs-selection.data"]
    fig = DashClient.values(c.call({"vs-selection.data": sel, "data-version.data": 2}, output_has="data-coverage"))
    body = json.dumps(fig["data-coverage.figure"])
    assert "CLICKME" in body                         # the identifier is drawn ...
    assert "<a href" not in body and "&lt;a href" in body   # ... as text, never as a live link


# -- 7. no Host check on loopback (DNS rebinding) -----------------------------------------------------
def test_only_loopback_host_names_are_answered(demo: Server) -> None:
    port = demo.port
    for host in (f"127.0.0.1:{port}", f"localhost:{port}", f"[::1]:{port}"):
        assert requests.get(demo.base + "/_dash-layout", headers={"Host": host}, timeout=30).status_code == 200, host
    for host in (f"rebind.invalid:{port}", "127.0.0.1", f"127.0.0.1.rebind.invalid:{port}"):
        r = requests.get(demo.base + "/_dash-layout", headers={"Host": host}, timeout=30)
        assert r.status_code == 421 and "not one the dashboard answers to" in r.text, host


# -- 8. unbounded work ----------------------------------------------------------------------------------
def test_a_flood_of_study_launches_is_bounded(demo: Server) -> None:
    flood, other = DashClient(demo.base), DashClient(demo.base)
    prices, eps = price_eps_files(71)
    sel = DashClient.values(flood.upload([("prices.csv", prices), ("eps.csv", eps)]))["vs-selection.data"]
    threads_before = demo.threads()
    statuses: list[str] = []
    alerts: list[str] = []
    lock = threading.Lock()
    n_launches, end = 40, time.monotonic() + 90

    def fire(k: int) -> None:
        for i in range(k, n_launches, 4):
            if time.monotonic() > end:
                return
            v = _launch(flood, sel, {"horizons": [1 + i % 12], "n_quantiles": 3 + i % 4})
            with lock:
                statuses.append(v["study-job.data"]["status"])
                alerts.append(json.dumps(v.get("study-alert.children")))

    workers = [threading.Thread(target=fire, args=(k,), daemon=True) for k in range(4)]
    for w in workers:
        w.start()
    peak = threads_before
    while any(w.is_alive() for w in workers):
        peak = max(peak, demo.threads())
        time.sleep(0.05)
    assert len(statuses) == n_launches
    assert peak <= threads_before + 3, (threads_before, peak)      # 620 threads for 746 launches before the fix
    # another session's study still runs to the end
    p2, e2 = price_eps_files(72)
    psel = DashClient.values(other.upload([("prices.csv", p2), ("eps.csv", e2)]))["vs-selection.data"]
    job = _wait_done(other, _launch(other, psel, {"horizons": [1]})["study-job.data"])
    assert job["status"] == "done"
    print(f"\nflood: {n_launches} launches, server threads {threads_before} -> peak {peak}; "
          f"{sum(s == 'failed' for s in statuses)} refused with a message")


def test_a_session_beyond_its_queue_is_told_so() -> None:
    """The runner refuses with a plain sentence and a new request supersedes the session's own pending one."""
    from valuesift.app.jobs import Busy, JobRunner

    gate = threading.Event()
    runner = JobRunner(workers=1, max_queued=2, max_per_owner=2)
    blocker = runner.submit("bundle", "x", lambda job: gate.wait(30))
    end = time.monotonic() + 30
    while blocker.status != "running" and time.monotonic() < end:     # the one worker has taken it
        time.sleep(0.01)
    first = runner.submit("study", "a", lambda job: None, key="k1")
    second = runner.submit("study", "a", lambda job: None, key="k2")       # supersedes k1 (same session, same kind)
    assert first.status == "cancelled" and second.status == "queued"
    runner.submit("bundle", "a", lambda job: None)
    with pytest.raises(Busy, match="already has 2 jobs"):
        runner.submit("sweep", "a", lambda job: None)
    with pytest.raises(Busy, match="busy"):
        runner.submit("study", "b", lambda job: None, key="k3")
    assert runner.get(second.id, "b") is None and runner.get(second.id, "a") is second
    assert len(second.id) == 32
    gate.set()
    end = time.monotonic() + 30
    while second.status != "done" and time.monotonic() < end:
        time.sleep(0.05)
    assert blocker.status == "done" and second.status == "done"


def test_uploads_are_admitted_against_one_memory_budget() -> None:
    from valuesift.app.jobs import Busy
    from valuesift.app.services import UploadBudget

    mb = 1024 * 1024
    budget = UploadBudget(100 * mb * UploadBudget.COST + 2 * UploadBudget.FIXED)
    first = budget.admit(60 * mb)
    assert first == 60 * mb * UploadBudget.COST + UploadBudget.FIXED
    with pytest.raises(Busy, match="reading other uploads"):
        budget.admit(60 * mb)                            # would exceed the budget while the first is read
    second = budget.admit(40 * mb)
    budget.release(first)
    budget.release(second)
    big = budget.admit(500 * mb)                         # alone, any upload within the size limit is read
    with pytest.raises(Busy):
        budget.admit(1)                                  # even a small file waits for that one
    budget.release(big)
    assert budget.admit(10 * mb, UploadBudget.CALLBACK_COST) == 10 * mb * UploadBudget.CALLBACK_COST + UploadBudget.FIXED
    budget.release(10 * mb * UploadBudget.CALLBACK_COST + UploadBudget.FIXED)
    assert budget.in_use == 0


def test_an_uploads_peak_memory_is_within_four_times_the_file(tmp_path: Path) -> None:
    """A 49 MB wide daily price file through the Data page's upload route, on a server just started: the
    server's peak resident memory above its baseline stays within 4 times the file (1.58 GB, 14 times, for
    a 110 MB file in the review; 3.2 to 3.5 times measured for 41 to 90 MB files after the fix)."""
    from tests.benchmarks.upload_memory import big_file

    raw = big_file(60)
    size_mb = len(raw) / 2 ** 20
    with Server(tmp_path / "ws", "--max-upload-mb", "200") as srv:
        c = DashClient(srv.base, timeout=300)
        status = Path(f"/proc/{srv.proc.pid}/status")  # type: ignore[union-attr]
        before = next(int(x.split()[1]) for x in status.read_text().splitlines() if x.startswith("VmRSS:")) / 1024
        answer = c.upload_raw("prices-big.csv", raw).json()
        peak = srv.peak_rss_mb()
    assert answer["ok"], answer
    print(f"\nupload of {size_mb:.1f} MB: server peak {peak - before:.0f} MB above its baseline = "
          f"{(peak - before) / size_mb:.2f}x the file")
    assert peak - before <= 4 * size_mb


# -- 10. bearer access across sessions --------------------------------------------------------------------
def test_results_and_exports_are_served_to_their_owner_only(demo: Server) -> None:
    a, b = DashClient(demo.base), DashClient(demo.base)
    prices, eps = price_eps_files(81)
    sel = DashClient.values(a.upload([("prices.csv", prices), ("eps.csv", eps)]))["vs-selection.data"]
    job = _wait_done(a, _launch(a, sel, {"horizons": [1, 3]})["study-job.data"])
    assert job["status"] == "done"
    stolen = _poll(b, {"key": job["key"], "status": "running"})
    assert stolen["study-job.data"]["status"] == "failed"          # B holds A's key: no result for B
    caption = DashClient.values(b.call({"export-job.data": job}, {"export-horizon.value": None},
                                       output_has="export-study-line"))
    assert not caption or caption.get("export-study-line.children") in (None, [], "")
    built = DashClient.values(a.call({"export-build.n_clicks": 1}, {
        "export-job.data": job, "vs-selection.data": sel, "export-name.value": "study", "export-title.value": "",
        "export-note.value": "", "export-horizon.value": 1, "export-charts.value": [], "export-tables.value": ["ic_summary"],
        "export-sweep.value": ""}))
    eid = built["export-build-job.data"]["id"]
    assert len(eid) == 32 and int(eid, 16) >= 0                       # 128-bit ids (48-bit before)
    theirs = DashClient.values(b.call({"export-build-poll.n_intervals": 1}, {"export-build-job.data": {"id": eid}}))
    assert "lost" in str(theirs["export-build-alert.children"])
    mine = DashClient.values(a.call({"export-build-poll.n_intervals": 1}, {"export-build-job.data": {"id": eid}}))
    assert "lost" not in str(mine.get("export-build-alert.children"))


# -- 11. failures without a message ------------------------------------------------------------------------
def test_rejected_file_stores_nothing(demo: Server) -> None:
    c = DashClient(demo.base)
    before = workspace_hashes(demo.workspace)
    v = DashClient.values(c.upload([("notes.csv", b"just words\nand more words\n")]))
    assert "notes.csv" in str(v["data-upload-alert.children"])
    after = workspace_hashes(demo.workspace)
    assert {k for k in after if k.startswith(("raw/", "data/"))} == {k for k in before if k.startswith(("raw/", "data/"))}
    assert "notes.csv" not in {r["name"] for r in _catalogue(demo.workspace)}


def test_damaged_stored_data_is_rebuilt_or_explained(demo: Server) -> None:
    c = DashClient(demo.base)
    prices, eps = price_eps_files(91)
    sel = DashClient.values(c.upload([("prices.csv", prices), ("eps.csv", eps)]))["vs-selection.data"]
    rows = {r["id"]: r for r in _catalogue(demo.workspace)}
    pid = next(i for i in sel["ids"] if rows[i]["kind"] == "prices")
    data = demo.workspace / "data" / f"{pid}.parquet"
    data.write_bytes(data.read_bytes()[:200])                    # torn data file, kept upload intact: rebuilt
    job = _wait_done(c, _launch(c, sel, {"horizons": [2]})["study-job.data"])
    assert job["status"] == "done"
    # another price file whose data file is torn and whose kept upload is gone too
    sel = DashClient.values(c.upload([("prices-b.csv", price_eps_files(92)[0])], sel, 2))["vs-selection.data"]
    rows = {r["id"]: r for r in _catalogue(demo.workspace)}
    pid = next(i for i in sel["ids"] if rows[i]["name"] == "prices-b.csv")
    (demo.workspace / "data" / f"{pid}.parquet").write_bytes(b"PAR1 damaged")
    (demo.workspace / "raw" / f"{rows[pid]['sha256']}.bin").unlink()
    v = _launch(c, sel, {"horizons": [4]})
    last: dict[str, Any] = {}
    job = _wait_done(c, v["study-job.data"], last=last)
    assert job["status"] == "failed"
    text = json.dumps(v.get("study-alert.children")) + json.dumps(last)
    assert "stored copy of the file is damaged" in text and "upload the file again" in text
    assert "OSError" not in text
    assert "stored copy of prices-b.csv is damaged" in _cards(c, sel)  # the card no longer says it was read


def test_full_disk_upload_gets_a_message_and_leaves_nothing(tmp_path: Path) -> None:
    ws = tmp_path / "ws"

    def small_files() -> None:   # writes beyond 200 KB fail (EFBIG; Python ignores SIGXFSZ) like a full disk
        resource.setrlimit(resource.RLIMIT_FSIZE, (200_000, 200_000))

    with Server(ws, preexec_fn=small_files) as srv:
        c = DashClient(srv.base)
        prices, _ = price_eps_files(5, n_sec=250, n_months=150)
        # above the file limit, while the request body stays below waitress's 512 KB spooling threshold
        assert 200_000 < len(prices) < 380_000
        before = workspace_hashes(ws)
        r = c.upload([("prices.csv", prices)])
        assert r.status_code == 200                                  # a bare HTTP 500 before the fix
        msg = str(DashClient.values(r)["data-upload-alert.children"])
        assert "could not be stored" in msg and "Free some disk space" in msg
        assert workspace_hashes(ws) == before
        assert srv.proc is not None and srv.proc.poll() is None


def test_orphaned_files_are_removed_at_start(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    with Server(ws) as srv:
        c = DashClient(srv.base)
        c.upload([("prices.csv", price_eps_files(6)[0])])
    orphan = ws / "raw" / ("ab" * 32 + ".bin")
    orphan.write_bytes(b"date,QZA01\n2020-01-31,1\n")                 # an upload killed between file and row
    old = time.time() - 3600
    os.utime(orphan, (old, old))
    kept = {k for k in workspace_hashes(ws) if k.startswith(("raw/", "data/")) and "abab" not in k}
    with Server(ws):
        pass
    assert not orphan.exists()
    assert {k for k in workspace_hashes(ws) if k.startswith(("raw/", "data/"))} == kept


# -- 4. the debugger could be exposed ------------------------------------------------------------------------
def test_dev_mode_is_refused_on_a_remote_bind(tmp_path: Path) -> None:
    port = free_port()
    proc = subprocess.Popen([sys.executable, "-m", "valuesift.app.cli", "serve", "--dev", "--host", "0.0.0.0",
                             "--allow-remote", "--port", str(port), "--workspace", str(tmp_path / "ws")],
                            cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        out, err = proc.communicate(timeout=90)          # before the fix the debugger started and kept running
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait(30)
    assert proc.returncode == 2
    text = err.decode()
    assert "debugger" in text and "--dev" in text and "Traceback" not in text
    with pytest.raises(requests.ConnectionError):
        requests.get(f"http://127.0.0.1:{port}/", timeout=5)


# -- 5. the result cache unpickled files from the workspace ---------------------------------------------------
class _Plant:
    """A pickle that writes a marker file when it is loaded (the attack's payload, harmless here)."""

    def __init__(self, marker: Path) -> None:
        self.marker = marker

    def __reduce__(self) -> Any:
        return (Path.write_text, (self.marker, "ran"))


def test_a_planted_cache_file_never_runs(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    marker = tmp_path / "marker.txt"
    with Server(ws, "--demo") as srv:
        c = DashClient(srv.base)
        job = _wait_done(c, _launch(c, _demo_sel(ws), {})["study-job.data"])
        assert job["status"] == "done"
    entries = [p for p in (ws / "cache").iterdir() if p.is_file()]
    assert entries                                              # the demo study was cached
    payload = pickle.dumps(_Plant(marker))
    for p in entries:         # every entry replaced by the payload (with a forged header where entries carry one)
        p.write_bytes(b"VSC1" + bytes(32) + payload if p.suffix == ".vsc" else payload)
    with Server(ws, "--demo") as srv:
        c = DashClient(srv.base)
        job = _wait_done(c, _launch(c, _demo_sel(ws), {})["study-job.data"])
        assert job["status"] == "done"                          # recomputed: the planted entry was refused
    assert not marker.exists()
    key = ws / "cache.key"
    assert key.stat().st_mode & 0o777 == 0o600


# -- 9. weak token handling ----------------------------------------------------------------------------------
def test_tokens_strong_private_and_throttled(tmp_path: Path) -> None:
    bad = subprocess.run([sys.executable, "-m", "valuesift.app.cli", "serve", "--host", "0.0.0.0", "--allow-remote",
                          "--token", "x", "--port", str(free_port()), "--workspace", str(tmp_path / "a")],
                         cwd=ROOT, capture_output=True, timeout=90)
    assert bad.returncode == 2 and b"process list" in bad.stderr
    weak = subprocess.run([sys.executable, "-m", "valuesift.app.cli", "serve", "--host", "0.0.0.0", "--allow-remote",
                           "--port", str(free_port()), "--workspace", str(tmp_path / "b")],
                          cwd=ROOT, capture_output=True, timeout=90, env={**os.environ, "VALUESIFT_TOKEN": "abc123"})
    assert weak.returncode == 2 and b"too easy to guess" in weak.stderr
    token = "Zr8-Qm2Lx7Vn4Tc1Hb6Kd9Pw3Fs5Gy0J"
    with Server(tmp_path / "c", "--host", "0.0.0.0", "--allow-remote", env={"VALUESIFT_TOKEN": token}) as srv:
        assert token not in " ".join(Path(f"/proc/{srv.proc.pid}/cmdline").read_text().split("\0"))  # type: ignore[union-attr]
        codes = [requests.get(f"{srv.base}/data?token=guess{i:03d}", timeout=30, allow_redirects=False).status_code
                 for i in range(8)]
        assert codes[:6] == [403] * 6 and codes[6:] == [429] * 2          # no attempt limit before the fix
        r = requests.get(f"{srv.base}/data?token={token}", timeout=30, allow_redirects=False)
        assert r.status_code == 429 and "Wait" in r.text and int(r.headers["Retry-After"]) >= 1
        time.sleep(int(r.headers["Retry-After"]) + 0.5)
        ok = requests.get(f"{srv.base}/data?token={token}", timeout=30, allow_redirects=False)
        assert ok.status_code == 303


def test_a_second_sweep_of_a_session_does_not_cancel_the_first() -> None:
    """Sweeps are submitted without superseding: a sweep started in a second tab of the same browser
    leaves the first one running (studies still supersede, test above); the per-session bound still holds."""
    from valuesift.app.jobs import Busy, JobRunner

    gate = threading.Event()
    runner = JobRunner(workers=1, max_queued=4, max_per_owner=2)
    first = runner.submit("sweep", "a", lambda job: gate.wait(30), supersede=False)
    second = runner.submit("sweep", "a", lambda job: None, supersede=False)
    assert first.status in ("queued", "running") and second.status == "queued"
    with pytest.raises(Busy, match="already has 2 jobs"):
        runner.submit("sweep", "a", lambda job: None, supersede=False)
    gate.set()
    end = time.monotonic() + 30
    while (first.status != "done" or second.status != "done") and time.monotonic() < end:
        time.sleep(0.05)
    assert first.status == "done" and second.status == "done"
