"""The headless study with the panel partitioned across workers (very large universes).

Two kinds of work, partitioned the way each needs:

* **Time-series work, per block of securities** (stage A): the month-end grid,
  valid prices, the total-return index and the h-month forward returns, the
  raw signal after the reporting lag (or each component of a composite) and
  the base universe (static filter plus minimum history).  Every one of these
  looks down a security's own column only.
* **Cross-sectional work, per block of dates** (stage B): outlier treatment,
  z-scores (universe and sector), universe masking and excess returns, ranks,
  information coefficients, quantile membership and quantile mean returns.
  Every one of these looks across one date's row only.

**The one re-partitioning** sits between them: each stage-A task cuts its
(dates x block-securities) arrays into the row ranges of the date blocks;
stage-B task ``j`` gathers piece ``j`` of every security block and joins them
side by side in the panel's column order.  On a Dask cluster this is an
all-to-all exchange of futures (``n_sec_blocks x n_date_blocks`` small slicing
tasks), and no worker ever holds the whole panel of forward returns.
The time-series summaries (mean IC with Newey-West t, spread with HAC t) are
computed on the client from the small (dates x horizons) results.

Each stage calls the same engine functions as :func:`core.study.run_study`
on the same values, so the numbers are identical (tested to 1e-12).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from valuesift.core.arrays import row_mean
from valuesift.core.config import StudyConfig
from valuesift.core.correlation.ic import ic_by_date, ic_summary
from valuesift.core.correlation.ranks import average_ranks
from valuesift.core.errors import ConfigError, InsufficientDataError
from valuesift.core.panel import Panel, UserSignal
from valuesift.core.quantiles.assign import assign_quantiles
from valuesift.core.quantiles.means import means_by_index, quantile_index
from valuesift.core.quantiles.spread import spread_summary
from valuesift.core.returns import (
    excess_returns,
    forward_returns,
    level_forward_returns,
    price_track,
)
from valuesift.core.signals.build import orient_lower_is_cheaper, raw_signal
from valuesift.core.signals.clean import (
    clean_values,
    composite_zmean,
    sector_codes,
    sector_relative,
    sector_zscore,
    standardise,
)
from valuesift.core.signals.universe import base_universe
from valuesift.core.study.steps import to_month_grid

__all__ = ["PartitionedResult", "run_partitioned_study"]


@dataclass(frozen=True)
class PartitionedResult:
    """The cross-sectional results of a partitioned study (same meaning as in :class:`core.study.StudyResult`).

    Attributes
    ----------
    config : StudyConfig
    universe, signal_z, quantile : DataFrame (D x S)
    forward_returns : dict[int, DataFrame (D x S)]
    rank_ic, pearson_ic, breadth, spread : DataFrame (D x H)
    quantile_returns : dict[int, DataFrame (D x Q)]
    ic_summary : DataFrame (H x statistics)
        As :func:`core.evaluate.ic.ic_summary`.
    spread_summary : DataFrame (H x [mean, se_hac, t_hac, hac_lags, n_dates])
    security_blocks, date_blocks : int
    """

    config: StudyConfig
    universe: pd.DataFrame
    signal_z: pd.DataFrame
    quantile: pd.DataFrame
    forward_returns: dict[int, pd.DataFrame]
    rank_ic: pd.DataFrame
    pearson_ic: pd.DataFrame
    breadth: pd.DataFrame
    spread: pd.DataFrame
    quantile_returns: dict[int, pd.DataFrame]
    ic_summary: pd.DataFrame
    spread_summary: pd.DataFrame
    security_blocks: int
    date_blocks: int


def _sub_panel(panel: Panel, cols: np.ndarray) -> Panel:
    def take(f: pd.DataFrame | None) -> pd.DataFrame | None:
        return None if f is None else f.iloc[:, cols]

    names = panel.prices.columns[cols]
    divs = panel.dividends
    if divs is not None:
        divs = divs[divs["security"].isin(list(names))]
    sigs = tuple(UserSignal(s.name, s.values.reindex(columns=panel.prices.columns).iloc[:, cols], s.higher_is_cheaper)
                 for s in panel.signals)
    return panel.with_(prices=take(panel.prices), eps=take(panel.eps), market_cap=take(panel.market_cap),
                       dividends=divs, signals=sigs)


def _stage_a(sub: Panel, settings: dict[str, Any], row_cuts: list[tuple[int, int]]) -> list[dict[str, Any]]:
    """Time-series work on one block of securities, cut into the date blocks' row ranges."""
    cfg = StudyConfig.from_dict(settings)
    secs = pd.Index(sub.prices.columns, name="security")
    price = sub.prices.to_numpy(dtype=float, copy=True)
    valid = sub.valid_price_mask()
    u0 = base_universe(valid, secs, sectors=sub.sectors, holdings=sub.holdings, rule=cfg.universe,
                       keep_sectors=cfg.universe_sectors, min_history=cfg.min_history_months)
    names = cfg.composite_of if cfg.signal == "composite" else (cfg.signal,)
    lag = 0 if sub.eps_dated_by_availability else cfg.reporting_lag_months
    comps = [orient_lower_is_cheaper(raw_signal(sub, n, lag, cfg.eps_max_age_months),
                                     cfg.nonpositive_lower_is_cheaper, u0, require_positive=False)[0]
             for n in names]
    div = sub.dividend_matrix().to_numpy(dtype=float) if sub.dividends is not None else np.zeros_like(price)
    track = price_track(price, valid, div)
    fwd = {h: forward_returns(track, valid, h, cfg.dividend_treatment, cfg.delisting_return)[0]
           for h in cfg.horizons}
    return [{"u0": u0[r0:r1], "comps": [(c.values[r0:r1], c.sign) for c in comps],
             "fwd": {h: f[r0:r1] for h, f in fwd.items()}} for r0, r1 in row_cuts]


def _piece(blocks: list[dict[str, Any]], j: int) -> dict[str, Any]:
    return blocks[j]


def _join(pieces: list[dict[str, Any]]) -> dict[str, Any]:
    """The re-partitioning: one date block's rows of every security block, side by side."""
    cat = lambda arrs: np.concatenate(arrs, axis=1)  # noqa: E731
    return {
        "u0": cat([p["u0"] for p in pieces]),
        "comps": [(cat([p["comps"][k][0] for p in pieces]), pieces[0]["comps"][k][1])
                  for k in range(len(pieces[0]["comps"]))],
        "fwd": {h: cat([p["fwd"][h] for p in pieces]) for h in pieces[0]["fwd"]},
    }


def _stage_b(pieces: list[dict[str, Any]], settings: dict[str, Any], codes: np.ndarray | None,
             tiebreak: np.ndarray, bench_fwd: dict[int, np.ndarray] | None) -> dict[str, Any]:
    """Cross-sectional work on one block of dates (the engine's per-date steps)."""
    cfg = StudyConfig.from_dict(settings)
    d = _join(pieces)
    u0 = d["u0"]
    if cfg.signal == "composite":
        parts = [standardise(clean_values(v, u0, cfg.outlier_rule, cfg.winsor_percentiles, cfg.robust_z_limit),
                             s, cfg.zscore_method) for v, s in d["comps"]]
        values, sign = composite_zmean(parts), 1.0
    else:
        values, sign = d["comps"][0]
    universe = u0 & np.isfinite(values)
    cleaned = clean_values(values, universe, cfg.outlier_rule, cfg.winsor_percentiles, cfg.robust_z_limit)
    z = standardise(cleaned, sign, cfg.zscore_method)
    if cfg.sector_neutral and codes is not None:
        z = sector_zscore(cleaned, sign, codes, cfg.zscore_method, cfg.min_sector_size, cfg.small_sector_rule)
    zeval = z.copy()
    zranks = average_ranks(zeval)
    q = assign_quantiles(zeval, cfg.n_quantiles, tiebreak=tiebreak)
    qidx = quantile_index(q, cfg.n_quantiles)
    out: dict[str, Any] = {"universe": universe, "z": zeval, "q": q, "fwd": {}, "ic": {}, "qret": {}}
    for h, r in d["fwd"].items():
        r = np.where(universe, r, np.nan)
        f = excess_returns(r, cfg.excess_over, None if bench_fwd is None else bench_fwd[h])
        if cfg.sector_neutral and codes is not None:
            f = sector_relative(f, codes)
        out["fwd"][h] = f
        out["ic"][h] = ic_by_date(zeval, f, cfg.min_breadth, zranks)
        out["qret"][h] = means_by_index(qidx, f)[0]
    return out


def _cuts(n: int, blocks: int) -> list[tuple[int, int]]:
    parts = np.array_split(np.arange(n), max(1, min(blocks, n)))
    return [(int(p[0]), int(p[-1]) + 1) for p in parts if p.size]


def run_partitioned_study(
    panel: Panel,
    config: StudyConfig,
    client: Any = None,
    *,
    security_blocks: int = 4,
    date_blocks: int = 4,
) -> PartitionedResult:
    """Forward returns, ICs and quantiles of a study with the panel split across workers.

    Parameters
    ----------
    panel : Panel
    config : StudyConfig
        Any configuration without Fama-MacBeth controls or backtest (those are
        not part of this result; run :func:`core.study.run_study` for them).
    client : distributed.Client, optional
        Run the blocks on this cluster; without one they run here (same numbers).
    security_blocks, date_blocks : int
        Blocks of securities for the time-series stage and of dates for the
        cross-sectional stage.

    Returns
    -------
    PartitionedResult

    Raises
    ------
    ConfigError, InsufficientDataError
        As :func:`core.study.run_study` for the same settings.

    Notes
    -----
    See the module docstring for the two stages and the re-partitioning.
    Newey-West summaries use :func:`core.stats.mean_inference` with
    :func:`core.stats.hac_lags`, as the single-machine engine does.

    References
    ----------
    Newey & West (1987), Econometrica 55(3); Dean & Ghemawat (2004), MapReduce
    (the all-to-all exchange between a per-key and a per-other-key stage).
    """
    if not isinstance(config, StudyConfig):
        raise ConfigError("run_partitioned_study needs a StudyConfig.", hint="Build one with StudyConfig(...).")
    notes: list[str] = []
    panel = to_month_grid(panel.with_(report=None), notes)
    dates = pd.DatetimeIndex(panel.prices.index, name="date")
    secs = pd.Index(panel.prices.columns, name="security")
    t_len, n_sec = panel.shape
    if config.sector_neutral and panel.sectors is None:
        raise ConfigError("Study setting 'sector_neutral' is on but the panel has no sector data.",
                          hint="Load a sectors file or switch it off.")
    if config.excess_over == "benchmark" and panel.benchmark is None:
        raise ConfigError("Study setting 'excess_over' is 'benchmark' but the panel has no benchmark.",
                          hint="Load a benchmark file or use 'universe'.")
    hmax = max(config.horizons)
    if hmax >= t_len:
        raise InsufficientDataError(f"the {hmax}-month horizon", f"more than {hmax} month-ends of prices",
                                    f"{t_len} month-ends", hint="Choose shorter horizons or load a longer history.")
    settings = config.to_dict()
    row_cuts = _cuts(t_len, date_blocks)
    col_cuts = _cuts(n_sec, security_blocks)
    codes = sector_codes(secs, panel.sectors)[0] if panel.sectors is not None else None
    tiebreak = np.argsort(np.argsort(np.asarray(secs.astype(str)), kind="stable"), kind="stable")
    bench_fwd = None
    if config.excess_over == "benchmark" and panel.benchmark is not None:
        bl = panel.benchmark.to_numpy(dtype=float)
        bench_fwd = {h: level_forward_returns(bl, h) for h in config.horizons}
    subs = [_sub_panel(panel, np.arange(c0, c1)) for c0, c1 in col_cuts]

    def bench_rows(r0: int, r1: int) -> dict[int, np.ndarray] | None:
        return None if bench_fwd is None else {h: b[r0:r1] for h, b in bench_fwd.items()}

    if client is None:
        a_out = [_stage_a(s, settings, row_cuts) for s in subs]
        b_out = [_stage_b([a[j] for a in a_out], settings, codes, tiebreak, bench_rows(r0, r1))
                 for j, (r0, r1) in enumerate(row_cuts)]
    else:
        a_fut = [client.submit(_stage_a, s, settings, row_cuts, pure=False) for s in subs]
        # the re-partitioning: piece j of every security block goes to date block j
        pieces = [[client.submit(_piece, a, j, pure=False) for a in a_fut] for j in range(len(row_cuts))]
        b_fut = [client.submit(_stage_b, pieces[j], settings, codes, tiebreak, bench_rows(r0, r1), pure=False)
                 for j, (r0, r1) in enumerate(row_cuts)]
        b_out = client.gather(b_fut)
    return _assemble(config, dates, secs, b_out, len(col_cuts))


def _assemble(cfg: StudyConfig, dates: pd.DatetimeIndex, secs: pd.Index, b_out: list[dict[str, Any]],
              n_sec_blocks: int) -> PartitionedResult:
    def rows(key: str) -> np.ndarray:
        return np.concatenate([b[key] for b in b_out], axis=0)

    universe = rows("universe")
    if not universe.any():
        raise InsufficientDataError("the universe", "at least one security with a valid price and a signal that "
                                    "passes the universe filter", "none", hint="Widen the universe filter.")
    hcols = pd.Index(list(cfg.horizons), name="horizon")
    qcols = pd.Index(list(range(1, cfg.n_quantiles + 1)), name="quantile")
    ric = np.stack([np.concatenate([b["ic"][h][0] for b in b_out]) for h in cfg.horizons], axis=1)
    pic = np.stack([np.concatenate([b["ic"][h][1] for b in b_out]) for h in cfg.horizons], axis=1)
    brd = np.stack([np.concatenate([b["ic"][h][2] for b in b_out]) for h in cfg.horizons], axis=1)
    rank_ic = pd.DataFrame(ric, index=dates, columns=hcols)
    pearson_ic = pd.DataFrame(pic, index=dates, columns=hcols)
    breadth = pd.DataFrame(brd, index=dates, columns=hcols)
    qret = {h: pd.DataFrame(np.concatenate([b["qret"][h] for b in b_out], axis=0), index=dates, columns=qcols)
            for h in cfg.horizons}
    spread = np.stack([qret[h].to_numpy()[:, -1] - qret[h].to_numpy()[:, 0] for h in cfg.horizons], axis=1)
    qmean = np.stack([row_mean(qret[h].to_numpy().T) for h in cfg.horizons])
    fwd = {h: pd.DataFrame(np.concatenate([b["fwd"][h] for b in b_out], axis=0), index=dates, columns=secs)
           for h in cfg.horizons}
    return PartitionedResult(
        config=cfg,
        universe=pd.DataFrame(universe, index=dates, columns=secs),
        signal_z=pd.DataFrame(rows("z"), index=dates, columns=secs),
        quantile=pd.DataFrame(rows("q"), index=dates, columns=secs),
        forward_returns=fwd, rank_ic=rank_ic, pearson_ic=pearson_ic, breadth=breadth,
        spread=pd.DataFrame(spread, index=dates, columns=hcols), quantile_returns=qret,
        ic_summary=ic_summary(rank_ic, pearson_ic, breadth, cfg.hac_lag_rule),
        spread_summary=spread_summary(spread, qmean, cfg.horizons, cfg.hac_lag_rule),
        security_blocks=n_sec_blocks, date_blocks=len(b_out),
    )
