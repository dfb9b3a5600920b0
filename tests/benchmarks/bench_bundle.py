"""Benchmark of the committee bundle on the demo study (not collected by pytest; no timed assertion).

    .venv/bin/python tests/benchmarks/bench_bundle.py [--repeats 3] [--horizons 1,3,6,12,24,36]
    .venv/bin/python tests/benchmarks/bench_bundle.py --large [--repeats 1]

Prints the build time (median of the repeats, with the time to the first chart image and the PDF
layout time taken from the build's own progress reports), the ZIP size and the load average, since
a shared machine's load changes the numbers a lot.  Targets: ZIP under 20 MB, build at most 6 s on two cores.
With ``--large`` it times the L study (3,000 x 360, invented) alone and then with its bundle, alternated,
and prints the ratio (issue 15: the study with its bundle at most 2x the study without it).
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


def main() -> int:
    from valuesift.app.bundle import find_browser, write_bundle
    from valuesift.core.config import StudyConfig
    from valuesift.core.study import run_study

    from tests.app.bundle.conftest import load_demo  # the same demo panel as the bundle tests

    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--horizons", default="1,3,6,12,24,36")
    ap.add_argument("--large", action="store_true", help="the L study with and without its bundle")
    a = ap.parse_args()
    if a.large:
        return _large(a.repeats)
    with tempfile.TemporaryDirectory() as tmp:
        panel = load_demo(Path(tmp) / "demo")
        result = run_study(panel, StudyConfig(horizons=tuple(int(h) for h in a.horizons.split(","))))
        rows = []
        for i in range(a.repeats):
            marks: dict[str, float] = {}
            t0 = time.perf_counter()

            def progress(stage: str, frac: float) -> None:
                marks.setdefault(stage, time.perf_counter() - t0)

            paths = write_bundle(result, panel, None, Path(tmp) / f"b{i}", study_name="bench", progress=progress)
            total = time.perf_counter() - t0
            first = next((at for st, at in marks.items() if st.startswith("rendering chart 1 of")), float("nan"))
            rows.append((total, first,
                         marks.get("writing the manifest", total) - marks.get("laying out the report", 0.0),
                         paths.zip.stat().st_size / 1e6))
    print(f"browser: {find_browser()}; load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    for stage, at in sorted(marks.items(), key=lambda kv: kv[1]):
        print(f"  last build: {at:6.2f} s  {stage}")
    for total, first, pdf, size in rows:
        print(f"build {total:6.1f} s   browser ready after {first:5.1f} s   PDF layout {pdf:5.1f} s   ZIP {size:5.1f} MB")
    med = statistics.median(r[0] for r in rows)
    print(f"median build {med:.1f} s; target <= 6 s on the 2-core machine (issue 13): "
          f"{'met' if med <= 6.0 else 'missed'} at load average {os.getloadavg()[0]:.1f}")
    return 0


def _large(repeats: int) -> int:
    from valuesift.app.bundle import write_bundle
    from valuesift.core.config import StudyConfig
    from valuesift.core.study import run_study

    from tests.benchmarks.synth import monthly_panel

    panel = monthly_panel(3000, 360)
    cfg = StudyConfig()
    alone, both = [], []
    with tempfile.TemporaryDirectory() as tmp:
        for i in range(repeats):
            t0 = time.perf_counter()
            run_study(panel, cfg)
            alone.append(time.perf_counter() - t0)
            t0 = time.perf_counter()
            res = run_study(panel, cfg)
            write_bundle(res, panel, None, Path(tmp) / f"L{i}", study_name="bench")
            both.append(time.perf_counter() - t0)
    s, b = statistics.median(alone), statistics.median(both)
    print(f"L 3000 x 360: study {s:.1f} s, study with bundle {b:.1f} s, ratio {b / s:.2f} (target at most 2): "
          f"{'met' if b / s <= 2 else 'missed'} at load average {os.getloadavg()[0]:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
