"""Invented price and EPS files for the robustness tests (seeded; codes QZ..., no real market)."""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["price_eps_files", "big_price_csv"]


def price_eps_files(seed: int, n_sec: int = 12, n_months: int = 48, prefix: str = "QZ") -> tuple[bytes, bytes]:
    """A wide month-end price file and a long EPS file (random walks; invented data)."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2016-01-31", periods=n_months, freq="ME")
    secs = [f"{prefix}{i:03d}" for i in range(n_sec)]
    rets = rng.normal(0.005, 0.06, size=(n_months, n_sec))
    prices = np.round(20.0 * np.exp(np.cumsum(rets, axis=0)), 4)
    eps = np.round(prices * rng.uniform(0.02, 0.12, size=(1, n_sec)), 4)
    p = pd.DataFrame(prices, index=dates.strftime("%Y-%m-%d"), columns=secs)
    p.index.name = "date"
    e = pd.DataFrame(eps, index=p.index, columns=secs).stack().rename("eps").reset_index()
    e.columns = ["date", "code", "eps"]
    return p.to_csv().encode(), e.to_csv(index=False).encode()


def big_price_csv(seed: int, n_sec: int = 200, n_days: int = 12_000) -> bytes:
    """A large daily wide price file (about 8 bytes a cell)."""
    rng = np.random.default_rng(seed)
    dates = pd.bdate_range("1980-01-01", periods=n_days).strftime("%Y-%m-%d")
    prices = np.round(50 * np.exp(np.cumsum(rng.normal(0, 0.01, size=(n_days, n_sec)), axis=0)), 3)
    body = "\n".join(d + "," + ",".join(map(str, row)) for d, row in zip(dates, prices.tolist()))
    head = "date," + ",".join(f"QB{i:04d}" for i in range(n_sec))
    return (head + "\n" + body + "\n").encode()
