"""Monthly rebalanced, equal-weight portfolios with overlapping cohorts."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from valuesift.core.inference.sharpe import sharpe_ratio_t
from valuesift.core.portfolio.performance import hit_rate, max_drawdown, sharpe_ratio

__all__ = ["BacktestResult", "run_backtest"]


@dataclass(frozen=True)
class BacktestResult:
    """Backtest outcome.  Axes: ``D`` month-end dates, ``S`` securities.

    Portfolio columns: ``"cheapest"`` (long-only, highest-signal quantile),
    ``"long_short"`` (cheapest minus dearest quantile), ``"universe"``
    (equal-weight universe) and ``"benchmark"`` (only with a benchmark).
    Returns are decimal monthly fractions dated at the *end* of the month they
    are earned in; costs are deducted from ``returns`` (not ``gross_returns``).

    Attributes
    ----------
    returns, gross_returns : DataFrame (D x portfolios)
        Net and gross monthly returns.
    growth : DataFrame (D x portfolios)
        Cumulative growth of 1.0 from net returns.
    drawdown : DataFrame (D x portfolios)
        ``wealth / running peak - 1`` (the starting wealth 1.0 counts as a peak).
    weights_cheapest, weights_long_short : DataFrame (D x S)
        Portfolio weights decided at each date (long minus short for long-short).
    turnover : DataFrame (D x ["cheapest", "long_short"])
        One-way turnover ``0.5 * sum |w_t - w_{t-1}|`` at each rebalance.
    stats : DataFrame (portfolios x statistics)
        ``ann_return, ann_vol, sharpe, max_drawdown, hit_rate, n_months``.
    cohorts : DataFrame (formation dates x columns)
        ``portfolio, comparison, excess, beat`` over each cohort's holding period.
    cohort_share_beat : float
        Share of cohorts with ``beat``.
    comparison : str
        Column used as the comparison ("universe" or "benchmark").
    holding_months : int
    risk_free_monthly : float
    hit_rate_against : dict of portfolio -> str
        What each portfolio's ``hit_rate`` counts months above: ``"zero"`` for the
        self-financing long-short, the comparison (``"universe"`` or ``"benchmark"``)
        for the others, ``"none"`` for the comparison itself.
    cohort_windows : float
        Cohorts divided by the holding period: the number of non-overlapping windows
        the cohorts' "share that beat" rests on.
    """

    returns: pd.DataFrame
    gross_returns: pd.DataFrame
    growth: pd.DataFrame
    drawdown: pd.DataFrame
    weights_cheapest: pd.DataFrame
    weights_long_short: pd.DataFrame
    turnover: pd.DataFrame
    stats: pd.DataFrame
    cohorts: pd.DataFrame
    cohort_share_beat: float
    comparison: str
    holding_months: int
    risk_free_monthly: float
    hit_rate_against: dict[str, str] = field(default_factory=dict)
    cohort_windows: float = float("nan")


def _equal_weights(member: np.ndarray) -> np.ndarray:
    c = member.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(member, 1.0 / np.maximum(c, 1)[:, None], 0.0)


def _overlap(w: np.ndarray, h: int) -> np.ndarray:
    """Combine the cohorts formed over the last h dates, each 1/h of capital.

    Notes
    -----
    ``W_t = (1/m_t) sum_{k=0..h-1} w_{t-k}`` where ``m_t`` counts the non-empty
    cohorts among them (``m_t = h`` once the backtest has run h months).
    Only weights dated ``<= t`` enter ``W_t``.
    """
    cs = np.cumsum(w, axis=0)
    nonempty = (w.sum(axis=1) > 0).astype(float)
    cn = np.cumsum(nonempty)
    tot = cs.copy()
    cnt = cn.copy()
    if h < w.shape[0]:
        tot[h:] -= cs[:-h]
        cnt[h:] -= cn[:-h]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(cnt[:, None] > 0, tot / np.maximum(cnt, 1)[:, None], 0.0)


def _port_returns(w: np.ndarray, m: np.ndarray) -> np.ndarray:
    """Return earned t -> t+1 by weights w_t (row t); NaN where nothing is held."""
    held = w != 0
    r = np.where(held, w * np.where(np.isfinite(m), m, 0.0), 0.0).sum(axis=1)
    broken = (held & ~np.isfinite(m)).any(axis=1)
    return np.where(held.any(axis=1) & ~broken, r, np.nan)


def _traded(w: np.ndarray) -> np.ndarray:
    """Traded value sum_i |w_t - w_{t-1}| (buys plus sells), starting from cash."""
    prev = np.vstack([np.zeros((1, w.shape[1])), w[:-1]])
    return np.abs(w - prev).sum(axis=1)


def _cohort_returns(w: np.ndarray, m: np.ndarray, h: int) -> np.ndarray:
    """Compound return over months t..t+h-1 of the cohort formed at t (equal weight kept monthly)."""
    t = w.shape[0]
    out = np.full(t, np.nan)
    if t <= h:
        return out
    growth = np.ones(t - h)
    for k in range(h):
        growth *= 1.0 + _port_returns(w[: t - h], m[k : t - h + k])
    out[: t - h] = np.where(w[: t - h].sum(axis=1) > 0, growth - 1.0, np.nan)
    return out


def _against(col: str, comp_col: str, comp: np.ndarray) -> np.ndarray | None:
    """What a portfolio's hit rate is measured against: zero for the self-financing long-short."""
    if col == "long_short":
        return np.zeros_like(comp)
    return None if col == comp_col else comp


def _stats(col: np.ndarray, comp: np.ndarray | None, rf: float) -> dict[str, float]:
    r = col[np.isfinite(col)]
    n = int(r.size)
    if n == 0:
        ann = float("nan")
    elif np.any(r <= -1.0):
        ann = -1.0  # the wealth was lost at some point
    else:
        with np.errstate(over="ignore"):
            ann = float(np.expm1(12.0 / n * np.sum(np.log1p(r))))
    vol = float(r.std(ddof=1) * np.sqrt(12.0)) if n > 1 else float("nan")
    return {
        "ann_return": ann,
        "ann_vol": vol,
        "sharpe": sharpe_ratio(r, rf),
        "max_drawdown": max_drawdown(r),
        "hit_rate": hit_rate(col, comp) if comp is not None else float("nan"),
        "n_months": float(n),
        # Lo (2002), iid case, on the monthly ratio: t = SR_m / sqrt((1 + SR_m^2 / 2) / T)
        "sharpe_t": sharpe_ratio_t(sharpe_ratio(r, rf) / math.sqrt(12.0), n),
    }


def run_backtest(
    quantile: np.ndarray,
    n_q: int,
    universe: np.ndarray,
    monthly: np.ndarray,
    dates: pd.DatetimeIndex,
    securities: pd.Index,
    *,
    holding_months: int,
    cost_bps: float,
    risk_free_annual: float,
    comparison: str,
    benchmark_level: np.ndarray | None = None,
) -> BacktestResult:
    """Overlapping-cohort, equal-weight backtest of the cheapest quantile and the spread.

    Parameters
    ----------
    quantile : ndarray (D x S)
        Quantile numbers decided at each date (n_q = cheapest, 1 = dearest).
    universe : ndarray (D x S) of bool
    monthly : ndarray (D x S)
        Return earned from each date to the next (row t: t -> t+1).
    benchmark_level : ndarray (D,), optional

    Notes
    -----
    Each month a cohort is formed with equal weights on the cheapest quantile
    and held ``h`` months; the portfolio holds the last ``h`` cohorts, 1/h of
    capital each (Jegadeesh & Titman 1993).  The long-short portfolio is
    the cheapest-quantile cohorts minus the dearest-quantile cohorts.
    Costs: ``cost_t = bps / 10^4 * sum_i |W_t - W_{t-1}|`` (traded value,
    buys plus sells, weight drift ignored), deducted from the month after the
    rebalance; reported turnover is one-way, ``0.5 * sum_i |W_t - W_{t-1}|``.
    Statistics: annualised return ``(prod(1 + r))^(12/n) - 1``; volatility
    ``sd(r) sqrt(12)`` (ddof 1); Sharpe ``sqrt(12) mean(r - rf) / sd(r - rf)``
    with ``rf = (1 + rf_annual)^(1/12) - 1`` (rf = 0 for the self-financing
    long-short); maximum drawdown with the starting wealth 1.0 as a peak;
    hit rate = share of months strictly above the comparison (ties are misses),
    and above zero for the long-short (a self-financing portfolio earns nothing by
    standing still); ``sharpe_t`` is Lo (2002), iid case, on the monthly ratio.

    References
    ----------
    Jegadeesh, N. & Titman, S. (1993). J. Finance 48(1), 65-91.
    Sharpe, W. (1994). J. Portfolio Mgmt 21(1); Lo, A. (2002). FAJ 58(4).
    """
    h = int(holding_months)
    t = quantile.shape[0]
    w_cheap_c = _equal_weights(quantile == n_q)
    w_dear_c = _equal_weights(quantile == 1)
    w_univ = _equal_weights(universe)
    wc = _overlap(w_cheap_c, h)
    wd = _overlap(w_dear_c, h)
    wls = wc - wd
    cost = cost_bps / 1e4
    r_cheap = _port_returns(wc, monthly)
    gross = {
        "cheapest": r_cheap,
        "long_short": r_cheap - _port_returns(wd, monthly),
        "universe": _port_returns(w_univ, monthly),
    }
    traded_c = _traded(wc)
    traded_ls = traded_c + _traded(wd)
    net = dict(gross)
    net["cheapest"] = gross["cheapest"] - cost * traded_c
    net["long_short"] = gross["long_short"] - cost * traded_ls
    if benchmark_level is not None:
        bl = np.asarray(benchmark_level, dtype=float)
        b = np.full(t, np.nan)
        with np.errstate(invalid="ignore", divide="ignore"):
            b[:-1] = bl[1:] / bl[:-1] - 1.0
        gross["benchmark"] = b
        net["benchmark"] = b
    # Returns are dated at the end of the month they are earned in.
    idx = pd.DatetimeIndex(dates[1:], name="date")
    ret = pd.DataFrame({k: v[:-1] for k, v in net.items()}, index=idx)
    gret = pd.DataFrame({k: v[:-1] for k, v in gross.items()}, index=idx)
    first = ret["cheapest"].first_valid_index()
    if first is not None:
        ret, gret = ret.loc[first:], gret.loc[first:]
    growth = (1.0 + ret.fillna(0.0)).cumprod()
    drawdown = growth / growth.cummax().clip(lower=1.0) - 1.0
    rf = (1.0 + risk_free_annual) ** (1.0 / 12.0) - 1.0
    comp_col = comparison if comparison in ret.columns else "universe"
    comp = ret[comp_col].to_numpy(dtype=float)
    stats = pd.DataFrame(
        {
            c: _stats(ret[c].to_numpy(dtype=float), _against(c, comp_col, comp), 0.0 if c == "long_short" else rf)
            for c in ret.columns
        }
    ).T
    stats.index.name = "portfolio"
    port_coh = _cohort_returns(w_cheap_c, monthly, h)
    if comp_col == "benchmark" and benchmark_level is not None:
        comp_coh = np.full(t, np.nan)
        bl = np.asarray(benchmark_level, dtype=float)
        if h < t:
            with np.errstate(invalid="ignore", divide="ignore"):
                comp_coh[:-h] = bl[h:] / bl[:-h] - 1.0
    else:
        comp_coh = _cohort_returns(w_univ, monthly, h)
    coh = pd.DataFrame(
        {"portfolio": port_coh, "comparison": comp_coh, "excess": port_coh - comp_coh},
        index=pd.DatetimeIndex(dates, name="date"),
    )
    coh = coh[np.isfinite(coh["excess"].to_numpy(dtype=float))]
    coh["beat"] = coh["portfolio"] > coh["comparison"]
    share = float(coh["beat"].mean()) if len(coh) else float("nan")
    didx = pd.DatetimeIndex(dates, name="date")
    turnover = pd.DataFrame({"cheapest": 0.5 * traded_c, "long_short": 0.5 * traded_ls}, index=didx)
    return BacktestResult(
        returns=ret,
        gross_returns=gret,
        growth=growth,
        drawdown=drawdown,
        weights_cheapest=pd.DataFrame(wc, index=didx, columns=securities, copy=False),
        weights_long_short=pd.DataFrame(wls, index=didx, columns=securities, copy=False),
        turnover=turnover,
        stats=stats,
        cohorts=coh,
        cohort_share_beat=share,
        hit_rate_against={c: ("zero" if c == "long_short" else ("none" if c == comp_col else comp_col))
                          for c in ret.columns},
        cohort_windows=float(len(coh)) / float(h) if h > 0 else float("nan"),
        comparison=comp_col,
        holding_months=h,
        risk_free_monthly=rf,
    )
