"""The steps of :func:`valuesift.core.study.run_study` (the public entry point is ``valuesift.core.study``).

Each step works on (dates x securities) numpy arrays; pandas labels are put
back at the end.  Nothing here reads files or mutates the panel.
"""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor
from typing import TYPE_CHECKING, Any, Callable, TypeVar

import numpy as np
import pandas as pd
from valuesift.core.arrays import row_mean
from valuesift.core.correlation.ic import (
    ic_and_slope,
    ic_by_date,
    rank_ic_grid,
    ic_summary,
    rolling_ic,
)
from valuesift.core.correlation.ranks import RowSort, row_sort
from valuesift.core.diagnostics.delay import DELAYS, delayed_signal, ic_by_delay
from valuesift.core.diagnostics.warnings import input_warnings, lookahead_warnings
from valuesift.core.errors import ConfigError, InsufficientDataError
from valuesift.core.inference.hac import headline_inference
from valuesift.core.inference.nonoverlap import TOO_SHORT_PERIODS
from valuesift.core.panel import Panel, month_end_index
from valuesift.core.portfolio.backtest import run_backtest
from valuesift.core.portfolio.performance import annualise
from valuesift.core.quantiles.assign import assign_quantiles
from valuesift.core.quantiles.means import (
    means_by_index,
    quantile_index,
    quantile_member_counts,
)
from valuesift.core.quantiles.spread import spread_summary
from valuesift.core.quantiles.turnover import quantile_turnover
from valuesift.core.regression.famamacbeth import fm_slopes, fm_summary
from valuesift.core.returns import (
    excess_returns,
    forward_returns,
    level_forward_returns,
    monthly_returns,
    price_track,
)
from valuesift.core.signals.build import (
    RawSignal,
    earnings_yield,
    lagged_eps,
    months_since_valid,
    orient_lower_is_cheaper,
    pe_ratio,
    raw_signal,
)
from valuesift.core.signals.clean import (
    NO_SECTOR,
    clean_values,
    composite_zmean,
    sector_codes,
    sector_relative,
    sector_zscore,
    standardise,
)
from valuesift.core.signals.universe import base_universe

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.config import StudyConfig

__all__ = ["compute_study"]

Progress = Callable[[str, float], None]
_T = TypeVar("_T")

def _thread_count() -> int:
    """Worker threads for the per-horizon steps: ``VALUESIFT_THREADS``, else one per core (at most 4)."""
    try:
        asked = int(os.environ.get("VALUESIFT_THREADS", "") or 0)
    except ValueError:  # an unreadable setting falls back to the default
        asked = 0
    return max(1, asked) if asked > 0 else max(1, min(os.cpu_count() or 1, 4))


#: Worker threads for the per-horizon steps (numpy releases the GIL inside its array loops);
#: ``VALUESIFT_THREADS=1`` runs everything in the calling thread.
_THREADS = _thread_count()
#: Below this many cells per array a thread pool costs more than it saves.
_THREAD_MIN_CELLS = 200_000


def per_horizon(fn: Callable[[int], _T], horizons: tuple[int, ...], cells: int) -> list[_T]:
    """``[fn(h) for h in horizons]``, on a small thread pool for large panels (same results, same order)."""
    workers = min(_THREADS, len(horizons))
    if workers < 2 or cells < _THREAD_MIN_CELLS:
        return [fn(h) for h in horizons]
    with ThreadPoolExecutor(max_workers=workers, thread_name_prefix="valuesift-horizon") as pool:
        return list(pool.map(fn, horizons))


def to_month_grid(panel: Panel, notes: list[str]) -> Panel:
    """The panel on a complete, sorted month-end grid (a new panel; the input is untouched)."""
    p = panel.prices
    if not isinstance(p, pd.DataFrame) or p.shape[0] == 0 or p.shape[1] == 0:
        raise InsufficientDataError("a study", "a price table with at least one date and one security",
                                    "an empty price table", hint="Load a prices file with data.")
    if not isinstance(p.index, pd.DatetimeIndex):
        raise ConfigError("The panel's price index is not made of dates.",
                          hint="Build the panel with intake, which puts prices on month-end dates.")
    me = month_end_index(pd.DatetimeIndex(p.index))
    if me.has_duplicates:
        raise ConfigError("The panel's price table has two rows in the same month.",
                          hint="Keep one month-end row per month (intake does this).")
    full = pd.date_range(me.min(), me.max(), freq="ME").normalize()
    full.name = "date"
    if len(full) != len(me) or not (me == full).all():
        if len(full) != len(me):
            notes.append(f"The price table skipped {len(full) - len(me)} month-ends; they are treated as missing prices.")

    def fix(f: pd.DataFrame | None) -> pd.DataFrame | None:
        if f is None:
            return None
        g = f.copy()
        g.index = month_end_index(pd.DatetimeIndex(g.index))
        return g.reindex(index=full, columns=p.columns).astype(float)

    bench = None
    if panel.benchmark is not None:
        b = panel.benchmark.copy()
        b.index = month_end_index(pd.DatetimeIndex(b.index))
        bench = b[~b.index.duplicated(keep="last")].reindex(full).astype(float)
    prices = fix(p)
    assert prices is not None
    sigs = tuple(type(s)(s.name, fix(s.values), s.higher_is_cheaper) for s in panel.signals)  # type: ignore[arg-type]
    return panel.with_(prices=prices, eps=fix(panel.eps), market_cap=fix(panel.market_cap), benchmark=bench,
                       signals=sigs)


def _lag(panel: Panel, cfg: "StudyConfig") -> int:
    """The reporting lag applied to EPS: none when the rows are dated by their announcement."""
    return 0 if panel.eps_dated_by_availability else cfg.reporting_lag_months


def _signal(panel: Panel, cfg: "StudyConfig", u0: np.ndarray) -> tuple[RawSignal, np.ndarray, list[str]]:
    """The studied signal (oriented), the cells set aside as not meaningful, and notes on what was done."""
    lag = _lag(panel, cfg)
    names = (cfg.signal,) if cfg.signal != "composite" else cfg.composite_of
    aside = np.zeros(u0.shape, dtype=bool)
    notes: list[str] = []
    parts = []
    for name in names:
        raw = raw_signal(panel, name, lag, cfg.eps_max_age_months)
        rs, _ = orient_lower_is_cheaper(raw, cfg.nonpositive_lower_is_cheaper, u0)
        if raw.sign < 0:
            with np.errstate(invalid="ignore"):
                aside |= u0 & np.isfinite(raw.values) & ~np.isfinite(rs.values)
            notes.append(f"The signal {name!r} is lower-is-cheaper: " + (
                "it is studied as its reciprocal (higher = cheaper; values of 0 or below keep their order and rank "
                "dearest)." if cfg.nonpositive_lower_is_cheaper == "reciprocal" else
                "its values of 0 or below are not meaningful and are set aside (not ranked; flagged on the screen)."))
        if cfg.signal != "composite":
            return rs, aside, notes
        cl = clean_values(rs.values, u0, cfg.outlier_rule, cfg.winsor_percentiles, cfg.robust_z_limit)
        parts.append(standardise(cl, rs.sign, cfg.zscore_method))
    return RawSignal("composite", composite_zmean(parts), 1.0), aside, notes


def _earnings_file(panel: Panel) -> Any:
    """The intake report of the earnings file, if the panel has one."""
    if panel.report is None:
        return None
    for f in panel.report.files:
        if f.kind == "earnings":
            return f
    return None


def _stamp_dates(panel: Panel) -> pd.DatetimeIndex | None:
    """The month-ends on which the earnings file has at least one figure."""
    if panel.eps is None:
        return None
    has = panel.eps.notna().any(axis=1).to_numpy()
    return pd.DatetimeIndex(panel.eps.index[has])


def _holdings_date(panel: Panel) -> pd.Timestamp | None:
    """The date of the holdings file when it carries one (else None: taken as of the last date)."""
    if panel.report is None:
        return None
    for f in panel.report.files:
        if f.kind == "holdings" and f.last_date is not None:
            return pd.Timestamp(f.last_date)
    return None


def _note(rows: list[dict[str, Any]], dates: pd.DatetimeIndex, mask: np.ndarray, counts: np.ndarray,
          horizon: int, stage: str, reason: str) -> None:
    for i in np.flatnonzero(mask):
        rows.append({"date": dates[int(i)], "horizon": horizon, "stage": stage, "reason": reason, "count": int(counts[i])})


def _frame(a: np.ndarray, dates: pd.DatetimeIndex, cols: pd.Index) -> pd.DataFrame:
    return pd.DataFrame(a, index=dates, columns=cols, copy=False)  # our own fresh array


def compute_study(panel: Panel, cfg: "StudyConfig", progress: Progress | None) -> dict[str, Any]:
    """Run every step; returns the fields of :class:`core.study.StudyResult`."""
    def tick(stage: str, frac: float) -> None:
        if progress is not None:
            progress(stage, frac)

    notes: list[str] = []
    tick("preparing data", 0.0)
    panel = to_month_grid(panel, notes)
    dates = pd.DatetimeIndex(panel.prices.index, name="date")
    secs = pd.Index(panel.prices.columns, name="security")
    t_len, n_sec = panel.shape
    price = panel.prices.to_numpy(dtype=float, copy=True)
    valid = panel.valid_price_mask()
    if cfg.sector_neutral or cfg.fm_sector_dummies or cfg.backtest_within_sectors:
        if panel.sectors is None:
            raise ConfigError("A sector setting is on (sector_neutral, fm_sector_dummies or backtest_within_sectors) "
                              "but the panel has no sector data.", hint="Load a sectors file or switch these off.")
    if cfg.fm_log_market_cap and panel.market_cap is None:
        raise ConfigError("Study setting 'fm_log_market_cap' is on but the panel has no market capitalisation.",
                          hint="Load a market-cap file or switch it off.")
    if (cfg.excess_over == "benchmark" or cfg.comparison == "benchmark") and panel.benchmark is None:
        raise ConfigError("A benchmark setting is on (excess_over or comparison = 'benchmark') but the panel has "
                          "no benchmark.", hint="Load a benchmark file or use 'universe'.")
    hmax = max(cfg.horizons)
    if hmax >= t_len:
        raise InsufficientDataError(f"the {hmax}-month horizon", f"more than {hmax} month-ends of prices",
                                    f"{t_len} month-ends", hint="Choose shorter horizons or load a longer history.")
    u0 = base_universe(valid, secs, sectors=panel.sectors, holdings=panel.holdings, rule=cfg.universe,
                       keep_sectors=cfg.universe_sectors, min_history=cfg.min_history_months)
    if not u0.any():
        raise InsufficientDataError("the universe", "at least one security with a valid price that passes the "
                                    f"universe filter ({cfg.universe!r}, minimum history {cfg.min_history_months} "
                                    "months)", "none", hint="Widen 'Universe' or lower 'Price history needed (months)' (--min-history).")
    tick("signals", 0.1)
    sig, set_aside, sig_notes = _signal(panel, cfg, u0)
    notes.extend(sig_notes)
    n_set_aside = int(set_aside.sum())
    universe = u0 & np.isfinite(sig.values)
    if not universe.any():
        raise InsufficientDataError(f"the signal {cfg.signal!r}", "at least one universe name with a signal value",
                                    "none", hint="Check the earnings/dividend/signal file covers the universe.")
    cleaned = clean_values(sig.values, universe, cfg.outlier_rule, cfg.winsor_percentiles, cfg.robust_z_limit)
    z = standardise(cleaned, sig.sign, cfg.zscore_method)
    codes, sector_names = sector_codes(secs, panel.sectors)
    zsec = None
    if panel.sectors is not None:
        zsec = sector_zscore(cleaned, sig.sign, codes, cfg.zscore_method, cfg.min_sector_size, cfg.small_sector_rule)
    # a copy: result frames are built without copying, so no two of them may share an array
    zeval = (zsec if (cfg.sector_neutral and zsec is not None) else z).copy()
    if not np.isfinite(zeval).any():
        raise InsufficientDataError(f"a z-score of {cfg.signal!r}", "at least two universe names with different "
                                    "signal values on some date", "no such date",
                                    hint="Check the signal varies across names (e.g. not all zero).")
    rows: list[dict[str, Any]] = []
    n_u = universe.sum(axis=1)
    _note(rows, dates, (n_u > 0) & ~np.isfinite(zeval).any(axis=1), n_u, 0, "signal",
          "no z-score: fewer than two names or every name has the same signal")

    tick("forward returns", 0.25)
    div = panel.dividend_matrix().to_numpy(dtype=float) if panel.dividends is not None else np.zeros_like(price)
    track = price_track(price, valid, div)
    bench = panel.benchmark.to_numpy(dtype=float) if panel.benchmark is not None else None
    cells = t_len * n_sec

    def fwd_one(h: int) -> tuple[np.ndarray, np.ndarray]:
        r, gone = forward_returns(track, valid, h, cfg.dividend_treatment, cfg.delisting_return)
        r = np.where(universe, r, np.nan)
        bf = level_forward_returns(bench, h) if bench is not None else None
        return excess_returns(r, cfg.excess_over, bf), (gone & universe).sum(axis=1)

    fwd: dict[int, np.ndarray] = {}
    delisted = {}
    for h, (f_h, d_h) in zip(cfg.horizons, per_horizon(fwd_one, cfg.horizons, cells)):
        fwd[h], delisted[h] = f_h, d_h
    if cfg.sector_neutral and panel.sectors is not None:
        # A sector-neutral signal is judged against sector-relative returns, so sector bets cannot leak in.
        for h in cfg.horizons:
            fwd[h] = sector_relative(fwd[h], codes)
        notes.append("Sector-neutral study: every horizon is judged against sector-relative forward returns (a "
                     "name's return minus the equal-weight mean return of its sector on that date).")

    tick("information coefficients", 0.4)
    hcols = pd.Index(list(cfg.horizons), name="horizon")
    ric = np.full((t_len, len(hcols)), np.nan)
    pic = np.full_like(ric, np.nan)
    brd = np.zeros((t_len, len(hcols)), dtype=int)
    zranks = row_sort(zeval)  # sorted once: every horizon ranks its own names from it (same numbers)
    # Without Fama-MacBeth controls the slope comes from the IC's own centred arrays (same numbers).
    fm_plain = not (cfg.fm_log_market_cap or cfg.fm_sector_dummies)

    fwd_sorts: dict[int, RowSort] = {}  # each horizon's returns sorted once, for its IC and the look-ahead grid

    def ic_one(h: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray | None]:
        if fm_plain:
            fwd_sorts[h] = row_sort(fwd[h])
            return ic_and_slope(zeval, fwd[h], cfg.min_breadth, zranks, fwd_sorts[h])
        return (*ic_by_date(zeval, fwd[h], cfg.min_breadth, zranks), None)

    ics = per_horizon(ic_one, cfg.horizons, cells)
    for j, h in enumerate(cfg.horizons):
        ric[:, j], pic[:, j], brd[:, j] = ics[j][:3]
        has_fwd = np.arange(t_len) < t_len - h
        low = has_fwd & (brd[:, j] < cfg.min_breadth) & (n_u > 0)
        _note(rows, dates, low, brd[:, j], h, "ic", f"fewer names than the minimum per date ({cfg.min_breadth})")
    rank_ic = pd.DataFrame(ric, index=dates, columns=hcols)
    pearson_ic = pd.DataFrame(pic, index=dates, columns=hcols)
    breadth = pd.DataFrame(brd, index=dates, columns=hcols)
    summ = ic_summary(rank_ic, pearson_ic, breadth, cfg.hac_lag_rule)
    tick("look-ahead checks", 0.5)
    ric_by_h = {h: ric[:, j] for j, h in enumerate(cfg.horizons)}
    h0 = min(cfg.horizons)
    # one grid: each delayed signal against every horizon's returns and against today's signal, each array
    # sorted once (rank_ic_grid: the same ICs as ic_by_date per pair), today's signal from the IC stage's sort
    now = np.where(universe, zeval, np.nan)  # a subset of zeval's finite cells, so zeval's sort serves
    late = rank_ic_grid({d: delayed_signal(zeval, universe, d) for d in DELAYS[1:]},
                        {**{h: fwd[h] for h in cfg.horizons}, "now": now}, cfg.min_breadth,
                        target_sorts={**fwd_sorts, "now": zranks},  # (zeval's sort ranks any subset of it)
                        workers=_THREADS)  # (the grid keeps small panels on one thread itself)
    delay_tab = ic_by_delay(zeval, fwd, universe, cfg.min_breadth, cfg.hac_lag_rule, ric_by_h, late=late)
    drop_t: dict[int, float] = {}
    persistence: dict[int, float] = {}
    for d in DELAYS[1:]:
        ric_d = late[(d, h0)]
        # how much of the signal's ranking survives d months: the IC may fall that much without any look-ahead
        rho_d = late[(d, "now")]
        with np.errstate(invalid="ignore"):
            persistence[d] = float(np.nanmean(rho_d)) if np.isfinite(rho_d).any() else float("nan")
        drop_t[d] = float(headline_inference(ric_by_h[h0] * persistence[d] - ric_d, h0, cfg.hac_lag_rule)["t"])
    with np.errstate(invalid="ignore"):
        max_date_ic = float(np.nanmax(ric)) if np.isfinite(ric).any() else float("nan")
    warns = lookahead_warnings(delay_tab, drop_t, max_date_ic, h0, persistence)
    if not np.isfinite(ric).any():
        notes.append("No date reached the minimum breadth with a signal and a forward return: no IC is available.")

    tick("quantiles", 0.55)
    n_q = cfg.n_quantiles
    tiebreak = np.argsort(np.argsort(np.asarray(secs.astype(str)), kind="stable"), kind="stable")
    q = assign_quantiles(zeval, n_q, tiebreak=tiebreak)
    n_z = np.isfinite(zeval).sum(axis=1)
    # One minimum-breadth rule for every chart and table: a date with fewer names than the minimum per
    # date gets no IC (above), no quantiles, so no spread, quantile return, backtest cohort or screen band.
    thin = (n_z >= n_q) & (n_z < cfg.min_breadth)
    q = np.where(thin[:, None], np.nan, q)
    if not np.isfinite(q).any() and not thin.any():
        need = max(n_q, cfg.min_breadth)
        raise InsufficientDataError(f"{n_q} quantiles", f"at least {need} names with a signal on some date "
                                    f"(the minimum names per date is {cfg.min_breadth})",
                                    f"at most {int(n_z.max())} names",
                                    hint="Lower 'Minimum names per date' or 'Quantiles' on the Study page, or widen "
                                         "the universe.")
    _note(rows, dates, (n_z > 0) & (n_z < n_q), n_z, 0, "quantiles",
          f"fewer names than quantiles ({n_q}): left out of the quantile analysis and the backtest")
    _note(rows, dates, thin, n_z, 0, "quantiles",
          f"fewer names than the minimum per date ({cfg.min_breadth}): left out of the quantile analysis, the "
          "spread and the backtest")
    qcols = pd.Index(list(range(1, n_q + 1)), name="quantile")
    qret: dict[int, pd.DataFrame] = {}
    spread = np.full((t_len, len(hcols)), np.nan)
    qmean = np.full((len(hcols), n_q), np.nan)
    qidx = quantile_index(q, n_q)  # shared by every horizon and the monthly returns
    qms = per_horizon(lambda h: means_by_index(qidx, fwd[h])[0], cfg.horizons, cells)
    for j, h in enumerate(cfg.horizons):
        means = qms[j]
        qret[h] = pd.DataFrame(means, index=dates, columns=qcols)
        spread[:, j] = means[:, -1] - means[:, 0]
        qmean[j] = row_mean(means.T)
    ssum = spread_summary(spread, qmean, cfg.horizons, cfg.hac_lag_rule)
    counts = quantile_member_counts(qidx)

    monthly = monthly_returns(track, cfg.delisting_return)
    m_q, _ = means_by_index(qidx, monthly)
    qgrowth = pd.DataFrame(np.cumprod(1.0 + np.nan_to_num(m_q[:-1], nan=0.0), axis=0),
                           index=pd.DatetimeIndex(dates[1:], name="date"), columns=qcols)

    tick("Fama-MacBeth", 0.7)
    controls = []
    if cfg.fm_log_market_cap and panel.market_cap is not None:
        mc = panel.market_cap.to_numpy(dtype=float)
        with np.errstate(invalid="ignore", divide="ignore"):
            controls.append(np.where(np.isfinite(mc) & (mc > 0), np.log(np.where(mc > 0, mc, 1.0)), np.nan))
    groups = codes if cfg.fm_sector_dummies else None
    fm = np.full((t_len, len(hcols)), np.nan)
    fms = [ic[3] for ic in ics]
    if not fm_plain:
        fms = per_horizon(lambda h: fm_slopes(zeval, fwd[h], controls, groups)[0], cfg.horizons, cells)
    for j in range(len(cfg.horizons)):
        fm[:, j] = np.where(brd[:, j] >= cfg.min_breadth, fms[j], np.nan)   # the same breadth rule as the IC
    fsum = fm_summary(fm, cfg.horizons, cfg.hac_lag_rule)

    tick("backtest", 0.8)
    q_bt = assign_quantiles(zeval, n_q, codes, tiebreak) if cfg.backtest_within_sectors else q
    bt = run_backtest(q_bt, n_q, universe, monthly, dates, secs,
                      holding_months=cfg.holding_months, cost_bps=cfg.transaction_cost_bps,
                      risk_free_annual=cfg.risk_free_annual, comparison=cfg.comparison, benchmark_level=bench)

    tick("screen", 0.95)
    eps_used = np.full(price.shape, np.nan)
    eps_age = np.full(price.shape, np.nan)
    if panel.eps is not None:
        eps_used = lagged_eps(panel, _lag(panel, cfg), cfg.eps_max_age_months)
        stamped = panel.eps.shift(_lag(panel, cfg)).to_numpy(dtype=float)
        eps_age = months_since_valid(np.isfinite(stamped))
    sec_lab = [sector_names[c] for c in codes] if panel.sectors is not None else [NO_SECTOR] * n_sec
    hold = panel.holdings.reindex(secs).to_numpy(dtype=float) if panel.holdings is not None else np.full(n_sec, np.nan)
    notes.append("Standard errors: Hansen-Hodrick above one month, Newey-West at one month (see the methodology).")
    uses_eps = cfg.signal == "earnings_yield" or (cfg.signal == "composite" and "earnings_yield" in cfg.composite_of)
    efile = _earnings_file(panel)
    ey_u = None
    if uses_eps and panel.eps is not None:
        ey_u = np.where(universe, earnings_yield(price, eps_used), np.nan)
    valid_rows = np.where(valid.any(axis=0), np.argmax(valid, axis=0), np.nan)
    last_rows = np.where(valid.any(axis=0), t_len - 1 - np.argmax(valid[::-1], axis=0), np.nan)
    warns += input_warnings(
        signal=cfg.signal, uses_earnings=uses_eps, reporting_lag=cfg.reporting_lag_months,
        eps_dated_by_availability=panel.eps_dated_by_availability,
        earnings_date_column=efile.date_column if efile is not None else None,
        earnings_dates=_stamp_dates(panel), earnings_yield_universe=ey_u,
        independent_periods={int(h): float(summ.at[h, "independent_periods"]) for h in cfg.horizons},
        too_short_limit=TOO_SHORT_PERIODS, universe_rule=cfg.universe,
        holdings_date=_holdings_date(panel), first_date=dates[0], last_date=dates[-1],
        first_valid=valid_rows.astype(float), last_valid=last_rows.astype(float), n_dates=t_len,
        set_aside=n_set_aside)
    date_notes = pd.DataFrame(rows, columns=["date", "horizon", "stage", "reason", "count"])
    fr = {h: _frame(fwd[h], dates, secs) for h in cfg.horizons}
    return {
        "signal_name": cfg.signal,
        "signal_raw": _frame(sig.values, dates, secs),
        "pe": _frame(pe_ratio(price, eps_used), dates, secs),
        "universe": _frame(universe, dates, secs),
        "zscore": _frame(z, dates, secs),
        "sector_zscore": _frame(zsec, dates, secs) if zsec is not None else None,
        "signal_z": _frame(zeval, dates, secs),
        "forward_returns": fr,
        "delisted": pd.DataFrame({h: delisted[h] for h in cfg.horizons}, index=dates).rename_axis(columns="horizon"),
        "rank_ic": rank_ic,
        "pearson_ic": pearson_ic,
        "breadth": breadth,
        "ic_summary": summ,
        "rolling_ic": rolling_ic(rank_ic),
        "quantile": _frame(q, dates, secs),
        "quantile_counts": pd.DataFrame(counts, index=dates, columns=qcols),
        "quantile_returns": qret,
        "quantile_mean": pd.DataFrame(qmean, index=hcols, columns=qcols),
        "quantile_mean_annualised": pd.DataFrame(
            np.stack([annualise(qmean[j], h) for j, h in enumerate(cfg.horizons)]), index=hcols, columns=qcols),
        "spread": pd.DataFrame(spread, index=dates, columns=hcols),
        "spread_summary": ssum,
        "quantile_growth": qgrowth,
        "turnover": pd.DataFrame(quantile_turnover(q, n_q), index=dates, columns=qcols),
        "fm_slopes": pd.DataFrame(fm, index=dates, columns=hcols),
        "fm_summary": fsum,
        "backtest": bt,
        "eps_used": _frame(eps_used, dates, secs),
        "price_age": _frame(months_since_valid(valid), dates, secs),
        "eps_age": _frame(eps_age, dates, secs),
        "security_info": pd.DataFrame({"sector": sec_lab, "holding_weight": hold}, index=secs),
        "date_notes": date_notes,
        "notes": tuple(notes),
        "ic_by_delay": delay_tab,
        "signal_set_aside": _frame(set_aside, dates, secs),
        "warnings": tuple(warns),
    }
