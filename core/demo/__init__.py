"""The invented demo universe ("the Maren exchange"): simulation, truth and file writer.

``simulate_demo(seed)`` returns the clean market as read-only numpy arrays;
``write_demo(out_dir, seed)`` writes the files of ``sample_data/`` with the
planted real-world mess; ``DEMO_TRUTH`` holds the true strength of the planted
relation between cheapness (earnings yield) and next month's total return.
"""

from __future__ import annotations

from valuesift.core.demo._constants import DEFAULT_SEED
from valuesift.core.demo.simulate import DemoMarket, DemoRoles, DividendEvent, simulate_demo
from valuesift.core.demo.truth import (
    DEMO_TRUTH,
    expected_spearman_ic,
    horizon_ic_approx,
    ic_standard_error,
    spearman_from_pearson,
)
from valuesift.core.demo.write import write_demo

__all__ = [
    "DEFAULT_SEED",
    "DEMO_TRUTH",
    "DemoMarket",
    "DemoRoles",
    "DividendEvent",
    "expected_spearman_ic",
    "horizon_ic_approx",
    "ic_standard_error",
    "simulate_demo",
    "spearman_from_pearson",
    "write_demo",
]
