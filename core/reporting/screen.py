"""The screen table for one date and a single security's history."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from valuesift.core.correlation.pearson import pearson_with_t
from valuesift.core.errors import ConfigError
from valuesift.core.inference.hac import headline_inference
from valuesift.core.inference.nonoverlap import TOO_SHORT_PERIODS, independent_periods
from valuesift.core.signals.clean import zscore_rows

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.result import StudyResult

__all__ = ["screen_table", "security_history", "SCREEN_FLAGS", "SINGLE_NAME_CAUTION", "STALE_MONTHS",
           "STALE_EPS_MONTHS"]

#: Months without a new price after which a name is flagged stale.
STALE_MONTHS = 3
#: Months since the last EPS stamp after which the EPS is flagged old.
STALE_EPS_MONTHS = 12

#: The screen's flag codes, in the order they are listed (the app holds their words).
SCREEN_FLAGS: tuple[str, ...] = ("outside_universe", "eps_not_positive", "stale_price", "old_eps", "no_quantile",
                                 "no_signal", "signal_not_meaningful")

SINGLE_NAME_CAUTION = (
    "A single security's signal against its own later returns is a noisy relation: "
    "one name gives one observation per date, so patterns here prove little on their own. "
    "Judge the signal on the cross-sectional results."
)


def _row_at(frame: pd.DataFrame | None, i: int, n: int) -> np.ndarray:
    if frame is None:
        return np.full(n, np.nan)
    return frame.iloc[i].to_numpy(dtype=float)


def _resolve_date(result: "StudyResult", date: object | None) -> int:
    idx = result.signal_z.index
    if date is None:
        has = np.isfinite(result.signal_z.to_numpy(dtype=float)).any(axis=1)
        if not has.any():
            raise ConfigError("No date of this study has a signal to screen on.", hint="Check the study's notes.")
        return int(np.flatnonzero(has)[-1])
    ts = pd.Timestamp(date)  # type: ignore[arg-type]
    me = (ts.to_period("M").to_timestamp(how="end")).normalize()
    if me not in idx:
        raise ConfigError(
            f"Screen date {ts.date()} is outside the study's dates.",
            hint=f"Allowed: month-ends from {idx[0].date()} to {idx[-1].date()}.",
        )
    return int(idx.get_indexer(pd.Index([me]))[0])


def screen_table(result: "StudyResult", date: object | None = None) -> pd.DataFrame:
    """The screen on one date (default: the latest date with a signal).

    Returns
    -------
    DataFrame indexed by security (cheapest first), columns: ``sector``,
    ``in_universe``, ``signal`` (raw units), ``pe`` (NaN where not meaningful),
    ``has_eps`` (an EPS is in use, so a missing P/E means "not meaningful"), ``zscore``,
    ``sector_zscore``, ``quantile`` (1 = dearest .. n = cheapest), ``z_change_3m``,
    ``z_change_12m``, ``months_since_price``, ``months_since_eps``,
    ``holding_weight``, ``flags`` (codes of :data:`SCREEN_FLAGS`, ``;``-joined; the
    app words them).  Codes and numbers only.

    Notes
    -----
    Changes in z are ``z_t - z_{t-3}`` and ``z_t - z_{t-12}`` of the evaluated
    z-score.  Rows: every security with a valid price within the last 12
    months of the date.  The table has ``attrs["date"]`` (ISO) and ``attrs["n_quantiles"]``.
    """
    i = _resolve_date(result, date)
    secs = result.signal_z.columns
    n = len(secs)
    z = _row_at(result.signal_z, i, n)
    z3 = z - _row_at(result.signal_z, i - 3, n) if i >= 3 else np.full(n, np.nan)
    z12 = z - _row_at(result.signal_z, i - 12, n) if i >= 12 else np.full(n, np.nan)
    q = _row_at(result.quantile, i, n)
    pe = _row_at(result.pe, i, n)
    pa = _row_at(result.price_age, i, n)
    ea = _row_at(result.eps_age, i, n)
    raw = _row_at(result.signal_raw, i, n)
    uni = result.universe.iloc[i].to_numpy(dtype=bool)
    info = result.security_info.reindex(secs)
    eps_now = _row_at(result.eps_used, i, n)
    aside = (_row_at(result.signal_set_aside.astype(float), i, n) > 0 if len(result.signal_set_aside)
             else np.zeros(n, dtype=bool))
    with np.errstate(invalid="ignore"):
        hits = [
            ~uni,
            np.isfinite(eps_now) & (eps_now <= 0),
            np.isfinite(pa) & (pa >= STALE_MONTHS),
            np.isfinite(ea) & (ea >= STALE_EPS_MONTHS),
            uni & ~np.isfinite(q),
            ~np.isfinite(raw) & ~aside,
            aside,
        ]
    joined = np.full(n, "", dtype=object)
    for code, hit in zip(SCREEN_FLAGS, hits):
        joined = np.where(hit, np.where(joined == "", code, joined + ";" + code), joined)
    flags = [str(x) for x in joined]
    out = pd.DataFrame(
        {
            "sector": info["sector"].to_numpy(),
            "in_universe": uni,
            "signal": raw,
            "pe": pe,
            "has_eps": np.isfinite(ea) | np.isfinite(pe),
            "zscore": _row_at(result.zscore, i, n),
            "sector_zscore": _row_at(result.sector_zscore, i, n),
            "quantile": q,
            "z_change_3m": z3,
            "z_change_12m": z12,
            "months_since_price": pa,
            "months_since_eps": ea,
            "holding_weight": info["holding_weight"].to_numpy(dtype=float),
            "flags": flags,
        },
        index=pd.Index(secs, name="security"),
    )
    keep = np.isfinite(pa) & (pa <= 12)
    out = out[keep]
    order = np.lexsort((out.index.to_numpy().astype(str), -np.nan_to_num(out["zscore"].to_numpy(dtype=float), nan=-np.inf)))
    out = out.iloc[order]
    out.attrs["date"] = result.signal_z.index[i].date().isoformat()
    out.attrs["n_quantiles"] = int(result.config.n_quantiles)
    return out


def security_history(result: "StudyResult", security: str, horizon: int | None = None) -> pd.DataFrame:
    """One security's signal z-score against its own later return z-score.

    Returns
    -------
    DataFrame (dates) with ``signal_z``, ``forward_return`` (h months) and
    ``return_z`` (the forward return's cross-sectional z-score on that date,
    ddof 1).  ``attrs["caution"]`` holds :data:`SINGLE_NAME_CAUTION`,
    ``attrs["horizon"]`` the horizon, ``attrs["correlation"]`` the Pearson r of
    ``signal_z`` and ``return_z`` over the dates with both, ``attrs["correlation_t"]``
    its overlap-aware t (the headline standard error of
    :func:`valuesift.core.inference.hac.headline_inference` on the standardised cross
    products, whose mean is r; method in ``attrs["correlation_t_method"]``),
    ``attrs["correlation_t_naive"]`` the t that assumes independent dates,
    ``attrs["independent_periods"]`` and ``attrs["too_short"]`` (fewer than
    :data:`~valuesift.core.inference.nonoverlap.TOO_SHORT_PERIODS`), and
    ``attrs["n_pairs"]`` the number of those dates.

    Notes
    -----
    ``return_z_{t,i} = (R_{t,i} - mean_t R) / sd_t R`` across the universe.
    """
    if security not in result.signal_z.columns:
        raise ConfigError(f"Security {security!r} is not in this study.", hint="Pick one of the panel's securities.")
    h = int(horizon) if horizon is not None else int(result.config.horizons[0])
    if h not in result.forward_returns:
        raise ConfigError(
            f"Horizon {h} is not one of this study's horizons.",
            hint="Allowed: " + ", ".join(str(x) for x in result.config.horizons) + ".",
        )
    fwd = result.forward_returns[h]
    j = int(fwd.columns.get_indexer(pd.Index([security]))[0])
    rz = zscore_rows(fwd.to_numpy(dtype=float), "mean_std", ddof=1)[:, j]
    out = pd.DataFrame(
        {
            "signal_z": result.signal_z[security].to_numpy(dtype=float),
            "forward_return": fwd[security].to_numpy(dtype=float),
            "return_z": rz,
        },
        index=result.signal_z.index,
    )
    a, b = out["signal_z"].to_numpy(), out["return_z"].to_numpy()
    r, t_naive, n = pearson_with_t(a, b)
    # The overlap-aware t: the correlation is the time-mean of the standardised cross products, whose
    # h-month overlap the headline standard error (Hansen-Hodrick above one month) allows for.
    ok = np.isfinite(a) & np.isfinite(b)
    head: dict[str, object] = {"t": np.nan, "method": "newey_west"}
    if ok.sum() >= 3:
        x, y = a[ok], b[ok]
        sx, sy = x.std(ddof=1), y.std(ddof=1)
        if sx > 0 and sy > 0:
            u = (x - x.mean()) * (y - y.mean()) / (sx * sy) * (len(x) / (len(x) - 1))
            head = headline_inference(u, h)
    periods = independent_periods(int(n), h)
    out.attrs["caution"] = SINGLE_NAME_CAUTION
    out.attrs["horizon"] = h
    out.attrs["correlation"] = r
    out.attrs["correlation_t"] = float(head["t"])  # type: ignore[arg-type]
    out.attrs["correlation_t_method"] = str(head["method"])
    out.attrs["correlation_t_naive"] = t_naive
    out.attrs["independent_periods"] = periods
    out.attrs["too_short"] = bool(periods < TOO_SHORT_PERIODS)
    out.attrs["n_pairs"] = n
    return out
