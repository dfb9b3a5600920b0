"""Peak memory of the real server while it reads one large upload (the review measured 14x the file).

Run: ``python -m tests.benchmarks.upload_memory --mb 110``.  It starts
``valuesift serve`` on a free 127.0.0.1 port with an empty workspace in a
temporary folder, uploads one wide daily price file of about ``--mb``
megabytes the way the browser does -- the raw bytes as the body of the Data
page's upload route (``--callback``: the older way, base64 inside a callback's
JSON body, still accepted from other clients) -- and prints the server's
resident memory before and its peak (VmHWM) after, as a multiple of the file
size.  Target of the attack review: at most 4 times the file.  Invented data (seeded).
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
    n_sec = 400
    n_days = int(mb * 1e6 / (n_sec * 8.2))
    rng = np.random.default_rng(seed)
    dates = pd.bdate_range("1960-01-01", periods=n_days).strftime("%Y-%m-%d")
    prices = np.round(50 * np.exp(np.cumsum(rng.normal(0, 0.01, size=(n_days, n_sec)), axis=0)), 3)
    frame = pd.DataFrame(prices, index=pd.Index(dates, name="date"), columns=[f"QB{i:04d}" for i in range(n_sec)])
    return frame.to_csv().encode()


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--mb", type=float, default=110.0)
    ap.add_argument("--callback", action="store_true", help="upload through the callback (base64 in JSON)")
    args = ap.parse_args()
    raw = big_file(args.mb)
    size_mb = len(raw) / 1024 / 1024
    with tempfile.TemporaryDirectory() as tmp:
        with Server(Path(tmp) / "ws", "--max-upload-mb", str(int(size_mb) + 20)) as srv:
            c = DashClient(srv.base, timeout=1200)
            base = _rss_mb(srv, "VmRSS")
            t0 = time.perf_counter()
            if args.callback:
                v = DashClient.values(c.upload([("prices-big.csv", raw)]))
            else:
                answer = c.upload_raw("prices-big.csv", raw).json()
                v = {"data-upload-alert.children": answer}
            took = time.perf_counter() - t0
            peak = _rss_mb(srv, "VmHWM")
            print(f"{'callback' if args.callback else 'upload route'}: file {size_mb:.1f} MB; server RSS before {base:.0f} MB, peak {peak:.0f} MB; "
                  f"peak above baseline {peak - base:.0f} MB = {(peak - base) / size_mb:.1f}x the file; "
                  f"upload and intake {took:.1f} s")
            print(str(v.get("data-upload-alert.children"))[:300])


if __name__ == "__main__":
    main()
