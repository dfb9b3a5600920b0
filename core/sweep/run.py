"""Run the points of a sweep with the study engine, on a Dask cluster or in this process.

Each grid point is one :func:`core.study.run_study` call (no second
implementation).  On a cluster the panel is scattered to every worker once
(``client.scatter(panel, broadcast=True)``) and each task receives the
resulting future, so the data is not shipped per task.  Dask is imported only
here, inside the functions that need it, so the core install stays light.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

import numpy as np
import pandas as pd

from valuesift.core.errors import ConfigError, ValueSiftError
from valuesift.core.settings import is_month
from valuesift.core.config import StudyConfig
from valuesift.core.inference.sharpe import sharpe_ratio_t
from valuesift.core.multiple_testing.deflated import sharpe_moments
from valuesift.core.portfolio.holding import backtest_at_holding, monthly_inputs
from valuesift.core.portfolio.performance import max_drawdown, sharpe_ratio
from valuesift.core.stability.subsets import subset_block
from valuesift.core.study import run_study
from valuesift.core.panel import Panel
from valuesift.core.sweep.grid import GridPoint, SweepGrid
from valuesift.core.sweep.table import comparison_table

__all__ = ["SweepResult", "run_sweep", "evaluate_point", "panel_fingerprint", "sweep_statement"]

#: Called after each point: (points finished, points in the grid, point id, "ok" / "failed" / "reused").
SweepProgress = Callable[[int, int, str, str], None]


@dataclass(frozen=True)
class SweepResult:
    """A finished sweep.

    Attributes
    ----------
    name : str
    dimensions : tuple of str
        The varied dimensions (columns of ``table``).
    horizons : tuple of int
    table : DataFrame
        :func:`core.sweep.table.comparison_table`: one row per (point, horizon).
    configs : dict[str, dict]
        Study settings (``StudyConfig.to_dict()``) of every point, by point id.
    input_key : str
        Fingerprint of the panel the sweep ran on.
    computed, reused : int
        Points computed in this run and points taken from the cache folder.
    duplicates : int
        Grid points that repeated a configuration already in the grid (counted once, left out).
    holdout : str or None
        First month of the hold-out (``YYYY-MM``) when the sweep was judged out of sample.
    """

    name: str
    dimensions: tuple[str, ...]
    horizons: tuple[int, ...]
    table: pd.DataFrame
    configs: dict[str, dict[str, Any]]
    input_key: str
    computed: int
    reused: int
    duplicates: int = 0
    holdout: str | None = None

    @property
    def n_points(self) -> int:
        return len(self.configs)

    @property
    def n_failed(self) -> int:
        return int(self.table.loc[self.table["status"] != "ok", "point_id"].nunique())

    @property
    def n_tests(self) -> int:
        return int(np.isfinite(self.table["ic_p"].to_numpy(dtype=float)).sum())

    @property
    def statement(self) -> str:
        return sweep_statement(self)


def sweep_statement(res: SweepResult) -> str:
    """The plain statement of how many configurations were tried."""
    n_rows = len(res.table)
    sig_raw = int((res.table["ic_p"] <= 0.05).sum())
    sig_bh = int(res.table["significant_bh"].sum())
    sig_bon = int(res.table["significant_bonferroni"].sum())
    dup = (f" (distinct ones; {res.duplicates} repeated configuration(s) of the grid were counted once)"
           if res.duplicates else "")
    return (f"{res.n_points} study configurations were tried{dup}, each at {len(res.horizons)} horizon(s): "
            f"{n_rows} signal tests in all; {res.n_failed} configuration(s) failed and {res.n_tests} tests had a "
            f"HAC t-statistic. {sig_raw} look significant at 5 % on their own, {sig_bh} after the "
            f"Benjamini-Hochberg false-discovery-rate adjustment and {sig_bon} after Bonferroni. Picking the "
            f"best of many configurations overstates it: judge it by the adjusted columns.")


def _f(x: Any) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return math.nan
    return v if math.isfinite(v) else math.nan


def _check_holdout_dates(holdout: str, dates: pd.DatetimeIndex) -> None:
    """Refuse a hold-out month that leaves no month before it or none from it in the data (ConfigError)."""
    if len(dates) == 0:
        return
    start = pd.Timestamp(f"{holdout}-01")
    first, last = dates.min(), dates.max()
    span = f"the data run from {first:%Y-%m} to {last:%Y-%m}"
    if start <= first:
        raise ConfigError(f"The hold-out from {holdout} leaves no month before it to choose a configuration on: {span}.",
                          hint="Choose a later first month of the hold-out, or leave it empty.", setting="holdout")
    if start > last:
        raise ConfigError(f"The hold-out from {holdout} begins after the last month of the data: {span}.",
                          hint="Choose an earlier first month of the hold-out, or leave it empty.", setting="holdout")


def _holdout_masks(dates: pd.DatetimeIndex, h: int, start: pd.Timestamp) -> tuple[np.ndarray, np.ndarray]:
    """In-sample formation dates (their h-month window ends before ``start``) and hold-out ones (from ``start``)."""
    n = len(dates)
    end = np.array([dates[i + h] if i + h < n else pd.Timestamp.max for i in range(n)])
    return end < start, np.asarray(dates >= start)


def _ls_stats(r: np.ndarray) -> dict[str, float]:
    """Sharpe (annual), Lo (2002) t, worst drawdown and the moments for the PSR of long-short monthly returns."""
    x = r[np.isfinite(r)]
    sr, g3, g4, n = sharpe_moments(x)
    return {"sharpe": sharpe_ratio(x, 0.0),
            "sharpe_t": sharpe_ratio_t(sr, n) if math.isfinite(sr) else math.nan,
            "max_drawdown": max_drawdown(x), "sr_monthly": sr, "skew": g3, "kurtosis": g4, "n_months": float(n)}


def evaluate_point(panel: Panel, settings: dict[str, Any], holdout: str | None = None) -> dict[str, Any]:
    """Run one grid point and keep the figures of the comparison table (runs on a worker).

    Returns ``{"status": "ok", "rows": [per-horizon dict]}`` or
    ``{"status": "failed", "error": message}``; an error never escapes, so one
    bad point cannot sink the sweep.

    Per horizon h: the IC and spread with their headline t, and the long-short portfolio held
    h months (overlapping cohorts; the study's own backtest when h is its holding period):
    annual Sharpe ratio, its Lo (2002) t, worst drawdown and the moments the probabilistic Sharpe
    ratio needs.  With ``holdout`` (``YYYY-MM``) every figure is computed on the formation dates
    whose h-month window ends before that month (in-sample) and again, as ``oos_*``, on the
    formation dates from that month on (the hold-out); long-short months likewise.
    """
    try:
        cfg = StudyConfig.from_dict(dict(settings))
        res = run_study(panel, cfg, detail=False)
        inputs = monthly_inputs(panel)
    except ValueSiftError as err:
        return {"status": "failed", "error": str(err)}
    except Exception as err:  # noqa: BLE001 - recorded in the table, not raised
        return {"status": "failed", "error": f"{type(err).__name__}: {err}"}
    dates = pd.DatetimeIndex(res.rank_ic.index)
    start = pd.Timestamp(f"{holdout}-01") if holdout else None
    rows = []
    for h in cfg.horizons:
        ic = res.rank_ic[h].to_numpy(dtype=float)
        sp = res.spread[h].to_numpy(dtype=float)
        bt = backtest_at_holding(res, inputs, int(h))
        ls = bt.returns["long_short"]
        ls_v = ls.to_numpy(dtype=float)
        masks = [("", np.ones(len(dates), dtype=bool), np.ones(len(ls_v), dtype=bool))]
        if start is not None:
            ins, oos = _holdout_masks(dates, int(h), start)
            masks = [("", ins, np.asarray(ls.index < start)), ("oos_", oos, np.asarray(ls.index >= start))]
        row: dict[str, Any] = {"horizon": int(h)}
        for prefix, m, mm in masks:
            a = subset_block(ic, m, int(h), cfg.hac_lag_rule)
            b = subset_block(sp, m, int(h), cfg.hac_lag_rule)
            row.update({f"{prefix}mean_ic": _f(a["mean"]), f"{prefix}ic_t": _f(a["t"]), f"{prefix}spread": _f(b["mean"]),
                        f"{prefix}spread_t": _f(b["t"]), f"{prefix}n_dates": int(a["n_dates"]),
                        f"{prefix}too_short": bool(a["too_short"])})
            row.update({f"{prefix}{k}": _f(v) for k, v in _ls_stats(np.where(mm, ls_v, np.nan)).items()})
        row["breadth"] = _f(res.ic_summary.at[h, "mean_breadth"])
        rows.append(row)
    return {"status": "ok", "rows": rows}


def panel_fingerprint(panel: Panel) -> str:
    """SHA-256 (first 16 hex digits) of the panel's data and labels (the report is left out)."""
    h = hashlib.sha256()
    for name in ("prices", "eps", "dividends", "sectors", "holdings", "benchmark", "market_cap"):
        obj = getattr(panel, name)
        h.update(name.encode())
        if obj is None:
            h.update(b"-")
            continue
        h.update(pd.util.hash_pandas_object(obj, index=True).to_numpy().tobytes())
        if isinstance(obj, pd.DataFrame):
            h.update(json.dumps([str(c) for c in obj.columns]).encode())
    for us in panel.signals:
        h.update(f"signal:{us.name}:{us.higher_is_cheaper}".encode())
        h.update(pd.util.hash_pandas_object(us.values, index=True).to_numpy().tobytes())
        h.update(json.dumps([str(c) for c in us.values.columns]).encode())
    return h.hexdigest()[:16]


#: Layout of the cached rows (2: per-horizon Sharpe, its t and moments, hold-out columns).
_LAYOUT = 2


def _cache_file(cache_dir: Path, input_key: str, point: GridPoint) -> Path:
    return cache_dir / input_key / f"{point.id}.json"


def _read_cached(path: Path, point: GridPoint) -> dict[str, Any] | None:
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if data.get("config") != point.config.to_dict() or data.get("status") != "ok" or data.get("layout") != _LAYOUT:
        return None  # another configuration, a failure, or rows of an older table layout
    return {"status": "ok", "rows": data["rows"]}


def _write_cached(path: Path, point: GridPoint, out: dict[str, Any]) -> None:
    if out.get("status") != "ok":
        return  # failures are tried again on the next run
    path.parent.mkdir(parents=True, exist_ok=True)
    blob = json.dumps({"config": point.config.to_dict(), "layout": _LAYOUT, **out}, sort_keys=True)  # NaN kept as NaN
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-", suffix=".json")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write(blob)
    os.replace(tmp, path)


def run_sweep(
    panel: Panel,
    grid: SweepGrid,
    *,
    client: Any = None,
    cache_dir: str | os.PathLike[str] | None = None,
    progress: SweepProgress | None = None,
    holdout: str | None = None,
) -> SweepResult:
    """Run every point of ``grid`` on ``panel`` and build the comparison table.

    Parameters
    ----------
    panel : Panel
        The data (never modified; its intake report is not shipped to workers).
    grid : SweepGrid
        From :func:`core.sweep.grid.read_grid` or :func:`core.sweep.grid.parse_grid`.
    client : distributed.Client, optional
        Run the points on this Dask cluster; without one they run here, one by one.
    cache_dir : path, optional
        Folder of finished points, keyed by the panel fingerprint and the point
        id; a re-run with the same grid and inputs reuses them.
    progress : callable(done, total, point_id, status), optional
    holdout : str, optional
        ``YYYY-MM``: the best configuration is chosen on the dates before and reported on the dates
        from that month on (``oos_*`` columns; :func:`valuesift.core.sweep.selection.holdout_report`).

    Returns
    -------
    SweepResult

    Notes
    -----
    Every point is :func:`core.study.run_study` with the point's
    configuration; the table and its adjustment are described in
    :func:`core.sweep.table.comparison_table`.

    References
    ----------
    Benjamini & Hochberg (1995), J. R. Stat. Soc. B 57(1).
    """
    if holdout is not None and not is_month(holdout):
        raise ConfigError(f"--holdout-from {holdout!r} is not a month written YYYY-MM.",
                          hint="Write the first month of the hold-out, e.g. 2019-01.", setting="holdout")
    if holdout is not None:
        _check_holdout_dates(holdout, panel.dates)
    # Identical configurations are one trial: keep the first of each (the statement counts distinct ones).
    seen: set[str] = set()
    points = []
    for p in grid.points:
        if p.id not in seen:
            seen.add(p.id)
            points.append(p)
    n_dup = len(grid.points) - len(points) + int(getattr(grid, "duplicates", 0))
    shipped = panel.with_(report=None)
    key = panel_fingerprint(shipped)
    ckey = key + (f"-holdout-{holdout}" if holdout else "")
    cdir = Path(cache_dir) if cache_dir is not None else None
    outcome: dict[str, dict[str, Any]] = {}
    total = len(points)
    todo: list[GridPoint] = []
    for p in points:
        hit = _read_cached(_cache_file(cdir, ckey, p), p) if cdir is not None else None
        if hit is not None:
            outcome[p.id] = hit
            if progress is not None:
                progress(len(outcome), total, p.id, "reused")
        else:
            todo.append(p)
    reused = len(outcome)

    def done(p: GridPoint, out: dict[str, Any]) -> None:
        outcome[p.id] = out
        if cdir is not None:
            _write_cached(_cache_file(cdir, ckey, p), p, out)
        if progress is not None:
            progress(len(outcome), total, p.id, str(out["status"]))

    if todo and client is not None:
        _run_on_client(client, shipped, key, todo, done, holdout)
    else:
        for p in todo:
            args = (shipped, p.config.to_dict()) + ((holdout,) if holdout else ())
            done(p, evaluate_point(*args))
    rows: list[dict[str, Any]] = []
    for p in points:
        out = outcome[p.id]
        labels = dict(p.varied)
        if out["status"] == "ok":
            for r in out["rows"]:
                rows.append({"point_id": p.id, **labels, "status": "ok", "error": "", **r})
        else:
            for h in p.config.horizons:
                rows.append({"point_id": p.id, **labels, "status": "failed", "error": out["error"], "horizon": h})
    table = comparison_table(rows, grid.dimensions)
    return SweepResult(grid.name, grid.dimensions, grid.horizons, table,
                       {p.id: p.config.to_dict() for p in points}, key, len(todo), reused,
                       duplicates=n_dup, holdout=holdout)


def _run_on_client(client: Any, panel: Panel, input_key: str, todo: list[GridPoint],
                   done: Callable[[GridPoint, dict[str, Any]], None], holdout: str | None = None) -> None:
    """Scatter the panel once, submit one task per point referencing it, collect as they finish."""
    # the cluster extra only when a client is given: 0.52 s of start-up (python -X importtime)
    from distributed import as_completed

    panel_future = client.scatter(panel, broadcast=True)
    futures = {}
    for p in todo:
        extra = (holdout,) if holdout else ()
        fut = client.submit(evaluate_point, panel_future, p.config.to_dict(), *extra,
                            key=f"valuesift-point-{input_key}-{p.id}", pure=False)
        futures[fut] = p
    for fut in as_completed(list(futures)):
        p = futures[fut]
        try:
            out = fut.result()
        except Exception as err:  # a worker lost, a pickling problem: recorded, not raised
            out = {"status": "failed", "error": f"{type(err).__name__}: {err}"}
        done(p, out)
    del panel_future
