"""The partitioned study (securities blocks, then dates blocks) equals the single-machine engine to 1e-12."""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest

from valuesift.core.errors import ConfigError, InsufficientDataError
from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study
from valuesift.core.sweep import run_partitioned_study

CONFIGS = {
    "plain": StudyConfig(horizons=(1, 3, 12), min_breadth=5, n_quantiles=4),
    "composite-neutral-robust": StudyConfig(signal="composite", horizons=(1, 6), min_breadth=5, sector_neutral=True,
                                            excess_over="universe", outlier_rule="clip_robust_z",
                                            zscore_method="median_mad"),
    "sectors-benchmark-history": StudyConfig(horizons=(3,), excess_over="benchmark", universe="sectors",
                                             universe_sectors=("Kilns", "Quays"), min_history_months=6, min_breadth=3,
                                             dividend_treatment="uninvested", delisting_return=-0.3),
    "dividend-yield-holdings": StudyConfig(signal="dividend_yield", horizons=(1, 2), universe="holdings",
                                           min_breadth=3, n_quantiles=3, reporting_lag_months=2),
}
# The tolerance 1e-12 is the requirement; the stages call the engine's own functions on the same
# values, so in practice the numbers agree exactly.
TOL = 1e-12


def _same(a: Any, b: Any) -> None:
    assert list(a.index) == list(b.index) and list(a.columns) == list(b.columns)
    text = [c for c in a.columns if a[c].dtype == object or str(a[c].dtype) in ("str", "string")]
    for c in text:  # method names and verdict codes must agree exactly
        assert list(a[c]) == list(b[c]), c
    num = [c for c in a.columns if c not in text]
    np.testing.assert_allclose(b[num].to_numpy(dtype=float), a[num].to_numpy(dtype=float), rtol=0, atol=TOL,
                               equal_nan=True)


def _check(single: Any, part: Any) -> None:
    for name in ("universe", "signal_z", "quantile", "rank_ic", "pearson_ic", "breadth", "spread", "ic_summary"):
        _same(getattr(single, name), getattr(part, name))
    for h in single.config.horizons:
        _same(single.forward_returns[h], part.forward_returns[h])
        _same(single.quantile_returns[h], part.quantile_returns[h])
    cols = ["mean", "se_hac", "t_hac", "hac_lags", "n_dates"]
    _same(single.spread_summary[cols], part.spread_summary[cols])


@pytest.mark.parametrize("name", list(CONFIGS))
def test_partitioned_equals_single_machine_in_process(panel: Any, name: str) -> None:
    cfg = CONFIGS[name]
    _check(run_study(panel, cfg), run_partitioned_study(panel, cfg, security_blocks=3, date_blocks=4))


def test_partitioned_equals_single_machine_on_the_cluster(panel: Any, client: Any) -> None:
    cfg = CONFIGS["composite-neutral-robust"]
    part = run_partitioned_study(panel, cfg, client, security_blocks=4, date_blocks=3)
    assert part.security_blocks == 4 and part.date_blocks == 3
    _check(run_study(panel, cfg), part)


def test_block_counts_larger_than_the_panel_are_capped(panel: Any) -> None:
    cfg = CONFIGS["plain"]
    part = run_partitioned_study(panel, cfg, security_blocks=1000, date_blocks=1)
    assert part.security_blocks == panel.shape[1] and part.date_blocks == 1
    _check(run_study(panel, cfg), part)


def test_partitioned_errors_match_the_engine(panel: Any) -> None:
    with pytest.raises(InsufficientDataError, match="60-month horizon"):
        run_partitioned_study(panel, StudyConfig(horizons=(60,)))
    with pytest.raises(ConfigError, match="benchmark"):
        run_partitioned_study(panel.with_(benchmark=None), StudyConfig(excess_over="benchmark", horizons=(1,)))
    with pytest.raises(InsufficientDataError, match="universe"):
        run_partitioned_study(panel, StudyConfig(universe="sectors", universe_sectors=("Nowhere",), horizons=(1,)))
