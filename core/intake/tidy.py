"""From a :class:`~core.intake.readers.Grid` to a tidy table plus its :class:`FileReport`.

Series kinds (prices, earnings, market_cap, signal, dividends, benchmark) are
read in wide or long layout here; record kinds (sectors, holdings) in
:mod:`core.intake.records`.  Every cell is counted once: parsed, blank,
unparseable or dropped (by reason).
"""

from __future__ import annotations

import re

from typing import Any, Callable

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from valuesift.core.choices import FileKind
from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake import numbers as nb
from valuesift.core.intake._common import (
    NEGAMT, NODATE, NONPOS, NOSEC, POSITIVE_KINDS, Ctx, clean_ids, date_profile, decide_decimal,
    find_column, frequency, number_profiles, stack_columns, tally_values, value_column,
)
from valuesift.core.intake.dates import parse_dates, stripped_codes
from valuesift.core.intake.kinds import guess_kind, infer_earnings_form
from valuesift.core.intake.entries import by_column_entries, by_key_entries, code_dtype, nothing_can_repeat
from valuesift.core.intake.numbers import parse_numbers, parse_text_columns
from valuesift.core.intake.options import ReadOptions, choice_words
from valuesift.core.intake.readers import Grid
from valuesift.core.intake.records import tidy_records
from valuesift.core.intake.report import FileReport
from valuesift.core.intake.sniff import DATE_WORDS, SECURITY_WORDS, looks_like_index, norm_name

__all__ = ["tidy_grid", "clean_ids"]

_TEXT = pd.StringDtype("pyarrow", na_value=np.nan)  # the "str" dtype of text cells


# -- entry ------------------------------------------------------------------------------
def _future_limit() -> np.datetime64:
    """Dates after this (today plus 366 days) are set aside as out of range."""
    return np.datetime64(pd.Timestamp.now().normalize() + pd.Timedelta(days=366), "ns")


def tidy_grid(grid: Grid, name: str, options: ReadOptions, *, release_cells: bool = False,
              lean: bool = False) -> tuple[FileKind, pd.DataFrame, FileReport]:
    """Turn a grid into the tidy table of its kind and the file's report.

    Parameters
    ----------
    grid : Grid
    name : str
        The file name as the user knows it.
    options : ReadOptions
    release_cells : bool
        Empty ``grid.columns`` once a series file's cells are counted (before
        its tidy table is built), so that their text is freed when the caller
        holds the grid only to hand it over (as :func:`read_table` does).
    lean : bool
        Less memory, for a caller that stores the table (the dashboard's
        uploads): a series file's security column is a categorical of the same
        text (each id held once, a small integer code per entry) instead of one
        string per entry, and with ``release_cells`` a wide file's text is let
        go column block by column block as its numbers are made, wherever no
        example will need it (one more Arrow pass over the numbers).  The
        report is the same.

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
                          row=grid.header_row, hint=f"Choose what it holds under {choice_words('kind')} (prices, earnings, dividends, sectors, holdings, benchmark, market capitalisation or your own signal), or give it with --prices, --earnings, ... on the command line.")
    if grid.n_rows == 0:
        raise IntakeError(name, Reason.NO_DATA, "the file has a header but no data rows.", row=grid.header_row,
                          hint=f"Check that the export contains the data, or that {choice_words('header_row')} is right.")
    ctx = Ctx(name, grid, options, header, release_cells=release_cells, lean=lean)
    ctx.notes.extend(grid.notes)
    if grid.extra_cells:
        ctx.tally.add_count(Reason.EXTRA_FIELD, grid.extra_cells,
                            tuple((r, "(beyond the header)", v) for r, v in grid.extra_examples))
        ctx.notes.append(f"{grid.extra_cells} non-empty cells beyond the header's {len(header)} columns were dropped")
    excluded = _excluded(ctx)
    avail = [j for j in range(len(header)) if j not in excluded]
    if not avail:
        raise IntakeError(name, Reason.NO_VALUE_COLUMN, "every column is excluded.", hint=f"Check {choice_words('exclude_columns')}.")
    if kind in ("sectors", "holdings"):
        data, extra = tidy_records(ctx, kind, avail)
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


def _excluded(ctx: Ctx) -> set[int]:
    out: set[int] = set()
    low = [h.strip().lower() for h in ctx.header]
    for want in ctx.options.exclude_columns:
        hits = [j for j, h in enumerate(low) if h == want.strip().lower()]
        if not hits:
            ctx.notes.append(f"{choice_words('exclude_columns')} names {want!r}, which is not a column of this file (nothing left out for it)")
        out.update(hits)
    for j in sorted(out):
        ctx.whole_column(j, Reason.EXCLUDED_COLUMN)
    if out:
        ctx.notes.append(f"excluded by request: {', '.join(repr(ctx.header[j]) for j in sorted(out))} "
                         f"({len(out) * ctx.grid.n_rows} cells dropped)")
    return out


def _arrow_text(s: pd.Series) -> bool:
    """Whether a column is text held in Arrow (the "str" dtype every delimited file and spreadsheet gives)."""
    return s.dtype == _TEXT and hasattr(s.array, "_pa_array")


def _id_column(id_table: Any, codes: np.ndarray, *, as_categories: bool = False) -> pd.Series:
    """The security column: ``id_table[codes]`` as text, taken in Arrow from the small table of distinct ids;
    with ``as_categories`` a categorical column of the same text (the codes kept, the ids held once)."""
    if as_categories:
        return pd.Series(pd.Categorical.from_codes(codes, categories=pd.Index(np.asarray(id_table, dtype=object), dtype="str")))
    table = pd.array(np.asarray(id_table, dtype=object), dtype="str")._pa_array
    taken = pc.take(pa.concat_arrays(table.chunks) if table.num_chunks != 1 else table.chunk(0), pa.array(codes))
    return pd.Series(pd.arrays.ArrowStringArray(pa.chunked_array([taken]), dtype=_TEXT))


def _spare_text(ctx: Ctx, kind: str, vcols: list[int], date_ok: np.ndarray) -> Callable[[int, int, np.ndarray], bool] | None:
    """For a lean read of a wide (or one-series) file where no entry can repeat (the caller checks): the question
    :func:`~valuesift.core.intake.numbers.parse_text_columns` asks after each block of value columns,
    answered True (and the columns' text let go from the grid) when every cell of the block is blank or
    a number that stays (a dated row; above zero for prices, not below zero for dividends), so that no
    example will show its text (a blank cell's example is its empty text).  None when not lean."""
    if not (ctx.lean and ctx.release_cells):
        return None
    g = ctx.grid
    undated = ~date_ok

    def spare(k0: int, k1: int, values: np.ndarray) -> bool:
        v = values.reshape(k1 - k0, -1)
        has = ~np.isnan(v)
        if np.any(has & undated[None, :]):
            return False
        with np.errstate(invalid="ignore"):
            if kind in POSITIVE_KINDS and np.any(has & (v <= 0)):
                return False
            if kind == "dividends" and np.any(has & (v < 0)):
                return False
        for i in range(k0, k1):
            g.columns[vcols[i]] = None  # type: ignore[call-overload]
        return True

    return spare


# -- series kinds -------------------------------------------------------------------------
def _date_column(ctx: Ctx, avail: list[int]) -> tuple[int, bool]:
    if ctx.options.date_column:
        j = find_column(ctx, ctx.options.date_column, "date_column")
        share = date_profile(ctx.col(j), allow_serial=False)
        return j, share < 0.5
    kw = [j for j in avail if norm_name(ctx.header[j]) in DATE_WORDS or norm_name(ctx.header[j]).endswith("date")]
    order = kw + [j for j in avail if j not in kw]
    for j in order:
        if date_profile(ctx.col(j), allow_serial=False) >= (0.5 if j in kw else 0.8):
            return j, False
    for j in order[:1] + [k for k in kw if k != order[0]]:
        if date_profile(ctx.col(j), allow_serial=True) >= 0.8:
            return j, True
    raise IntakeError(ctx.name, Reason.NO_DATE_COLUMN, "no column of dates found.", row=ctx.grid.header_row,
                      hint=f"Set {choice_words('date_column')} to the column that holds the dates.")


#: Header words of a column holding the date an earnings figure became public (matched on the
#: lower-cased name with everything but letters and digits removed).
AVAILABILITY_NAME = re.compile(r"announce|reportdate|reported|reportedon|release|available|availability|publish|"
                               r"publication|filingdate|filed")


def _availability_column(ctx: Ctx, d: int, candidates: list[int]) -> int | None:
    """The announcement-date column of a long earnings file, or None (the user's choice wins)."""
    if ctx.options.earnings_date_column:
        return find_column(ctx, ctx.options.earnings_date_column, "earnings_date_column")
    for j in candidates:
        if AVAILABILITY_NAME.search(norm_name(ctx.header[j])) and date_profile(ctx.col(j), allow_serial=False) >= 0.5:
            return j
    if AVAILABILITY_NAME.search(norm_name(ctx.header[d])):
        return d
    return None


def _release(ctx: Ctx, j: int) -> None:
    """Let go of column ``j``'s cells (every count and example of it is taken; see ``release_cells``)."""
    ctx.grid.columns[j] = None  # type: ignore[call-overload]
    pa.default_memory_pool().release_unused()


def _stripped_codes(ctx: Ctx, j: int) -> tuple[np.ndarray, Any]:
    """``pd.factorize(ctx.text(j))`` of a text column without the stripped copy of every cell
    (:func:`valuesift.core.intake.dates.stripped_codes`)."""
    s = ctx.col(j)
    if not isinstance(s.dtype, pd.StringDtype):
        return pd.factorize(ctx.text(j))
    return stripped_codes(s)


def _series(ctx: Ctx, kind: str, avail: list[int]) -> tuple[pd.DataFrame, dict[str, Any]]:
    o, g = ctx.options, ctx.grid
    d, serial = _date_column(ctx, avail)
    rest = [j for j in avail if j != d]
    if not rest:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, "the file has a date column but no value columns.",
                          row=g.header_row, hint="Check the delimiter and the header row.")
    decimal, dec_reason = decide_decimal(ctx, rest)
    profiles = number_profiles(ctx, rest, decimal)
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
            sec = find_column(ctx, o.security_column, "security_column")
        else:
            kw = [j for j in text_cols if norm_name(ctx.header[j]) in SECURITY_WORDS]
            pool = kw or text_cols or [j for j in rest if norm_name(ctx.header[j]) in SECURITY_WORDS]
            if not pool:
                raise IntakeError(ctx.name, Reason.AMBIGUOUS_LAYOUT, "long layout asked for, but no column of security codes found.",
                                  row=g.header_row, hint=f"Set {choice_words('security_column')}, or choose the wide {choice_words('layout')}.")
            sec = pool[0]
        cands = [j for j in rest if j != sec]
        vcols = [value_column(ctx, kind, cands, [j for j in numeric if j != sec])]
    elif layout == "series":
        vcols = [value_column(ctx, kind, rest, numeric)]
    else:
        vcols = rest
    avail_col: int | None = None
    if kind == "earnings" and layout == "long":
        avail_col = _availability_column(ctx, d, [j for j in rest if j != sec and j not in vcols])
        if avail_col is not None and avail_col != d:
            ctx.notes.append(f"each EPS is dated by the announcement column {ctx.header[avail_col]!r} and used from "
                             f"the first month-end on or after that date, with no fixed reporting lag; the column "
                             f"{ctx.header[d]!r} is not used")
            d = avail_col
        elif avail_col is not None:
            ctx.notes.append(f"the date column {ctx.header[d]!r} reads as the date each EPS became public: each "
                             "figure is used from the first month-end on or after it, with no fixed reporting lag")
    used = {d, *vcols} | ({sec} if sec is not None else set())
    unused = [j for j in avail if j not in used]
    for j in unused:
        ctx.whole_column(j, Reason.UNUSED_COLUMN)
    if unused:
        ctx.notes.append(f"columns not used: {', '.join(repr(ctx.header[j]) for j in unused)}")

    # dates
    dres = parse_dates(ctx.col(d), o.date_order, allow_serial=serial, rows=g.rows)
    # A date more than a year after today cannot be an observation (a typing slip such as 2199).
    future = (dres.status == 0) & (dres.dates.astype("datetime64[ns]", copy=False) > _future_limit())
    ctx.tally.add_parsed(int(((dres.status == 0) & ~future).sum()))
    ctx.tally.add(Reason.BLANK, dres.status == 1, ctx.locator(d))
    ctx.tally.add(Reason.UNPARSEABLE_DATE, dres.status == 3, ctx.locator(d))
    if future.any():
        ctx.tally.add(Reason.OUT_OF_RANGE, future, ctx.locator(d))
        ctx.notes.append(f"{int(future.sum())} dates more than a year in the future were set aside")
    if dres.ambiguous:
        ctx.notes.append(f"dates are ambiguous: {dres.order_reason}")
    date_ok = (dres.status == 0) & ~future
    if ctx.release_cells and sec is not None:
        # a long file's dates are counted and their examples taken: the parsed dates are all that is read
        # from here on, so the column's cells go now instead of after the entries (a fifth of the peak)
        _release(ctx, d)

    # values: Arrow text columns (every delimited file and spreadsheet) are parsed column by column, with no
    # stacked copy of their text; typed columns (Parquet) are stacked as arrays first
    by_column = all(_arrow_text(ctx.col(j)) for j in vcols)
    stacked = None if by_column else stack_columns([ctx.col(j) for j in vcols])
    if vcols != rest:
        decimal, dec_reason = decide_decimal(ctx, vcols)
    ctx.notes.append(f"decimal {decimal}: {dec_reason}")
    if sec is None:  # the securities are the value columns (one for a single series): known before the values
        names = pd.Series([ctx.header[j] for j in vcols] if layout == "wide" else [""], dtype="str")
        cleaned, misses = clean_ids(names, o)
    # When no cell can become a duplicate (a wide file with one column per security and no date twice) every
    # cell's status is final once the values are parsed: the cells are counted and their text let go before
    # the entries are built (and, in a lean read, while the values are parsed).
    counted = sec is None and nothing_can_repeat(pd.factorize(cleaned)[0], dres.dates)
    if stacked is None:
        spare = _spare_text(ctx, kind, vcols, date_ok) if counted and decimal == "point" else None
        num = parse_text_columns([ctx.col(j) for j in vcols], decimal, spare=spare)  # type: ignore[arg-type]
        del spare
    else:
        num = parse_numbers(stacked, decimal)  # type: ignore[arg-type]
    n = g.n_rows
    # the parser's own arrays (contiguous, so the reshaped view below writes into ``final``); no percent marks
    final, vals = np.ascontiguousarray(num.status), num.values
    del num
    ok = final == nb.PARSED
    if kind in POSITIVE_KINDS:
        with np.errstate(invalid="ignore"):
            final[ok & (vals <= 0)] = NONPOS
    elif kind == "dividends":
        with np.errstate(invalid="ignore"):
            final[ok & (vals < 0)] = NEGAMT
    del ok
    cells = final.reshape(len(vcols), n)  # a view: one row per value column, one column per file row
    cells[(cells == nb.PARSED) & ~date_ok[None, :]] = NODATE
    if sec is not None:
        codes, uniq = _stripped_codes(ctx, sec)
        cleaned, misses = clean_ids(pd.Series(np.asarray(uniq, dtype=object), dtype="str"), o)
        if misses:
            ctx.notes.append(f"{misses} distinct identifiers did not match id_regex and were kept as written")
        ccodes, id_table = pd.factorize(cleaned, sort=True)
        cell_code = ccodes.astype(code_dtype(len(id_table)))[codes] if len(codes) else np.zeros(0, dtype=np.int64)
        del codes
        blank_code = np.flatnonzero(np.asarray(id_table, dtype=object) == "")
        sec_blank = np.isin(cell_code, blank_code)
        ctx.tally.add_parsed(int((~sec_blank).sum()))
        ctx.tally.add(Reason.BLANK, sec_blank, ctx.locator(sec))
        cells[(cells == nb.PARSED) & sec_blank[None, :]] = NOSEC
        del sec_blank
        if ctx.release_cells:  # the ids are codes now and the blank ones counted: the column's text goes
            _release(ctx, sec)
    else:
        if misses:
            ctx.notes.append(f"{misses} column names did not match id_regex and were kept as written")
        col_ids = cleaned.to_numpy(dtype=object)
        dup_names = pd.Series(col_ids).duplicated(keep=False).to_numpy()
        if dup_names.any() and layout == "wide":
            twice = sorted(set(col_ids[dup_names]))
            if o.duplicate_rule == "error":
                j = vcols[int(np.flatnonzero(dup_names)[1])]
                raise IntakeError(ctx.name, Reason.DUPLICATE_COLUMNS, f"security {twice[0]!r} has more than one column.",
                                  row=g.header_row, column=ctx.header[j], hint=f"Remove the extra column, or set {choice_words('duplicate_rule')} to the last one wins.")
            ctx.notes.append(f"securities with more than one column: {', '.join(map(repr, twice[:10]))}; "
                             f"the {o.duplicate_rule} valid value per date wins")
        ccodes, id_table = pd.factorize(cleaned, sort=True)
        cell_code = ccodes

    # tidy entries and duplicates, in the order security, then date, then file order
    numbers = [vals]  # handed over: the entries free the parsed numbers once they have copied the kept ones
    del vals
    if counted:
        tally_values(ctx, final, vcols, stacked)
        stacked = None
        if ctx.release_cells:
            g.columns.clear()
            pa.default_memory_pool().release_unused()
    if sec is None:
        ent = by_column_entries(final, numbers, n, np.asarray(cell_code), dres.dates, o.duplicate_rule,
                                dates_as_codes=ctx.lean)
    else:
        ent = by_key_entries(final, numbers, n, np.asarray(cell_code), dres.dates, o.duplicate_rule)
    dvals = ent.dates_seen
    if ent.first_repeat is not None:
        k = ent.first_repeat
        when = pd.Timestamp(dres.dates[k % n]).strftime("%Y-%m-%d")
        who = f"security {id_table[ent.first_repeat_code]!r} " if layout != "series" else ""
        raise IntakeError(ctx.name, Reason.DUPLICATE_ENTRY, f"{who}has more than one value for {when}.",
                          row=int(g.rows[k % n]), column=ctx.header[vcols[k // n]],
                          hint=f"Remove the duplicate, or set {choice_words('duplicate_rule')} to the last (or the first) one wins.")
    if ent.n_dropped:
        date_ns = dres.dates.astype("datetime64[ns]", copy=False).view(np.int64)
        n_dup_dates = int(pd.Series(date_ns[date_ok]).duplicated().sum())
        ctx.notes.append(f"{ent.n_dropped} duplicate entries resolved ({o.duplicate_rule} wins)"
                         + (f"; {n_dup_dates} date row(s) repeat an earlier date" if n_dup_dates else ""))
    if not counted:
        tally_values(ctx, final, vcols, stacked)
    del final, stacked
    if ctx.release_cells:  # every count and example is taken: the cells' text goes before the security column is built
        g.columns.clear()
    keep_size, n_secs = int(len(ent.values)), ent.n_securities
    ids = _id_column(id_table, ent.codes, as_categories=ctx.lean)
    when = ent.dates if ent.date_categories is None else \
        pd.Categorical.from_codes(ent.dates, categories=pd.Index(ent.date_categories))
    tidy = pd.DataFrame({"date": when, "security": ids, "value": ent.values}, copy=False)
    del when
    del ent, ids

    # report fields
    value_form: str | None = None
    if kind == "earnings":
        form: str | None = o.earnings_form if o.earnings_form != "auto" else None
        src = ctx.header[vcols[0]] if layout != "wide" else ctx.name
        if form is None:
            form = infer_earnings_form(src) or infer_earnings_form(ctx.name) or "eps"
            ctx.notes.append(f"earnings read as {str(form).upper()} (" + ("from the header/file name" if infer_earnings_form(src) or infer_earnings_form(ctx.name) else f"assumed; if these are P/E ratios, set {choice_words('earnings_form')} to P/E") + ")")
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
        decimal=decimal, n_securities=n_secs if kind != "benchmark" and keep_size else 0,
        first_date=pd.Timestamp(dvals.min()) if keep_size else None,
        last_date=pd.Timestamp(dvals.max()) if keep_size else None,
        frequency=("annual or irregular" if avail_col is not None else frequency(dvals.astype("datetime64[ns]")))
        if kind != "dividends" else "events", security_column=ctx.header[sec] if sec is not None else None,
        value_column=ctx.header[vcols[0]] if layout != "wide" else None, value_form=value_form,
        suspect_columns=suspects, date_ambiguous=dres.ambiguous,
        availability_column=ctx.header[avail_col] if avail_col is not None else None,
    )
    return out, extra
