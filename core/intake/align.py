"""Alignment of tidy series to a month-end calendar, with the staleness limit."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from valuesift.core.panel import month_end_index

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
    arr = np.asarray(dates, dtype="datetime64[ns]")
    arr = arr[~np.isnat(arr)]
    if arr.size == 0:
        return pd.DatetimeIndex([], name="date", dtype="datetime64[ns]")
    me = month_end_index(pd.DatetimeIndex([arr.min(), arr.max()]))
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
    sec_codes, uniq = pd.factorize(data["security"], sort=True)
    cols = pd.Index(np.asarray(uniq, dtype=object), dtype="str") if columns is None else pd.Index(columns)
    shape = (len(calendar), len(cols))
    if data.empty or len(calendar) == 0:
        return AlignResult(pd.DataFrame(np.nan, index=calendar, columns=cols), pd.DataFrame(False, index=calendar, columns=cols), 0, 0, 0)
    dates = data["date"].to_numpy(dtype="datetime64[ns]")
    cal_m = calendar.to_numpy(dtype="datetime64[ns]").astype("datetime64[M]")
    # calendar arithmetic once per distinct date (a month-end file repeats each date for every security)
    d_code, d_uniq = pd.factorize(dates.view(np.int64))
    du = np.asarray(d_uniq, dtype=np.int64).view("datetime64[ns]")
    mu = (du.astype("datetime64[M]") - cal_m[0]).astype(np.int64)
    # One key per row, (security, month) with the months outside the calendar last; each step below keeps
    # to one or two arrays of a row's size at a time (a daily file has tens of millions of rows: the
    # sortedness test compares neighbours without differences, an already sorted file is not permuted).
    key = mu[d_code]  # the month's place in the calendar, then the key in place
    inside = (key >= 0) & (key < len(calendar))
    outside = int((~inside).sum())
    key[~inside] = len(calendar)
    sc = sec_codes.astype(np.int64, copy=False)
    del sec_codes
    key += sc * (len(calendar) + 1)
    dn = dates.view(np.int64)
    in_order = key.size < 2 or bool(np.all((key[1:] > key[:-1]) | ((key[1:] == key[:-1]) & (dn[1:] >= dn[:-1]))))
    order = None if in_order else np.lexsort((dn, key))
    ko = key if order is None else key[order]
    del key
    last = np.ones(ko.size, dtype=bool)
    np.not_equal(ko[:-1], ko[1:], out=last[:-1])
    del ko
    last &= inside if order is None else inside[order]
    pick = np.flatnonzero(last) if order is None else order[last]
    del last, order
    superseded = int(inside.sum() - pick.size)
    d_pick = d_code[pick]
    del d_code
    m_pick = mu[d_pick]
    me_u = (cal_m[np.clip(mu, 0, len(calendar) - 1)] + np.timedelta64(1, "M")).astype("datetime64[D]") - np.timedelta64(1, "D")
    age_u = (me_u - du.astype("datetime64[D]")).astype(np.int64)  # used only for dates inside the calendar
    age = age_u[d_pick]
    stale_pick = age > staleness_days if frequency not in LOW_FREQUENCIES else np.zeros(pick.size, dtype=bool)
    # map the data's security codes to the requested columns
    col_pos = cols.get_indexer(pd.Index(np.asarray(uniq, dtype=object), dtype="str"))
    cpos = col_pos[sc[pick]]
    known = cpos >= 0
    values = np.full(shape, np.nan)
    stale = np.zeros(shape, dtype=bool)
    ok = known & ~stale_pick
    values[m_pick[ok], cpos[ok]] = data["value"].to_numpy(dtype=float)[pick][ok]
    st = known & stale_pick
    stale[m_pick[st], cpos[st]] = True
    vf = pd.DataFrame(values, index=calendar, columns=cols)
    sf = pd.DataFrame(stale, index=calendar, columns=cols)
    vf.index.name = sf.index.name = "date"
    return AlignResult(vf, sf, superseded, int(stale.sum()), outside)
