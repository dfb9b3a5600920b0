"""Intake reports: every input cell accounted for, per file and per security."""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd

__all__ = ["FileReport", "IntakeReport"]


def _empty(cols: list[str]) -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series([], dtype=object) for c in cols})


@dataclass(frozen=True)
class FileReport:
    """What intake found in one file.

    Identity: ``cells_total == cells_parsed + cells_blank + cells_unparseable + cells_dropped``.
    ``by_reason`` has columns ``reason`` (a :class:`core.errors.Reason` value),
    ``category`` (``blank``/``unparseable``/``dropped``) and ``count``;
    ``examples`` has ``reason``, ``row`` (1-based file row), ``column``, ``value``
    (the first few locations per reason).
    """

    name: str
    kind: str
    format: str
    encoding: str | None
    delimiter: str | None
    layout: str
    header_row: int
    date_column: str | None
    date_order: str | None
    date_order_reason: str | None
    decimal: str | None
    n_rows: int
    n_columns: int
    n_securities: int
    first_date: pd.Timestamp | None
    last_date: pd.Timestamp | None
    frequency: str | None
    cells_total: int
    cells_parsed: int
    cells_blank: int
    cells_unparseable: int
    cells_dropped: int
    by_reason: pd.DataFrame = field(default_factory=lambda: _empty(["reason", "category", "count"]))
    examples: pd.DataFrame = field(default_factory=lambda: _empty(["reason", "row", "column", "value"]))
    notes: tuple[str, ...] = ()
    sheet: str | None = None
    security_column: str | None = None
    value_column: str | None = None
    value_form: str | None = None  # earnings: "eps" or "pe"; holdings: "fraction"
    excluded_columns: tuple[str, ...] = ()
    suspect_columns: tuple[str, ...] = ()
    date_ambiguous: bool = False
    #: earnings: the announcement-date column each EPS is dated by (None: dated by the date column as it is)
    availability_column: str | None = None

    def count(self, reason: object) -> int:
        """Cells counted under ``reason`` (a Reason or its string value); 0 when none."""
        key = getattr(reason, "value", reason)
        hit = self.by_reason[self.by_reason["reason"] == key]
        return int(hit["count"].sum()) if len(hit) else 0

    def to_frame(self) -> pd.DataFrame:
        """One-row summary frame (for tables in the dashboard)."""
        keys = ["name", "kind", "format", "encoding", "delimiter", "layout", "header_row", "date_column",
                "date_order", "decimal", "n_rows", "n_columns", "n_securities", "first_date", "last_date",
                "frequency", "cells_total", "cells_parsed", "cells_blank", "cells_unparseable", "cells_dropped"]
        return pd.DataFrame([{k: getattr(self, k) for k in keys}])

    def to_text(self) -> str:
        """A plain-text account of the file for the terminal."""
        d = "tab" if self.delimiter == "\t" else self.delimiter
        lines = [
            f"File {self.name}: {self.kind}, {self.format}"
            + (f", sheet {self.sheet!r}" if self.sheet else "")
            + (f", {self.encoding}" if self.encoding else "")
            + (f", delimiter {d!r}" if d else ""),
            f"  layout {self.layout}, header on row {self.header_row}, {self.n_rows} data rows x {self.n_columns} columns",
        ]
        if self.date_column is not None:
            lines.append(f"  dates from column {self.date_column!r}: {self.date_order} ({self.date_order_reason}); "
                         f"{_d(self.first_date)} to {_d(self.last_date)}, {self.frequency}")
        if self.availability_column is not None:
            lines.append(f"  each figure dated by when it became public (column {self.availability_column!r}): "
                         "used from the first month-end on or after that date, no fixed reporting lag")
        if self.decimal:
            lines.append(f"  decimal {self.decimal}; {self.n_securities} securities")
        lines.append(f"  cells: {self.cells_total} total = {self.cells_parsed} parsed + {self.cells_blank} blank + "
                     f"{self.cells_unparseable} unparseable + {self.cells_dropped} dropped")
        for _, r in self.by_reason.iterrows():
            ex = self.examples[self.examples["reason"] == r["reason"]]
            where = "; ".join(f"row {int(e['row'])} col {e['column']!r} {str(e['value'])[:20]!r}" for _, e in ex.head(3).iterrows())
            lines.append(f"    {r['category']:<11} {r['reason']:<22} {int(r['count']):>9}" + (f"  e.g. {where}" if where else ""))
        lines.extend(f"  note: {n}" for n in self.notes)
        return "\n".join(lines)


def _d(ts: pd.Timestamp | None) -> str:
    return "-" if ts is None or pd.isna(ts) else pd.Timestamp(ts).strftime("%Y-%m-%d")


@dataclass(frozen=True)
class IntakeReport:
    """The whole intake: file reports, a row per security, suspected splits and panel notes.

    ``securities`` (index ``security``): ``first_valid``, ``last_valid`` (month-ends),
    ``n_valid``, ``coverage`` (share of calendar months from first to last with a
    valid price), ``stale_months``, ``max_flat_run``, ``n_gaps``, ``flags``
    (``;``-joined), ``split_date``, ``split_ratio``, ``extreme_pe_months``, ``max_abs_pe``.
    ``suspected_splits``: ``security``, ``date``, ``ratio``, ``applied``, ``eps_adjusted``.
    ``alignment``: ``file``, ``reason``, ``count`` (observations set aside while
    aligning to month-ends).
    """

    files: tuple[FileReport, ...]
    securities: pd.DataFrame
    suspected_splits: pd.DataFrame
    panel_notes: tuple[str, ...] = ()
    alignment: pd.DataFrame = field(default_factory=lambda: _empty(["file", "reason", "count"]))
    holdings_total: float | None = None  # sum of the holdings weights as read (1.0 when complete)

    def file(self, name: str) -> FileReport:
        """The report of the file called ``name`` (KeyError if absent)."""
        for f in self.files:
            if f.name == name:
                return f
        raise KeyError(name)

    def flagged(self, flag: str) -> list[str]:
        """Securities carrying ``flag``."""
        if self.securities.empty:
            return []
        hit = self.securities["flags"].fillna("").str.split(";").map(lambda xs: flag in xs)
        return sorted(self.securities.index[hit.to_numpy(dtype=bool)].tolist())

    @property
    def median_coverage(self) -> float:
        """Median over securities of their price coverage (NaN without securities)."""
        if self.securities.empty or "coverage" not in self.securities:
            return float("nan")
        return float(self.securities["coverage"].median())
