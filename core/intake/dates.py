"""Vectorised date parsing: ISO, day/month or month/day slashes, Excel serials, months.

Parsing is done once per distinct text (long files repeat each date many
times), with regular expressions over whole columns.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from valuesift.core.choices import DateOrder

__all__ = ["DateResult", "parse_dates", "date_share", "stripped_codes"]

_MONTHS = {
    "jan": 1, "january": 1, "feb": 2, "february": 2, "mar": 3, "march": 3, "apr": 4, "april": 4,
    "may": 5, "jun": 6, "june": 6, "jul": 7, "july": 7, "aug": 8, "august": 8, "sep": 9, "sept": 9,
    "september": 9, "oct": 10, "october": 10, "nov": 11, "november": 11, "dec": 12, "december": 12,
}
_TIME = r"(?:[T ]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?:Z|[+-]\d{2}:?\d{2})?)?"
_ISO = rf"^(\d{{4}})[-/.](\d{{1,2}})[-/.](\d{{1,2}}){_TIME}$"
_SLASH = rf"^(\d{{1,2}})[/.-](\d{{1,2}})[/.-](\d{{4}}|\d{{2}}){_TIME}$"
_COMPACT = r"^((?:19|20|21)\d{2})(\d{2})(\d{2})$"
_YM = r"^(\d{4})[-/.](\d{1,2})$"
_MY = r"^(\d{1,2})[/.-](\d{4})$"
_MON_Y = r"^([A-Za-z]{3,9})\.?[\s\-/,']*(\d{4}|\d{2})$"
_D_MON_Y = r"^(\d{1,2})[\s\-/.]*([A-Za-z]{3,9})\.?[\s\-/.,']*(\d{4}|\d{2})$"
_MON_D_Y = r"^([A-Za-z]{3,9})\.?\s+(\d{1,2}),?\s+(\d{4})$"
_SERIAL = r"^(\d{1,7})(?:\.\d+)?$"
_EXCEL_EPOCH = np.datetime64("1899-12-30", "D")
#: the last Excel serial whose day a nanosecond date can hold (2262-04-11; Excel's own last, 2958465, is
#: 9999-12-31): a larger number is not read as a date (before, it stopped the whole file's read)
_LAST_SERIAL = int((np.datetime64("2262-04-11", "D") - _EXCEL_EPOCH).astype(np.int64))


def stripped_codes(s: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """``pd.factorize(s.astype("str").fillna("").str.strip())`` without a stripped copy of every cell.

    The distinct cells are found first and only they are stripped (a long file repeats each id and each
    date on many rows).  Returns the codes (in order of first appearance, as the factorize of the
    stripped column numbers them) and the distinct stripped texts (an object array).

    Examples
    --------
    >>> codes, uniq = stripped_codes(pd.Series([" a", "b ", "a", None], dtype="str"))
    >>> codes.tolist(), uniq.tolist()
    ([0, 1, 0, 2], ['a', 'b', ''])
    """
    if not isinstance(s.dtype, pd.StringDtype):
        # (Python objects: factorize would hold 1, 1.0 and True as one value, which read as different texts)
        codes, uniq = pd.factorize(s.astype("str").fillna("").str.strip())
        return codes, np.asarray(uniq, dtype=object)
    raw_codes, raw_uniq = pd.factorize(s)  # a missing cell gets -1
    text = pd.Series(np.asarray(raw_uniq, dtype=object), dtype="str").str.strip()
    missing = bool((raw_codes < 0).any())
    if missing:
        raw_codes = np.where(raw_codes < 0, len(text), raw_codes)
        text = pd.concat([text, pd.Series([""], dtype="str")], ignore_index=True)
    first, uniq = pd.factorize(text)
    if not missing and len(uniq) == len(text):
        return raw_codes, np.asarray(uniq, dtype=object)  # (one stripped text per distinct cell: the same order)
    # a missing cell, or stripping joined some texts (" A1" and "A1"): the codes of the stripped text,
    # numbered again in order of first appearance (``order``: the stripped texts in that order)
    codes, order = pd.factorize(first[raw_codes])
    return codes, np.asarray(uniq, dtype=object)[order]


@dataclass(frozen=True)
class DateResult:
    """Parsed dates (datetime64[ns], NaT where not parsed) and flags per cell.

    ``status``: 0 parsed, 1 blank, 3 unparseable (codes shared with :mod:`numbers`).
    ``order`` is the slash order used and ``order_reason`` says why.
    ``month_only`` marks cells that named a month, not a day (stamped at month-end).
    """

    dates: np.ndarray
    status: np.ndarray
    order: str
    order_reason: str
    month_only: np.ndarray
    ambiguous: bool


def _year(y: pd.Series) -> pd.Series:
    yi = pd.to_numeric(y, errors="coerce")
    return yi.where(yi >= 100, yi.where(yi >= 70, yi + 2000).where(yi < 70, yi + 1900))


def _assemble(y: pd.Series, m: pd.Series, d: pd.Series | None) -> pd.Series:
    """Dates from year, month and day parts (NaT where a part is missing or out of range, or the day is
    past the month's end, as ``pd.to_datetime(..., errors="coerce")``); month-end when ``d`` is None."""
    yv = pd.to_numeric(y, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    mv = pd.to_numeric(m, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    dv = np.ones(len(yv)) if d is None else pd.to_numeric(d, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    with np.errstate(invalid="ignore"):
        ok = (yv >= 1800) & (yv <= 2200) & (mv >= 1) & (mv <= 12) & (dv >= 1) & (dv <= 31)
    out = np.full(len(yv), np.datetime64("NaT", "ns"))
    if ok.any():
        month = ((yv[ok].astype(np.int64) - 1970) * 12 + mv[ok].astype(np.int64) - 1).astype("datetime64[M]")
        if d is None:
            day = (month + 1).astype("datetime64[D]") - 1  # the month's last day
            out[ok] = day.astype("datetime64[ns]")
        else:
            day = month.astype("datetime64[D]") + (dv[ok].astype(np.int64) - 1)
            real = day.astype("datetime64[M]") == month  # (31 April runs into May: not a date)
            out[np.flatnonzero(ok)[real]] = day[real].astype("datetime64[ns]")
    return pd.Series(out, index=y.index, dtype="datetime64[ns]")


def _month_number(names: pd.Series) -> pd.Series:
    return names.str.lower().map(_MONTHS)


def parse_dates(
    values: pd.Series, order: DateOrder = "auto", *, allow_serial: bool = False, rows: np.ndarray | None = None
) -> DateResult:
    """Parse a column of dates.

    Parameters
    ----------
    values : pandas.Series
        Text, datetime or numeric cells.
    order : {"auto", "dmy", "mdy", "ymd"}
        Order for ``a/b/yyyy`` dates.  ``auto``: day-first if a first part above 12
        is seen, month-first if a second part above 12 is seen, otherwise
        ambiguous and day-first assumed (the reason says so).
    allow_serial : bool
        Read plain integers as Excel serial day numbers (days since 1899-12-30).
    rows : numpy.ndarray, optional
        1-based file row of each cell (used in the reason text).

    Returns
    -------
    DateResult

    Notes
    -----
    Accepted: ``2019-03-31`` (optionally with a time), ``31/03/2019``,
    ``03/31/2019``, ``20190331``, ``2019-03`` and ``03/2019``, ``Mar 2019``,
    ``31 Mar 2019``, ``Mar 31, 2019`` and Excel serials.  Month-only stamps are
    placed at the month-end.

    References
    ----------
    ISO 8601 for the ISO forms; the Excel 1900 date system (serial 1 =
    1900-01-01, with the 1900 leap-year quirk, hence the 1899-12-30 epoch) is
    common practice.

    Examples
    --------
    >>> r = parse_dates(pd.Series(["31/01/2019", "28/02/2019"]))
    >>> r.order, [str(d)[:10] for d in r.dates]
    ('dmy', ['2019-01-31', '2019-02-28'])
    """
    n = len(values)
    if pd.api.types.is_datetime64_any_dtype(values.dtype):
        idx = pd.DatetimeIndex(values)
        if idx.tz is not None:
            idx = idx.tz_localize(None)
        d = idx.as_unit("ns").to_numpy()
        status = np.isnat(d).view(np.int8).copy()  # 1 for a missing date, 0 for a date (no 64-bit step)
        return DateResult(d, status, "iso", "dates stored as dates", np.zeros(n, dtype=bool), False)
    if pd.api.types.is_numeric_dtype(values.dtype) and not pd.api.types.is_bool_dtype(values.dtype):
        v = values.to_numpy(dtype=float, na_value=np.nan)
        text = pd.Series(np.where(np.isnan(v), "", pd.Series(v).map(lambda x: "%.10g" % x)), dtype="str")
        codes, uniq_arr = pd.factorize(text)
    else:  # the distinct cells stripped, not every cell (the same codes and texts)
        codes, uniq_arr = stripped_codes(values)
    u = pd.Series(np.asarray(uniq_arr, dtype=object), dtype="str")
    res = pd.Series(pd.NaT, index=u.index, dtype="datetime64[ns]")
    month_only = pd.Series(False, index=u.index)

    def extract(pat: str) -> pd.DataFrame | None:
        # the pattern's groups for the texts no earlier pattern has read (NaN for the others, as every step
        # below looks only at those); None when every text is read or blank (no pattern matches a blank):
        # a column of one date form skips the later patterns
        todo = (res.isna() & (u != "")).to_numpy(dtype=bool, na_value=False)
        if not todo.any():
            return None
        if todo.all():
            return u.str.extract(pat)
        return u[todo].str.extract(pat).reindex(u.index)

    iso = extract(_ISO)
    if iso is not None:
        m = iso[0].notna()
        if m.any():
            res[m] = _assemble(iso.loc[m, 0], iso.loc[m, 1], iso.loc[m, 2])
    comp = extract(_COMPACT)
    if comp is not None:
        m = comp[0].notna() & res.isna()
        if m.any():
            res[m] = _assemble(comp.loc[m, 0], comp.loc[m, 1], comp.loc[m, 2])
    for pat, yi, mi in ((_YM, 0, 1), (_MY, 1, 0)):
        ym = extract(pat)
        if ym is not None:
            m = ym[0].notna() & res.isna()
            if m.any():
                res[m] = _assemble(ym.loc[m, yi], ym.loc[m, mi], None)
                month_only[m] = True
    mon = extract(_MON_Y)
    if mon is not None:
        m = mon[0].notna() & res.isna()
        if m.any():
            res[m] = _assemble(_year(mon.loc[m, 1]), _month_number(mon.loc[m, 0]), None)
            month_only[m & res.notna()] = True
    dmy = extract(_D_MON_Y)
    if dmy is not None:
        m = dmy[0].notna() & res.isna()
        if m.any():
            res[m] = _assemble(_year(dmy.loc[m, 2]), _month_number(dmy.loc[m, 1]), dmy.loc[m, 0])
    mdy = extract(_MON_D_Y)
    if mdy is not None:
        m = mdy[0].notna() & res.isna()
        if m.any():
            res[m] = _assemble(mdy.loc[m, 2], _month_number(mdy.loc[m, 0]), mdy.loc[m, 1])

    used_order, reason, ambiguous = "iso", "ISO or named-month dates", False
    sl = extract(_SLASH)
    m = sl[0].notna() & res.isna() if sl is not None else None
    if m is not None and m.any():
        a = pd.to_numeric(sl.loc[m, 0])
        b = pd.to_numeric(sl.loc[m, 1])
        where = (lambda i: int(rows[i])) if rows is not None else (lambda i: i + 1)
        first_rows = {j: where(int(np.argmax(codes == j))) for j in (a[a > 12].index[:1].tolist() + b[b > 12].index[:1].tolist())}
        if order in ("dmy", "mdy"):
            used_order, reason = order, f"set by the user ({order})"
        elif (a > 12).any() and not (b > 12).any():
            j = a[a > 12].index[0]
            used_order, reason = "dmy", f"day > 12 in the first position ({u[j]!r}, row {first_rows[j]})"
        elif (b > 12).any() and not (a > 12).any():
            j = b[b > 12].index[0]
            used_order, reason = "mdy", f"day > 12 in the second position ({u[j]!r}, row {first_rows[j]})"
        elif (a > 12).any() and (b > 12).any():
            na, nb = int((a > 12).sum()), int((b > 12).sum())
            used_order = "dmy" if na >= nb else "mdy"
            reason = f"inconsistent: {na} dates read only day-first, {nb} only month-first; {used_order} used, the others are unparseable"
        else:
            used_order, ambiguous = "dmy", True
            reason = "ambiguous (no day above 12): day-first (dmy) assumed; set date_order='mdy' if months come first"
        if used_order == "ymd":
            used_order = "dmy"
        day, mon_ = (sl.loc[m, 0], sl.loc[m, 1]) if used_order == "dmy" else (sl.loc[m, 1], sl.loc[m, 0])
        res[m] = _assemble(_year(sl.loc[m, 2]), mon_, day)
    if allow_serial:
        ser = extract(_SERIAL)
        m = ser[0].notna() & res.isna() if ser is not None else None
        if m is not None and m.any():
            k = pd.to_numeric(ser.loc[m, 0])
            k = k[(k >= 1) & (k <= _LAST_SERIAL)]
            res[k.index] = pd.to_datetime(_EXCEL_EPOCH + k.to_numpy().astype("timedelta64[D]")).as_unit("ns")
            if used_order == "iso":
                used_order, reason = "serial", "Excel serial day numbers (days since 1899-12-30)"

    dates = res.to_numpy(dtype="datetime64[ns]")[codes]
    blank = (u == "").to_numpy(dtype=bool, na_value=False)[codes]
    status = np.where(np.isnat(dates), 3, 0).astype(np.int8)
    status[blank] = 1
    return DateResult(dates, status, used_order, reason, month_only.to_numpy(dtype=bool)[codes], ambiguous)


def date_share(values: pd.Series, *, allow_serial: bool = False) -> float:
    """Share of non-blank cells in ``values`` that read as dates (0 when none are non-blank)."""
    r = parse_dates(values, "auto", allow_serial=allow_serial)
    nb = r.status != 1
    return float((r.status[nb] == 0).mean()) if nb.any() else 0.0
