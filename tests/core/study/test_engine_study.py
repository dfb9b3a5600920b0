"""The study entry point: configuration checks, degenerate studies, the result's tables."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from _panels import make_panel

from valuesift.core.errors import ConfigError, InsufficientDataError
from valuesift.core.reporting.screen import SCREEN_FLAGS, SINGLE_NAME_CAUTION, screen_table, security_history
from valuesift.core.config import StudyConfig
from valuesift.core.result import StudyResult
from valuesift.core.reporting.summary import ic_by_date_frame, summary_dict
from valuesift.core.study import run_study


@pytest.fixture(scope="module")
def panel():  # type: ignore[no-untyped-def]
    return make_panel(n_dates=48, n_sec=30, seed=1, ic=0.3, with_mcap=True, with_user=True)


@pytest.fixture(scope="module")
def result(panel) -> StudyResult:  # type: ignore[no-untyped-def]
    return run_study(panel, StudyConfig(horizons=(1, 3, 12), min_breadth=5))


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"n_quantiles": 1}, "n_quantiles"),
        ({"n_quantiles": 21}, "n_quantiles"),
        ({"n_quantiles": 5.0}, "n_quantiles"),
        ({"horizons": ()}, "horizons"),
        ({"horizons": (0, 3)}, "horizons"),
        ({"horizons": (3, 3)}, "horizons"),
        ({"horizons": (121,)}, "horizons"),
        ({"reporting_lag_months": -1}, "reporting_lag_months"),
        ({"eps_max_age_months": 0}, "eps_max_age_months"),
        ({"outlier_rule": "trim"}, "outlier_rule"),
        ({"winsor_percentiles": (60.0, 99.0)}, "winsor_percentiles"),
        ({"winsor_percentiles": (1.0,)}, "winsor_percentiles"),
        ({"winsor_percentiles": (1.0, 101.0)}, "winsor_percentiles"),
        ({"robust_z_limit": 0.0}, "robust_z_limit"),
        ({"zscore_method": "rank"}, "zscore_method"),
        ({"sector_neutral": "yes"}, "sector_neutral"),
        ({"min_sector_size": 1}, "min_sector_size"),
        ({"small_sector_rule": "merge"}, "small_sector_rule"),
        ({"universe": "some"}, "universe"),
        ({"universe": "sectors"}, "universe_sectors"),
        ({"universe_sectors": "Sector 1"}, "universe_sectors"),
        ({"min_history_months": 241}, "min_history_months"),
        ({"dividend_treatment": "drop"}, "dividend_treatment"),
        ({"excess_over": "market"}, "excess_over"),
        ({"delisting_return": -1.5}, "delisting_return"),
        ({"delisting_return": float("nan")}, "delisting_return"),
        ({"min_breadth": 1}, "min_breadth"),
        ({"hac_lag_rule": "auto"}, "hac_lag_rule"),
        ({"fm_sector_dummies": 1}, "fm_sector_dummies"),
        ({"fm_log_market_cap": None}, "fm_log_market_cap"),
        ({"holding_months": 0}, "holding_months"),
        ({"backtest_within_sectors": "no"}, "backtest_within_sectors"),
        ({"transaction_cost_bps": -1.0}, "transaction_cost_bps"),
        ({"risk_free_annual": 0.9}, "risk_free_annual"),
        ({"comparison": "index"}, "comparison"),
        ({"signal": ""}, "signal"),
        ({"signal": "composite", "composite_of": ("earnings_yield",)}, "composite_of"),
        ({"composite_of": ("composite", "earnings_yield")}, "composite_of"),
        ({"composite_of": "earnings_yield"}, "composite_of"),
    ],
)
def test_config_validation(kwargs: dict, match: str) -> None:
    with pytest.raises(ConfigError) as err:
        StudyConfig(**kwargs)
    assert err.value.setting == match
    assert match in {f["setting"] for f in err.value.failures}


def test_config_normalises_and_is_frozen() -> None:
    c = StudyConfig(horizons=[12, 1, 3])  # type: ignore[arg-type]
    assert c.horizons == (1, 3, 12)
    with pytest.raises(AttributeError):
        c.n_quantiles = 10  # type: ignore[misc]
    d = c.to_dict()
    assert d["horizons"] == [1, 3, 12] and json.dumps(d)
    assert StudyConfig.from_dict(json.loads(json.dumps(d))) == c
    assert hash(c) == hash(StudyConfig.from_dict(d))  # usable as a cache key
    with pytest.raises(ConfigError, match="n_quantile"):
        StudyConfig.from_dict({"n_quantile": 5})


def test_degenerate_fewer_names_than_quantiles_everywhere() -> None:
    p = make_panel(n_dates=24, n_sec=4, seed=2)
    with pytest.raises(InsufficientDataError, match="5 quantiles"):
        run_study(p, StudyConfig(horizons=(1,), min_breadth=2))


def test_degenerate_horizon_longer_than_history() -> None:
    p = make_panel(n_dates=10, n_sec=20, seed=3)
    with pytest.raises(InsufficientDataError, match="12-month horizon"):
        run_study(p, StudyConfig(horizons=(1, 12)))


def test_degenerate_universe_filter_leaves_nothing() -> None:
    p = make_panel(n_dates=24, n_sec=20, seed=4)
    with pytest.raises(InsufficientDataError, match="universe"):
        run_study(p, StudyConfig(horizons=(1,), universe="sectors", universe_sectors=("No such sector",)))
    with pytest.raises(InsufficientDataError, match="universe"):
        run_study(p, StudyConfig(horizons=(1,), min_history_months=30))


@pytest.mark.parametrize(
    "changes,kwargs,match",
    [
        ({}, {"signal": "price_to_sales"}, "price_to_sales"),
        ({"sectors": None}, {"sector_neutral": True}, "sector"),
        ({"benchmark": None}, {"excess_over": "benchmark"}, "benchmark"),
        ({"benchmark": None}, {"comparison": "benchmark"}, "benchmark"),
        ({"market_cap": None}, {"fm_log_market_cap": True}, "market cap"),
        ({"holdings": None}, {"universe": "holdings"}, "holdings"),
        ({"eps": None}, {}, "earnings"),
        ({"dividends": None}, {"signal": "dividend_yield"}, "dividend"),
    ],
)
def test_settings_that_do_not_fit_the_panel(panel, changes: dict, kwargs: dict, match: str) -> None:  # type: ignore[no-untyped-def]
    with pytest.raises(ConfigError, match=match):
        run_study(panel.with_(**changes), StudyConfig(horizons=(1,), **kwargs))


def test_panel_is_not_mutated(panel) -> None:  # type: ignore[no-untyped-def]
    before = (panel.prices.copy(), panel.eps.copy(), panel.dividends.copy())
    run_study(panel, StudyConfig(horizons=(1,), reporting_lag_months=3, excess_over="universe"))
    pd.testing.assert_frame_equal(panel.prices, before[0])
    pd.testing.assert_frame_equal(panel.eps, before[1])
    pd.testing.assert_frame_equal(panel.dividends, before[2])


def test_result_axes_and_tables(result: StudyResult, panel) -> None:  # type: ignore[no-untyped-def]
    d, s = panel.prices.index, panel.prices.columns
    for f in (result.signal_raw, result.zscore, result.signal_z, result.quantile, result.universe, result.pe):
        assert f.shape == (len(d), len(s))
    assert list(result.rank_ic.columns) == [1, 3, 12]
    assert set(result.forward_returns) == {1, 3, 12}
    assert result.ic_summary.loc[1, "n_dates"] == 47
    assert result.ic_summary.loc[12, "n_dates"] == 36
    assert result.ic_summary.loc[1, "mean_ic"] > 0.1  # planted relation (invented data)
    assert list(result.quantile_mean.columns) == [1, 2, 3, 4, 5]
    assert result.rolling_ic.columns.nlevels == 2
    assert (result.quantile_counts.sum(axis=1) == result.universe.sum(axis=1)).all()
    assert result.backtest.stats.loc["cheapest", "n_months"] == 47


def test_summary_dict_and_ic_frame(result: StudyResult) -> None:
    sd = summary_dict(result)
    text = json.dumps(sd)
    assert "NaN" not in text
    h1 = sd["horizons"]["1"]
    assert h1["mean_ic"] == pytest.approx(result.ic_summary.loc[1, "mean_ic"])
    assert h1["ic_t"] == pytest.approx(result.ic_summary.loc[1, "t_hac"])
    assert h1["spread"] == pytest.approx(np.nanmean(result.spread[1].to_numpy()))
    assert h1["n_dates"] == 47
    assert sd["config"]["horizons"] == [1, 3, 12]
    f = ic_by_date_frame(result)
    assert list(f.columns) == ["date", "horizon", "rank_ic", "pearson_ic", "breadth"]
    assert len(f) == 47 + 45 + 36
    assert f["date"].iloc[0] == "2001-01-31"


def test_screen_table(result: StudyResult, panel) -> None:  # type: ignore[no-untyped-def]
    sc = result.screen
    assert sc.attrs["date"] == panel.prices.index[-1].date().isoformat()
    assert sc["zscore"].is_monotonic_decreasing
    assert sc["quantile"].iloc[0] == 5 and sc["quantile"].iloc[-1] == 1  # numbers; the app words them
    assert sc.attrs["n_quantiles"] == 5
    other = screen_table(result, "2002-06-15")
    assert other.attrs["date"] == "2002-06-30"
    with pytest.raises(ConfigError, match="outside"):
        screen_table(result, "1990-01-31")


def test_screen_pe_not_meaningful_and_freshness() -> None:
    p = make_panel(n_dates=24, n_sec=12, seed=5)
    eps = p.eps.copy()
    eps.iloc[-1, 0] = -1.0
    eps.iloc[-6:, 1] = np.nan  # last EPS stamp five months before the end
    prices = p.prices.copy()
    prices.iloc[-4:, 2] = np.nan  # no price for four months
    res = run_study(p.with_(eps=eps, prices=prices), StudyConfig(horizons=(1,), min_breadth=5))
    sc = res.screen
    s0, s1, s2 = p.prices.columns[:3]
    assert sc.loc[s0, "has_eps"] and np.isnan(sc.loc[s0, "pe"])  # an EPS, but no meaningful P/E
    assert sc.loc[s0, "signal"] < 0  # earnings yield stays defined for a loss
    assert "eps_not_positive" in sc.loc[s0, "flags"].split(";")   # codes only (core/reporting/screen.py)
    assert set(sc["flags"].str.split(";").explode().dropna()) - {""} <= set(SCREEN_FLAGS)
    assert sc.loc[s1, "months_since_eps"] == 6
    assert sc.loc[s2, "months_since_price"] == 4 and "stale_price" in sc.loc[s2, "flags"].split(";")
    assert not sc.loc[s2, "in_universe"]


def test_security_history(result: StudyResult) -> None:
    sec = result.signal_z.columns[0]
    h = security_history(result, sec, 3)
    assert list(h.columns) == ["signal_z", "forward_return", "return_z"]
    assert h.attrs["caution"] == SINGLE_NAME_CAUTION
    fwd = result.forward_returns[3]
    row = fwd.iloc[5].to_numpy()
    ok = np.isfinite(row)
    expect = (row[0] - row[ok].mean()) / row[ok].std(ddof=1)
    assert h["return_z"].iloc[5] == pytest.approx(expect)
    with pytest.raises(ConfigError, match="Horizon"):
        security_history(result, sec, 6)
    with pytest.raises(ConfigError, match="not in this study"):
        security_history(result, "NOPE1", 3)


def test_permuting_securities_changes_nothing(panel) -> None:  # type: ignore[no-untyped-def]
    cfg = StudyConfig(horizons=(1, 3), min_breadth=5, sector_neutral=True, fm_sector_dummies=True)
    a = run_study(panel, cfg)
    perm = list(np.random.default_rng(9).permutation(panel.prices.columns))
    pp = panel.with_(prices=panel.prices[perm], eps=panel.eps[perm], market_cap=panel.market_cap[perm])
    b = run_study(pp, cfg)
    pd.testing.assert_frame_equal(a.rank_ic, b.rank_ic, atol=1e-12, rtol=0)
    pd.testing.assert_frame_equal(a.pearson_ic, b.pearson_ic, atol=1e-12, rtol=0)
    pd.testing.assert_frame_equal(a.quantile[perm], b.quantile, check_exact=True)
    pd.testing.assert_frame_equal(a.fm_slopes, b.fm_slopes, atol=1e-12, rtol=0)
    pd.testing.assert_frame_equal(a.backtest.returns, b.backtest.returns, atol=1e-12, rtol=0)


def test_late_lister_and_delister_stay_in(panel) -> None:  # type: ignore[no-untyped-def]
    prices = panel.prices.copy()
    late, gone = prices.columns[:2]
    prices.iloc[:20, 0] = np.nan
    prices.iloc[30:, 1] = np.nan
    res = run_study(panel.with_(prices=prices), StudyConfig(horizons=(1, 3), min_breadth=5, delisting_return=-0.5))
    u = res.universe
    assert not u[late].iloc[:20].any() and u[late].iloc[20:].all()
    assert u[gone].iloc[:30].all() and not u[gone].iloc[30:].any()
    assert res.delisted.loc[prices.index[28], 3] == 1
    r3 = res.forward_returns[3].loc[prices.index[28], gone]
    expect = (1 + res.forward_returns[1].loc[prices.index[28], gone]) * 0.5 - 1  # last price at index 29
    assert r3 == pytest.approx(expect)


def test_min_breadth_and_constant_signal_dates_are_reported(panel) -> None:  # type: ignore[no-untyped-def]
    eps = panel.eps.copy()
    prices = panel.prices.copy()
    eps.iloc[10] = prices.iloc[10] * 0.05  # every name has the same earnings yield on date 10
    prices.iloc[15, 5:] = np.nan  # only five names on date 15
    res = run_study(panel.with_(eps=eps, prices=prices), StudyConfig(horizons=(1,), min_breadth=8))
    assert np.isnan(res.rank_ic.iloc[10, 0]) and np.isnan(res.pearson_ic.iloc[10, 0])
    assert np.isnan(res.rank_ic.iloc[15, 0]) and res.breadth.iloc[15, 0] == 5
    notes = res.date_notes
    assert ((notes["date"] == prices.index[10]) & (notes["stage"] == "signal")).any()
    assert ((notes["date"] == prices.index[15]) & (notes["stage"] == "ic")).any()
    # One minimum-breadth rule for every chart and table (issue 13): five names, enough for five quantiles but
    # below the minimum of 8, get no quantiles either, so no spread, slope or backtest cohort on that date.
    q15 = (notes["date"] == prices.index[15]) & (notes["stage"] == "quantiles")
    assert q15.sum() == 1 and "minimum per date (8)" in notes.loc[q15, "reason"].iloc[0]
    assert res.quantile.iloc[15].isna().all() and np.isnan(res.spread.iloc[15, 0])
    assert np.isnan(res.fm_slopes.iloc[15, 0])
    assert res.quantile.iloc[14].notna().sum() >= 8
    # Every date below the minimum: the study still runs, with nothing drawn from those dates.
    none = run_study(panel.with_(eps=eps, prices=prices), StudyConfig(horizons=(1,), min_breadth=10_000))
    assert none.quantile.isna().all().all() and none.spread.isna().all().all() and none.fm_slopes.isna().all().all()


@pytest.mark.parametrize(
    "kwargs",
    [
        {"signal": "dividend_yield"},
        {"signal": "book_to_price"},
        {"signal": "composite", "composite_of": ("earnings_yield", "book_to_price")},
        {"outlier_rule": "clip_robust_z", "zscore_method": "median_mad"},
        {"outlier_rule": "none", "sector_neutral": True, "small_sector_rule": "drop", "min_sector_size": 8},
        {"universe": "holdings", "n_quantiles": 2, "min_breadth": 5},
        {"universe": "sectors", "universe_sectors": ("Sector 1", "Sector 2")},
        {"excess_over": "benchmark", "comparison": "benchmark", "holding_months": 6},
        {"dividend_treatment": "uninvested", "fm_log_market_cap": True, "fm_sector_dummies": True},
        {"backtest_within_sectors": True, "n_quantiles": 2, "transaction_cost_bps": 25.0, "risk_free_annual": 0.02},
        {"n_quantiles": 10, "hac_lag_rule": "overlap", "reporting_lag_months": 3},
    ],
    ids=lambda k: ",".join(f"{a}={b}" for a, b in k.items()),
)
def test_study_variants_run(panel, kwargs: dict) -> None:  # type: ignore[no-untyped-def]
    cfg = StudyConfig(**{"horizons": (1, 3), "min_breadth": 5, **kwargs})
    res = run_study(panel, cfg)
    assert np.isfinite(res.ic_summary.loc[1, "mean_ic"])
    assert np.isfinite(res.spread_summary.loc[1, "mean"])
    assert json.dumps(summary_dict(res))


def test_excess_over_universe_keeps_ic_and_spread(panel) -> None:  # type: ignore[no-untyped-def]
    a = run_study(panel, StudyConfig(horizons=(1,), min_breadth=5))
    b = run_study(panel, StudyConfig(horizons=(1,), min_breadth=5, excess_over="universe"))
    pd.testing.assert_frame_equal(a.rank_ic, b.rank_ic, atol=1e-12, rtol=0)
    pd.testing.assert_frame_equal(a.spread, b.spread, atol=1e-12, rtol=0)
    assert abs(np.nanmean(b.quantile_returns[1].to_numpy()) - 0) < abs(np.nanmean(a.quantile_returns[1].to_numpy()))


def test_progress_is_reported(panel) -> None:  # type: ignore[no-untyped-def]
    seen: list[tuple[str, float]] = []
    run_study(panel, StudyConfig(horizons=(1,), min_breadth=5), progress=lambda s, f: seen.append((s, f)))
    fr = [f for _, f in seen]
    assert fr == sorted(fr) and fr[0] == 0.0 and seen[-1] == ("done", 1.0)


def test_rank_ic_unchanged_under_monotone_transform_of_user_signal(panel) -> None:  # type: ignore[no-untyped-def]
    # Spearman's rho depends only on ranks; order-statistic winsorising and z-scoring keep the order,
    # so an increasing transform of the signal leaves every rank IC and quantile unchanged.
    base = panel.signals[0]
    tr = type(base)(base.name, np.exp(2.0 * base.values) + 3.0, base.higher_is_cheaper)
    cfg = StudyConfig(signal=base.name, horizons=(1, 3), min_breadth=5)
    a = run_study(panel, cfg)
    b = run_study(panel.with_(signals=(tr,)), cfg)
    pd.testing.assert_frame_equal(a.rank_ic, b.rank_ic, atol=1e-12, rtol=0)
    pd.testing.assert_frame_equal(a.quantile, b.quantile, check_exact=True)


def test_result_frames_do_not_share_memory(panel) -> None:  # type: ignore[no-untyped-def]
    res = run_study(panel, StudyConfig(horizons=(1,), min_breadth=5))
    before = res.zscore.iloc[5, 3]
    sz = res.signal_z.copy()
    assert np.isfinite(before)
    assert not np.shares_memory(res.signal_z.to_numpy(), res.zscore.to_numpy())
    pd.testing.assert_frame_equal(sz, res.zscore)


def test_quantile_growth_compounds_monthly_quantile_returns(result: StudyResult) -> None:
    g = result.quantile_growth
    assert list(g.columns) == [1, 2, 3, 4, 5] and len(g) == len(result.signal_z) - 1
    # with no delistings, the 1-month forward return is the monthly return: compare quantile 5
    r1 = result.quantile_returns[1][5].to_numpy()[:-1]
    np.testing.assert_allclose(g[5].to_numpy(), np.cumprod(1 + np.nan_to_num(r1)), rtol=1e-12)


def test_degenerate_signal_without_spread() -> None:
    p = make_panel(n_dates=24, n_sec=20, seed=6)
    flat = p.with_(dividends=p.dividends.iloc[0:0])  # no events: every yield is 0
    with pytest.raises(InsufficientDataError, match="different signal values"):
        run_study(flat, StudyConfig(signal="dividend_yield", horizons=(1,)))


def test_headline_ic_t_is_hansen_hodrick_from_statsmodels(result: StudyResult) -> None:
    # Outside reference: statsmodels OLS on a constant with cov_type="HAC", use_correction=False; the
    # headline is the uniform (rectangular, Hansen & Hodrick 1980) kernel for h > 1 and Bartlett (Newey &
    # West 1987) for h = 1; the Bartlett figure is kept as the secondary column (REFERENCE_CHECKS 5, 17).
    import statsmodels.api as sm

    from valuesift.core.inference.hac import hac_lags

    def t_of(x: np.ndarray, lags: int, kernel: str) -> tuple[float, float]:
        fit = sm.OLS(x, np.ones_like(x)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "kernel": kernel,
                                                                      "use_correction": False})
        return float(fit.bse[0]), float(fit.tvalues[0])

    for h in (1, 3, 12):
        x = result.rank_ic[h].dropna().to_numpy()
        lags = hac_lags(h, x.size, "overlap_or_auto")
        row = result.ic_summary.loc[h]
        assert row["hac_lags"] == lags
        kernel = "uniform" if h > 1 else "bartlett"
        assert row["se_method"] == ("hansen_hodrick" if h > 1 else "newey_west")
        se, t = t_of(x, lags, kernel)
        assert row["mean_ic"] == pytest.approx(x.mean(), abs=1e-12)
        assert row["se_hac"] == pytest.approx(se, rel=1e-9)
        assert summary_dict(result)["horizons"][str(h)]["ic_t"] == pytest.approx(t, rel=1e-9)
        assert row["t_bartlett"] == pytest.approx(t_of(x, lags, "bartlett")[1], rel=1e-9)
        s = result.spread[h].dropna().to_numpy()
        assert result.spread_summary.loc[h, "t_hac"] == pytest.approx(t_of(s, hac_lags(h, s.size), kernel)[1],
                                                                      rel=1e-9)
        assert result.spread_summary.loc[h, "t_bartlett"] == pytest.approx(
            t_of(s, hac_lags(h, s.size), "bartlett")[1], rel=1e-9)


def test_backtest_stats_are_consistent_with_returns(result: StudyResult) -> None:
    from valuesift.core.portfolio.performance import max_drawdown, sharpe_ratio

    bt = result.backtest
    r = bt.returns["cheapest"].dropna().to_numpy()
    assert bt.stats.loc["cheapest", "sharpe"] == pytest.approx(sharpe_ratio(r, bt.risk_free_monthly))
    assert bt.stats.loc["cheapest", "max_drawdown"] == pytest.approx(max_drawdown(r))
    assert bt.stats.loc["cheapest", "ann_return"] == pytest.approx(np.prod(1 + r) ** (12 / r.size) - 1)
    assert bt.growth["cheapest"].iloc[-1] == pytest.approx(np.prod(1 + r))
    assert -bt.drawdown["cheapest"].min() == pytest.approx(max_drawdown(r))
