"""Sub-period, regime and sector statistics: the headline standard error on a subset against statsmodels, the
difference of halves by hand, sector ICs against scipy."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats

from valuesift.core.stability.sectors import sector_ic_table, within_group_spread
from valuesift.core.stability.subsets import (
    difference_of_means,
    regime_masks,
    split_masks,
    subset_block,
    trailing_volatility,
    year_masks,
)


def test_subset_headline_matches_statsmodels_uniform_kernel() -> None:
    rng = np.random.default_rng(1)
    x = rng.normal(0.03, 0.1, 120)
    mask = np.arange(120) >= 40
    got = subset_block(x, mask, 3, "overlap_or_auto")
    y = x[mask]
    lags = max(2, math.floor(4 * (y.size / 100) ** (2 / 9)))
    # statsmodels 0.15, Hansen-Hodrick as in REFERENCE_CHECKS case 17
    fit = sm.OLS(y, np.ones(y.size)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "kernel": "uniform",
                                                                   "use_correction": False})
    assert got["mean"] == pytest.approx(y.mean()) and got["t"] == pytest.approx(fit.tvalues[0], rel=1e-9)
    assert got["n_dates"] == 80


def test_difference_of_halves_by_hand() -> None:
    rng = np.random.default_rng(2)
    x = rng.normal(0.02, 0.05, 100)
    a = np.arange(100) < 50
    d = difference_of_means(x, a, ~a, 1, "overlap_or_auto")
    sa, sb = subset_block(x, a, 1, "overlap_or_auto"), subset_block(x, ~a, 1, "overlap_or_auto")
    assert d["difference"] == pytest.approx(x[50:].mean() - x[:50].mean())
    assert d["t"] == pytest.approx(d["difference"] / math.hypot(sa["se"], sb["se"]))


def test_too_short_subsets_get_no_verdict() -> None:
    x = np.full(24, 0.05) + np.linspace(0, 0.01, 24)
    r = subset_block(x, np.arange(24) < 12, 12, "overlap")  # 12 dates at h = 12: one independent period
    assert r["too_short"] and r["evidence"] == "too_short"


def test_masks_years_split_and_regimes() -> None:
    dates = pd.date_range("2010-01-31", periods=30, freq="ME")
    ym = year_masks(pd.DatetimeIndex(dates))
    assert list(ym) == ["2010", "2011", "2012"] and ym["2012"].sum() == 6
    sm_ = split_masks(pd.DatetimeIndex(dates), pd.Timestamp("2011-03-31"))
    assert list(sm_) == ["before 2011-03", "from 2011-03"] and sm_["before 2011-03"].sum() == 14
    vol = trailing_volatility(np.arange(30, dtype=float) ** 1.5 / 100)
    assert np.isnan(vol[10]) and vol[11] == pytest.approx(np.std((np.arange(12) ** 1.5) / 100, ddof=1))
    fwd = np.array([0.01, -0.02, 0.0, np.nan])
    rm = regime_masks(fwd, np.array([0.1, 0.3, 0.2, np.nan]))
    assert rm[("market", "rose")].tolist() == [True, False, False, False]
    assert rm[("market", "fell")].tolist() == [False, True, True, False]
    assert rm[("volatility", "high")].tolist() == [False, True, False, False]


def test_sector_ic_matches_scipy_within_each_sector() -> None:
    rng = np.random.default_rng(4)
    z = rng.normal(size=(30, 24))
    y = 0.02 * z + rng.normal(0, 0.05, z.shape)
    codes = np.arange(24) % 3
    codes[-3:] = 3  # a sector of three names: too small for min_breadth 5
    from valuesift.core.quantiles.assign import assign_quantiles

    q = assign_quantiles(z, 3, codes)  # the quantiles within each sector, as the study's within-sector backtest forms them
    tab = sector_ic_table(z, {1: y}, codes, ["A", "B", "C", "D"], 3, 5, "overlap_or_auto")
    a = tab[tab["sector"] == "A"].iloc[0]
    cols = codes == 0
    want = np.mean([stats.spearmanr(z[t, cols], y[t, cols]).statistic for t in range(30)])
    assert a["mean_ic"] == pytest.approx(want, abs=1e-12) and a["mean_breadth"] == cols.sum()
    d = tab[tab["sector"] == "D"].iloc[0]
    assert not d["judged"] and d["evidence"] == "too_short"
    sp = within_group_spread(q, y, np.broadcast_to(cols, z.shape), 3)
    t0 = (q[0] == 3) & cols
    b0 = (q[0] == 1) & cols
    assert sp[0] == pytest.approx(y[0, t0].mean() - y[0, b0].mean())
    assert a["spread"] == pytest.approx(np.nanmean(sp), abs=1e-12)  # the table's spread: the same within-sector split


def test_study_fields_on_an_invented_panel() -> None:
    from _panels import make_panel

    from valuesift.core.config import StudyConfig
    from valuesift.core.study import run_study

    panel = make_panel(72, 40, seed=3, ic=0.2, with_mcap=True)
    res = run_study(panel, StudyConfig(horizons=(1, 3), split_month="2003-06"))
    per = res.ic_by_period
    assert {"before 2003-06", "from 2003-06", "2001", "2006"} <= set(per["period"])
    # the halves partition the dates: their n_dates add up to the study's
    halves = per[(per["horizon"] == 1) & per["period"].str.contains("2003-06")]
    assert halves["n_dates"].sum() == res.ic_summary.at[1, "n_dates"]
    # decay month 1 is the study's one-month IC
    assert res.ic_decay.iloc[0]["marginal_ic"] == pytest.approx(res.ic_summary.at[1, "mean_ic"], abs=1e-12)
    assert set(res.ic_by_regime["regime"]) == {"market", "volatility"}
    assert set(res.relative.index) == {"cheapest", "long_short"}
    assert not res.cap_weighted.empty and set(res.cap_weighted_backtest["weighting"]) == {"equal", "cap"}
    assert "log market capitalisation" in res.fm_controls.iloc[0]["controls"]


@pytest.mark.parametrize("month", ["1990-01", "2099-06"])
def test_a_split_month_outside_the_dates_is_refused_in_words(month) -> None:
    """A split that leaves one side empty would compare a half with nothing: ConfigError naming the setting."""
    from _panels import make_panel

    from valuesift.core.config import StudyConfig
    from valuesift.core.errors import ConfigError
    from valuesift.core.study import run_study

    panel = make_panel(72, 40, seed=3, ic=0.2)
    with pytest.raises(ConfigError, match="leaves one side empty") as err:
        run_study(panel, StudyConfig(horizons=(1,), split_month=month))
    assert err.value.setting == "split_month" and "2001" in str(err.value)
