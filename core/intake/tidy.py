"""From a :class:`~core.intake.readers.Grid` to a tidy table plus its :class:`FileReport`.

Series kinds (prices, earnings, market_cap, signal, dividends, benchmark) are
read in wide or long layout; record kinds (sectors, holdings) as two columns.
Every cell is counted once: parsed, blank, unparseable or dropped (by reason).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Callable, Sequence

import numpy as np
import pandas as pd

from core._typing import FileKind
from core.errors import IntakeError, Reason
from core.intake import numbers as nb
from core.intake.dates import parse_dates
from core.intake.kinds import VALUE_WORDS, guess_kind, infer_earnings_form
from core.intake.numbers import detect_decimal, parse_numbers
from core.intake.options import ReadOptions
from core.intake.readers import Grid
from core.intake.report import FileReport
from core.intake.sniff import DATE_WORDS, SECURITY_WORDS, looks_like_index, norm_name
from core.intake.tally import Tally

__all__ = ["tidy_grid", "clean_ids"]

_SAMPLE = 300
_POSITIVE_KINDS = frozenset({"prices", "market_cap", "benchmark"})
# final status codes of value cells beyond the numbers module's codes
_NONPOS, _NEGAMT, _NODATE, _NOSEC, _DUP = 10, 11, 12, 13, 14
_CODE_REASON = {
    nb.BLANK: Reason.BLANK,
    nb.MISSING: Reason.MISSING_MARKER,
    nb.UNPARSEABLE: Reason.UNPARSEABLE_NUMBER,
    nb.NON_FINITE: Reason.NON_FINITE,
    nb.OUT_OF_RANGE: Reason.OUT_OF_RANGE,
    _NONPOS: Reason.NON_POSITIVE_PRICE,
    _NEGAMT: Reason.NEGATIVE_AMOUNT,
    _NODATE: Reason.ROW_WITHOUT_DATE,
    _NOSEC: Reason.ROW_WITHOUT_SECURITY,
    _DUP: Reason.DUPLICATE_ENTRY,
}


@dataclass
class _Ctx:
    name: str
    grid: Grid
    options: ReadOptions
    header: list[str]
    tally: Tally = field(default_factory=Tally)
    notes: list[str] = field(default_factory=list)

    def col(self, j: int) -> pd.Series:
        return self.grid.columns[j]

    def text(self, j: int) -> pd.Series:
        s = self.grid.columns[j]
        if pd.api.types.is_string_dtype(s.dtype) and s.dtype != object:
            return s.fillna("").str.strip()
        if pd.api.types.is_datetime64_any_dtype(s.dtype):
            return pd.Series(pd.DatetimeIndex(s).strftime("%Y-%m-%d"), dtype="str").fillna("")
        return s.astype("str").fillna("").str.strip()

    def locator(self, j: int) -> Callable[[np.ndarray], tuple[np.ndarray, np.ndarray, np.ndarray]]:
        """Example locations for cells of column ``j`` (text formatted only for those cells)."""
        rows, col = self.grid.rows, self.header[j]

        def locate(i: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
            cells = self.grid.columns[j].iloc[i].reset_index(drop=True)
            txt = cells.astype("str").fillna("").str.strip() if not pd.api.types.is_datetime64_any_dtype(cells.dtype) \
                else pd.Series(pd.DatetimeIndex(cells).strftime("%Y-%m-%d"), dtype="str").fillna("")
            return rows[i], np.full(i.size, col, dtype=object), txt.to_numpy()

        return locate

    def whole_column(self, j: int, reason: Reason) -> None:
        self.tally.add(reason, np.ones(self.grid.n_rows, dtype=bool), self.locator(j))


# -- helpers --------------------------------------------------------------------------
def clean_ids(ids: pd.Series, options: ReadOptions) -> tuple[pd.Series, int]:
    """Trim identifiers and apply the clean-up rule.

    Returns the cleaned ids and how many did not match ``id_regex`` (kept trimmed).

    Examples
    --------
    >>> clean_ids(pd.Series([" tor14 x", "abc"]), ReadOptions(id_cleanup="first_token"))[0].tolist()
    ['tor14', 'abc']
    """
    s = ids.astype("str").fillna("").str.strip()
    misses = 0
    if options.id_cleanup == "upper":
        s = s.str.upper()
    elif options.id_cleanup == "first_token":
        s = s.str.extract(r"^(\S*)", expand=False).fillna("")
    elif options.id_cleanup == "regex" and options.id_regex:
        pat = re.compile(options.id_regex)
        got = s.str.extract(pat if pat.groups else f"({options.id_regex})", expand=True)[0]
        miss = got.isna() & (s != "")
        misses = int(miss.sum())
        s = got.fillna(s).astype("str").str.strip()
    return s, misses


def _find(ctx: _Ctx, wanted: str, setting: str) -> int:
    low = [h.lower() for h in ctx.header]
    for j, h in enumerate(ctx.header):
        if h == wanted:
            return j
    if wanted.strip().lower() in low:
        return low.index(wanted.strip().lower())
    raise IntakeError(ctx.name, Reason.COLUMN_NOT_FOUND, f"{setting}={wanted!r} is not a column of the file.",
                      column=wanted, row=ctx.grid.header_row,
                      hint=f"Columns found: {', '.join(map(repr, ctx.header[:12]))}{' ...' if len(ctx.header) > 12 else ''}.")


def _sample(s: pd.Series, k: int = _SAMPLE) -> pd.Series:
    if pd.api.types.is_string_dtype(s.dtype):
        t = s.head(20 * k).fillna("").str.strip()
        return t[t != ""].head(k)
    return s.dropna().head(k)


def _number_profile(s: pd.Series, decimal: str = "point") -> tuple[float, int]:
    """Share of non-blank sample cells that are neither numbers nor missing markers, and sample size."""
    smp = _sample(s)
    if smp.empty:
        return 0.0, 0
    if decimal == "auto":
        decimal = "point"
    r = parse_numbers(smp.reset_index(drop=True), "comma" if decimal == "comma" else "point")
    bad = np.isin(r.status, (nb.UNPARSEABLE,))
    return float(bad.mean()), int(len(smp))


def _number_profiles(ctx: _Ctx, cols: Sequence[int], decimal: str, k: int = 200) -> dict[int, tuple[float, int]]:
    """:func:`_number_profile` of many columns at once, on their first ``k`` rows (one parse for all)."""
    import pyarrow as pa

    out: dict[int, tuple[float, int]] = {}
    pieces: list[tuple[int, pa.Array | pa.ChunkedArray]] = []
    for j in cols:
        c = ctx.col(j)
        if pd.api.types.is_numeric_dtype(c.dtype) or pd.api.types.is_datetime64_any_dtype(c.dtype):
            out[j] = (0.0, int(c.head(k).notna().sum()))
            continue
        pa_arr = getattr(c.array, "_pa_array", None)
        pieces.append((j, pa_arr.slice(0, k) if pa_arr is not None else pa.array(c.head(k).astype("str").fillna("").tolist(), pa.string())))
    if not pieces:
        return out
    chunks = [ch.cast(pa.large_string()) for _, a in pieces for ch in (a.chunks if isinstance(a, pa.ChunkedArray) else [a])]
    stacked = pd.Series(pd.arrays.ArrowStringArray(pa.chunked_array(chunks, pa.large_string())))
    owner = np.repeat(np.arange(len(pieces)), [len(a) for _, a in pieces])
    text_heads = pieces
    r = parse_numbers(stacked, "comma" if decimal == "comma" else "point")
    nonblank = r.status != nb.BLANK
    bad = np.bincount(owner, weights=(r.status == nb.UNPARSEABLE).astype(float), minlength=len(text_heads))
    size = np.bincount(owner, weights=nonblank.astype(float), minlength=len(text_heads))
    for t, (j, _) in enumerate(text_heads):
        out[j] = (float(bad[t] / size[t]) if size[t] else 0.0, int(size[t]))
    return out


def _date_profile(s: pd.Series, allow_serial: bool) -> float:
    smp = _sample(s)
    if smp.empty:
        return 0.0
    r = parse_dates(smp.reset_index(drop=True), "auto", allow_serial=allow_serial)
    return float((r.status == 0).mean())


def _decimal(ctx: _Ctx, cols: Sequence[int]) -> tuple[str, str]:
    o = ctx.options
    if o.decimal != "auto":
        return o.decimal, "set by the user"
    texts = [ctx.col(j) for j in cols[:200] if not pd.api.types.is_numeric_dtype(ctx.col(j).dtype)]
    if not texts:
        return "point", "numbers stored as numbers"
    smp = pd.concat([_sample(t, 40) for t in texts], ignore_index=True)
    return detect_decimal(smp.astype("str").tolist(), ctx.grid.delimiter)


def _frequency(dates: np.ndarray) -> str | None:
    """Frequency label from the median spacing of the distinct dates."""
    u = np.unique(dates[~np.isnat(dates)])
    if u.size == 0:
        return None
    if u.size == 1:
        return "single date"
    gap = float(np.median(np.diff(u).astype("timedelta64[D]").astype(float)))
    if gap <= 1.5:
        return "daily"
    if gap <= 8:
        return "weekly"
    if gap <= 35:
        return "monthly"
    if gap <= 100:
        return "quarterly"
    if gap <= 200:
        return "semi-annual"
    return "annual or irregular"


# -- entry ------------------------------------------------------------------------------
def tidy_grid(grid: Grid, name: str, options: ReadOptions) -> tuple[FileKind, pd.DataFrame, FileReport]:
    """Turn a grid into the tidy table of its kind and the file's report.

    Parameters
    ----------
    grid : Grid
    name : str
        The file name as the user knows it.
    options : ReadOptions

    Returns
    -------
    kind, data, report
        ``data`` columns by kind: ``date, security, value`` (prices, earnings,
        market_cap, signal), ``date, value`` (benchmark), ``security, ex_date,
        amount`` (dividends), ``security, sector`` (sectors), ``security, weight``
        (holdings).

    Raises
    ------
    IntakeError
        No date or value column, an option naming a missing column, ambiguous
        value columns, or duplicates under ``duplicate_rule="error"``.
    """
    header = [h if h else f"(column {j + 1})" for j, h in enumerate(grid.header)]
    kind = options.kind or guess_kind(name, header)
    if kind is None:
        raise IntakeError(name, Reason.UNKNOWN_KIND, "cannot tell what the file holds from its name or header.",
                          row=grid.header_row, hint="Set kind (prices, earnings, dividends, sectors, holdings, benchmark, market_cap or signal).")
    if grid.n_rows == 0:
        raise IntakeError(name, Reason.NO_DATA, "the file has a header but no data rows.", row=grid.header_row,
                          hint="Check that the export contains the data, or that header_row is right.")
    ctx = _Ctx(name, grid, options, header)
    ctx.notes.extend(grid.notes)
    if grid.extra_cells:
        ctx.tally.add_count(Reason.EXTRA_FIELD, grid.extra_cells,
                            tuple((r, "(beyond the header)", v) for r, v in grid.extra_examples))
        ctx.notes.append(f"{grid.extra_cells} non-empty cells beyond the header's {len(header)} columns were dropped")
    excluded = _excluded(ctx)
    avail = [j for j in range(len(header)) if j not in excluded]
    if not avail:
        raise IntakeError(name, Reason.NO_VALUE_COLUMN, "every column is excluded.", hint="Check exclude_columns.")
    if kind in ("sectors", "holdings"):
        data, extra = _records(ctx, kind, avail)
    else:
        data, extra = _series(ctx, kind, avail)
    t = ctx.tally
    total = grid.n_rows * len(header) + grid.extra_cells
    blank, unp, drop = t.total_in("blank"), t.total_in("unparseable"), t.total_in("dropped")
    if t.parsed + blank + unp + drop != total:  # pragma: no cover - internal consistency guard
        raise IntakeError(name, Reason.UNREADABLE, f"internal cell count mismatch ({t.parsed}+{blank}+{unp}+{drop} != {total}).",
                          hint="Please report this file to the maintainers.")
    rep = FileReport(
        name=name, kind=kind, format=grid.format, encoding=grid.encoding, delimiter=grid.delimiter,
        header_row=grid.header_row, n_rows=grid.n_rows, n_columns=len(header),
        cells_total=total, cells_parsed=t.parsed, cells_blank=blank, cells_unparseable=unp, cells_dropped=drop,
        by_reason=t.by_reason(), examples=t.example_frame(), notes=tuple(ctx.notes), sheet=grid.sheet,
        excluded_columns=tuple(header[j] for j in sorted(excluded)), **extra,
    )
    return kind, data, rep


def _excluded(ctx: _Ctx) -> set[int]:
    out: set[int] = set()
    low = [h.strip().lower() for h in ctx.header]
    for want in ctx.options.exclude_columns:
        hits = [j for j, h in enumerate(low) if h == want.strip().lower()]
        if not hits:
            ctx.notes.append(f"exclude_columns names {want!r}, which is not a column of this file (nothing excluded for it)")
        out.update(hits)
    for j in sorted(out):
        ctx.whole_column(j, Reason.EXCLUDED_COLUMN)
    if out:
        ctx.notes.append(f"excluded by request: {', '.join(repr(ctx.header[j]) for j in sorted(out))} "
                         f"({len(out) * ctx.grid.n_rows} cells dropped)")
    return out


def _value_column(ctx: _Ctx, kind: str, candidates: Sequence[int], numeric: Sequence[int]) -> int:
    if ctx.options.value_column:
        return _find(ctx, ctx.options.value_column, "value_column")
    for word in VALUE_WORDS.get(kind, ()):
        for j in candidates:
            nm = norm_name(ctx.header[j])
            if nm == word or (len(word) > 2 and word in nm):
                return j
    if len(numeric) == 1:
        return numeric[0]
    if not numeric:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, f"no column of numbers found for the {kind} values.",
                          row=ctx.grid.header_row, hint="Set value_column to the column that holds them.")
    raise IntakeError(ctx.name, Reason.AMBIGUOUS_LAYOUT,
                      f"several columns could hold the {kind} values: {', '.join(repr(ctx.header[j]) for j in numeric)}.",
                      row=ctx.grid.header_row, hint="Set value_column to the one to use.")


# -- series kinds -------------------------------------------------------------------------
def _date_column(ctx: _Ctx, avail: list[int]) -> tuple[int, bool]:
    if ctx.options.date_column:
        j = _find(ctx, ctx.options.date_column, "date_column")
        share = _date_profile(ctx.col(j), allow_serial=False)
        return j, share < 0.5
    kw = [j for j in avail if norm_name(ctx.header[j]) in DATE_WORDS or norm_name(ctx.header[j]).endswith("date")]
    order = kw + [j for j in avail if j not in kw]
    for j in order:
        if _date_profile(ctx.col(j), allow_serial=False) >= (0.5 if j in kw else 0.8):
            return j, False
    for j in order[:1] + [k for k in kw if k != order[0]]:
        if _date_profile(ctx.col(j), allow_serial=True) >= 0.8:
            return j, True
    raise IntakeError(ctx.name, Reason.NO_DATE_COLUMN, "no column of dates found.", row=ctx.grid.header_row,
                      hint="Set date_column to the column that holds the dates.")


def _series(ctx: _Ctx, kind: str, avail: list[int]) -> tuple[pd.DataFrame, dict[str, Any]]:
    o, g = ctx.options, ctx.grid
    d, serial = _date_column(ctx, avail)
    rest = [j for j in avail if j != d]
    if not rest:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, "the file has a date column but no value columns.",
                          row=g.header_row, hint="Check the delimiter and the header row.")
    decimal, dec_reason = _decimal(ctx, rest)
    profiles = _number_profiles(ctx, rest, decimal)
    text_cols = [j for j in rest if profiles[j][1] > 0 and profiles[j][0] >= 0.5]
    numeric = [j for j in rest if j not in text_cols]
    if kind == "benchmark":
        layout = "series"
    elif o.layout != "auto":
        layout = o.layout
    elif o.security_column or text_cols:
        layout = "long"
    else:
        layout = "wide"
    sec: int | None = None
    if layout == "long":
        if o.security_column:
            sec = _find(ctx, o.security_column, "security_column")
        else:
            kw = [j for j in text_cols if norm_name(ctx.header[j]) in SECURITY_WORDS]
            pool = kw or text_cols or [j for j in rest if norm_name(ctx.header[j]) in SECURITY_WORDS]
            if not pool:
                raise IntakeError(ctx.name, Reason.AMBIGUOUS_LAYOUT, "long layout asked for, but no column of security codes found.",
                                  row=g.header_row, hint="Set security_column, or layout='wide'.")
            sec = pool[0]
        cands = [j for j in rest if j != sec]
        vcols = [_value_column(ctx, kind, cands, [j for j in numeric if j != sec])]
    elif layout == "series":
        vcols = [_value_column(ctx, kind, rest, numeric)]
    else:
        vcols = rest
    used = {d, *vcols} | ({sec} if sec is not None else set())
    unused = [j for j in avail if j not in used]
    for j in unused:
        ctx.whole_column(j, Reason.UNUSED_COLUMN)
    if unused:
        ctx.notes.append(f"columns not used: {', '.join(repr(ctx.header[j]) for j in unused)}")

    # dates
    dres = parse_dates(ctx.col(d), o.date_order, allow_serial=serial, rows=g.rows)
    ctx.tally.add_parsed(int((dres.status == 0).sum()))
    ctx.tally.add(Reason.BLANK, dres.status == 1, ctx.locator(d))
    ctx.tally.add(Reason.UNPARSEABLE_DATE, dres.status == 3, ctx.locator(d))
    if dres.ambiguous:
        ctx.notes.append(f"dates are ambiguous: {dres.order_reason}")
    date_ok = dres.status == 0

    # values
    stacked = pd.concat([ctx.col(j).reset_index(drop=True) for j in vcols], ignore_index=True) if len(vcols) > 1 else ctx.col(vcols[0]).reset_index(drop=True)
    if vcols != rest:
        decimal, dec_reason = _decimal(ctx, vcols)
    ctx.notes.append(f"decimal {decimal}: {dec_reason}")
    num = parse_numbers(stacked, decimal)  # type: ignore[arg-type]
    n = g.n_rows
    final = num.status.copy()
    vals = num.values
    ok = final == nb.PARSED
    if kind in _POSITIVE_KINDS:
        with np.errstate(invalid="ignore"):
            final[ok & (vals <= 0)] = _NONPOS
    elif kind == "dividends":
        with np.errstate(invalid="ignore"):
            final[ok & (vals < 0)] = _NEGAMT
    rowpos = np.tile(np.arange(n), len(vcols))
    ok = final == nb.PARSED
    final[ok & ~date_ok[rowpos]] = _NODATE
    if sec is not None:
        raw_ids = ctx.text(sec)
        codes, uniq = pd.factorize(raw_ids)
        cleaned, misses = clean_ids(pd.Series(np.asarray(uniq, dtype=object), dtype="str"), o)
        if misses:
            ctx.notes.append(f"{misses} distinct identifiers did not match id_regex and were kept as written")
        ccodes, id_table = pd.factorize(cleaned, sort=True)
        cell_code = ccodes[codes] if len(codes) else np.zeros(0, dtype=np.int64)
        blank_code = np.flatnonzero(np.asarray(id_table, dtype=object) == "")
        sec_blank = np.isin(cell_code, blank_code)
        ctx.tally.add_parsed(int((~sec_blank).sum()))
        ctx.tally.add(Reason.BLANK, sec_blank, ctx.locator(sec))
        ok = final == nb.PARSED
        final[ok & sec_blank[rowpos]] = _NOSEC
    else:
        names = pd.Series([ctx.header[j] for j in vcols], dtype="str") if layout == "wide" else pd.Series([""], dtype="str")
        cleaned, misses = clean_ids(names, o)
        if misses:
            ctx.notes.append(f"{misses} column names did not match id_regex and were kept as written")
        col_ids = cleaned.to_numpy(dtype=object)
        dup_names = pd.Series(col_ids).duplicated(keep=False).to_numpy()
        if dup_names.any() and layout == "wide":
            twice = sorted(set(col_ids[dup_names]))
            if o.duplicate_rule == "error":
                j = vcols[int(np.flatnonzero(dup_names)[1])]
                raise IntakeError(ctx.name, Reason.DUPLICATE_COLUMNS, f"security {twice[0]!r} has more than one column.",
                                  row=g.header_row, column=ctx.header[j], hint="Remove the extra column, or set duplicate_rule='last'.")
            ctx.notes.append(f"securities with more than one column: {', '.join(map(repr, twice[:10]))}; "
                             f"the {o.duplicate_rule} valid value per date wins")
        ccodes, id_table = pd.factorize(cleaned, sort=True)
        cell_code = ccodes

    # tidy entries (integer keys) and duplicates
    valid = np.flatnonzero(final == nb.PARSED)
    ii = valid % n if n else valid
    jj = valid // n if n else valid
    sec_v = (cell_code[ii] if sec is not None else cell_code[jj]).astype(np.int64)
    date_ns = dres.dates.astype("datetime64[ns]").view(np.int64)
    dcodes, dvals = pd.factorize(date_ns[ii], sort=True)
    key = sec_v * max(len(dvals), 1) + dcodes.astype(np.int64)
    order = np.argsort(key, kind="stable")  # by security, then date, then file order
    ks = key[order]
    same_next = np.zeros(ks.size, dtype=bool)
    if ks.size > 1:
        same_next[:-1] = ks[:-1] == ks[1:]
    same_prev = np.zeros(ks.size, dtype=bool)
    same_prev[1:] = same_next[:-1]
    drop = same_prev if o.duplicate_rule == "first" else same_next
    if drop.any():
        if o.duplicate_rule == "error":
            k = int(order[same_prev].min())  # the earliest entry (in file order) that repeats another
            when = pd.Timestamp(dres.dates[ii[k]]).strftime("%Y-%m-%d")
            who = f"security {id_table[sec_v[k]]!r} " if layout != "series" else ""
            raise IntakeError(ctx.name, Reason.DUPLICATE_ENTRY, f"{who}has more than one value for {when}.",
                              row=int(g.rows[ii[k]]), column=ctx.header[vcols[jj[k]]],
                              hint="Remove the duplicate, or set duplicate_rule='last' (or 'first').")
        final[valid[order[drop]]] = _DUP
        n_dup_dates = int(pd.Series(date_ns[date_ok]).duplicated().sum())
        ctx.notes.append(f"{int(drop.sum())} duplicate entries resolved ({o.duplicate_rule} wins)"
                         + (f"; {n_dup_dates} date row(s) repeat an earlier date" if n_dup_dates else ""))
    keep = order[~drop]
    sec_k = sec_v[keep]
    ids = pd.Series(pd.array(np.asarray(id_table, dtype=object), dtype="str")).take(sec_k).reset_index(drop=True)
    tidy = pd.DataFrame({"date": dres.dates[ii[keep]], "security": ids, "value": vals[valid[keep]]}, copy=False)
    _tally_values(ctx, final, vcols, stacked)

    # report fields
    value_form: str | None = None
    if kind == "earnings":
        form: str | None = o.earnings_form if o.earnings_form != "auto" else None
        src = ctx.header[vcols[0]] if layout != "wide" else ctx.name
        if form is None:
            form = infer_earnings_form(src) or infer_earnings_form(ctx.name) or "eps"
            ctx.notes.append(f"earnings read as {str(form).upper()} (" + ("from the header/file name" if infer_earnings_form(src) or infer_earnings_form(ctx.name) else "assumed; set earnings_form='pe' if these are P/E ratios") + ")")
        value_form = form
    else:
        value_form = None
    suspects: tuple[str, ...] = ()
    if layout == "wide":
        suspects = tuple(ctx.header[j] for j in vcols if looks_like_index(ctx.header[j]))
    elif sec is not None:
        suspects = tuple(sorted(str(s) for s in id_table if looks_like_index(str(s))))
    for s in suspects:
        ctx.notes.append(f"{s!r} looks like an index, composite or benchmark rather than a security; "
                         f"add it to exclude_columns if it is not one")
    if kind == "benchmark":
        out = tidy[["date", "value"]].reset_index(drop=True)
    elif kind == "dividends":
        out = tidy.rename(columns={"date": "ex_date", "value": "amount"})[["security", "ex_date", "amount"]]
    else:
        out = tidy
    extra: dict[str, Any] = dict(
        layout=layout if layout != "series" else "long",
        date_column=ctx.header[d], date_order=dres.order, date_order_reason=dres.order_reason,
        decimal=decimal, n_securities=int(1 + np.count_nonzero(np.diff(sec_k))) if kind != "benchmark" and keep.size else 0,
        first_date=pd.Timestamp(dvals.min()) if keep.size else None,
        last_date=pd.Timestamp(dvals.max()) if keep.size else None,
        frequency=_frequency(dvals.astype("datetime64[ns]")) if kind != "dividends" else "events", security_column=ctx.header[sec] if sec is not None else None,
        value_column=ctx.header[vcols[0]] if layout != "wide" else None, value_form=value_form,
        suspect_columns=suspects, date_ambiguous=dres.ambiguous,
    )
    return out, extra


def _tally_values(ctx: _Ctx, final: np.ndarray, vcols: Sequence[int], stacked: pd.Series) -> None:
    g = ctx.grid
    n = g.n_rows
    counts = np.bincount(final.astype(np.int64), minlength=16)
    ctx.tally.add_parsed(int(counts[nb.PARSED]))
    names = np.asarray([ctx.header[j] for j in vcols], dtype=object)

    def locate(i: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        return g.rows[i % n], names[i // n], stacked.iloc[i].astype("str").to_numpy()

    for code, reason in _CODE_REASON.items():
        if counts[code]:
            ctx.tally.add(reason, final == code, locate)


# -- record kinds --------------------------------------------------------------------------
def _records(ctx: _Ctx, kind: str, avail: list[int]) -> tuple[pd.DataFrame, dict[str, Any]]:
    o, g = ctx.options, ctx.grid
    if o.security_column:
        s = _find(ctx, o.security_column, "security_column")
    else:
        kw = [j for j in avail if norm_name(ctx.header[j]) in SECURITY_WORDS]
        s = kw[0] if kw else avail[0]
    rest = [j for j in avail if j != s]
    if not rest:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, f"the {kind} file needs a second column next to the security codes.",
                          row=g.header_row, hint="Check the delimiter and the header row.")
    if kind == "holdings":
        numeric = [j for j in rest if _number_profile(ctx.col(j))[0] < 0.5]
        v = _value_column(ctx, kind, rest, numeric)
    else:
        text = [j for j in rest if _number_profile(ctx.col(j))[0] >= 0.5]
        v = _value_column(ctx, kind, rest, text)
    unused = [j for j in avail if j not in (s, v)]
    for j in unused:
        ctx.whole_column(j, Reason.UNUSED_COLUMN)
    if unused:
        ctx.notes.append(f"columns not used: {', '.join(repr(ctx.header[j]) for j in unused)}")
    raw_ids = ctx.text(s)
    ids, misses = clean_ids(raw_ids, o)
    if misses:
        ctx.notes.append(f"{misses} identifiers did not match id_regex and were kept as written")
    sec_blank = (ids == "").to_numpy(dtype=bool)
    rows = g.rows
    ctx.tally.add_parsed(int((~sec_blank).sum()))
    ctx.tally.add(Reason.BLANK, sec_blank, ctx.locator(s))
    value_form: str | None = None
    decimal = "point"
    if kind == "holdings":
        decimal, dec_reason = _decimal(ctx, [v])
        ctx.notes.append(f"decimal {decimal}: {dec_reason}")
        num = parse_numbers(ctx.col(v).reset_index(drop=True), decimal)  # type: ignore[arg-type]
        final, vals = num.status.copy(), num.values
        if num.percent.any():
            value_form = "fraction"
            ctx.notes.append("weights carried % signs and were read as fractions (3.25% -> 0.0325)")
    else:
        txt = ctx.text(v)
        final = np.where(txt == "", nb.BLANK, nb.PARSED).astype(np.int8)
        final[txt.str.lower().isin(nb.MISSING_MARKERS).to_numpy(dtype=bool)] = nb.MISSING
        final[(txt == "").to_numpy(dtype=bool)] = nb.BLANK
        vals = txt.to_numpy(dtype=object)
    ok = final == nb.PARSED
    final[ok & sec_blank] = _NOSEC
    valid = np.flatnonzero(final == nb.PARSED)
    frame = pd.DataFrame({"security": pd.Series(ids.to_numpy()[valid], dtype="str"), "v": vals[valid]})
    dup = frame.duplicated(["security"], keep="first" if o.duplicate_rule == "first" else "last").to_numpy()
    if dup.any():
        if o.duplicate_rule == "error":
            k = int(np.flatnonzero(frame.duplicated(["security"], keep="first").to_numpy())[0])
            raise IntakeError(ctx.name, Reason.DUPLICATE_ENTRY, f"security {frame['security'].iloc[k]!r} appears more than once.",
                              row=int(rows[valid[k]]), column=ctx.header[v], hint="Remove the duplicate, or set duplicate_rule='last'.")
        final[valid[dup]] = _DUP
        ctx.notes.append(f"{int(dup.sum())} repeated securities resolved ({o.duplicate_rule} wins)")
        frame = frame[~dup]
    _tally_values(ctx, final, [v], ctx.col(v).reset_index(drop=True))
    if kind == "holdings":
        w = frame["v"].astype(float)
        total = float(w.sum())
        if value_form is None and len(w) and abs(total - 100.0) <= 0.5:
            w = w / 100.0
            value_form = "fraction"
            ctx.notes.append(f"weights sum to {total:g}: read as percentages and divided by 100")
        out = pd.DataFrame({"security": frame["security"].to_numpy(), "weight": w.to_numpy(dtype=float)})
    else:
        out = pd.DataFrame({"security": frame["security"].to_numpy(), "sector": pd.Series(frame["v"].to_numpy(), dtype="str").str.strip().to_numpy()})
        out = out.astype({"sector": "str"})
    out = out.astype({"security": "str"}).sort_values("security", kind="stable").reset_index(drop=True)
    extra: dict[str, Any] = dict(
        layout="records", date_column=None, date_order=None, date_order_reason=None,
        decimal=decimal if kind == "holdings" else None,
        n_securities=int(out["security"].nunique()), first_date=None, last_date=None, frequency=None,
        security_column=ctx.header[s], value_column=ctx.header[v], value_form=value_form,
    )
    return out, extra
