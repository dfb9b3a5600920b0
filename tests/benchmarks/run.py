"""ValueSift benchmark suite: one command, a table in the terminal, a JSON file.

    .venv/bin/python -m tests.benchmarks.run                      # everything (about 10-15 minutes)
    .venv/bin/python -m tests.benchmarks.run --sizes S,M --no-xl  # a quick look

Options: ``--sizes`` (of S, M, I1, I2, L), ``--repeats`` (timed runs per
measurement; the median is reported), ``--no-xl`` (skip the daily intake
sizes), ``--no-baseline``, ``--no-dashboard``, ``--no-whole``, ``--json PATH`` (default
``tests/benchmarks/results/latest.json``, git-ignored), ``--markdown PATH``
(write the table as Markdown, e.g. ``tests/benchmarks/RESULTS.md``).

What is measured (targets and the latest figures: README, "Performance"):

* the whole study (``core.study.run_study``, default settings: earnings
  yield, 6 horizons, IC, quantiles, Fama-MacBeth, backtest, screen) and each
  of its stages, timed from the study's own progress reports; peak memory
  from ``tracemalloc`` (numpy's allocations are traced) in a separate run;
* forward total returns + IC: the engine's kernels against the notebook
  baseline (``baseline.py``), timed in the same run, agreement asserted to 1e-9;
* intake of XL daily files (3,000 x 7,560 trading days), each layout in its
  own process so its peak resident memory is its own, and the growth of the
  daily intake from 500 x 1,890 to 3,000 x 7,560 days (``intake_growth``:
  exponents of wall time, user CPU time and peak memory against N x T);
* the dashboard's server-side work on size M (``dashboard.py``);
* growth: the study's time and memory at S, M, I1, I2, L and the fitted
  exponent of time (and memory) against N x T (log-log least squares);
* whole process (``whole.py``): ``valuesift study --no-bundle`` on the L Parquet
  pair against the idiomatic-pandas reference (``notebook_reference.py``),
  ``valuesift --help``, the modules a study imports, intake of the L Parquet and
  CSV pairs against pyarrow / pandas readers, panel building, and the study's
  numbers against the fingerprint written before the speed work (to 1e-12);
* the engine's gap to a tight numpy kernel (price-only forward returns + rank IC).
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import platform
import statistics
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
if str(ROOT) not in sys.path:  # also runnable as a plain script
    sys.path.insert(0, str(ROOT))

from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study
from tests.benchmarks.baseline import (  # noqa: E402
    compare, dividend_dict, engine_forward_ic, notebook_forward_ic, tight_forward_ic,
)
from tests.benchmarks.synth import GROWTH_SIZES, SIZES, daily_files, monthly_panel  # noqa: E402

__all__ = ["main", "time_study", "memory_study", "forward_ic", "fit_exponent"]

STAGES = ("preparing data", "signals", "forward returns", "information coefficients", "quantiles",
          "Fama-MacBeth", "backtest", "screen")
MB = 1024.0 ** 2


def _median(xs: list[float]) -> float:
    return float(statistics.median(xs))


def time_study(panel: Any, cfg: StudyConfig, repeats: int) -> dict[str, Any]:
    """Median wall and CPU seconds of ``run_study`` and of each stage (from its progress reports)."""
    run_study(panel, cfg)  # warm-up (imports, first-touch of memory)
    walls, cpus, stages = [], [], {s: [] for s in STAGES}
    for _ in range(repeats):
        marks: list[tuple[str, float]] = []
        gc.collect()
        c0, t0 = time.process_time(), time.perf_counter()
        run_study(panel, cfg, progress=lambda s, f: marks.append((s, time.perf_counter())))
        t1, c1 = time.perf_counter(), time.process_time()
        walls.append(t1 - t0)
        cpus.append(c1 - c0)
        for (s, a), (_, b) in zip(marks, marks[1:]):
            if s in stages:
                stages[s].append(b - a)
    return {"wall_s": _median(walls), "wall_runs_s": walls, "cpu_s": _median(cpus),
            "stages_s": {s: _median(v) for s, v in stages.items() if v}}


def memory_study(panel: Any, cfg: StudyConfig) -> dict[str, float]:
    """Peak traced allocation during one ``run_study`` (above what was allocated before) and the result's size."""
    gc.collect()
    tracemalloc.start()
    base = tracemalloc.get_traced_memory()[0]
    res = run_study(panel, cfg)
    cur, peak = tracemalloc.get_traced_memory()  # ``res`` is still alive: ``cur`` includes the result
    tracemalloc.stop()
    del res
    return {"peak_mb": (peak - base) / MB, "result_mb": (cur - base) / MB}


def panel_mb(panel: Any) -> float:
    tot = panel.prices.to_numpy().nbytes
    if panel.eps is not None:
        tot += panel.eps.to_numpy().nbytes
    if panel.dividends is not None:
        tot += int(panel.dividends.memory_usage(deep=True).sum())
    return tot / MB


def forward_ic(panel: Any, cfg: StudyConfig, repeats: int, baseline: bool) -> dict[str, Any]:
    """Engine forward returns + IC (threaded as in the study, and single-threaded) vs the notebook baseline."""
    res = run_study(panel, cfg)
    price = panel.prices.to_numpy(dtype=float)
    valid = panel.valid_price_mask()
    div = panel.dividend_matrix().to_numpy(dtype=float)
    uni = res.universe.to_numpy()
    z = res.signal_z.to_numpy(dtype=float)
    args = (price, valid, div, uni, z, cfg.horizons, cfg.min_breadth)
    out: dict[str, Any] = {}
    for label, threads in (("engine_s", True), ("engine_1thread_s", False)):
        engine_forward_ic(*args, threads=threads)
        ts = []
        for _ in range(repeats):
            t0 = time.perf_counter()
            eng = engine_forward_ic(*args, threads=threads)
            ts.append(time.perf_counter() - t0)
        out[label] = _median(ts)
    for h in cfg.horizons:  # the benchmark's engine call is the study's own computation
        assert np.array_equal(eng["fwd"][h], res.forward_returns[h].to_numpy(), equal_nan=True)
        assert np.array_equal(eng["rank_ic"][h], res.rank_ic[h].to_numpy(), equal_nan=True)
    import warnings

    tk = []
    for _ in range(max(1, repeats)):
        t0 = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN rows of nanmean (dates without names)
            tight_forward_ic(price, uni, z, cfg.horizons, cfg.min_breadth)
        tk.append(time.perf_counter() - t0)
    out["tight_kernel_s"] = _median(tk)
    out["engine_over_tight"] = out["engine_s"] / out["tight_kernel_s"]
    if baseline:
        divs = dividend_dict(panel)
        t0 = time.perf_counter()
        nb = notebook_forward_ic(panel.prices, divs, res.signal_z, res.universe, cfg.horizons, cfg.min_breadth)
        out["notebook_s"] = time.perf_counter() - t0
        out["agreement_max_abs_diff"] = compare(nb, eng)
        out["speedup"] = out["notebook_s"] / out["engine_s"]
        out["speedup_1thread"] = out["notebook_s"] / out["engine_1thread_s"]
    return out


def fit_exponent(cells: list[float], values: list[float]) -> float:
    """Slope b of ``log(value) = a + b log(N x T)`` by least squares."""
    b, _ = np.polyfit(np.log(np.asarray(cells, dtype=float)), np.log(np.asarray(values, dtype=float)), 1)
    return float(b)


def intake_xl(n: int, t: int) -> dict[str, Any]:
    """Each daily layout read and aligned in its own process."""
    t0 = time.perf_counter()
    f = daily_files(n, t)
    out: dict[str, Any] = {"generate_or_reuse_s": time.perf_counter() - t0, "folder": str(f.folder),
                           "price_rows": f.price_cells, "eps_rows": f.eps_cells, "dividend_events": f.dividend_events}
    for layout in ("parquet_wide", "parquet_long", "csv_long"):
        cmd = [sys.executable, "-m", "tests.benchmarks.intake_worker", "--layout", layout, "--n", str(n), "--t", str(t)]
        p = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, timeout=900)
        if p.returncode != 0:
            out[layout] = {"error": (p.stderr or p.stdout)[-2000:]}
            continue
        r = json.loads(p.stdout.strip().splitlines()[-1])
        r["peak_over_parsed"] = r["peak_rss_bytes"] / r["parsed_bytes"]
        r["increment_over_parsed"] = (r["peak_rss_bytes"] - r["rss_before_bytes"]) / r["parsed_bytes"]
        out[layout] = r
    return out


#: daily sizes (securities, trading days) of the intake growth fit, from about M's cells to XL's
INTAKE_GROWTH_SIZES: tuple[tuple[int, int], ...] = ((500, 1890), (1000, 3780), (2000, 7560), (3000, 7560))
INTAKE_GROWTH_LAYOUTS: tuple[str, ...] = ("parquet_long", "parquet_wide", "csv_long")


def intake_growth(sizes: tuple[tuple[int, int], ...] = INTAKE_GROWTH_SIZES,
                  layouts: tuple[str, ...] = INTAKE_GROWTH_LAYOUTS) -> dict[str, Any]:
    """Daily files read to a month-end panel at growing N x T, each read in its own process: the exponent of
    wall time, of user CPU time (steadier here: the system time of this machine varies with the host) and of
    the peak above the process's start, against the price cells."""
    out: dict[str, Any] = {"sizes": [list(z) for z in sizes]}
    for layout in layouts:
        runs = []
        for n, t in sizes:
            daily_files(n, t)  # written (or reused) outside the measured process
            cmd = [sys.executable, "-m", "tests.benchmarks.intake_worker", "--layout", layout, "--n", str(n), "--t", str(t)]
            p = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, timeout=900)
            if p.returncode != 0:
                out[layout] = {"error": (p.stderr or p.stdout)[-2000:]}
                break
            runs.append(json.loads(p.stdout.strip().splitlines()[-1]))
        else:
            cells = [float(r["n"] * r["t"]) for r in runs]
            above = [float(r["peak_rss_bytes"] - r["rss_before_bytes"]) for r in runs]
            out[layout] = {"cells": cells, "wall_s": [r["total_s"] for r in runs], "user_s": [r["user_s"] for r in runs],
                           "system_s": [r["system_s"] for r in runs], "peak_above_start_bytes": above,
                           "over_parsed": [a / r["parsed_bytes"] for a, r in zip(above, runs)],
                           "time_exponent": fit_exponent(cells, [r["total_s"] for r in runs]),
                           "user_exponent": fit_exponent(cells, [r["user_s"] for r in runs]),
                           "memory_exponent": fit_exponent(cells, above)}
    return out


def machine() -> dict[str, Any]:
    import pandas as pd

    return {"cpus": os.cpu_count(), "load_average": list(os.getloadavg()), "python": platform.python_version(),
            "numpy": np.__version__, "pandas": pd.__version__, "platform": platform.platform(),
            "threads_setting": os.environ.get("VALUESIFT_THREADS", "auto"),
            "utc": time.strftime("%Y-%m-%d %H:%M", time.gmtime())}


# -- the table ---------------------------------------------------------------------------------


def _rows(r: dict[str, Any]) -> list[tuple[str, str, str, str, str]]:
    """(what, size, measured, target, verdict) rows."""
    rows: list[tuple[str, str, str, str, str]] = []

    def verdict(ok: bool | None) -> str:
        return "" if ok is None else ("met" if ok else "MISSED")

    for name, s in r.get("study", {}).items():
        sz = SIZES[name]
        tgt = name == "L"
        rows.append(("whole study (wall, median)", f"{name} {sz.n}x{sz.t}", f"{s['wall_s']:.2f} s",
                     "<= 2 s" if tgt else "", verdict(s["wall_s"] <= 2.0) if tgt else ""))
        rows.append(("whole study (CPU)", f"{name} {sz.n}x{sz.t}", f"{s['cpu_s']:.2f} s", "", ""))
        rows.append(("whole study peak memory (traced)", f"{name} {sz.n}x{sz.t}", f"{s['peak_mb']:.0f} MB",
                     "<= 1536 MB" if tgt else "", verdict(s["peak_mb"] <= 1536) if tgt else ""))
        if name in ("M", "L"):
            for st, v in s["stages_s"].items():
                rows.append((f"  stage: {st}", f"{name}", f"{v * 1000:.0f} ms", "", ""))
    for name, f in r.get("forward_ic", {}).items():
        rows.append(("fwd returns + IC, engine", name, f"{f['engine_s'] * 1000:.0f} ms "
                     f"(1 thread {f['engine_1thread_s'] * 1000:.0f} ms)", "", ""))
        if "tight_kernel_s" in f:
            rows.append(("  tight numpy kernel (price-only returns, rank IC)", name,
                         f"{f['tight_kernel_s'] * 1000:.0f} ms; engine / kernel = {f['engine_over_tight']:.2f}x",
                         "(reported)", ""))
        if "notebook_s" in f:
            rows.append(("fwd returns + IC, notebook baseline", name, f"{f['notebook_s']:.1f} s", "", ""))
            tgt = name == "L"
            rows.append(("  speed-up (same run)", name, f"{f['speedup']:.0f}x (1 thread {f['speedup_1thread']:.0f}x)",
                         ">= 50x" if tgt else "", verdict(f["speedup"] >= 50) if tgt else ""))
            worst = max(f["agreement_max_abs_diff"].values())
            rows.append(("  baseline agreement (max abs diff)", name, f"{worst:.1e}", "<= 1e-9", verdict(worst <= 1e-9)))
    x = r.get("intake_xl")
    if x:
        for layout, tgt_s in (("parquet_wide", 5.0), ("parquet_long", 7.0), ("csv_long", 20.0)):
            d = x.get(layout, {})
            if "error" in d or not d:
                rows.append((f"XL {layout} -> month-end panel", "XL", "failed", f"<= {tgt_s:.0f} s", "MISSED"))
                continue
            rows.append((f"XL {layout} -> month-end panel", "XL 3000x7560d", f"{d['total_s']:.1f} s",
                         f"<= {tgt_s:.0f} s", verdict(d["total_s"] <= tgt_s)))
            rows.append(("  read prices / EPS / dividends / align", "XL",
                         f"{d['read_prices_s']:.1f} / {d['read_eps_s']:.1f} / {d['read_dividends_s']:.1f} / "
                         f"{d['month_end_panel_s']:.1f} s", "", ""))
            rows.append(("  peak RSS / parsed data", "XL", f"{d['peak_rss_bytes'] / MB:.0f} MB / "
                         f"{d['parsed_bytes'] / MB:.0f} MB = {d['peak_over_parsed']:.1f}x "
                         f"(above start {d['increment_over_parsed']:.1f}x)", "<= 3x",
                         verdict(d["peak_over_parsed"] <= 3.0)))
    ig = r.get("intake_growth")
    if ig:
        span = f"{ig['sizes'][0][0]}x{ig['sizes'][0][1]}d..{ig['sizes'][-1][0]}x{ig['sizes'][-1][1]}d"
        for layout in INTAKE_GROWTH_LAYOUTS:
            g = ig.get(layout)
            if not g or "error" in g:
                continue
            rows.append((f"growth exponent: intake {layout}, wall / user CPU / peak vs N x T", span,
                         f"{g['time_exponent']:.2f} / {g['user_exponent']:.2f} / {g['memory_exponent']:.2f}",
                         "close to 1", ""))
    w = r.get("whole")
    if w:
        st = w["study"]
        v, ref = st["valuesift"], st["reference"]
        rows.append(("study --no-bundle, whole process (wall)", "L Parquet pair",
                     f"{v['wall_s']:.2f} s vs reference {ref['wall_s']:.2f} s = {st['wall_ratio']:.2f}x", "<= 0.8x",
                     verdict(st["wall_ratio"] <= 0.8)))
        rows.append(("study --no-bundle, whole process (CPU)", "L Parquet pair",
                     f"{v['cpu_s']:.2f} s vs reference {ref['cpu_s']:.2f} s = {st['cpu_ratio']:.2f}x", "(reported)", ""))
        rows.append(("study --no-bundle, peak memory", "L Parquet pair",
                     f"{v['peak_rss_mb']:.0f} MB vs reference {ref['peak_rss_mb']:.0f} MB = "
                     f"{v['peak_rss_mb'] / ref['peak_rss_mb']:.2f}x", "(reported)", ""))
        heavy = w["study_heavy_imports"]
        rows.append(("study --no-bundle imports scipy.stats/plotting/Dash", "", ", ".join(heavy) or "none", "none",
                     verdict(not heavy)))
        rows.append(("valuesift --help, whole process", "", f"{w['help']['wall_s']:.2f} s (CPU {w['help']['cpu_s']:.2f} s)",
                     "< 0.5 s", verdict(w["help"]["wall_s"] < 0.5)))
        for label, ref_name in (("parquet", "pyarrow read_table().to_pandas()"), ("csv", "pandas.read_csv")):
            d = w["intake"][label]
            rows.append((f"intake of the L {label} pair (in process)", "L",
                         f"{d['valuesift_s']:.2f} s vs {ref_name} {d['reference_s']:.2f} s = {d['ratio']:.2f}x",
                         "<= 2x", verdict(d["ratio"] <= 2.0)))
        rows.append(("panel building (parsed L Parquet pair)", "L", f"{w['intake']['panel_s']:.2f} s", "<= 0.3 s",
                     verdict(w["intake"]["panel_s"] <= 0.3)))
        eq = w["equality"]
        rows.append(("study numbers vs the pre-change reference", "L", f"max diff {eq['max_abs_diff']:.1e} over "
                     f"{eq['parts']} parts", "<= 1e-12", verdict(eq["ok"])))
    dsh = r.get("dashboard")
    if dsh:
        rows.append(("dashboard: cold study (service layer)", "M", f"{dsh['cold_study_s']:.2f} s", "<= 1.5 s",
                     verdict(dsh["cold_study_s"] <= 1.5)))
        if "first_view_s" in dsh:
            rows.append(("dashboard: first view of a study (all figures)", "M",
                         f"{dsh['first_view_s'] * 1000:.0f} ms", "(reported)", ""))
        rows.append(("dashboard: warm horizon change (figures)", "M", f"{dsh['warm_horizon_change_s'] * 1000:.2f} ms",
                     "<= 100 ms", verdict(dsh["warm_horizon_change_s"] <= 0.1)))
        rows.append(("dashboard: screen first page", "M", f"{dsh['screen_first_page_s'] * 1000:.0f} ms, "
                     f"{dsh['screen_rows_sent']} of {dsh['screen_rows_total']} rows sent", "page only",
                     verdict(dsh["screen_rows_sent"] < dsh["screen_rows_total"])))
    g = r.get("growth")
    if g:
        rows.append(("growth exponent: time vs N x T", ",".join(g["sizes"]), f"{g['time_exponent']:.2f}", "close to 1", ""))
        cpu = [r["study"][s_]["cpu_s"] for s_ in g["sizes"]]  # CPU seconds: less disturbed by other load
        rows.append(("growth exponent: CPU time vs N x T", ",".join(g["sizes"]), f"{fit_exponent(g['cells'], cpu):.2f}",
                     "close to 1", ""))
        big = [s_ for s_ in g["sizes"] if r["study"][s_]["cells"] >= 100_000]
        if len(big) >= 3:
            rows.append(("growth exponent: CPU time vs N x T, M and up", ",".join(big),
                         f"{fit_exponent([r['study'][s_]['cells'] for s_ in big], [r['study'][s_]['cpu_s'] for s_ in big]):.2f}",
                         "close to 1", ""))
        if "time_exponent_M_up" in g:
            rows.append(("growth exponent: time vs N x T, M and up", "M,I1,I2,L", f"{g['time_exponent_M_up']:.2f}",
                         "close to 1", ""))
        rows.append(("growth exponent: memory vs N x T", ",".join(g["sizes"]), f"{g['memory_exponent']:.2f}", "", ""))
        for s_, c_, w_, m_ in zip(g["sizes"], g["cells"], g["wall_s"], g["peak_mb"]):
            rows.append((f"  growth point {s_}", f"N x T = {c_:,}",
                         f"{w_:.3f} s wall, {r['study'][s_]['cpu_s']:.3f} s CPU, {m_:.0f} MB", "", ""))
    return rows


def table_text(r: dict[str, Any]) -> str:
    rows = [("measurement", "size", "measured", "target", "verdict")] + _rows(r)
    w = [max(len(row[i]) for row in rows) for i in range(5)]
    lines = ["  ".join(c.ljust(w[i]) for i, c in enumerate(row)).rstrip() for row in rows]
    lines.insert(1, "  ".join("-" * x for x in w))
    return "\n".join(lines)


def table_markdown(r: dict[str, Any]) -> str:
    out = ["| measurement | size | measured | target | verdict |", "|---|---|---|---|---|"]
    out += ["| " + " | ".join(c.replace("|", "/") for c in row) + " |" for row in _rows(r)]
    return "\n".join(out)


# -- main ----------------------------------------------------------------------------------------


def main(argv: list[str] | None = None) -> dict[str, Any]:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--sizes", default=",".join(GROWTH_SIZES))
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--no-xl", action="store_true")
    ap.add_argument("--no-baseline", action="store_true")
    ap.add_argument("--no-dashboard", action="store_true")
    ap.add_argument("--no-whole", action="store_true", help="skip the whole-process and intake-vs-reader measurements")
    ap.add_argument("--baseline-sizes", default="S,M,L")
    ap.add_argument("--json", default=str(HERE / "results" / "latest.json"))
    ap.add_argument("--markdown", default=None)
    ap.add_argument("--render", default=None, metavar="JSON",
                    help="only print (and with --markdown write) the table of an earlier run's JSON")
    a = ap.parse_args(argv)
    if a.render:
        old = json.loads(Path(a.render).read_text())
        print(table_text(old))
        if a.markdown:
            Path(a.markdown).write_text(table_markdown(old) + "\n")
        return old
    sizes = [s.strip() for s in a.sizes.split(",") if s.strip() and s.strip() != "XL"]
    for s in sizes:
        if s not in SIZES:
            ap.error(f"unknown size {s!r}; allowed: {', '.join(SIZES)}")
    cfg = StudyConfig()
    r: dict[str, Any] = {"command": "python -m tests.benchmarks.run " + " ".join(argv if argv is not None else sys.argv[1:]),
                         "machine_before": machine(), "config": cfg.to_dict(), "study": {}, "forward_ic": {}}
    t_start = time.perf_counter()
    for name in sizes:
        sz = SIZES[name]
        panel = monthly_panel(sz.n, sz.t, seed=0)
        reps = a.repeats if sz.cells < 2_000_000 else max(3, a.repeats)
        s = time_study(panel, cfg, reps)
        s.update(memory_study(panel, cfg))
        s.update({"n": sz.n, "t": sz.t, "cells": sz.cells, "panel_mb": panel_mb(panel)})
        r["study"][name] = s
        print(f"[{time.perf_counter() - t_start:6.0f} s] study {name}: {s['wall_s']:.3f} s wall, "
              f"{s['cpu_s']:.3f} s CPU, peak {s['peak_mb']:.0f} MB", flush=True)
        if name in a.baseline_sizes.split(","):
            f = forward_ic(panel, cfg, reps, baseline=not a.no_baseline)
            r["forward_ic"][name] = f
            print(f"[{time.perf_counter() - t_start:6.0f} s] forward+IC {name}: engine {f['engine_s']:.3f} s"
                  + (f", notebook {f['notebook_s']:.1f} s, {f['speedup']:.0f}x" if "notebook_s" in f else ""), flush=True)
        if name == "M" and not a.no_dashboard:
            from tests.benchmarks.dashboard import measure_dashboard

            r["dashboard"] = measure_dashboard(panel, repeats=a.repeats)
            print(f"[{time.perf_counter() - t_start:6.0f} s] dashboard M: {r['dashboard']}", flush=True)
    done = [s for s in GROWTH_SIZES if s in r["study"]]
    if len(done) >= 3:
        cells = [r["study"][s]["cells"] for s in done]
        r["growth"] = {"sizes": done, "cells": cells,
                       "wall_s": [r["study"][s]["wall_s"] for s in done],
                       "peak_mb": [r["study"][s]["peak_mb"] for s in done],
                       "time_exponent": fit_exponent(cells, [r["study"][s]["wall_s"] for s in done]),
                       "memory_exponent": fit_exponent(cells, [r["study"][s]["peak_mb"] for s in done])}
        big = [s for s in done if r["study"][s]["cells"] >= 100_000]
        if len(big) >= 3:  # S is dominated by fixed per-call costs; the fit over M and up shows the scaling
            bc = [r["study"][s]["cells"] for s in big]
            r["growth"]["time_exponent_M_up"] = fit_exponent(bc, [r["study"][s]["wall_s"] for s in big])
    if not a.no_whole:
        from tests.benchmarks.whole import measure_whole

        r["whole"] = measure_whole(repeats=max(3, min(a.repeats, 5)))
        print(f"[{time.perf_counter() - t_start:6.0f} s] whole process: study {r['whole']['study']['wall_ratio']:.2f}x "
              f"the reference, --help {r['whole']['help']['wall_s']:.2f} s", flush=True)
    if not a.no_xl:
        xl = SIZES["XL"]
        r["intake_xl"] = intake_xl(xl.n, xl.t)
        print(f"[{time.perf_counter() - t_start:6.0f} s] intake XL done", flush=True)
        r["intake_growth"] = intake_growth()
        print(f"[{time.perf_counter() - t_start:6.0f} s] intake growth done", flush=True)
    r["machine_after"] = machine()
    r["suite_seconds"] = time.perf_counter() - t_start
    text = table_text(r)
    print()
    print(text)
    print(f"\nload average before {r['machine_before']['load_average']}, after {r['machine_after']['load_average']}; "
          f"{r['machine_before']['cpus']} CPUs; suite {r['suite_seconds']:.0f} s")
    out = Path(a.json)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(json.dumps(r, indent=1, default=float))
    print(f"JSON: {out}")
    if a.markdown:
        Path(a.markdown).write_text(table_markdown(r) + "\n")
        print(f"Markdown: {a.markdown}")
    return r


if __name__ == "__main__":
    main()
