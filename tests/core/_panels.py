"""Invented test panels (random data; invented securities and sectors)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.panel import Panel, UserSignal


def make_panel(
    n_dates: int = 60,
    n_sec: int = 40,
    seed: int = 0,
    *,
    ic: float = 0.0,
    with_dividends: bool = True,
    with_sectors: bool = True,
    with_benchmark: bool = True,
    with_mcap: bool = False,
    with_user: bool = False,
) -> Panel:
    """A random monthly panel; ``ic`` plants a relation between earnings yield and next-month return."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2001-01-31", periods=n_dates, freq="ME", name="date")
    secs = [f"ZQX{i:02d}" for i in range(n_sec)]
    ey = rng.normal(0.06, 0.04, size=(n_dates, n_sec))
    noise = rng.normal(0.0, 0.06, size=(n_dates, n_sec))
    zey = (ey - ey.mean(axis=1, keepdims=True)) / ey.std(axis=1, keepdims=True)
    r = 0.005 + 0.06 * ic * zey + np.sqrt(max(1 - ic * ic, 0.0)) * noise  # return earned over the next month
    logp = np.zeros((n_dates, n_sec))
    logp[0] = np.log(rng.uniform(10, 100, n_sec))
    for t in range(1, n_dates):
        logp[t] = logp[t - 1] + np.log1p(np.clip(r[t - 1], -0.9, None))
    price = np.exp(logp)
    eps = ey * price
    prices = pd.DataFrame(price, index=dates, columns=secs)
    eps_f = pd.DataFrame(eps, index=dates, columns=secs)
    divs = None
    if with_dividends:
        rows = []
        for j in range(0, n_sec, 2):
            for t in range(2, n_dates, 3):
                rows.append((secs[j], dates[t] - pd.Timedelta(days=10), 0.002 * price[t, j]))
        divs = pd.DataFrame(rows, columns=["security", "ex_date", "amount"])
    sectors = pd.Series([f"Sector {i % 4}" for i in range(n_sec)], index=secs) if with_sectors else None
    bench = pd.Series(100 * np.cumprod(1 + rng.normal(0.005, 0.04, n_dates)), index=dates) if with_benchmark else None
    mcap = pd.DataFrame(price * rng.uniform(1e6, 1e8, n_sec), index=dates, columns=secs) if with_mcap else None
    sigs: tuple[UserSignal, ...] = ()
    if with_user:
        sigs = (UserSignal("book_to_price", pd.DataFrame(rng.normal(size=(n_dates, n_sec)), index=dates, columns=secs)),)
    holdings = pd.Series(1.0 / 10, index=secs[:10])
    return Panel(prices=prices, eps=eps_f, dividends=divs, sectors=sectors, holdings=holdings, benchmark=bench,
                 market_cap=mcap, signals=sigs)
