"""Shared pieces of tidying: the per-file context, column finders, samplers and cell accounting."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Callable, Sequence

import numpy as np
import pandas as pd
import pyarrow as pa

from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake import numbers as nb
from valuesift.core.intake.dates import parse_dates
from valuesift.core.intake.kinds import VALUE_WORDS
from valuesift.core.intake.numbers import detect_decimal, parse_numbers
from valuesift.core.intake.options import ReadOptions, choice_words
from valuesift.core.intake.readers import Grid
from valuesift.core.intake.sniff import norm_name
from valuesift.core.intake.tally import Tally

__all__ = ["clean_ids", "Ctx", "CODE_REASON", "NONPOS", "NEGAMT", "NODATE", "NOSEC", "DUP", "POSITIVE_KINDS",
           "find_column", "sample", "number_profile", "number_profiles", "date_profile", "decide_decimal",
           "frequency", "value_column", "tally_values", "stack_columns"]

SAMPLE = 300
_TEXT = pd.StringDtype("pyarrow", na_value=np.nan)  # the "str" dtype of text cells
POSITIVE_KINDS = frozenset({"prices", "market_cap", "benchmark"})
# final status codes of value cells beyond the numbers module's codes
NONPOS, NEGAMT, NODATE, NOSEC, DUP = 10, 11, 12, 13, 14
CODE_REASON = {
    nb.BLANK: Reason.BLANK,
    nb.MISSING: Reason.MISSING_MARKER,
    nb.UNPARSEABLE: Reason.UNPARSEABLE_NUMBER,
    nb.NON_FINITE: Reason.NON_FINITE,
    nb.OUT_OF_RANGE: Reason.OUT_OF_RANGE,
    NONPOS: Reason.NON_POSITIVE_PRICE,
    NEGAMT: Reason.NEGATIVE_AMOUNT,
    NODATE: Reason.ROW_WITHOUT_DATE,
    NOSEC: Reason.ROW_WITHOUT_SECURITY,
    DUP: Reason.DUPLICATE_ENTRY,
}


@dataclass
class Ctx:
    name: str
    grid: Grid
    options: ReadOptions
    header: list[str]
    tally: Tally = field(default_factory=Tally)
    notes: list[str] = field(default_factory=list)
    release_cells: bool = False  # empty grid.columns once the cells are counted (see tidy_grid)
    lean: bool = False  # less memory: see tidy_grid

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


def find_column(ctx: Ctx, wanted: str, setting: str) -> int:
    low = [h.lower() for h in ctx.header]
    for j, h in enumerate(ctx.header):
        if h == wanted:
            return j
    if wanted.strip().lower() in low:
        return low.index(wanted.strip().lower())
    raise IntakeError(ctx.name, Reason.COLUMN_NOT_FOUND, f"{choice_words(setting)} names {wanted!r}, which is not a column of the file.",
                      column=wanted, row=ctx.grid.header_row,
                      hint=f"Columns found: {', '.join(map(repr, ctx.header[:12]))}{' ...' if len(ctx.header) > 12 else ''}.")


def sample(s: pd.Series, k: int = SAMPLE) -> pd.Series:
    if pd.api.types.is_string_dtype(s.dtype):
        t = s.head(20 * k).fillna("").str.strip()
        return t[t != ""].head(k)
    return s.dropna().head(k)


def number_profile(s: pd.Series, decimal: str = "point") -> tuple[float, int]:
    """Share of non-blank sample cells that are neither numbers nor missing markers, and sample size."""
    smp = sample(s)
    if smp.empty:
        return 0.0, 0
    if decimal == "auto":
        decimal = "point"
    r = parse_numbers(smp.reset_index(drop=True), "comma" if decimal == "comma" else "point")
    bad = np.isin(r.status, (nb.UNPARSEABLE,))
    return float(bad.mean()), int(len(smp))


def number_profiles(ctx: Ctx, cols: Sequence[int], decimal: str, k: int = 200) -> dict[int, tuple[float, int]]:
    """:func:`number_profile` of many columns at once, on their first ``k`` rows (one parse for all)."""
    out: dict[int, tuple[float, int]] = {}
    pieces: list[tuple[int, pa.Array | pa.ChunkedArray]] = []
    for j in cols:
        c = ctx.col(j)
        plain = isinstance(c.dtype, np.dtype) and c.dtype.kind in "fiuM"  # (the common typed case, checked first)
        if plain or not isinstance(c.dtype, pd.StringDtype) and (pd.api.types.is_numeric_dtype(c.dtype)
                                                                  or pd.api.types.is_datetime64_any_dtype(c.dtype)):
            out[j] = (0.0, _present(c, k))  # typed cells need no text profiling
            continue
        pa_arr = getattr(c.array, "_pa_array", None)
        pieces.append((j, pa_arr.slice(0, k) if pa_arr is not None else pa.array(c.head(k).astype("str").fillna("").tolist(), pa.string())))
    if not pieces:
        return out
    chunks = [ch if ch.type == pa.large_string() else ch.cast(pa.large_string())
              for _, a in pieces for ch in (a.chunks if isinstance(a, pa.ChunkedArray) else [a])]
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


def _present(c: pd.Series, k: int) -> int:
    """``int(c.head(k).notna().sum())``, on the numpy values for numpy dtypes (per column: microseconds, not a Series)."""
    if isinstance(c.dtype, np.dtype):
        v = c.to_numpy()[:k]
        if v.dtype.kind in "fc":
            return int(v.size - np.count_nonzero(np.isnan(v)))
        if v.dtype.kind in "Mm":
            return int(v.size - np.count_nonzero(np.isnat(v)))
        if v.dtype.kind in "iub":
            return int(v.size)
    return int(c.head(k).notna().sum())


def stack_columns(series: Sequence[pd.Series]) -> pd.Series:
    """The columns one below the other over a fresh 0-based index (``pd.concat`` of their reset copies).

    Columns of one numpy number dtype (every Parquet number column) are joined as arrays: the same
    values and dtype as the concat, without a Series step per column.
    """
    if len(series) == 1:
        return series[0].reset_index(drop=True)
    dt = series[0].dtype
    if isinstance(dt, np.dtype) and dt.kind in "fiu" and all(s.dtype == dt for s in series):
        return pd.Series(np.concatenate([s.to_numpy() for s in series]))
    if dt == _TEXT and all(s.dtype == _TEXT and hasattr(s.array, "_pa_array") for s in series):
        # Arrow text columns (a wide CSV): one Arrow array of all their cells, the concat's values and dtype
        import pyarrow as pa

        chunks = [ch.cast(pa.large_string()) if ch.type != pa.large_string() else ch
                  for s in series for ch in s.array._pa_array.chunks]
        return pd.Series(pd.arrays.ArrowStringArray(pa.chunked_array([pa.concat_arrays(chunks)]), dtype=_TEXT))
    return pd.concat(series, ignore_index=True)


def date_profile(s: pd.Series, allow_serial: bool) -> float:
    smp = sample(s)
    if smp.empty:
        return 0.0
    r = parse_dates(smp.reset_index(drop=True), "auto", allow_serial=allow_serial)
    return float((r.status == 0).mean())


def decide_decimal(ctx: Ctx, cols: Sequence[int]) -> tuple[str, str]:
    o = ctx.options
    if o.decimal != "auto":
        return o.decimal, "set by the user"
    texts = [ctx.col(j) for j in cols[:200] if not pd.api.types.is_numeric_dtype(ctx.col(j).dtype)]
    if not texts:
        return "point", "numbers stored as numbers"
    smp = _samples(texts, 40)
    return detect_decimal(smp.astype("str").tolist(), ctx.grid.delimiter)


def _samples(texts: Sequence[pd.Series], k: int) -> pd.Series:
    """``pd.concat([sample(t, k) for t in texts], ignore_index=True)``; text columns trimmed in one pass."""
    if len(texts) < 2 or not all(t.dtype == _TEXT for t in texts):
        return pd.concat([sample(t, k) for t in texts], ignore_index=True)
    heads = [t.head(20 * k) for t in texts]
    allh = pd.concat(heads, ignore_index=True).fillna("").str.strip()
    owner = np.repeat(np.arange(len(heads)), [len(h) for h in heads])
    keep = (allh != "").to_numpy(dtype=bool, na_value=False)
    kept_owner = owner[keep]
    # position of each kept cell among its column's kept cells (columns are contiguous, in order)
    starts = np.searchsorted(kept_owner, np.arange(len(heads)))
    rank = np.arange(kept_owner.size) - starts[kept_owner]
    pick = np.flatnonzero(keep)[rank < k]
    return allh.iloc[pick].reset_index(drop=True)


def frequency(dates: np.ndarray) -> str | None:
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


def value_column(ctx: Ctx, kind: str, candidates: Sequence[int], numeric: Sequence[int]) -> int:
    if ctx.options.value_column:
        return find_column(ctx, ctx.options.value_column, "value_column")
    for word in VALUE_WORDS.get(kind, ()):
        for j in candidates:
            nm = norm_name(ctx.header[j])
            if nm == word or (len(word) > 2 and word in nm):
                return j
    if len(numeric) == 1:
        return numeric[0]
    if not numeric:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, f"no column of numbers found for the {kind} values.",
                          row=ctx.grid.header_row, hint=f"Set {choice_words('value_column')} to the column that holds them.")
    raise IntakeError(ctx.name, Reason.AMBIGUOUS_LAYOUT,
                      f"several columns could hold the {kind} values: {', '.join(repr(ctx.header[j]) for j in numeric)}.",
                      row=ctx.grid.header_row, hint=f"Set {choice_words('value_column')} to the one to use.")


def tally_values(ctx: Ctx, final: np.ndarray, vcols: Sequence[int], stacked: pd.Series | None) -> None:
    """Count the value cells by final status; ``stacked`` holds their cells one column below the other, or
    None to read each example's text from its own column (the same text: columns of one text dtype)."""
    g = ctx.grid
    n = g.n_rows
    # one comparison per code (a bincount would first copy the codes to 64-bit integers)
    counts = {code: int(np.count_nonzero(final == code)) for code in (nb.PARSED, *CODE_REASON)}
    ctx.tally.add_parsed(int(counts[nb.PARSED]))
    names = np.asarray([ctx.header[j] for j in vcols], dtype=object)

    def text(i: np.ndarray) -> np.ndarray:
        if stacked is not None:
            return stacked.iloc[i].astype("str").to_numpy()
        out = np.empty(i.size, dtype=object)
        for t, k in enumerate(i):
            col = ctx.col(vcols[int(k) // n])
            # a column whose text a lean read let go holds only blank cells and kept numbers (no examples)
            out[t] = "" if col is None else col.iloc[[int(k) % n]].astype("str").to_numpy()[0]
        return out

    def locate(i: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        return g.rows[i % n], names[i // n], text(i)

    for code, reason in CODE_REASON.items():
        if counts[code]:
            ctx.tally.add(reason, final == code, locate)
