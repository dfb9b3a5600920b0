"""Timing of a full study on 3,000 securities x 360 months, 6 horizons (run by hand; not a test).

    /work/main/.venv/bin/python tests/core/bench_engine.py
"""

from __future__ import annotations

import cProfile
import pstats
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

from _panels import make_panel  # noqa: E402

from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study


def main() -> None:
    panel = make_panel(n_dates=360, n_sec=3000, seed=0, ic=0.05)
    cfg = StudyConfig()
    run_study(panel, StudyConfig(horizons=(1,)))  # warm-up
    t0, c0 = time.perf_counter(), time.process_time()
    run_study(panel, cfg)
    wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    print(f"full study 3000 x 360, 6 horizons: {wall:.2f} s wall, {cpu:.2f} s CPU (single thread)")
    if "--profile" in sys.argv:
        pr = cProfile.Profile()
        pr.enable()
        run_study(panel, cfg)
        pr.disable()
        pstats.Stats(pr).sort_stats("cumulative").print_stats(25)


if __name__ == "__main__":
    main()
