"""Look-ahead proof: garbage after a date t changes nothing decided at or before t."""

from __future__ import annotations

import numpy as np
import pandas as pd
from _panels import make_panel
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from valuesift.core.panel import Panel, UserSignal
from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study

BASE = make_panel(n_dates=30, n_sec=16, seed=21, ic=0.2, with_mcap=True, with_user=True)


def _garbage(panel: Panel, t: int, seed: int) -> Panel:
    """Replace every value dated after ``dates[t]`` by random junk (positive, negative, missing)."""
    rng = np.random.default_rng(seed)
    dates = panel.prices.index
    after = dates > dates[t]

    def junk(f: pd.DataFrame, positive: bool) -> pd.DataFrame:
        g = f.copy()
        k = int(after.sum())
        vals = rng.lognormal(3, 2, size=(k, f.shape[1])) if positive else rng.normal(0, 50, size=(k, f.shape[1]))
        vals[rng.random(vals.shape) < 0.3] = np.nan
        g.loc[after] = vals
        return g

    divs = panel.dividends
    assert divs is not None
    keep = divs[divs["ex_date"] <= dates[t]]
    n_new = 25
    new = pd.DataFrame({
        "security": rng.choice(panel.prices.columns.to_numpy(), n_new),
        "ex_date": rng.choice(dates[after].to_numpy(), n_new) - np.timedelta64(3, "D"),
        "amount": rng.uniform(0, 40, n_new),
    })
    divs2 = pd.concat([keep, new], ignore_index=True).sort_values(["security", "ex_date"], ignore_index=True)
    bench = panel.benchmark.copy()  # type: ignore[union-attr]
    bench.loc[after] = rng.lognormal(4, 1, int(after.sum()))
    sigs = tuple(UserSignal(s.name, junk(s.values, False), s.higher_is_cheaper) for s in panel.signals)
    return panel.with_(prices=junk(panel.prices, True), eps=junk(panel.eps, False), dividends=divs2,  # type: ignore[arg-type]
                       benchmark=bench, market_cap=junk(panel.market_cap, True), signals=sigs)  # type: ignore[arg-type]


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    t=st.integers(min_value=4, max_value=27),
    seed=st.integers(min_value=0, max_value=10_000),
    signal=st.sampled_from(["earnings_yield", "dividend_yield", "book_to_price", "composite"]),
    lag=st.sampled_from([0, 3]),
    outlier=st.sampled_from(["winsorise", "clip_robust_z", "none"]),
    zmethod=st.sampled_from(["mean_std", "median_mad"]),
    neutral=st.booleans(),
    within=st.booleans(),
    hold=st.sampled_from([1, 3]),
    history=st.sampled_from([0, 2]),
)
def test_future_garbage_leaves_past_decisions_unchanged(
    t: int, seed: int, signal: str, lag: int, outlier: str, zmethod: str, neutral: bool, within: bool, hold: int,
    history: int,
) -> None:
    cfg = StudyConfig(
        signal=signal, composite_of=("earnings_yield", "book_to_price"), reporting_lag_months=lag,
        outlier_rule=outlier, zscore_method=zmethod, sector_neutral=neutral, backtest_within_sectors=within,  # type: ignore[arg-type]
        holding_months=hold, min_history_months=history, horizons=(1, 2), min_breadth=4, n_quantiles=3,
        min_sector_size=3, fm_log_market_cap=True, excess_over="benchmark",
    )
    a = run_study(BASE, cfg)
    b = run_study(_garbage(BASE, t, seed), cfg)
    upto = slice(None, BASE.prices.index[t])
    for name in ("signal_raw", "zscore", "sector_zscore", "signal_z", "quantile", "universe", "pe", "eps_used"):
        fa, fb = getattr(a, name), getattr(b, name)
        pd.testing.assert_frame_equal(fa.loc[upto], fb.loc[upto], check_exact=True, obj=name)
    for name in ("weights_cheapest", "weights_long_short"):
        pd.testing.assert_frame_equal(getattr(a.backtest, name).loc[upto], getattr(b.backtest, name).loc[upto],
                                      check_exact=True, obj=name)
    pd.testing.assert_frame_equal(a.backtest.turnover.loc[upto], b.backtest.turnover.loc[upto], check_exact=True)
    pd.testing.assert_frame_equal(a.quantile_counts.loc[upto], b.quantile_counts.loc[upto], check_exact=True)
    # the garbage really arrived: something after t differs
    assert not a.signal_raw.iloc[t + 1 :].equals(b.signal_raw.iloc[t + 1 :])
