"""One intake measurement in its own process (so its peak resident memory is its own).

    python -m tests.benchmarks.intake_worker --layout parquet_long --n 3000 --t 7560

Prints one JSON object: seconds per stage (read prices, read EPS, read
dividends, month-end panel), the CPU seconds of the whole read (user and
system: this machine's system time varies from run to run with the host's
handling of fresh memory), the process's peak resident set, the in-memory
size of the parsed data and the panel's shape.
"""

from __future__ import annotations

import argparse
import json
import resource
import time
from pathlib import Path

from tests.benchmarks.synth import daily_files

__all__ = ["main", "peak_rss_bytes", "reset_peak_rss"]

LAYOUTS = ("parquet_long", "parquet_wide", "csv_long")


def _status(key: str) -> int:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(key + ":"):
            return int(line.split()[1]) * 1024
    return -1


def peak_rss_bytes() -> int:
    """Peak resident set of this process (``VmHWM``; -1 where /proc is missing)."""
    return _status("VmHWM")


def current_rss_bytes() -> int:
    return _status("VmRSS")


def reset_peak_rss() -> bool:
    """Reset ``VmHWM`` to the current resident set (Linux ``clear_refs``); False if not possible."""
    try:
        Path("/proc/self/clear_refs").write_text("5")
        return True
    except OSError:
        return False


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--layout", choices=LAYOUTS, required=True)
    ap.add_argument("--n", type=int, default=3000)
    ap.add_argument("--t", type=int, default=7560)
    a = ap.parse_args(argv)

    from valuesift.core.intake import ReadOptions, build_panel, read_table
    from valuesift.core.intake import readers

    files = daily_files(a.n, a.t)
    big = 8 * 1024 ** 3  # the default 200 MB upload limit is for the dashboard; these files are larger
    # The long daily files hold 21 million rows: above the row and cell limits every read enforces
    # (10 million rows, 40 million cells: such a file is refused with "split the file by date range").
    # The speed target is about the reader, so this worker raises the limits for its own process only.
    readers.MAX_ROWS, readers.MAX_CELLS = 10 * readers.MAX_ROWS, 10 * readers.MAX_CELLS
    prices_path = {"parquet_long": files.prices_long_parquet, "parquet_wide": files.prices_wide_parquet,
                   "csv_long": files.prices_long_csv}[a.layout]
    eps_path = files.eps_long_csv if a.layout == "csv_long" else files.eps_long_parquet
    layout = "wide" if a.layout == "parquet_wide" else "long"
    rss0 = current_rss_bytes()
    reset_peak_rss()
    ru0 = resource.getrusage(resource.RUSAGE_SELF)
    out: dict[str, object] = {"layout": a.layout, "n": a.n, "t": a.t,
                              "file_bytes": {p.name: p.stat().st_size for p in (prices_path, eps_path, files.dividends_csv)}}
    t0 = time.perf_counter()
    pf = read_table(prices_path, options=ReadOptions(kind="prices", layout=layout, max_bytes=big))
    t1 = time.perf_counter()
    ef = read_table(eps_path, options=ReadOptions(kind="earnings", layout="long", max_bytes=big))
    t2 = time.perf_counter()
    df = read_table(files.dividends_csv, options=ReadOptions(kind="dividends", max_bytes=big))
    t3 = time.perf_counter()
    parsed = sum(int(f.data.memory_usage(deep=True).sum()) for f in (pf, ef, df))
    panel = build_panel([pf, ef, df])
    t4 = time.perf_counter()
    peak = peak_rss_bytes()
    ru1 = resource.getrusage(resource.RUSAGE_SELF)
    out.update({
        "read_prices_s": t1 - t0, "read_eps_s": t2 - t1, "read_dividends_s": t3 - t2, "month_end_panel_s": t4 - t3,
        "total_s": t4 - t0, "user_s": ru1.ru_utime - ru0.ru_utime, "system_s": ru1.ru_stime - ru0.ru_stime,
        "peak_rss_bytes": peak, "rss_before_bytes": rss0,
        "parsed_bytes": parsed, "price_rows": int(len(pf.data)), "eps_rows": int(len(ef.data)),
        "dividend_rows": int(len(df.data)), "panel_shape": list(panel.prices.shape),
        "frequency": pf.report.frequency,
    })
    print(json.dumps(out))


if __name__ == "__main__":
    main()
