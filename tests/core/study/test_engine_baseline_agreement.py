"""The benchmark's notebook baseline and the engine give the same numbers on size S (no timings).

The baseline (tests/benchmarks/baseline.py) computes forward total returns with
a per-security Python loop and the per-date IC with scipy.stats.spearmanr /
scipy.stats.pearsonr (the reference implementations); the engine computes them
with vectorised kernels.  Agreement to 1e-9 is the benchmark's own requirement.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

_ROOT = str(Path(__file__).resolve().parents[3])
if _ROOT not in sys.path:  # the benchmark package lives in tests/benchmarks (not installed)
    sys.path.insert(0, _ROOT)

from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study
from tests.benchmarks.baseline import (  # noqa: E402
    AGREEMENT_TOL,
    compare,
    dividend_dict,
    engine_forward_ic,
    notebook_forward_ic,
)
from tests.benchmarks.run import fit_exponent  # noqa: E402
from tests.benchmarks.synth import SIZES, monthly_panel  # noqa: E402

pytestmark = pytest.mark.slow  # the notebook baseline takes a few seconds even on S


@pytest.fixture(scope="module")
def size_s():  # type: ignore[no-untyped-def]
    s = SIZES["S"]
    panel = monthly_panel(s.n, s.t, seed=0)
    cfg = StudyConfig(min_breadth=10)
    res = run_study(panel, cfg)
    nb = notebook_forward_ic(panel.prices, dividend_dict(panel), res.signal_z, res.universe, cfg.horizons,
                             cfg.min_breadth)
    return panel, cfg, res, nb


def _engine(panel, cfg, res, threads):  # type: ignore[no-untyped-def]
    return engine_forward_ic(panel.prices.to_numpy(dtype=float), panel.valid_price_mask(),
                             panel.dividend_matrix().to_numpy(dtype=float), res.universe.to_numpy(),
                             res.signal_z.to_numpy(dtype=float), cfg.horizons, cfg.min_breadth, threads=threads)


def test_synthetic_panel_is_deterministic_and_invented() -> None:
    a, b = monthly_panel(30, 144, seed=0), monthly_panel(30, 144, seed=0)
    assert a.prices.equals(b.prices) and a.dividends.equals(b.dividends)
    assert all(str(c).startswith("SYN") for c in a.prices.columns)
    assert a.prices.isna().to_numpy().any()  # gaps, late listings and delistings are in the data
    assert not monthly_panel(30, 144, seed=1).prices.equals(a.prices)


@pytest.mark.parametrize("threads", [False, True], ids=["one-thread", "threaded"])
def test_baseline_agrees_with_engine_on_size_s(size_s, threads) -> None:  # type: ignore[no-untyped-def]
    panel, cfg, res, nb = size_s
    eng = _engine(panel, cfg, res, threads)
    # the benchmark times the study's own computation: identical to the study result
    for h in cfg.horizons:
        np.testing.assert_array_equal(eng["fwd"][h], res.forward_returns[h].to_numpy())
        np.testing.assert_array_equal(eng["rank_ic"][h], res.rank_ic[h].to_numpy())
        np.testing.assert_array_equal(eng["pearson_ic"][h], res.pearson_ic[h].to_numpy())
    worst = compare(nb, eng)  # raises beyond 1e-9 (scipy.stats.spearmanr / pearsonr per date as reference)
    assert set(worst) == {"forward_returns", "rank_ic", "pearson_ic"}
    assert max(worst.values()) <= AGREEMENT_TOL
    assert np.isfinite(res.rank_ic[1].to_numpy()).sum() > 100  # the comparison covered real ICs


def test_compare_detects_a_disagreement(size_s) -> None:  # type: ignore[no-untyped-def]
    panel, cfg, res, nb = size_s
    eng = _engine(panel, cfg, res, False)
    bad = {k: {h: list(v) if isinstance(v, list) else v for h, v in d.items()} for k, d in nb.items()}
    i = int(np.flatnonzero(np.isfinite(bad["rank_ic"][1]))[0])
    bad["rank_ic"][1][i] += 1e-6  # a copy: the shared fixture stays intact
    with pytest.raises(AssertionError, match="rank_ic"):
        compare(bad, eng)


def test_growth_exponent_fit() -> None:
    # time = 3 * cells^1.2 exactly: the log-log least-squares slope is 1.2 (hand calculation)
    cells = [1e3, 1e4, 1e5, 1e6]
    assert math.isclose(fit_exponent(cells, [3 * c ** 1.2 for c in cells]), 1.2, rel_tol=1e-9)
