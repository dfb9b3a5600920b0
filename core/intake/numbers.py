"""Vectorised number parsing for the spellings analysts' exports use.

Every cell gets a status code (:data:`PARSED`, :data:`BLANK`, ...) so intake can
account for it.  The work is done on whole columns with pandas string methods;
values that a plain numeric conversion already reads are not touched again.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Literal, Sequence

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

__all__ = [
    "PARSED",
    "BLANK",
    "MISSING",
    "UNPARSEABLE",
    "NON_FINITE",
    "OUT_OF_RANGE",
    "MISSING_MARKERS",
    "NumberResult",
    "parse_numbers",
    "parse_text_columns",
    "detect_decimal",
]

PARSED, BLANK, MISSING, UNPARSEABLE, NON_FINITE, OUT_OF_RANGE = 0, 1, 2, 3, 4, 5

#: Spellings of "no value" (compared after trimming, case-insensitively).
MISSING_MARKERS: frozenset[str] = frozenset(
    {
        "#n/a", "#n/a n/a", "#na", "n/a", "na", "n.a.", "n.a", "n.m.", "n.m", "nm", "n/m",
        "--", "-", "---", "\u2014", "\u2013", "\u2014\u2014", "null", "none", "nan", "nil", ".",
        "#null", "(null)", "missing", "?",
    }
)
_INF = frozenset({"inf", "+inf", "-inf", "infinity", "+infinity", "-infinity", "\u221e", "-\u221e", "#num!"})
_HUGE = 1e300
_CURRENCY = r"[$\u20ac\u00a3\u00a5\u20b9\u20a9\u20bd\u00a2\u20a3\u20a4]"
_POINT_RE = r"[+-]?(?:\d{1,3}(?:,\d{3})+|\d+)?(?:\.\d*)?(?:[eE][+-]?\d+)?"
_COMMA_RE = r"[+-]?(?:\d{1,3}(?:\.\d{3})+|\d+)?(?:,\d*)?(?:[eE][+-]?\d+)?"


@dataclass(frozen=True)
class NumberResult:
    """Parsed values (float64, NaN where not parsed) and a status code per cell."""

    values: np.ndarray
    status: np.ndarray
    percent: np.ndarray  # bool: the cell carried a % sign (value already divided by 100)


def _as_text(values: pd.Series) -> pd.Series:
    s = values
    if not pd.api.types.is_string_dtype(s.dtype) or s.dtype == object:
        s = s.astype("str")
    return s.fillna("").str.strip()


def parse_numbers(values: pd.Series, decimal: Literal["point", "comma"] = "point") -> NumberResult:
    """Parse a column of numbers written as text.

    Parameters
    ----------
    values : pandas.Series
        Text (or already numeric) cells.
    decimal : {"point", "comma"}
        ``point``: ``1,234.5``; ``comma``: ``1.234,5``.

    Returns
    -------
    NumberResult
        ``values`` (float64), ``status`` (int8 codes), ``percent`` (bool).

    Notes
    -----
    Accepted: thousands separators (validated groups of three), ``(12.5)`` as
    -12.5, a trailing ``%`` (value / 100), currency symbols and a leading or
    trailing three-letter currency code, spaces or apostrophes as thousands
    separators.  Missing spellings in :data:`MISSING_MARKERS` get ``MISSING``;
    infinities ``NON_FINITE``; ``|x| >= 1e300`` ``OUT_OF_RANGE``.

    References
    ----------
    Common practice for spreadsheet exports (no published source).

    Examples
    --------
    >>> r = parse_numbers(pd.Series(["1,234.5", "(2)", "5%", "n.a.", ""]))
    >>> r.values.tolist()[:3], r.status.tolist()
    ([1234.5, -2.0, 0.05], [0, 0, 0, 2, 1])
    """
    n = len(values)
    status = np.full(n, PARSED, dtype=np.int8)
    percent = np.zeros(n, dtype=bool)
    if n == 0:
        return NumberResult(np.full(n, np.nan), status, percent)
    if pd.api.types.is_numeric_dtype(values.dtype) and not pd.api.types.is_bool_dtype(values.dtype):
        # one copy of the numbers, every other cell set to NaN in place (the same values as
        # ``np.where(status == PARSED, v, nan)`` without two more arrays of the column's size)
        v = values.to_numpy(dtype=float, na_value=np.nan).copy()
        status[np.isnan(v)] = BLANK
        status[np.isinf(v)] = NON_FINITE
        with np.errstate(invalid="ignore"):
            status[np.isfinite(v) & (np.abs(v) >= _HUGE)] = OUT_OF_RANGE
        v[status != PARSED] = np.nan
        return NumberResult(v, status, percent)

    quick = _arrow_cast(values) if decimal == "point" else None
    if quick is not None:
        status[np.isnan(quick)] = BLANK
        return NumberResult(quick, status, percent)
    return _careful(values, decimal)


def _careful(values: pd.Series, decimal: str) -> NumberResult:
    """The full parser of text cells: a plain conversion first, the spelled-out forms for the rest."""
    n = len(values)
    out = np.full(n, np.nan)
    status = np.full(n, PARSED, dtype=np.int8)
    percent = np.zeros(n, dtype=bool)
    s = _as_text(values)
    blank = (s == "").to_numpy(dtype=bool, na_value=False).copy()
    # fast path: plain numbers
    if decimal == "point":
        fast = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float, na_value=np.nan).copy()
    else:
        has_point = s.str.contains(".", regex=False).to_numpy(dtype=bool, na_value=False).copy()
        fast = pd.to_numeric(s.str.replace(",", ".", regex=False), errors="coerce").to_numpy(dtype=float, na_value=np.nan).copy()
        fast[has_point] = np.nan
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(fast) & (np.abs(fast) < _HUGE)
    out[ok] = fast[ok]
    status[blank] = BLANK
    rest_idx = np.flatnonzero(~ok & ~blank)
    if rest_idx.size:
        r = pd.Series(s.to_numpy()[rest_idx], dtype="str")
        vals, st, pc = _slow(r, decimal)
        out[rest_idx] = vals
        status[rest_idx] = st
        percent[rest_idx] = pc
    return NumberResult(out, status, percent)


def parse_text_columns(columns: list[pd.Series | None], decimal: Literal["point", "comma"] = "point", *,
                       spare: Callable[[int, int, np.ndarray], bool] | None = None) -> NumberResult:
    """:func:`parse_numbers` of the columns stacked one below the other, parsed column by column.

    The result is the stacked parse, cell for cell (the same values, codes and
    percent marks in the same order: column 0's cells, then column 1's, ...),
    without the stacked copy of every cell's text: each column's text is read
    where it lies and only its numbers are kept.  As in the stacked parse, the
    one Arrow cast is used only when every cell of every column is a plain
    number or blank; otherwise each column goes through the careful parser.

    ``spare`` (for a caller short of memory) is asked, after each block of
    columns ``k0 .. k1 - 1`` has its numbers, whether their text is still
    needed: when it answers True their places in ``columns`` are emptied (so
    the text is freed as the numbers are made, instead of both existing
    whole).  It is used only after a first pass has found that every block
    takes the one cast, since the careful parser needs every column's text.

    Parameters
    ----------
    columns : sequence of pandas.Series
        Text columns, all of one length.
    decimal : {"point", "comma"}

    Returns
    -------
    NumberResult
        Of length ``len(columns) * len(columns[0])``.

    Examples
    --------
    >>> r = parse_text_columns([pd.Series(["1", ""], dtype="str"), pd.Series(["(2)", "5%"], dtype="str")])
    >>> r.values.tolist()[2:], r.status.tolist()
    ([-2.0, 0.05], [0, 1, 0, 0])
    """
    n = len(columns[0]) if len(columns) else 0  # type: ignore[arg-type]
    total = n * len(columns)
    out = np.empty(total)  # every cell is written below (pages become resident as they are written)
    status = np.full(total, PARSED, dtype=np.int8)
    percent = np.zeros(total, dtype=bool)
    if total == 0:
        return NumberResult(out, status, percent)
    if decimal == "point":
        # columns in blocks of about 130,000 cells: one Arrow pass per block instead of one per column (a wide
        # file has thousands), while the pass's temporary copy stays a small part of the file
        step = max(1, _BLOCK_CELLS // max(n, 1))
        if spare is not None and not all(_arrow_cast_block(columns[k:k + step]) is not None  # type: ignore[arg-type]
                                         for k in range(0, len(columns), step)):
            spare = None
        freed = 0
        for k in range(0, len(columns), step):
            quick = _arrow_cast_block(columns[k:k + step], out[k * n:min(k + step, len(columns)) * n])  # type: ignore[arg-type]
            if quick is None:
                break
            if spare is not None and spare(k, min(k + step, len(columns)), quick):
                columns[k:k + step] = [None] * len(columns[k:k + step])
                freed += 1
                if freed % 8 == 0:  # hand the freed text back (the Arrow pool keeps it otherwise)
                    pa.default_memory_pool().release_unused()
            del quick
        else:
            if freed:
                pa.default_memory_pool().release_unused()
            status[np.isnan(out)] = BLANK
            return NumberResult(out, status, percent)
        out[:] = np.nan
    for k, col in enumerate(columns):
        part = _careful(col, decimal)  # type: ignore[arg-type]
        out[k * n:(k + 1) * n] = part.values
        status[k * n:(k + 1) * n] = part.status
        percent[k * n:(k + 1) * n] = part.percent
        del part
    return NumberResult(out, status, percent)


#: cells per Arrow pass of :func:`parse_text_columns`
_BLOCK_CELLS = 1 << 17


def _arrow_cast_block(columns: Sequence[pd.Series], out: np.ndarray | None = None) -> np.ndarray | None:
    """:func:`_arrow_cast` of several columns stacked, in one Arrow pass over their chunks (no copy to stack
    them); the columns one by one when their chunks cannot be joined (not Arrow text of one type).  With
    ``out`` (of the columns' total length) the numbers are written there and ``out`` is returned."""
    if len(columns) == 1:
        return _arrow_cast(columns[0], out)
    try:
        chunks = [c for s in columns for c in s.array._pa_array.chunks]
        joined = pd.Series(pd.arrays.ArrowStringArray(pa.chunked_array(chunks), dtype=columns[0].dtype))
    except (AttributeError, TypeError, ValueError, pa.ArrowException):
        target = np.empty(sum(len(s) for s in columns)) if out is None else out
        pos = 0
        for s in columns:
            if _arrow_cast(s, target[pos:pos + len(s)]) is None:
                return None
            pos += len(s)
        return target
    return _arrow_cast(joined, out)


#: rows per Arrow cast of :func:`_arrow_cast`: a long file's one value column of millions of cells is cast
#: slice by slice, so the cast's temporary copies (the text with blanks as nulls, the numbers) stay small
_CAST_ROWS = 1 << 20


def _arrow_cast(s: pd.Series, out: np.ndarray | None = None) -> np.ndarray | None:
    """All cells plain numbers or blank (the common case): Arrow casts (one per slice of
    :data:`_CAST_ROWS` cells), the numbers written to ``out`` (a new array if None) and returned; else None."""
    try:
        arr = s.array._pa_array if hasattr(s.array, "_pa_array") else pa.array(s.astype("str").fillna("").tolist(), pa.string())
    except Exception:
        return None
    n = len(arr)
    v = np.empty(n) if out is None else out
    for start in range(0, n, _CAST_ROWS):
        part = arr.slice(start, _CAST_ROWS)
        seg = v[start:start + len(part)]
        try:
            empty = pc.fill_null(pc.equal(part, ""), True)
            text = pc.if_else(empty, pa.scalar(None, pa.string()), part)
            seg[:] = pc.cast(text, pa.float64()).to_numpy(zero_copy_only=False)
            blank = np.asarray(empty.to_numpy(zero_copy_only=False), dtype=bool)
        except Exception:
            return None
        del text, empty
        with np.errstate(invalid="ignore"):
            good = np.isfinite(seg) & (np.abs(seg) < _HUGE)
        if not np.all(good | blank):  # "nan", "inf" or huge values: let the full parser classify them
            return None
    return v


def _slow(r: pd.Series, decimal: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    low = r.str.lower()
    missing = low.isin(MISSING_MARKERS).to_numpy(dtype=bool, na_value=False).copy()
    inf = low.str.replace(" ", "", regex=False).isin(_INF).to_numpy(dtype=bool, na_value=False).copy()
    t = r.str.replace("\u2212", "-", regex=False)
    paren = t.str.match(r"^\(.*\)$").to_numpy(dtype=bool, na_value=False).copy()
    t = t.str.replace(r"^\((.*)\)$", r"\1", regex=True).str.strip()
    pct = t.str.endswith("%").to_numpy(dtype=bool, na_value=False).copy()
    t = t.str.replace(r"\s*%$", "", regex=True)
    t = t.str.replace(_CURRENCY, "", regex=True)
    t = t.str.replace(r"^[A-Z]{3}\s+(?=[-+(\d.,])|(?<=[\d.,])\s+[A-Z]{3}$", "", regex=True)
    t = t.str.replace(r"[\s\u00a0\u202f'\u2019]", "", regex=True)
    # a parenthesised negative may carry its sign inside a currency prefix: "-$12" or "$(12)"
    paren2 = t.str.match(r"^\(.*\)$").to_numpy(dtype=bool, na_value=False).copy()
    t = t.str.replace(r"^\((.*)\)$", r"\1", regex=True)
    neg = paren ^ paren2
    both = paren & paren2
    if decimal == "point":
        valid = t.str.fullmatch(_POINT_RE).to_numpy(dtype=bool, na_value=False).copy()
        clean = t.str.replace(",", "", regex=False)
    else:
        valid = t.str.fullmatch(_COMMA_RE).to_numpy(dtype=bool, na_value=False).copy()
        clean = t.str.replace(".", "", regex=False).str.replace(",", ".", regex=False)
    valid &= t.str.contains(r"\d", regex=True).to_numpy(dtype=bool, na_value=False).copy()
    valid &= ~both
    v = pd.to_numeric(clean.where(valid, ""), errors="coerce").to_numpy(dtype=float, na_value=np.nan).copy()
    v = np.where(neg, -v, v)
    v = np.where(pct, v / 100.0, v)
    st = np.full(len(r), UNPARSEABLE, dtype=np.int8)
    good = valid & np.isfinite(v)
    with np.errstate(invalid="ignore"):
        huge = good & (np.abs(v) >= _HUGE)
    st[good] = PARSED
    st[huge] = OUT_OF_RANGE
    st[valid & np.isinf(v)] = NON_FINITE
    st[inf] = NON_FINITE
    st[missing] = MISSING
    vals = np.where(st == PARSED, v, np.nan)
    return vals, st, pct & (st == PARSED)


_UNAMBIG_POINT = r"^[^\d]*-?(?:\d+\.\d{1,2}|\d+\.\d{4,}|\d{1,3}(?:,\d{3})+\.\d*)\D*$"
_UNAMBIG_COMMA = r"^[^\d]*-?(?:\d+,\d{1,2}|\d+,\d{4,}|\d{1,3}(?:\.\d{3})+,\d*)\D*$"


def detect_decimal(sample: Sequence[str], delimiter: str | None = None) -> tuple[Literal["point", "comma"], str]:
    """Decide the decimal style from a sample of value cells.

    Returns the style and a sentence saying why.

    Notes
    -----
    Unambiguous evidence for a decimal point is a point followed by other than
    exactly three digits (``12.5``) or a comma group before a point (``1,234.5``);
    likewise for the comma.  With no evidence either way the point is assumed,
    except in a semicolon-delimited file with comma groups (European exports).

    Examples
    --------
    >>> detect_decimal(["1.234,5", "12,5"])[0]
    'comma'
    """
    s = pd.Series(list(sample), dtype="str").fillna("").str.strip()
    s = s[s != ""]
    if s.empty:
        return "point", "no numbers to judge from: decimal point assumed"
    p = int(s.str.match(_UNAMBIG_POINT).sum())
    c = int(s.str.match(_UNAMBIG_COMMA).sum())
    if p > c:
        return "point", f"decimal point seen in {p} sampled values" + (f" ({c} looked like decimal commas)" if c else "")
    if c > p:
        return "comma", f"decimal comma seen in {c} sampled values" + (f" ({p} looked like decimal points)" if p else "")
    if delimiter == ";" and bool(s.str.contains(r"\d,\d", regex=True).any()):
        return "comma", "no unambiguous decimals; semicolon-delimited file with commas between digits: decimal comma assumed"
    return "point", "no unambiguous decimals in the sample: decimal point assumed"
