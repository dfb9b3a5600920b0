"""Fixtures shared by the sweep tests of the core and of the app: a small invented panel and a 2-worker Dask
cluster on this machine (imported by tests/core/sweep/conftest.py and tests/app/pages/conftest.py)."""

from __future__ import annotations

from typing import Iterator

import numpy as np
import pandas as pd
import pytest

from valuesift.core.panel import Panel


def make_panel(seed: int = 11, n_sec: int = 36, n_months: int = 60) -> Panel:
    """An invented market (tests only): random-walk prices with a small reward for cheapness, 3 sectors."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2014-01-31", periods=n_months, freq="ME", name="date")
    secs = pd.Index([f"WQV{i:02d}" for i in range(n_sec)], name="security")
    cheap = rng.normal(size=n_sec)
    rets = 0.003 + 0.003 * cheap[None, :] + rng.normal(scale=0.06, size=(n_months, n_sec))
    prices = 15.0 * np.exp(np.cumsum(rets, axis=0))
    prices[:8, 4] = np.nan                                   # a late listing
    prices[50:, 7] = np.nan                                  # a delisting
    eps = prices * (0.07 + 0.02 * cheap[None, :] + rng.normal(scale=0.006, size=(n_months, n_sec)))
    p = pd.DataFrame(prices, index=dates, columns=secs)
    sectors = pd.Series([["Kilns", "Quays", "Orchards"][i % 3] for i in range(n_sec)], index=secs, name="sector")
    holdings = pd.Series(np.full(10, 0.1), index=secs[:10], name="weight")
    divs = pd.DataFrame({"security": [secs[i] for i in range(0, n_sec, 2) for _ in range(4)],
                         "ex_date": pd.to_datetime([f"{2015 + k}-05-15" for _ in range(0, n_sec, 2) for k in range(4)]),
                         "amount": rng.uniform(0.2, 0.6, size=4 * len(range(0, n_sec, 2)))})
    bench = pd.Series(100 * np.exp(np.cumsum(rets.mean(axis=1))), index=dates, name="benchmark")
    return Panel(prices=p, eps=pd.DataFrame(eps, index=dates, columns=secs), dividends=divs, sectors=sectors,
                 holdings=holdings, benchmark=bench)


@pytest.fixture(scope="session")
def panel() -> Panel:
    return make_panel()


@pytest.fixture(scope="module")
def client() -> Iterator[object]:
    """A LocalCluster of 2 single-threaded workers in this process (no network port, no dashboard)."""
    distributed = pytest.importorskip("distributed", reason="the cluster extra (dask, distributed) is not installed")
    import logging

    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=None,
                                  silence_logs=logging.WARNING) as cluster, distributed.Client(cluster) as c:
        yield c
