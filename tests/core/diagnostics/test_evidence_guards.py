"""Study-level guards of the evidence: orientation flip, look-ahead alarms, too-short horizons, P/E trap.

Invented panels only (tests/core/engine/_panels.py and the invented demo universe); the properties are
the project's own rules (issue: evidence that never overstates), each stated beside its test.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from _panels import make_panel  # noqa: E402

from valuesift.core.errors import ConfigError  # noqa: E402
from valuesift.core.panel import UserSignal  # noqa: E402
from valuesift.core.reporting.summary import summary_dict  # noqa: E402
from valuesift.core.study import StudyConfig, run_study  # noqa: E402


def _codes(res) -> list[str]:  # type: ignore[no-untyped-def]
    return [w["code"] for w in res.warnings]


@settings(max_examples=12, deadline=None)
@given(seed=st.integers(0, 5000), n_sec=st.integers(11, 61), n_q=st.integers(2, 10))
def test_studying_minus_x_gives_exactly_minus_the_spread(seed: int, n_sec: int, n_q: int) -> None:
    # Property: the quantile split mirrors, so flipping the signal flips the spread's sign and nothing else.
    p = make_panel(n_dates=30, n_sec=n_sec, seed=seed, with_dividends=False)
    x = pd.DataFrame(np.random.default_rng(seed).normal(size=p.prices.shape), index=p.prices.index,
                     columns=p.prices.columns)
    p = p.with_(signals=(UserSignal("x", x), UserSignal("minus_x", -x)))
    cfg = dict(horizons=(1, 3), n_quantiles=n_q, min_breadth=2, outlier_rule="none")
    a = run_study(p, StudyConfig(signal="x", **cfg))
    b = run_study(p, StudyConfig(signal="minus_x", **cfg))
    np.testing.assert_allclose(b.spread.to_numpy(), -a.spread.to_numpy(), rtol=0, atol=1e-15, equal_nan=True)
    counts = a.quantile_counts.to_numpy()
    np.testing.assert_array_equal(counts, counts[:, ::-1])  # remainders placed symmetrically


def test_a_signal_built_from_future_returns_is_called_out() -> None:
    p = make_panel(n_dates=80, n_sec=40, seed=11)
    leak = p.prices.shift(-1) / p.prices - 1.0  # next month's return, dated today
    res = run_study(p.with_(signals=(UserSignal("leak", leak),)), StudyConfig(signal="leak", horizons=(1, 3)))
    assert "possible_lookahead" in _codes(res) and "implausible_ic" in _codes(res)
    s = summary_dict(res)
    assert {w["code"] for w in s["warnings"]} >= {"possible_lookahead", "implausible_ic"}
    assert all(w["message"] and "_" not in w["message"].split(".")[0] for w in s["warnings"])


@pytest.fixture(scope="module")
def demo_panel():  # type: ignore[no-untyped-def]
    from valuesift.app.cli import build_parser
    from valuesift.app.cli_study import load_study_panel

    sample = Path(__file__).resolve().parents[3] / "sample_data"
    args = build_parser().parse_args(
        ["study", *[a for k in ("prices", "earnings", "dividends", "sectors", "holdings", "benchmark")
                    for a in (f"--{k}", str(sample / f"{k}.csv"))],
         "--exclude", "Maren All-Share", "--confirm-split", "LUD24", "--out", "unused"])
    return load_study_panel(args)[0]


@pytest.mark.parametrize("months", [1, 3])
def test_eps_taken_from_later_months_is_called_out_and_the_clean_demo_is_silent(demo_panel, months: int) -> None:  # type: ignore[no-untyped-def]
    clean = run_study(demo_panel, StudyConfig(horizons=(1, 3)))
    assert "possible_lookahead" not in _codes(clean) and "implausible_ic" not in _codes(clean)
    # EPS whose values come from `months` after their dates, under a neutral date column
    res = run_study(demo_panel.with_(eps=demo_panel.eps.shift(-months)), StudyConfig(horizons=(1, 3)))
    assert "possible_lookahead" in _codes(res)
    tab = res.ic_by_delay
    assert list(tab.columns) == ["delay_months", "horizon", "mean_ic", "ic_t", "n_dates"]
    assert sorted(tab["delay_months"].unique()) == [0, 1, 2, 3]


def test_a_short_history_never_gets_a_verdict() -> None:
    # 60 months of prices, h = 24: about 1.5 independent periods; numbers shown, no verdict word.
    p = make_panel(n_dates=60, n_sec=40, seed=2, ic=0.3)
    res = run_study(p, StudyConfig(horizons=(1, 24)))
    s = summary_dict(res)["24"]
    assert s["too_short"] is True and s["evidence"] == "too_short" and s["independent_periods"] < 10
    assert "too_short_history" in _codes(res)
    assert res.spread_summary.loc[24, "evidence"] == "too_short"


def test_pe_lower_is_cheaper_never_ranks_loss_makers_cheapest() -> None:
    p = make_panel(n_dates=40, n_sec=30, seed=9)
    eps = p.eps.copy()
    eps.iloc[:, :5] = -eps.iloc[:, :5].abs()  # five loss-makers
    pe = p.prices / eps
    p = p.with_(eps=eps, signals=(UserSignal("pe", pe, higher_is_cheaper=False),))
    aside = run_study(p, StudyConfig(signal="pe", horizons=(1,)))
    q = aside.quantile.iloc[-2]
    assert q.iloc[:5].isna().all()  # negative P/E: set aside, never in the cheapest quantile
    assert "nonpositive_set_aside" in _codes(aside)
    flags = aside.screen["flags"].iloc[:0]  # the screen flags them (codes; the app words them)
    flagged = aside.screen.loc[list(p.prices.columns[:5]), "flags"]
    assert all("signal_not_meaningful" in f for f in flagged), flags
    assert any("set aside" in n for n in aside.notes)
    recip = run_study(p, StudyConfig(signal="pe", horizons=(1,), nonpositive_lower_is_cheaper="reciprocal"))
    assert (recip.quantile.iloc[-2].iloc[:5] == 1).all()  # E/P keeps them, ranked dearest
    assert any("reciprocal" in n for n in recip.notes)
    with pytest.raises(ConfigError) as err:
        run_study(p.with_(signals=(UserSignal("pe", -pe.abs(), higher_is_cheaper=False),)),
                  StudyConfig(signal="pe", horizons=(1,)))
    assert err.value.setting == "signal" and "no value above 0" in str(err.value)


def test_all_negative_earnings_and_survivors_only_are_warned() -> None:
    p = make_panel(n_dates=40, n_sec=30, seed=4)
    res = run_study(p.with_(eps=-p.eps.abs()), StudyConfig(horizons=(1,)))
    assert "all_negative_earnings" in _codes(res)
    assert "survivors_only" in _codes(res)  # every invented name lives through the whole history


def test_long_short_hit_rate_is_against_zero() -> None:
    # Hit rate (REFERENCE_CHECKS case 11, common practice): share of months strictly above; the long-short is a
    # self-financing portfolio, so it is measured against zero, and the output says so.
    res = run_study(make_panel(n_dates=60, n_sec=40, seed=1, ic=0.2), StudyConfig(horizons=(1,)))
    ls = res.backtest.returns["long_short"].dropna().to_numpy()
    assert res.backtest.stats.loc["long_short", "hit_rate"] == pytest.approx(float(np.mean(ls > 0)), abs=1e-15)
    assert res.backtest.hit_rate_against["long_short"] == "zero"
    assert summary_dict(res)["backtest"]["portfolios"]["cheapest"]["hit_rate_against"] == "universe"
