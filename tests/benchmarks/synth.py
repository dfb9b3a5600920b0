"""Deterministic synthetic data for the benchmark suite (invented securities ``SYN0001``...).

Two kinds of data:

* :func:`monthly_panel` - a :class:`core.panel.Panel` on month-ends, built in
  memory (the engine's input), with late listings, delistings, scattered
  missing prices, quarterly dividends, EPS, sectors, a benchmark and holdings.
* :func:`daily_files` - daily files written to a temporary folder (the intake's
  input): prices and EPS in long CSV, long Parquet and wide Parquet, and a
  dividends file.  They are cached between runs, keyed by size and seed.

Every random number comes from ``np.random.default_rng(seed)``; nothing here is
market data.
"""

from __future__ import annotations

import json
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from valuesift.core.panel import Panel

__all__ = ["Size", "SIZES", "GROWTH_SIZES", "monthly_panel", "daily_files", "DailyFiles", "monthly_files", "MonthlyFiles",
           "cache_root"]


@dataclass(frozen=True)
class Size:
    """A benchmark size: ``n`` securities x ``t`` periods (months, or trading days when ``daily``)."""

    name: str
    n: int
    t: int
    daily: bool = False

    @property
    def cells(self) -> int:
        return self.n * self.t


#: The sizes of the issue; ``I1`` and ``I2`` are the intermediate sizes of the growth fit.
SIZES: dict[str, Size] = {
    "S": Size("S", 30, 144),
    "M": Size("M", 500, 360),
    "I1": Size("I1", 1000, 240),
    "I2": Size("I2", 2000, 300),
    "L": Size("L", 3000, 360),
    "XL": Size("XL", 3000, 7560, daily=True),
}
#: Sizes of the growth fit (time and memory against N x T).
GROWTH_SIZES: tuple[str, ...] = ("S", "M", "I1", "I2", "L")


def _codes(n: int) -> list[str]:
    return [f"SYN{i + 1:04d}" for i in range(n)]


def _life(rng: np.random.Generator, n: int, t: int) -> tuple[np.ndarray, np.ndarray]:
    """First and last live period: 15 % list late, 10 % delist before the end."""
    first = np.zeros(n, dtype=int)
    last = np.full(n, t - 1, dtype=int)
    late = rng.random(n) < 0.15
    first[late] = rng.integers(1, max(t // 2, 2), late.sum())
    gone = rng.random(n) < 0.10
    last[gone] = rng.integers(t // 2, t - 1, gone.sum())
    last = np.maximum(last, first + 1)
    return first, np.minimum(last, t - 1)


def monthly_panel(n: int, t: int, seed: int = 0) -> Panel:
    """A month-end panel of ``n`` invented securities over ``t`` months.

    Prices follow a random walk whose next-month return loads weakly on the
    earnings yield (so the signal has an IC of a few per cent); 2 % of prices
    are missing at random; every second name pays a quarterly dividend.
    """
    rng = np.random.default_rng(seed)
    dates = pd.date_range("1995-01-31", periods=t, freq="ME", name="date")
    secs = _codes(n)
    ey = rng.normal(0.06, 0.04, size=(t, n))
    zey = (ey - ey.mean(axis=1, keepdims=True)) / ey.std(axis=1, keepdims=True)
    r = 0.006 + 0.003 * zey + rng.normal(0.0, 0.07, size=(t, n))
    logp = np.log(rng.uniform(5, 200, n))[None, :] + np.cumsum(np.log1p(np.clip(r, -0.8, None)), axis=0)
    price = np.exp(logp)
    first, last = _life(rng, n, t)
    rows = np.arange(t)[:, None]
    dead = (rows < first[None, :]) | (rows > last[None, :]) | (rng.random((t, n)) < 0.02)
    price = np.where(dead, np.nan, price)
    eps = np.where(dead, np.nan, ey * price)
    payers = np.flatnonzero(np.arange(n) % 2 == 0)
    months = np.arange(2, t, 3)
    sec_idx, mon_idx = np.meshgrid(payers, months, indexing="ij")
    sec_idx, mon_idx = sec_idx.ravel(), mon_idx.ravel()
    amount = 0.004 * np.nan_to_num(price[mon_idx, sec_idx], nan=0.0)
    keep = amount > 0
    divs = pd.DataFrame({
        "security": np.asarray(secs, dtype=object)[sec_idx[keep]],
        "ex_date": dates[mon_idx[keep]] - pd.Timedelta(days=12),
        "amount": amount[keep],
    }).sort_values(["security", "ex_date"], ignore_index=True)
    sectors = pd.Series([f"Sector {i % 10}" for i in range(n)], index=secs, name="sector")
    bench = pd.Series(100 * np.cumprod(1 + rng.normal(0.006, 0.045, t)), index=dates, name="benchmark")
    hold = pd.Series(1.0 / min(n, 40), index=secs[: min(n, 40)], name="weight")
    return Panel(
        prices=pd.DataFrame(price, index=dates, columns=pd.Index(secs, name="security")),
        eps=pd.DataFrame(eps, index=dates, columns=pd.Index(secs, name="security")),
        dividends=divs,
        sectors=sectors,
        holdings=hold,
        benchmark=bench,
    )


# -- daily files for intake ------------------------------------------------------------------


@dataclass(frozen=True)
class DailyFiles:
    """Paths of one cached daily data set and its shape."""

    folder: Path
    n: int
    t: int
    prices_long_csv: Path
    eps_long_csv: Path
    prices_long_parquet: Path
    eps_long_parquet: Path
    prices_wide_parquet: Path
    dividends_csv: Path
    price_cells: int
    eps_cells: int
    dividend_events: int


def cache_root() -> Path:
    """Temporary folder for generated files (``VALUESIFT_BENCH_CACHE`` overrides; never committed)."""
    root = os.environ.get("VALUESIFT_BENCH_CACHE") or os.path.join(tempfile.gettempdir(), "valuesift-bench")
    p = Path(root)
    p.mkdir(parents=True, exist_ok=True)
    return p


def _business_days(t: int) -> pd.DatetimeIndex:
    return pd.bdate_range("1996-01-02", periods=t, name="date")


def daily_files(n: int, t: int, seed: int = 1, *, eps_every: int = 21) -> DailyFiles:
    """Write (or reuse) daily prices, EPS and dividends of ``n`` securities over ``t`` trading days.

    Prices are daily; EPS is stamped every ``eps_every`` trading days (a
    trailing-twelve-month figure as an export would repeat it); dividends are
    quarterly events for every second name.
    """
    folder = cache_root() / f"daily_{n}x{t}_s{seed}_e{eps_every}"
    done = folder / "done.json"
    names = {
        "prices_long_csv": "prices_daily_long.csv",
        "eps_long_csv": "eps_daily_long.csv",
        "prices_long_parquet": "prices_daily_long.parquet",
        "eps_long_parquet": "eps_daily_long.parquet",
        "prices_wide_parquet": "prices_daily_wide.parquet",
        "dividends_csv": "dividends.csv",
    }
    if not done.exists():
        folder.mkdir(parents=True, exist_ok=True)
        meta = _write_daily(folder, names, n, t, seed, eps_every)
        done.write_text(json.dumps(meta))
    meta = json.loads(done.read_text())
    return DailyFiles(folder=folder, n=n, t=t, **{k: folder / v for k, v in names.items()}, **meta)


def _write_daily(folder: Path, names: dict[str, str], n: int, t: int, seed: int, eps_every: int) -> dict[str, int]:
    import pyarrow as pa
    import pyarrow.csv as pacsv
    import pyarrow.parquet as pq

    rng = np.random.default_rng(seed)
    dates = _business_days(t)
    secs = np.asarray(_codes(n), dtype=object)
    first, last = _life(rng, n, t)
    price = np.empty((t, n))
    step = 20_000  # rows per block: keeps generation memory small
    level = np.log(rng.uniform(5, 200, n))
    for a in range(0, t, step):
        b = min(a + step, t)
        level = level + np.cumsum(rng.normal(0.0003, 0.018, size=(b - a, n)), axis=0)
        price[a:b] = np.round(np.exp(level), 4)
        level = level[-1]
    rows = np.arange(t)[:, None]
    dead = (rows < first[None, :]) | (rows > last[None, :]) | (rng.random((t, n)) < 0.01)
    price[dead] = np.nan
    eps_rows = np.arange(0, t, eps_every)
    eps = np.round(rng.normal(0.06, 0.04, size=(eps_rows.size, n)) * np.nan_to_num(price[eps_rows], nan=50.0), 4)
    eps[dead[eps_rows]] = np.nan

    def long_table(values: np.ndarray, when: pd.DatetimeIndex) -> pa.Table:
        ok = np.isfinite(values)
        ti, si = np.nonzero(ok)
        return pa.table({
            "date": pa.array(when.to_numpy()[ti]).cast(pa.date32()),
            "security": pa.array(secs[si], type=pa.string()),
            "value": pa.array(values[ti, si], type=pa.float64()),
        })

    pt = long_table(price, dates)
    et = long_table(eps, dates[eps_rows])
    pacsv.write_csv(pt, folder / names["prices_long_csv"])
    pacsv.write_csv(et, folder / names["eps_long_csv"])
    pq.write_table(pt, folder / names["prices_long_parquet"])
    pq.write_table(et, folder / names["eps_long_parquet"])
    wide = {"date": pa.array(dates.to_numpy()).cast(pa.date32())}
    wide.update({str(s): pa.array(price[:, j], type=pa.float64()) for j, s in enumerate(secs)})
    pq.write_table(pa.table(wide), folder / names["prices_wide_parquet"])
    q_rows = np.arange(40, t, 63)
    payers = np.flatnonzero(np.arange(n) % 2 == 0)
    si, ti = np.meshgrid(payers, q_rows, indexing="ij")
    si, ti = si.ravel(), ti.ravel()
    amt = np.round(0.004 * price[ti, si], 4)
    ok = np.isfinite(amt)
    divs = pd.DataFrame({"security": secs[si[ok]], "ex_date": dates[ti[ok]].strftime("%Y-%m-%d"), "amount": amt[ok]})
    divs.to_csv(folder / names["dividends_csv"], index=False)
    return {"price_cells": int(pt.num_rows), "eps_cells": int(et.num_rows), "dividend_events": int(ok.sum())}


# -- monthly files for the whole-process study ---------------------------------------------------


@dataclass(frozen=True)
class MonthlyFiles:
    """Paths of one cached monthly prices + EPS pair, wide (a ``date`` column, one column per security)."""

    folder: Path
    n: int
    t: int
    prices_parquet: Path
    eps_parquet: Path
    prices_csv: Path
    eps_csv: Path


def monthly_files(n: int, t: int, seed: int = 0) -> MonthlyFiles:
    """Write (or reuse) :func:`monthly_panel`'s prices and EPS as wide Parquet and wide CSV files."""
    folder = cache_root() / f"monthly_{n}x{t}_s{seed}"
    names = {"prices_parquet": "prices.parquet", "eps_parquet": "earnings.parquet",
             "prices_csv": "prices.csv", "eps_csv": "earnings.csv"}
    done = folder / "done.json"
    if not done.exists():
        folder.mkdir(parents=True, exist_ok=True)
        panel = monthly_panel(n, t, seed=seed)
        for key, frame in (("prices", panel.prices), ("eps", panel.eps)):
            wide = frame.copy()
            wide.columns = [str(c) for c in wide.columns]
            wide.index = pd.Index(wide.index.strftime("%Y-%m-%d"), name="date")
            wide = wide.reset_index()
            wide.to_parquet(folder / names[f"{key}_parquet"], index=False)
            wide.to_csv(folder / names[f"{key}_csv"], index=False)
        done.write_text(json.dumps({"n": n, "t": t}))
    return MonthlyFiles(folder=folder, n=n, t=t, **{k: folder / v for k, v in names.items()})
