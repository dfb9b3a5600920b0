"""Sweeps judged out of sample: repeated configurations counted once, spread and Sharpe t adjusted, Sharpe varying
by horizon, the hold-out split by hand, the deflated Sharpe ratio of the best (Bailey & López de Prado 2014)."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from valuesift.core.multiple_testing.adjust import adjust_pvalues, two_sided_p
from valuesift.core.multiple_testing.deflated import expected_max_sharpe, psr_from_moments
from valuesift.core.errors import ConfigError
from valuesift.core.stability.subsets import subset_block
from valuesift.core.study import run_study
from valuesift.core.config import StudyConfig
from valuesift.core.sweep import parse_grid, run_sweep
from valuesift.core.sweep.selection import deflated_best, holdout_report, holdout_sentence

sys.path.insert(0, str(Path(__file__).parents[1]))  # tests/core: the invented panels
from _panels import make_panel  # noqa: E402


@pytest.fixture(scope="module")
def panel():
    return make_panel(72, 30, seed=2, ic=0.2)


def _grid(extra: dict | None = None):
    vary = {"signal": ["earnings_yield", "dividend_yield", "earnings_yield"], "horizons": [1, 3]}
    return parse_grid({"sweep": {"name": "t"}, "study": {"min_breadth": 5}, "vary": {**vary, **(extra or {})}})


@pytest.fixture(scope="module")
def swept(panel):
    return run_sweep(panel, _grid(), holdout="2004-01")


def test_identical_configurations_are_counted_once(swept) -> None:
    assert swept.n_points == 2 and swept.duplicates == 1
    assert len(swept.table) == 4
    assert "2 study configurations were tried (distinct ones; 1 repeated" in swept.statement


def test_spread_and_sharpe_are_adjusted_like_the_ic(swept) -> None:
    t = swept.table
    for stat in ("spread", "sharpe"):
        p = two_sided_p(t[f"{stat}_t"].to_numpy(dtype=float))
        bh, _ = adjust_pvalues(p)  # Benjamini-Hochberg (1995), the project's own tested adjustment
        assert np.allclose(t[f"{stat}_p_bh"].to_numpy(dtype=float), bh, equal_nan=True)
    assert t.groupby("point_id")["sharpe"].nunique().min() == 2  # varies by horizon (held h months)


def test_holdout_split_equals_the_study_on_the_two_sets_of_dates(panel, swept) -> None:
    cfg = StudyConfig(signal="earnings_yield", horizons=(1, 3), min_breadth=5)
    res = run_study(panel, cfg)
    dates = res.rank_ic.index
    start = pd.Timestamp("2004-01-01")
    row = swept.table[(swept.table["signal"] == "earnings_yield") & (swept.table["horizon"] == 3)].iloc[0]
    ic = res.rank_ic[3].to_numpy(dtype=float)
    ins = np.array([i + 3 < len(dates) and dates[i + 3] < start for i in range(len(dates))])
    assert row["ic_t"] == pytest.approx(subset_block(ic, ins, 3, cfg.hac_lag_rule)["t"], rel=1e-12)
    assert row["oos_ic_t"] == pytest.approx(subset_block(ic, np.asarray(dates >= start), 3, cfg.hac_lag_rule)["t"],
                                            rel=1e-12)
    assert row["n_dates"] + row["oos_n_dates"] < res.ic_summary.at[3, "n_dates"]  # the seam's windows are left out


def test_holdout_report_and_sentence(swept) -> None:
    rep = holdout_report(swept.table, swept.dimensions)
    assert rep.iloc[0]["rank_in"] == 1 and rep.iloc[0]["ic_t"] == swept.table["ic_t"].max()
    text = holdout_sentence(rep, "2004-01", len(rep))
    assert "flattered" in text and "Harvey, Liu & Zhu 2016" in text and "hold-out from 2004-01" in text


def test_deflated_sharpe_of_the_best_row(swept) -> None:
    d = deflated_best(swept.table)
    t = swept.table
    sr = t["sr_monthly"].to_numpy(dtype=float)
    b = t.iloc[int(np.nanargmax(sr))]
    star = expected_max_sharpe(4, float(np.var(sr, ddof=1)))  # case 20's formula, N = distinct trials
    assert d["n_trials"] == 4 and d["sr_star_monthly"] == pytest.approx(star)
    assert d["dsr"] == pytest.approx(psr_from_moments(b["sr_monthly"], b["skew"], b["kurtosis"], int(b["n_months"]),
                                                      star))
    assert d["dsr"] <= d["psr"]


def test_a_bad_holdout_month_is_refused(panel) -> None:
    with pytest.raises(ConfigError, match="YYYY-MM"):
        run_sweep(panel, _grid(), holdout="2004/01")


@pytest.mark.parametrize("month, words", [("1990-01", "no month before it"), ("2099-01", "after the last month")])
def test_a_holdout_outside_the_data_is_refused_naming_the_data_span(panel, month, words) -> None:
    """A hold-out that leaves no in-sample or no hold-out month would judge nothing: refused in words."""
    first, last = panel.dates.min(), panel.dates.max()
    with pytest.raises(ConfigError, match=words) as err:
        run_sweep(panel, _grid(), holdout=month)
    assert f"{first:%Y-%m} to {last:%Y-%m}" in str(err.value) and err.value.setting == "holdout"
