"""Column definitions of the data grid (dash-ag-grid): typed columns, one number format per column.

Every table a person reads in the dashboard (screen, sweep, company, comparison) is a data grid built
from ``(column id, header, kind)`` rows: numeric columns filter and sort as numbers and are shown
with one format (fixed decimals or percent, a true minus sign, blank when missing); text columns get
a text filter; the identifier column is pinned on the left.
"""

from __future__ import annotations

import math
from typing import Any, Iterable, Mapping, Sequence

__all__ = ["grid_columns", "grid_number", "header_min_width", "number_formatter", "DEFAULT_FORMAT"]

#: decimals and percent of a numeric column with no format of its own
DEFAULT_FORMAT: tuple[int, bool] = (2, False)


def grid_number(v: Any) -> float | None:
    """A row's number for the grid: a finite float, or None (drawn blank) for anything missing or not a number."""
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def number_formatter(decimals: int, percent: bool, *, blank_from: str | None = None,
                     p_value: bool = False) -> dict[str, str]:
    """A grid ``valueFormatter``: d3's fixed or percent format (it writes the minus as U+2212).

    ``blank_from`` names a text field of the row shown instead of a missing number (such as
    "not meaningful" for a P/E of a loss-maker).  ``p_value``: a probability too small for the
    decimals is written "< 0.001" (for three decimals), never as a zero.
    """
    spec = f",.{int(decimals)}{'%' if percent else 'f'}"
    missing = f"(params.data && params.data.{blank_from}) || ''" if blank_from else "''"
    shown = f"d3.format('{spec}')(params.value)"
    if p_value and not percent and decimals > 0:
        least = 10.0 ** -int(decimals)
        shown = f"(params.value < {least!r} ? '< {least:.{int(decimals)}f}' : {shown})"
    return {"function": f"params.value == null ? {missing} : {shown}"}


def header_min_width(header: str, *, least: int = 90) -> int:
    """Pixels a column needs so that its header wraps only between words: the longest word at about 9 px a
    character (14 px DejaVu Sans) plus room for the sort and filter icons and the cell padding."""
    longest = max((len(w) for w in str(header).split()), default=0)
    return max(least, 9 * longest + 60)


def grid_columns(columns: Iterable[Sequence[str]], *, pinned: str | None = None, hidden: Iterable[str] = (),
                 formats: Mapping[str, tuple[int, bool]] | None = None,
                 notes: Mapping[str, str] | None = None, p_values: Iterable[str] = ()) -> list[dict[str, Any]]:
    """``columnDefs`` for ``(id, header, kind)`` rows (kind ``numeric`` or ``text``).

    Parameters
    ----------
    pinned : str, optional
        Column id kept on the left while the others scroll.
    hidden : iterable of str
        Columns sent with each row but not shown (a note read by a formatter).
    formats : mapping, optional
        ``{column id: (decimals, percent)}``; numeric columns not listed use :data:`DEFAULT_FORMAT`.
    notes : mapping, optional
        ``{numeric column id: text column id}`` shown where the number is missing.
    p_values : iterable of str
        Numeric columns holding probabilities (below the last decimal they read "< 0.001").
    """
    formats = dict(formats or {})
    notes = dict(notes or {})
    hide = set(hidden)
    probs = set(p_values)
    out: list[dict[str, Any]] = []
    for cid, head, kind in columns:
        col: dict[str, Any] = {"field": cid, "headerName": head, "headerTooltip": head}
        if kind == "numeric":
            dec, pct = formats.get(cid, DEFAULT_FORMAT)
            col.update(filter="agNumberColumnFilter", type="numericColumn",
                       valueFormatter=number_formatter(dec, pct, blank_from=notes.get(cid), p_value=cid in probs),
                       filterParams={"buttons": ["reset"], "maxNumConditions": 2},
                       # a note shown in place of a missing number ("not meaningful") needs a text's width
                       minWidth=header_min_width(head, least=140 if cid in notes else 90))
        else:
            col.update(filter="agTextColumnFilter", filterParams={"buttons": ["reset"], "maxNumConditions": 2},
                       wrapText=True, autoHeight=True, minWidth=header_min_width(head, least=140))
        if cid == pinned:
            col.update(pinned="left", lockPinned=True, cellClass="vs-grid-id", minWidth=header_min_width(head, least=120))
        if cid in hide:
            col["hide"] = True
        out.append(col)
    return out
