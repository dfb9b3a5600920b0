"""The comparison: each signal's numbers equal its own study; the signal correlation against scipy; the joint
regression against linearmodels."""

from __future__ import annotations


import numpy as np
import pandas as pd
import pytest
from linearmodels import FamaMacBeth
from scipy import stats

from valuesift.core.compare import run_compare, signal_correlation
from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError
from valuesift.core.study import run_study

from _panels import make_panel  # noqa: E402  (tests/core/conftest.py puts tests/core on the path)


@pytest.fixture(scope="module")
def panel():
    return make_panel(60, 40, seed=5, ic=0.2, with_user=True)


@pytest.fixture(scope="module")
def cmp(panel):
    sigs = ["earnings_yield", "dividend_yield", panel.signals[0].name, "composite"]
    return run_compare(panel, sigs, StudyConfig(horizons=(1, 3), holding_months=1))


def test_numbers_equal_each_signals_own_study(panel, cmp) -> None:
    for s in cmp.signals:
        own = run_study(panel, StudyConfig(signal=s, horizons=(1, 3), holding_months=1))
        rows = cmp.table[cmp.table["signal"] == s].set_index("horizon")
        for h in (1, 3):
            assert rows.at[h, "mean_ic"] == own.ic_summary.at[h, "mean_ic"]
            assert rows.at[h, "ic_t"] == own.ic_summary.at[h, "t_hac"]
            assert rows.at[h, "spread"] == own.spread_summary.at[h, "mean"]
            assert rows.at[h, "n_dates"] == own.ic_summary.at[h, "n_dates"]
        assert rows.at[1, "sharpe"] == own.backtest.stats.at["cheapest", "sharpe"]  # holding 1 = the study's own


def test_sharpe_varies_by_horizon_through_the_holding_period(cmp) -> None:
    ey = cmp.table[cmp.table["signal"] == "earnings_yield"]
    assert ey["holding_months"].tolist() == [1, 3] and ey["sharpe"].nunique() == 2


def test_correlation_is_the_time_mean_of_scipy_spearman() -> None:
    rng = np.random.default_rng(1)
    a = rng.normal(size=(8, 15))
    b = 0.5 * a + rng.normal(size=a.shape)
    b[0, :4] = np.nan
    corr, n = signal_correlation({"a": a, "b": b})
    want = np.mean([stats.spearmanr(a[t][np.isfinite(b[t])], b[t][np.isfinite(b[t])]).statistic for t in range(8)])
    assert corr.at["a", "b"] == pytest.approx(want, abs=1e-12) and corr.at["b", "a"] == corr.at["a", "b"]
    assert n.at["a", "b"] == 8 and corr.at["a", "a"] == 1.0


def test_composite_left_out_of_the_joint_regression(cmp) -> None:
    assert cmp.joint_left_out == ("composite",)
    assert "composite" not in set(cmp.joint_fm["signal"])
    assert any("composite" in n for n in cmp.notes)


def test_joint_regression_matches_linearmodels(panel, cmp) -> None:
    names = [s for s in cmp.signals if s != "composite"]
    zs = {s: run_study(panel, StudyConfig(signal=s, horizons=(1, 3))) for s in names}
    y = zs[names[0]].forward_returns[1]
    df = pd.DataFrame({"y": y.stack(future_stack=True)})
    for s in names:
        df[s] = zs[s].signal_z.reindex_like(y).stack(future_stack=True)
    df = df.dropna()
    df.index = df.index.swaplevel().set_names(["entity", "date"])
    df = df.sort_index()
    df["const"] = 1.0
    ref = FamaMacBeth(df["y"], df[["const", *names]]).fit()  # linearmodels 7.1
    got = cmp.joint_fm[cmp.joint_fm["horizon"] == 1].set_index("signal")
    for s in names:
        assert got.at[s, "mean_slope"] == pytest.approx(ref.params[s], abs=1e-10)


@pytest.mark.parametrize("sigs, match", [(["earnings_yield"], "2 to 8"), (["earnings_yield"] * 2, "twice"),
                                         (["earnings_yield", "price_to_sales"], "Unknown signal")])
def test_bad_signal_lists_are_refused(panel, sigs, match) -> None:
    with pytest.raises(ConfigError, match=match):
        run_compare(panel, sigs)


def test_an_entry_with_the_same_z_scores_stays_out_of_the_joint_regression(panel) -> None:
    from valuesift.core.compare import compare_results

    a = run_study(panel, StudyConfig(horizons=(1,)))
    b = run_study(panel, StudyConfig(signal="dividend_yield", horizons=(1,)))
    cmp = compare_results(panel, {"earnings_yield": a, "dividend_yield": b, "saved: same": a})
    assert "saved: same" in cmp.joint_left_out and set(cmp.joint_fm["signal"]) == {"earnings_yield", "dividend_yield"}
    assert np.isfinite(cmp.joint_fm["mean_slope"]).all()
    assert cmp.correlation.at["earnings_yield", "saved: same"] == pytest.approx(1.0)
