"""Benchmark of a five-signal comparison against one study (not collected by pytest; no timed assertion).

    .venv/bin/python tests/benchmarks/bench_compare.py [--n 3000] [--t 360] [--repeats 1]

Target (issue 12): a comparison of five signals (earnings yield, dividend yield, the composite and two
signals of one's own) on 3,000 securities x 360 months takes at most 4 times one study with every field
(``run_study``, default settings).  The comparison runs each signal's study without the display-only fields
(``detail=False``: same headline numbers), then the per-horizon backtests, the signal correlations and
the joint regression.  Prints both medians, their ratio and the load average (a shared machine's load
moves the numbers).
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


def main() -> int:
    import numpy as np
    import pandas as pd

    from tests.benchmarks.synth import monthly_panel
    from valuesift.core.compare import run_compare
    from valuesift.core.config import StudyConfig
    from valuesift.core.panel import UserSignal
    from valuesift.core.study import run_study

    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=3000)
    ap.add_argument("--t", type=int, default=360)
    ap.add_argument("--repeats", type=int, default=1)
    a = ap.parse_args()
    panel = monthly_panel(a.n, a.t)
    rng = np.random.default_rng(5)
    extra = tuple(UserSignal(f"own_{k}", pd.DataFrame(rng.normal(size=panel.prices.shape), index=panel.prices.index,
                                                      columns=panel.prices.columns)) for k in (1, 2))
    panel = panel.with_(signals=extra)
    cfg = StudyConfig()
    one, five = [], []
    for _ in range(a.repeats):
        t0 = time.perf_counter()
        run_study(panel, cfg)
        one.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        run_compare(panel, ["earnings_yield", "dividend_yield", "composite", "own_1", "own_2"], cfg)
        five.append(time.perf_counter() - t0)
    s, c = statistics.median(one), statistics.median(five)
    print(f"{a.n} x {a.t}: one study {s:.1f} s, five-signal comparison {c:.1f} s, ratio {c / s:.2f} "
          f"(target at most 4); load average {os.getloadavg()[0]:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
