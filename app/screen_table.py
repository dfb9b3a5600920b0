"""The screen as a display table: server-side filter, sort, page and export.

Pure functions on pandas frames (no Dash): the Screen page's callbacks call
them.  Filtering parses the table's filter text into boolean masks (never
``DataFrame.query`` or ``eval``).  Exports neutralise spreadsheet formula
injection: a text cell starting with ``=``, ``+``, ``-``, ``@``, a tab or a
carriage return (or the Unicode compatibility form of one of them, such as the full-width
``＝``) gets a leading ``'`` (OWASP, "CSV Injection").
"""

from __future__ import annotations

import io
import unicodedata
from typing import Any, Sequence

import numpy as np
import pandas as pd

from valuesift.app.words import screen_in_words
from valuesift.core.errors import ConfigError

__all__ = ["COLUMNS", "MAX_FILTER_CHARS", "display_frame", "apply_filter", "apply_sort", "page", "neutralise", "to_csv_bytes",
           "to_xlsx_bytes"]

#: (column id, header, kind) of the screen table in display order.
COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("security", "Security", "text"),
    ("sector", "Sector", "text"),
    ("signal", "Signal", "numeric"),
    ("pe_display", "P/E", "text"),
    ("zscore", "Z-score", "numeric"),
    ("sector_zscore", "Z within sector", "numeric"),
    ("quantile_label", "Quantile (cheapest first)", "text"),
    ("z_change_3m", "Z change, 3 m", "numeric"),
    ("z_change_12m", "Z change, 12 m", "numeric"),
    ("months_since_price", "Months since price", "numeric"),
    ("months_since_eps", "Months since EPS", "numeric"),
    ("holding_weight", "Holding weight", "numeric"),
    ("flags", "Flags", "text"),
)

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")

#: the longest table filter accepted (a filter of the screen table is a few conditions long)
MAX_FILTER_CHARS = 1_000


def display_frame(screen: pd.DataFrame, *, holdings_only: bool = False) -> pd.DataFrame:
    """The screen (indexed by security) as flat display columns in words, rounded for reading."""
    df = screen_in_words(screen)
    if holdings_only and "holding_weight" in df.columns:
        df = df[np.isfinite(pd.to_numeric(df["holding_weight"], errors="coerce").to_numpy(dtype=float))]
    out = pd.DataFrame({"security": df.index.astype(str).to_numpy()})
    for cid, _, kind in COLUMNS[1:]:
        if cid not in df.columns:
            out[cid] = np.nan if kind == "numeric" else ""
            continue
        v = df[cid].to_numpy()
        if kind == "numeric":
            x = pd.to_numeric(pd.Series(v), errors="coerce").to_numpy(dtype=float)
            out[cid] = np.round(x, 4 if cid in ("signal", "holding_weight") else 2)
        else:
            out[cid] = pd.Series(v).astype(object).where(pd.notna(pd.Series(v)), "").astype(str).to_numpy()
    return out


_OPS = ("s<=", "s>=", "s<", "s>", "s=", "s!=", "<=", ">=", "!=", "<", ">", "=",
        "icontains", "scontains", "contains", "ge", "le", "gt", "lt", "ne", "eq", "datestartswith")
_OPS_LONGEST_FIRST = tuple(sorted(_OPS, key=len, reverse=True))


def _parse_part(part: str) -> tuple[str, str, str] | None:
    """``{col} op value`` -> (col, op, value) in one pass (no backtracking pattern); None when unreadable."""
    t = part.strip()
    if not t.startswith("{"):
        return None
    close = t.find("}", 1)
    if close <= 1:
        return None
    col, rest = t[1:close], t[close + 1:]
    if not rest[:1].isspace():
        return None
    rest = rest.lstrip()
    for op in _OPS_LONGEST_FIRST:
        if rest.startswith(op) and rest[len(op):len(op) + 1].isspace():
            val = rest[len(op):].strip()
            return (col, op, val) if val else None
    return None


_CANON = {"ge": ">=", "le": "<=", "gt": ">", "lt": "<", "ne": "!=", "eq": "=", "s<=": "<=", "s>=": ">=",
          "s<": "<", "s>": ">", "s=": "=", "s!=": "!=", "scontains": "contains", "icontains": "contains",
          "datestartswith": "contains"}


def _value(text: str) -> str:
    t = text.strip()
    if len(t) >= 2 and t[0] == t[-1] and t[0] in "\"'`":
        t = t[1:-1].replace("\\" + text.strip()[0], text.strip()[0])
    return t


def apply_filter(df: pd.DataFrame, query: str | None) -> pd.DataFrame:
    """Rows matching a table filter such as ``{sector} contains Banks && {zscore} > 1``.

    Unknown columns or unreadable parts are ignored (the table shows all rows for them).  A filter
    longer than :data:`MAX_FILTER_CHARS` is refused with :class:`ConfigError` (parsing is linear in
    its length, matching linear in rows times conditions).
    """
    if not query:
        return df
    query = str(query)
    if len(query) > MAX_FILTER_CHARS:
        raise ConfigError(f"The table filter is {len(query):,} characters long, above the limit of {MAX_FILTER_CHARS:,}.",
                          hint="Use a few short conditions, such as 'Banks' under Sector or '> 1' under Z-score.")
    mask = np.ones(len(df), dtype=bool)
    for part in query.split(" && "):
        m = _parse_part(part)
        if m is None or m[0] not in df.columns:
            continue
        col, op, val = m[0], _CANON.get(m[1], m[1]), _value(m[2])
        s = df[col]
        num = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
        try:
            v = float(val)
            numeric = bool(np.isfinite(num).any())
        except ValueError:
            v, numeric = float("nan"), False
        with np.errstate(invalid="ignore"):
            if op == "contains" or not numeric:
                text = s.astype(str).str.lower()
                needle = val.lower()
                hit = text.str.contains(needle, regex=False).to_numpy(dtype=bool) if op == "contains" else \
                    (text == needle).to_numpy(dtype=bool) if op == "=" else \
                    (text != needle).to_numpy(dtype=bool) if op == "!=" else np.ones(len(df), dtype=bool)
            else:
                hit = {"<": num < v, "<=": num <= v, ">": num > v, ">=": num >= v, "=": num == v,
                       "!=": num != v}.get(op, np.ones(len(df), dtype=bool))
        mask &= np.asarray(hit, dtype=bool)
    return df[mask]


def apply_sort(df: pd.DataFrame, sort_by: Sequence[dict[str, Any]] | None) -> pd.DataFrame:
    """Sort by the table's ``sort_by`` (missing values last)."""
    keys = [s for s in (sort_by or []) if s.get("column_id") in df.columns]
    if not keys:
        return df
    return df.sort_values([s["column_id"] for s in keys], ascending=[s.get("direction") != "desc" for s in keys],
                          na_position="last", kind="mergesort")


def page(df: pd.DataFrame, current: int | None, size: int | None) -> tuple[list[dict[str, Any]], int]:
    """Rows of one page (with an ``id`` per row for clicks) and the page count."""
    size = max(1, int(size or 25))
    n_pages = max(1, int(np.ceil(len(df) / size)))
    cur = min(max(0, int(current or 0)), n_pages - 1)
    chunk = df.iloc[cur * size:(cur + 1) * size]
    rows = chunk.astype(object).where(pd.notna(chunk), None).to_dict("records")
    for r in rows:
        r["id"] = r["security"]
    return rows, n_pages


def _starts_formula(text: str) -> bool:
    """Whether a spreadsheet could read ``text`` as a formula: its first character, or that character's
    Unicode compatibility form (full-width ``＝ ＋ － ＠``, small ``﹦ ﹢ ﹣``), is ``= + - @``, tab or CR."""
    if not text:
        return False
    first = text[0]
    return first in _FORMULA_START or unicodedata.normalize("NFKC", first)[:1] in _FORMULA_START


def neutralise(df: pd.DataFrame) -> pd.DataFrame:
    """A copy whose text cells cannot start a spreadsheet formula (a leading ``'`` is added)."""
    out = df.copy()
    for c in out.columns:
        if pd.api.types.is_numeric_dtype(out[c]) or pd.api.types.is_bool_dtype(out[c]):
            continue
        s = out[c].astype(object)
        out[c] = [("'" + x) if isinstance(x, str) and _starts_formula(x) else x for x in s]
    return out


def _export_frame(df: pd.DataFrame) -> pd.DataFrame:
    headers = {cid: head for cid, head, _ in COLUMNS}
    return neutralise(df[[c for c in headers if c in df.columns]]).rename(columns=headers)


def to_csv_bytes(df: pd.DataFrame) -> bytes:
    """The table as UTF-8 CSV (formula-safe; CRLF line ends, RFC 4180, so a text cell holding a bare
    carriage return is quoted and cannot start a new row)."""
    return _export_frame(df).to_csv(index=False, lineterminator="\r\n").encode("utf-8")


def to_xlsx_bytes(df: pd.DataFrame, sheet: str = "screen") -> bytes:
    """The table as an XLSX workbook (formula-safe)."""
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xw:
        _export_frame(df).to_excel(xw, index=False, sheet_name=sheet)
    return buf.getvalue()
