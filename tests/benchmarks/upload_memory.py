"""Peak memory of the real server while it reads one large upload (the review measured 14x the file).

Run: ``python -m tests.benchmarks.upload_memory --mb 110``.  It starts
``valuesift serve`` on a free 127.0.0.1 port with an empty workspace in a
temporary folder, uploads one wide daily price file of about ``--mb``
megabytes the way the browser does -- the raw bytes as the body of the Data
page's upload route (``--callback``: the older way, base64 inside a callback's
JSON body, still accepted from other clients) -- and prints the server's
resident memory before and its peak (VmHWM) after, as a multiple of the file
size -- for the first upload after the start and for a later one (the peak
reset just before it).  Target of the attack review: at most 4 times the file.  Invented data (seeded).
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from tests.robustness._serve import DashClient, Server


def _rss_mb(srv: Server, field: str) -> float:
    assert srv.proc is not None
    for line in Path(f"/proc/{srv.proc.pid}/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1]) / 1024
    raise RuntimeError(field)


def big_file(mb: float, seed: int = 7) -> bytes:
    """A wide daily price file of about ``mb`` megabytes: 400 securities (more above 52 MB, so that every
    date stays before 2022 and no row is set aside as lying in the future)."""
    n_sec = max(400, int(np.ceil(mb * 1e6 / (15_850 * 8.2))))
    n_days = int(mb * 1e6 / (n_sec * 8.2))
    rng = np.random.default_rng(seed)
    dates = pd.bdate_range("1960-01-01", periods=n_days).strftime("%Y-%m-%d")
    prices = np.round(50 * np.exp(np.cumsum(rng.normal(0, 0.01, size=(n_days, n_sec)), axis=0)), 3)
    frame = pd.DataFrame(prices, index=pd.Index(dates, name="date"), columns=[f"QB{i:04d}" for i in range(n_sec)])
    return frame.to_csv().encode()


def _reset_peak(srv: Server) -> bool:
    """Start the server's VmHWM afresh (Linux ``clear_refs``); False where that is not allowed."""
    assert srv.proc is not None
    try:
        Path(f"/proc/{srv.proc.pid}/clear_refs").write_text("5")
        return True
    except OSError:
        return False


def _one(srv: Server, c: DashClient, name: str, raw: bytes, callback: bool) -> tuple[float, float, float, str]:
    """(resident before, peak, seconds, the answer) for one upload."""
    base = _rss_mb(srv, "VmRSS")
    t0 = time.perf_counter()
    if callback:
        v = DashClient.values(c.upload([(name, raw)]))
    else:
        v = {"data-upload-alert.children": c.upload_raw(name, raw).json()}
    took = time.perf_counter() - t0
    return base, _rss_mb(srv, "VmHWM"), took, str(v.get("data-upload-alert.children"))[:300]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--mb", type=float, default=110.0)
    ap.add_argument("--callback", action="store_true", help="upload through the callback (base64 in JSON)")
    args = ap.parse_args()
    raw = big_file(args.mb)
    size_mb = len(raw) / 1024 / 1024
    how = "callback" if args.callback else "upload route"
    with tempfile.TemporaryDirectory() as tmp:
        with Server(Path(tmp) / "ws", "--max-upload-mb", str(int(size_mb) + 20)) as srv:
            c = DashClient(srv.base, timeout=1200)
            # the first upload after the server starts: its peak also holds what the first read of any file
            # sets up once (the readers' code paths, the memory pools)
            base, peak, took, answer = _one(srv, c, "prices-big.csv", raw, args.callback)
            print(f"{how}, first upload: file {size_mb:.1f} MB; server RSS before {base:.0f} MB, peak {peak:.0f} MB; "
                  f"peak above it {peak - base:.0f} MB = {(peak - base) / size_mb:.2f}x the file; {took:.1f} s")
            print("  ", answer)
            # a later upload (other bytes of the same size): the peak measured from just before it
            again = big_file(args.mb, seed=8)
            if _reset_peak(srv):
                base, peak, took, answer = _one(srv, c, "prices-big-2.csv", again, args.callback)
                print(f"{how}, a later upload: file {len(again) / 2**20:.1f} MB; server RSS before {base:.0f} MB, "
                      f"peak {peak:.0f} MB; peak above it {peak - base:.0f} MB = {(peak - base) / (len(again) / 2**20):.2f}x "
                      f"the file; {took:.1f} s")
                print("  ", answer)


if __name__ == "__main__":
    main()
