"""Alignment of tidy series to a month-end calendar, with the staleness limit."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.panel import month_end_index

__all__ = ["AlignResult", "month_calendar", "align_to_months", "LOW_FREQUENCIES"]

#: frequencies taken as "one value per month at most": no staleness limit applies
LOW_FREQUENCIES = frozenset({"monthly", "quarterly", "semi-annual", "annual or irregular", "single date"})


@dataclass(frozen=True)
class AlignResult:
    """A series kind on the month-end grid.

    ``values``: calendar x securities (NaN where no valid value);
    ``stale``: same axes, True where the month's last observation was older than
    the limit (so the value was set missing); ``superseded``: observations
    replaced by a later one in the same month; ``outside``: observations whose
    month is outside the calendar.
    """

    values: pd.DataFrame
    stale: pd.DataFrame
    superseded: int
    n_stale: int
    outside: int


def month_calendar(dates: pd.Series | np.ndarray) -> pd.DatetimeIndex:
    """Every calendar month-end from the first to the last date's month (named ``date``).

    Examples
    --------
    >>> month_calendar(np.array(["2019-01-15", "2019-03-02"], dtype="datetime64[ns]")).strftime("%Y-%m-%d").tolist()
    ['2019-01-31', '2019-02-28', '2019-03-31']
    """
    d = pd.DatetimeIndex(pd.Series(dates).dropna())
    if d.empty:
        return pd.DatetimeIndex([], name="date", dtype="datetime64[ns]")
    me = month_end_index(d)
    out = pd.date_range(me.min(), me.max(), freq="ME", name="date")
    return out.as_unit("ns")


def align_to_months(data: pd.DataFrame, calendar: pd.DatetimeIndex, *, staleness_days: int, frequency: str | None,
                    columns: pd.Index | None = None) -> AlignResult:
    """Put ``data`` (``date, security, value``) on ``calendar``.

    Parameters
    ----------
    data : pandas.DataFrame
    calendar : pandas.DatetimeIndex
        Month-ends.
    staleness_days : int
        For daily or weekly input: a month whose last valid observation is more
        than this many days before the month-end is missing (flagged stale).
    frequency : str or None
        The file's detected frequency; monthly or lower input has no staleness limit.
    columns : pandas.Index, optional
        Securities to return (others are dropped); default: those in ``data``.

    Returns
    -------
    AlignResult

    Notes
    -----
    value(month m) = value of the last observation dated within m; missing when
    ``month_end(m) - date > staleness_days`` and the input is daily or weekly.
    """
    cols = pd.Index(sorted(data["security"].unique()), dtype="str") if columns is None else columns
    empty_v = pd.DataFrame(np.nan, index=calendar, columns=cols)
    if data.empty or len(calendar) == 0:
        return AlignResult(empty_v, pd.DataFrame(False, index=calendar, columns=cols), 0, 0, 0)
    d = data.sort_values("date", kind="stable")
    me = month_end_index(d["date"])
    frame = pd.DataFrame({"security": d["security"].to_numpy(), "me": me, "date": d["date"].to_numpy(), "value": d["value"].to_numpy()})
    inside = frame["me"].isin(calendar).to_numpy()
    outside = int((~inside).sum())
    frame = frame[inside]
    last = frame.drop_duplicates(["security", "me"], keep="last")
    superseded = int(len(frame) - len(last))
    if frequency not in LOW_FREQUENCIES:
        age = (last["me"] - last["date"]).dt.days.to_numpy()
        stale_mask = age > staleness_days
    else:
        stale_mask = np.zeros(len(last), dtype=bool)
    good = last[~stale_mask]
    values = good.pivot(index="me", columns="security", values="value").reindex(index=calendar, columns=cols)
    values.index.name = "date"
    values.columns.name = None
    st = last[stale_mask]
    stale = pd.DataFrame(False, index=calendar, columns=cols)
    if len(st):
        flag = st.assign(flag=True).pivot(index="me", columns="security", values="flag").reindex(index=calendar, columns=cols)
        stale = flag.notna()
        stale.index.name = "date"
        stale.columns.name = None
    return AlignResult(values.astype(float), stale, superseded, int(stale.to_numpy().sum()), outside)
