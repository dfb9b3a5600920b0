"""Whole-process and intake measurements of issue 15, each against a reference run side by side.

* ``valuesift study --no-bundle`` on the L Parquet pair against
  ``notebook_reference.py`` (idiomatic pandas: forward returns + rank IC only),
  alternated run by run; wall seconds, CPU seconds (user + system of the child)
  and peak resident memory of each child from ``os.wait4``;
* ``valuesift --help`` (wall, whole process);
* which heavy modules ``study --no-bundle`` imports (``python -X importtime``);
* intake of the L Parquet and CSV pairs in process against
  ``pyarrow.parquet.read_table(...).to_pandas()`` and ``pandas.read_csv``,
  alternated; panel building of the parsed pair;
* the study's numbers against the reference fingerprint written by the code
  before the speed work (``equality.py``), to 1e-12.

The machine is shared: every figure is a median of several runs, and the ratios
(taken within one run, reference and ValueSift alternating) are the figures to
compare across machines.
"""

from __future__ import annotations

import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]

__all__ = ["measure_whole", "HEAVY_MODULES"]

#: modules a study without a bundle must not import (start-up cost, see README "Performance")
HEAVY_MODULES = ("scipy.stats", "statsmodels", "plotly", "dash", "reportlab", "matplotlib", "kaleido", "choreographer", "openpyxl")


def _child(cmd: list[str]) -> dict[str, float]:
    """Run ``cmd``; wall seconds, CPU seconds (user + system) and peak RSS (MB) of the child.

    The peak comes from ``/usr/bin/time -f %M`` where it exists: a child forked straight from this
    (large) process inherits its high-water mark, so ``ru_maxrss`` alone would report the parent's size.
    """
    timer = shutil.which("time", path="/usr/bin")
    full = [timer, "-f", "VALUESIFT_PEAK_KB %M", *cmd] if timer else cmd
    t0 = time.perf_counter()
    p = subprocess.Popen(full, cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t0
    err = p.stderr.read().decode("utf-8", "replace") if p.stderr else ""
    if p.stderr:
        p.stderr.close()
    p.returncode = os.waitstatus_to_exitcode(status)
    if p.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd)} failed ({p.returncode}): {err[-1500:]}")
    peak_kb = float(ru.ru_maxrss)
    for line in err.splitlines():
        if line.startswith("VALUESIFT_PEAK_KB "):
            peak_kb = float(line.split()[1])
    return {"wall_s": wall, "cpu_s": ru.ru_utime + ru.ru_stime, "peak_rss_mb": peak_kb / 1024.0}


def _med(runs: list[dict[str, float]], key: str) -> float:
    return float(statistics.median(r[key] for r in runs))


def _cli() -> list[str]:
    exe = shutil.which("valuesift", path=str(Path(sys.executable).parent))
    return [exe] if exe else [sys.executable, "-m", "valuesift.app.cli"]


def _heavy_imports(cmd: list[str]) -> list[str]:
    p = subprocess.run([sys.executable, "-X", "importtime", *cmd], cwd=ROOT, capture_output=True, text=True, timeout=600)
    names = {line.split("|")[-1].strip() for line in p.stderr.splitlines() if line.startswith("import time:")}
    return sorted(m for m in HEAVY_MODULES if m in names)


def _intake(files: Any, repeats: int) -> dict[str, Any]:
    import pandas as pd
    import pyarrow.parquet as pq

    from valuesift.core.intake import ReadOptions, build_panel, read_table

    def ours(kind_paths: list[tuple[str, Path]]) -> list[Any]:
        return [read_table(p, options=ReadOptions(kind=k)) for k, p in kind_paths]

    pq_pair = [("prices", files.prices_parquet), ("earnings", files.eps_parquet)]
    csv_pair = [("prices", files.prices_csv), ("earnings", files.eps_csv)]
    out: dict[str, Any] = {}
    for label, pair, ref in (
        ("parquet", pq_pair, lambda: [pq.read_table(p).to_pandas() for _, p in pq_pair]),
        ("csv", csv_pair, lambda: [pd.read_csv(p) for _, p in csv_pair]),
    ):
        ours(pair), ref()  # warm-up (imports, file cache)
        t_ours, t_ref = [], []
        for _ in range(repeats):
            t0 = time.perf_counter()
            ref()
            t1 = time.perf_counter()
            parsed = ours(pair)
            t2 = time.perf_counter()
            t_ref.append(t1 - t0)
            t_ours.append(t2 - t1)
        out[label] = {"valuesift_s": statistics.median(t_ours), "reference_s": statistics.median(t_ref),
                      "ratio": statistics.median(a / b for a, b in zip(t_ours, t_ref)),
                      "runs_valuesift_s": t_ours, "runs_reference_s": t_ref}
        if label == "parquet":
            tp = []
            for _ in range(repeats):
                t0 = time.perf_counter()
                build_panel(parsed)
                tp.append(time.perf_counter() - t0)
            out["panel_s"] = statistics.median(tp)
            out["panel_runs_s"] = tp
    return out


def measure_whole(repeats: int = 3) -> dict[str, Any]:
    """Every measurement of the module note (the L pair is written once and cached)."""
    import numpy as np

    from tests.benchmarks.equality import REFERENCE, compare_fingerprints, fingerprint, reference_result
    from tests.benchmarks.synth import SIZES, monthly_files

    L = SIZES["L"]
    files = monthly_files(L.n, L.t)
    out: dict[str, Any] = {"files": {p.name: p.stat().st_size for p in (files.prices_parquet, files.eps_parquet,
                                                                         files.prices_csv, files.eps_csv)}}
    cli = _cli()
    with tempfile.TemporaryDirectory() as tmp:
        study = cli + ["study", "--prices", str(files.prices_parquet), "--earnings", str(files.eps_parquet),
                       "--no-bundle", "--quiet", "--out", tmp]
        ref = [sys.executable, str(HERE / "notebook_reference.py"), str(files.prices_parquet), str(files.eps_parquet)]
        _child(ref), _child(study)  # warm-up: file cache, byte-compiled modules
        r_runs, s_runs = [], []
        for _ in range(repeats):
            r_runs.append(_child(ref))
            s_runs.append(_child(study))
        out["study_heavy_imports"] = _heavy_imports(["-m", "valuesift.app.cli", *study[len(cli):]])
    out["study"] = {"valuesift": {k: _med(s_runs, k) for k in ("wall_s", "cpu_s", "peak_rss_mb")},
                    "reference": {k: _med(r_runs, k) for k in ("wall_s", "cpu_s", "peak_rss_mb")},
                    "wall_ratio": statistics.median(s["wall_s"] / r["wall_s"] for s, r in zip(s_runs, r_runs)),
                    "cpu_ratio": statistics.median(s["cpu_s"] / r["cpu_s"] for s, r in zip(s_runs, r_runs)),
                    "runs": {"valuesift": s_runs, "reference": r_runs}}
    helps = [_child(cli + ["--help"]) for _ in range(max(5, repeats))]
    out["help"] = {"wall_s": _med(helps, "wall_s"), "cpu_s": _med(helps, "cpu_s"),
                   "heavy_imports": _heavy_imports(["-m", "valuesift.app.cli", "--help"])}
    out["intake"] = _intake(files, repeats)
    fp_old = dict(np.load(REFERENCE))
    out["equality"] = compare_fingerprints(fp_old, fingerprint(reference_result()))
    if not out["equality"]["ok"]:
        raise AssertionError(f"the study's numbers changed: {out['equality']['problems']}")
    return out


if __name__ == "__main__":
    import json

    print(json.dumps(measure_whole(int(sys.argv[1]) if len(sys.argv) > 1 else 3), indent=1, default=float))
