"""Peak memory of reading one file (``core.intake.read_table``) against the file's size and a plain pandas read.

Run: ``python -m tests.benchmarks.intake_memory --mb 20``.  It writes two price files of about
``--mb`` megabytes (invented data, seeded): the wide daily file of ``upload_memory.big_file``
(one column per security) and the same prices in the long layout (date, security, close), and
measures each read in a process of its own (so the peak is the read's own):

* traced: the peak of ``tracemalloc`` (numpy arrays and Python objects) during the read;
* Arrow: the peak of pyarrow's memory pool during the read (Arrow buffers are not traced);
* resident: the process's peak resident set (``VmHWM``, reset just before the read) above its
  resident set before it, in a separate run without tracemalloc.

The reference, run the same way side by side, is ``pandas.read_csv`` of the same bytes followed
by ``melt`` to the long table (date, security, value) that intake returns too, without intake's
account of every cell.  The dashboard's review asks that reading an upload peaks at about 4x the
file size at most.
"""

from __future__ import annotations

import argparse
import io
import json
import subprocess
import sys
import tempfile
from pathlib import Path

__all__ = ["main", "measure"]

READERS = ("valuesift", "pandas")


def _files(mb: float, folder: Path) -> dict[str, Path]:
    import pandas as pd

    from tests.benchmarks.upload_memory import big_file

    wide = big_file(mb)
    (folder / "prices-wide.csv").write_bytes(wide)
    frame = pd.read_csv(io.BytesIO(wide))
    long = frame.melt(id_vars="date", var_name="security", value_name="close")
    n_long = int(len(long) * len(wide) / max(len(long.to_csv(index=False).encode()), 1))
    (folder / "prices-long.csv").write_bytes(long.iloc[:n_long].to_csv(index=False).encode())
    return {"wide": folder / "prices-wide.csv", "long": folder / "prices-long.csv"}


def measure(path: str, reader: str, traced: bool) -> dict[str, float]:
    """One read of ``path`` by ``reader`` in this process: peaks in bytes (run it in a fresh process)."""
    import gc
    import tracemalloc

    import pandas as pd
    import pyarrow as pa

    from tests.benchmarks.intake_worker import current_rss_bytes, peak_rss_bytes, reset_peak_rss
    from valuesift.core.intake import ReadOptions, read_table

    raw = Path(path).read_bytes()
    gc.collect()
    pool = pa.default_memory_pool()
    arrow0 = pool.max_memory()
    rss0 = current_rss_bytes()
    reset_peak_rss()
    if traced:
        tracemalloc.start()
    if reader == "valuesift":
        data = read_table(raw, name=Path(path).name, options=ReadOptions(kind="prices", max_bytes=10 ** 10)).data
    else:
        frame = pd.read_csv(io.BytesIO(raw))
        data = frame if "security" in frame.columns else frame.melt(id_vars="date", var_name="security", value_name="value")
        del frame
    out = {"file": float(len(raw)), "rows": float(len(data)), "data": float(data.memory_usage(deep=True).sum())}
    if traced:
        out["traced"] = float(tracemalloc.get_traced_memory()[1])
        tracemalloc.stop()
        out["arrow"] = float(pool.max_memory() - arrow0) if pool.max_memory() > arrow0 else float("nan")
    else:
        out["resident"] = float(peak_rss_bytes() - rss0)
    return out


def _child(path: Path, reader: str, traced: bool) -> dict[str, float]:
    cmd = [sys.executable, "-m", "tests.benchmarks.intake_memory", "--child", str(path), reader, "1" if traced else "0"]
    res = subprocess.run(cmd, capture_output=True, text=True, check=True)
    return json.loads(res.stdout.strip().splitlines()[-1])


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--mb", type=float, default=20.0)
    ap.add_argument("--child", nargs=3, metavar=("PATH", "READER", "TRACED"))
    a = ap.parse_args(argv)
    if a.child:
        print(json.dumps(measure(a.child[0], a.child[1], a.child[2] == "1")))
        return
    mib = 2 ** 20
    with tempfile.TemporaryDirectory() as tmp:
        files = _files(a.mb, Path(tmp))
        print("| file | reader | traced peak | Arrow peak | resident peak | returned table |")
        print("|---|---|---|---|---|---|")
        for layout, path in files.items():
            got = {}
            for reader in READERS:
                got[reader] = {**_child(path, reader, True), **_child(path, reader, False)}
                r = got[reader]
                size = r["file"]
                print(f"| {layout} {size / mib:.1f} MB | {reader} | {r['traced'] / mib:.0f} MB = {r['traced'] / size:.1f}x "
                      f"| {r['arrow'] / mib:.0f} MB = {r['arrow'] / size:.1f}x | {r['resident'] / mib:.0f} MB = "
                      f"{r['resident'] / size:.1f}x | {r['data'] / mib:.0f} MB, {r['rows']:,.0f} rows |")
            v, p = got["valuesift"], got["pandas"]
            print(f"| {layout} | valuesift / pandas | {_ratio(v['traced'], p['traced'])} | {_ratio(v['arrow'], p['arrow'])} "
                  f"| {_ratio(v['resident'], p['resident'])} | |")


def _ratio(a: float, b: float) -> str:
    """``a / b`` as a multiple, or a dash when the reference used (next to) nothing of that kind."""
    return f"{a / b:.2f}x" if b > 2 ** 20 else "-"


if __name__ == "__main__":
    main()
