"""Fixtures of the dashboard tests: a small constructed panel and its study (invented data)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.core.panel import Panel
from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study


def make_panel(seed: int = 7, n_sec: int = 40, n_months: int = 72) -> Panel:
    """An invented market: random-walk prices, EPS linked to price, 4 sectors, 12 holdings."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2015-01-31", periods=n_months, freq="ME", name="date")
    secs = [f"QZX{i:02d}" for i in range(n_sec)]
    cheap = rng.normal(size=n_sec)
    # Monthly returns with a small reward for cheapness (invented, for tests only).
    rets = 0.004 + 0.004 * cheap[None, :] + rng.normal(scale=0.06, size=(n_months, n_sec))
    prices = 20.0 * np.exp(np.cumsum(rets, axis=0))
    ey = 0.06 + 0.02 * cheap[None, :] + rng.normal(scale=0.005, size=(n_months, n_sec))
    eps = prices * ey
    eps[:, 3] = -np.abs(eps[:, 3])           # one loss-maker
    prices[:12, 5] = np.nan                  # one late listing
    p = pd.DataFrame(prices, index=dates, columns=pd.Index(secs, name="security"))
    e = pd.DataFrame(eps, index=dates, columns=p.columns)
    sectors = pd.Series([["Mills", "Ports", "Farms", "Looms"][i % 4] for i in range(n_sec)], index=secs, name="sector")
    holdings = pd.Series(np.full(12, 1 / 12), index=secs[:12], name="weight")
    bench = pd.Series(100 * np.exp(np.cumsum(rets.mean(axis=1))), index=dates, name="benchmark")
    divs = pd.DataFrame({"security": [secs[0], secs[0], secs[1]],
                         "ex_date": pd.to_datetime(["2016-03-15", "2017-03-15", "2016-06-10"]),
                         "amount": [0.5, 0.55, 0.3]})
    return Panel(prices=p, eps=e, dividends=divs, sectors=sectors, holdings=holdings, benchmark=bench)


@pytest.fixture(scope="session")
def small_panel() -> Panel:
    return make_panel()


@pytest.fixture(scope="session")
def small_result(small_panel: Panel):  # type: ignore[no-untyped-def]
    return run_study(small_panel, StudyConfig(horizons=(1, 3, 12), min_breadth=5, n_quantiles=4))


@pytest.fixture(scope="session")
def demo_dir(tmp_path_factory: pytest.TempPathFactory):  # type: ignore[no-untyped-def]
    """The invented demo universe written once per test session."""
    from valuesift.core.demo import write_demo

    out = tmp_path_factory.mktemp("demo")
    write_demo(out)
    return out
