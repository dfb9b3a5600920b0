"""The tidy entries of a series file: its parsed value cells in the order security, date, file order.

A series file's value cells arrive as one status code and one parsed number per
cell, the value columns one below the other (cell ``k`` is file row ``k % n``
of value column ``k // n``).  The cells still marked parsed become the entries
of the tidy table, sorted by security, then date, then file order; of two
entries for one security and date one is dropped by the duplicate rule (its
cell marked as a duplicate).

Two routes give the same entries.  When every cell of a value column belongs to
one security (wide and single-series files) the rows are put in date order once
and each security's column(s) walked in that order, so no per-cell key or sort
is built; a long file (a security column) sorts one key per cell.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from valuesift.core.intake import numbers as nb
from valuesift.core.intake._common import DUP

__all__ = ["Entries", "by_column_entries", "by_key_entries", "code_dtype", "nothing_can_repeat"]


@dataclass(frozen=True)
class Entries:
    """The kept entries and what the duplicate rule did.

    ``dates`` (the date parser's dtype), ``codes`` (security codes, the
    smallest integer type that holds them) and ``values`` (float64) are the
    entries in output order.  ``dates_seen`` holds the distinct dates of all
    parsed cells (int64 nanoseconds, ascending).  ``first_repeat`` is, under
    the "error" rule, the first cell in file order that repeats an earlier
    entry (its index in the stacked cells) and ``first_repeat_code`` its
    security code; None otherwise.
    """

    dates: np.ndarray
    codes: np.ndarray
    values: np.ndarray
    dates_seen: np.ndarray
    n_securities: int
    n_dropped: int
    first_repeat: int | None = None
    first_repeat_code: int | None = None
    #: when given, ``dates`` holds each entry's position in this sorted array of distinct dates instead of
    #: the date itself (a small integer per entry; see ``dates_as_codes`` of :func:`by_column_entries`)
    date_categories: np.ndarray | None = None


def _ranks(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``pandas.factorize(x, sort=True)`` of int64 values: each value's rank among the distinct values, and those
    (ascending); the codes are ranked in place, without the sorted factorization's extra copies of them."""
    codes, uniq = pd.factorize(x, size_hint=1024)  # a table sized for the distinct values, not for every cell
    del x
    by_value = np.argsort(uniq, kind="stable")
    rank = np.empty(by_value.size, dtype=np.int64)
    rank[by_value] = np.arange(by_value.size)
    np.take(rank, codes, out=codes)
    return codes, np.asarray(uniq)[by_value]


def code_dtype(n_codes: int) -> type[np.integer]:
    """The smallest signed integer type that holds the codes ``0 .. n_codes``."""
    for t in (np.int8, np.int16, np.int32):
        if n_codes <= np.iinfo(t).max:
            return t
    return np.int64


def _repeats(sorted_dates: np.ndarray, rule: str) -> tuple[np.ndarray, np.ndarray]:
    """Per entry in (date, file) order: repeats an earlier one, and is dropped by ``rule``."""
    same_next = np.zeros(sorted_dates.size, dtype=bool)
    if sorted_dates.size > 1:
        same_next[:-1] = sorted_dates[:-1] == sorted_dates[1:]
    same_prev = np.zeros(sorted_dates.size, dtype=bool)
    same_prev[1:] = same_next[:-1]
    return same_prev, (same_prev if rule == "first" else same_next)


def nothing_can_repeat(column_code: np.ndarray, dates: np.ndarray) -> bool:
    """Whether :func:`by_column_entries` can drop nothing: one column per security and no date twice.

    Then no cell becomes a duplicate, so every cell's final status is known before the entries are built
    (the common wide file).  A date that could not be read counts as repeated (NaT equals NaT here).

    Examples
    --------
    >>> days = np.array(["2020-01-02", "2020-01-01"], dtype="datetime64[ns]")
    >>> nothing_can_repeat(np.array([1, 0]), days), nothing_can_repeat(np.array([0, 0]), days)
    (True, False)
    """
    date_ns = dates.astype("datetime64[ns]", copy=False).view(np.int64)
    return bool(np.unique(column_code).size == len(column_code) and np.unique(date_ns).size == date_ns.size)


def by_column_entries(final: np.ndarray, values: list[np.ndarray], n: int, column_code: np.ndarray, dates: np.ndarray,
                      rule: str, *, dates_as_codes: bool = False) -> Entries:
    """Entries when value column ``j`` holds security ``column_code[j]`` (wide and single-series files).

    ``final`` (status per cell, int8) is updated in place: dropped duplicates
    get :data:`DUP` (except under the "error" rule, which only reports the first).
    ``values`` is a one-item list holding the parsed numbers per cell; it is
    emptied, so that those numbers are freed once the kept ones are copied
    (before the dates are gathered).  With ``dates_as_codes``, a file where
    nothing can repeat (:func:`nothing_can_repeat`) gives its entries' dates as
    codes into ``date_categories`` (the same dates in a quarter of the memory
    or less); other files give the dates themselves.

    Examples
    --------
    Two value columns of two rows: column 0 holds security 1, column 1
    security 0 (whose first cell is blank); the rows are dated 2 and 1 January.

    >>> final = np.array([nb.PARSED, nb.PARSED, nb.BLANK, nb.PARSED], dtype=np.int8)
    >>> days = np.array(["2020-01-02", "2020-01-01"], dtype="datetime64[ns]")
    >>> e = by_column_entries(final, [np.array([1.0, 2.0, np.nan, 4.0])], 2, np.array([1, 0]), days, "last")
    >>> e.codes.tolist(), e.values.tolist(), e.n_securities
    ([0, 1, 1], [4.0, 2.0, 1.0], 2)
    """
    m = len(column_code)
    numbers = values.pop()
    cells = final.reshape(m, n)
    date_ns = dates.astype("datetime64[ns]", copy=False).view(np.int64)
    row_order = np.argsort(date_ns, kind="stable")  # rows by date, file order among equal dates
    seen = (cells == nb.PARSED).any(axis=0)
    dates_seen = np.unique(date_ns[seen])
    del seen
    by_code = np.argsort(column_code, kind="stable")
    if nothing_can_repeat(column_code, dates):
        # the common wide file: one column per security and no date twice, so nothing repeats; every column's
        # parsed cells in date order, a block of columns at a time (a few array passes instead of three per column)
        held = [numbers]
        del numbers      # the callee frees them before gathering the dates: no reference may stay here
        return _one_column_each(final, held, n, column_code, by_code, row_order, dates, dates_seen, dates_as_codes)
    groups: dict[int, list[int]] = {}
    for j in by_code:
        groups.setdefault(int(column_code[j]), []).append(int(j))

    def walk(cols: list[int]) -> tuple[np.ndarray, np.ndarray]:
        """The parsed cells of one security's columns in (date, column, row) order: stacked index and date."""
        if len(cols) == 1:
            j = cols[0]
            rows = row_order[cells[j, row_order] == nb.PARSED]
            return rows + j * n, date_ns[rows]
        parts = [(row_order[cells[j, row_order] == nb.PARSED], j) for j in cols]
        idx = np.concatenate([rows + j * n for rows, j in parts])
        when = date_ns[idx % n]
        o = np.argsort(when, kind="stable")  # stable: among equal dates, columns in file order, then rows
        return idx[o], when[o]

    first_repeat: int | None = None
    first_code: int | None = None
    n_dropped = 0
    for code, cols in groups.items():  # pass 1: duplicates (a security with one column repeats only a date row)
        idx, when = walk(cols)
        same_prev, drop = _repeats(when, rule)
        if not drop.any():
            continue
        if rule == "error":
            k = int(idx[same_prev].min())
            if first_repeat is None or k < first_repeat:
                first_repeat, first_code = k, code
            continue
        final[idx[drop]] = DUP
        n_dropped += int(drop.sum())
    if first_repeat is not None:
        empty = np.zeros(0)
        return Entries(empty.astype(dates.dtype), empty.astype(np.int8), empty, dates_seen, 0, 0, first_repeat, first_code)
    total = int(np.count_nonzero(final == nb.PARSED))
    out_codes = np.empty(total, dtype=code_dtype(max(groups, default=0)))
    out_vals = np.empty(total, dtype=np.float64)
    pos, n_secs = 0, 0
    for code, cols in groups.items():  # pass 2: the kept cells' values, written straight into the output
        idx, _ = walk(cols)
        out_vals[pos:pos + idx.size] = numbers[idx]
        out_codes[pos:pos + idx.size] = code
        pos += idx.size
        n_secs += bool(idx.size)
    del numbers
    out_dates = np.empty(total, dtype=dates.dtype)
    pos = 0
    for cols in groups.values():  # pass 3: their dates
        idx, _ = walk(cols)
        out_dates[pos:pos + idx.size] = dates[idx % n]
        pos += idx.size
    return Entries(out_dates, out_codes, out_vals, dates_seen, n_secs, n_dropped)


def _one_column_each(final: np.ndarray, held: list[np.ndarray], n: int, column_code: np.ndarray, by_code: np.ndarray,
                     row_order: np.ndarray, dates: np.ndarray, dates_seen: np.ndarray,
                     dates_as_codes: bool = False) -> Entries:
    """:func:`by_column_entries` when every security has one column and no date repeats (no duplicates to drop):
    the same entries in the same order (securities by code, each one's cells by date), built in blocks of about
    130,000 cells; the values are gathered (and the parsed numbers freed) before the dates, as there."""
    m = len(column_code)
    numbers = held.pop()
    cells = final.reshape(m, n)
    step = max(1, (1 << 17) // max(n, 1))
    total = int(np.count_nonzero(final == nb.PARSED))
    out_codes = np.empty(total, dtype=code_dtype(int(column_code.max()) if m else 0))
    out_vals = np.empty(total, dtype=np.float64)

    def blocks() -> Any:
        for k in range(0, m, step):
            cols = by_code[k:k + step]
            kept = cells[cols][:, row_order] == nb.PARSED          # block columns x rows in date order
            counts = kept.sum(axis=1)
            rows = np.broadcast_to(row_order, kept.shape)[kept]     # row-major: column by column, rows by date
            yield cols, counts, rows

    pos, n_secs = 0, 0
    for cols, counts, rows in blocks():
        k = rows.size
        out_vals[pos:pos + k] = numbers[rows + np.repeat(cols.astype(np.int64) * n, counts)]
        out_codes[pos:pos + k] = np.repeat(column_code[cols], counts)
        n_secs += int(np.count_nonzero(counts))
        pos += k
    del numbers
    table: np.ndarray | None = None
    source = dates
    if dates_as_codes:  # each row's date as its place among the rows' distinct dates (no date repeats here)
        dated = ~np.isnat(dates)
        table = np.sort(dates[dated])
        source = np.full(n, -1, dtype=code_dtype(len(table)))
        source[dated] = np.searchsorted(table, dates[dated])
    out_dates = np.empty(total, dtype=source.dtype)
    pos = 0
    for _, _, rows in blocks():
        out_dates[pos:pos + rows.size] = source[rows]
        pos += rows.size
    return Entries(out_dates, out_codes, out_vals, dates_seen, n_secs, 0, date_categories=table)


def by_key_entries(final: np.ndarray, values: list[np.ndarray], n: int, row_code: np.ndarray, dates: np.ndarray,
                   rule: str) -> Entries:
    """Entries when file row ``i`` holds security ``row_code[i]`` (long files: one value column).

    One key per parsed cell (security code times the number of distinct dates
    plus the date's rank), sorted stably.  ``final`` and ``values`` as in
    :func:`by_column_entries`.
    """
    numbers = values.pop()
    valid = np.flatnonzero(final == nb.PARSED)
    date_ns = dates.astype("datetime64[ns]", copy=False).view(np.int64)
    rows = valid if final.size == n else valid % n  # one value column (a long file): cell k is row k
    dcodes, dates_seen = _ranks(date_ns[rows])
    width = max(len(dates_seen), 1)
    top = (int(row_code.max()) + 1) * width if row_code.size else 0
    # 32-bit keys when they fit (about 22.7 million for 3,000 securities x 7,560 days): half the memory, and
    # a faster stable sort of the same values in the same order
    key = row_code[rows].astype(np.int32 if top < np.iinfo(np.int32).max else np.int64)
    key *= width
    key += dcodes
    del dcodes
    if key.size < 2 or bool(np.all(key[1:] >= key[:-1])):
        order: np.ndarray | None = None  # already by security, then date (a file sorted that way)
        ks = key
    else:
        order = np.argsort(key, kind="stable")  # by security, then date, then file order
        ks = key[order]
    del key
    same_prev, drop = _repeats(ks, rule)
    n_dropped = int(drop.sum())
    if n_dropped:
        if rule == "error":
            pos = np.flatnonzero(same_prev) if order is None else order[same_prev]
            k = int(pos.min())  # the earliest entry (in file order) that repeats another
            empty = np.zeros(0)
            return Entries(empty.astype(dates.dtype), empty.astype(np.int8), empty, dates_seen, 0, 0,
                           int(valid[k]), int(row_code[rows[k]]))
        final[valid[drop] if order is None else valid[order[drop]]] = DUP
    keep_mask = ~drop
    del same_prev, drop
    kept_keys = ks[keep_mask]
    del ks
    kept_keys //= width  # the security codes of the kept entries, in output order
    codes = kept_keys.astype(code_dtype(int(kept_keys[-1]) if kept_keys.size else 0))
    del kept_keys
    n_secs = int(1 + np.count_nonzero(np.diff(codes))) if codes.size else 0
    cells = valid[keep_mask] if order is None else valid[order[keep_mask]]
    del valid, order, keep_mask, rows
    kept = numbers[cells]
    del numbers
    return Entries(dates[cells if final.size == n else cells % n], codes, kept, dates_seen, n_secs, n_dropped)
