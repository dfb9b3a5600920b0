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

__all__ = ["COLUMNS", "NUMBER_FORMATS", "MAX_FILTER_CHARS", "display_frame", "apply_filter", "apply_sort", "page",
           "apply_grid_filter", "apply_grid_sort", "grid_rows", "excel_format", "neutralise", "to_csv_bytes", "to_xlsx_bytes"]

#: (column id, header, kind) of the screen table in display order.
COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("security", "Security", "text"),
    ("sector", "Sector", "text"),
    ("signal", "Signal", "numeric"),
    ("pe", "P/E", "numeric"),
    ("pe_note", "P/E note", "text"),
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

#: One format per numeric column: (decimals, percent?) -- the grid and the workbook both read it.
NUMBER_FORMATS: dict[str, tuple[int, bool]] = {
    "signal": (4, False), "pe": (1, False), "zscore": (2, False), "sector_zscore": (2, False),
    "z_change_3m": (2, False), "z_change_12m": (2, False), "months_since_price": (0, False),
    "months_since_eps": (0, False), "holding_weight": (2, True),
}

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")

#: the longest table filter accepted (a filter of the screen table is a few conditions long)
MAX_FILTER_CHARS = 1_000


def display_frame(screen: pd.DataFrame, *, holdings_only: bool = False) -> pd.DataFrame:
    """The screen (indexed by security) as flat display columns in words, rounded for reading."""
    df = screen_in_words(screen)
    if "pe" in df.columns:
        # P/E is a number (sorts and filters as one); where it is not meaningful the note says so.
        pe = pd.to_numeric(df["pe"], errors="coerce").to_numpy(dtype=float)
        df = df.assign(pe=pe, pe_note=np.where(np.isfinite(pe), "", df["pe_display"].astype(str).to_numpy()))
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


_TEXT_TESTS = {"contains", "notContains", "equals", "notEqual", "startsWith", "endsWith", "blank", "notBlank"}
_NUMBER_TESTS = {"equals", "notEqual", "lessThan", "lessThanOrEqual", "greaterThan", "greaterThanOrEqual",
                 "inRange", "blank", "notBlank"}


def _number(v: Any) -> float:
    try:
        return float(v)
    except (TypeError, ValueError):
        return float("nan")


def _grid_condition(s: pd.Series, cond: dict[str, Any]) -> np.ndarray:
    """One condition of the grid's filter model as a boolean mask (unknown tests keep every row)."""
    kind, test = cond.get("filterType"), cond.get("type")
    if kind == "number" and test in _NUMBER_TESTS:
        x = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
        if test == "blank":
            return ~np.isfinite(x)
        if test == "notBlank":
            return np.isfinite(x)
        v, hi = _number(cond.get("filter")), _number(cond.get("filterTo"))
        with np.errstate(invalid="ignore"):
            out = {"equals": x == v, "notEqual": x != v, "lessThan": x < v, "lessThanOrEqual": x <= v,
                   "greaterThan": x > v, "greaterThanOrEqual": x >= v,
                   "inRange": (x >= v) & (x <= hi)}[test]
        return np.asarray(out, dtype=bool)
    if kind == "text" and test in _TEXT_TESTS:
        text = s.astype(str).str.lower()
        if test in ("blank", "notBlank"):
            empty = (text.str.strip() == "").to_numpy(dtype=bool)
            return empty if test == "blank" else ~empty
        needle = str(cond.get("filter") or "").lower()
        if len(needle) > MAX_FILTER_CHARS:
            raise ConfigError(f"The table filter is {len(needle):,} characters long, above the limit of "
                              f"{MAX_FILTER_CHARS:,}.", hint="Filter on a few letters of the name or sector.")
        hit = {"contains": lambda: text.str.contains(needle, regex=False),
               "notContains": lambda: ~text.str.contains(needle, regex=False),
               "equals": lambda: text == needle, "notEqual": lambda: text != needle,
               "startsWith": lambda: text.str.startswith(needle), "endsWith": lambda: text.str.endswith(needle)}[test]()
        return hit.to_numpy(dtype=bool)
    return np.ones(len(s), dtype=bool)


def apply_grid_filter(df: pd.DataFrame, model: dict[str, Any] | None) -> pd.DataFrame:
    """Rows matching the data grid's filter model (``{column: {filterType, type, filter[, filterTo]}}``,
    or two conditions joined by ``operator`` AND/OR), as boolean masks (never ``query`` or ``eval``).

    Unknown columns and tests keep every row; a text filter above :data:`MAX_FILTER_CHARS` is refused
    with :class:`ConfigError`.
    """
    if not model:
        return df
    mask = np.ones(len(df), dtype=bool)
    for col, spec in model.items():
        if col not in df.columns or not isinstance(spec, dict):
            continue
        conds = spec.get("conditions")
        if isinstance(conds, list) and conds:
            parts = [_grid_condition(df[col], {"filterType": spec.get("filterType"), **c}) for c in conds
                     if isinstance(c, dict)]
            hit = np.logical_or.reduce(parts) if str(spec.get("operator")).upper() == "OR" else \
                np.logical_and.reduce(parts)
        else:
            hit = _grid_condition(df[col], spec)
        mask &= hit
    return df[mask]


def apply_grid_sort(df: pd.DataFrame, sort_model: Sequence[dict[str, Any]] | None) -> pd.DataFrame:
    """Sort by the data grid's sort model (``[{colId, sort}]``); numbers as numbers, missing values last."""
    return apply_sort(df, [{"column_id": s.get("colId"), "direction": s.get("sort")} for s in (sort_model or [])
                           if isinstance(s, dict)])


def grid_rows(df: pd.DataFrame, request: dict[str, Any] | None) -> tuple[pd.DataFrame, list[dict[str, Any]]]:
    """The filtered, sorted frame and the rows of one block the grid asked for (``startRow``..``endRow``)."""
    req = request if isinstance(request, dict) else {}
    shown = apply_grid_sort(apply_grid_filter(df, req.get("filterModel")), req.get("sortModel"))
    start = max(0, int(req.get("startRow") or 0))
    end = max(start, min(int(req.get("endRow") or start + 25), start + 1000))
    chunk = shown.iloc[start:end]
    return shown, chunk.astype(object).where(pd.notna(chunk), None).to_dict("records")


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


def excel_format(decimals: int, percent: bool) -> str:
    """The spreadsheet number format of one column (thousands separator, fixed decimals, percent)."""
    body = "#,##0" + ("." + "0" * decimals if decimals else "")
    return body + "%" if percent else body


def to_xlsx_bytes(df: pd.DataFrame, sheet: str = "screen") -> bytes:
    """The table as an XLSX workbook (formula-safe); numeric columns are number cells with a number format."""
    buf = io.BytesIO()
    headers = {cid: head for cid, head, _ in COLUMNS}
    with pd.ExcelWriter(buf, engine="openpyxl") as xw:
        out = _export_frame(df)
        out.to_excel(xw, index=False, sheet_name=sheet)
        ws = xw.sheets[sheet]
        for j, name in enumerate(out.columns, start=1):
            cid = next((c for c, h in headers.items() if h == name), None)
            if cid in NUMBER_FORMATS:
                fmt = excel_format(*NUMBER_FORMATS[cid])
                for (cell,) in ws.iter_rows(min_row=2, min_col=j, max_col=j):
                    cell.number_format = fmt
            width = max([len(str(name))] + [len(str(v)) for v in out[name].head(200)]) + 2
            ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = min(60, width)
        ws.freeze_panes = "B2"
    return buf.getvalue()
