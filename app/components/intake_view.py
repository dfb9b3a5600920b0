"""The intake report of one upload as a card: what was read, dropped and why, and the override controls."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from dash import dcc, html

from valuesift.app.words import reason_words
from valuesift.app.components.common import text_table
from valuesift.app.workspace import DatasetRecord
from valuesift.core.intake.options import READ_CHOICES

__all__ = ["dataset_card", "card_order", "KIND_OPTIONS", "options_from_controls", "detected_options", "has_overrides"]

KIND_OPTIONS = [{"label": w, "value": k} for k, w in (
    ("prices", "prices"), ("earnings", "earnings"), ("dividends", "dividends"), ("sectors", "sectors"),
    ("holdings", "holdings"), ("benchmark", "benchmark"), ("market_cap", "market capitalisation"),
    ("signal", "your own signal"))]
_EARNINGS_FORMS = [{"label": "detect (EPS unless the header says P/E)", "value": "auto"},
                   {"label": "EPS", "value": "eps"}, {"label": "P/E", "value": "pe"}]
_DUPLICATES = [{"label": "the last one wins", "value": "last"}, {"label": "the first one wins", "value": "first"},
               {"label": "stop with an error", "value": "error"}]
_LAYOUTS = [{"label": "detect", "value": "auto"}, {"label": "wide: one column per security", "value": "wide"},
            {"label": "long: date, security, value", "value": "long"}]
_DATE_ORDERS = [{"label": "detect", "value": "auto"}, {"label": "day/month/year", "value": "dmy"},
                {"label": "month/day/year", "value": "mdy"}, {"label": "year/month/day", "value": "ymd"}]
_DECIMALS = [{"label": "detect", "value": "auto"}, {"label": "point (1,234.5)", "value": "point"},
             {"label": "comma (1.234,5)", "value": "comma"}]
_CLEANUPS = [{"label": "leave as read", "value": "none"}, {"label": "upper case", "value": "upper"},
             {"label": "first word only", "value": "first_token"}, {"label": "pattern (regex)", "value": "regex"}]


def _L(name: str) -> str:
    """A reading choice's label, from the one table core.intake.options.READ_CHOICES."""
    return READ_CHOICES[name][0]


def _pid(kind: str, did: str) -> dict[str, str]:
    return {"type": kind, "id": did}


def _summary_rows(r: dict[str, Any]) -> list[tuple[str, Any]]:
    def d(v: Any) -> str:
        return (v.get("__ts__") or "")[:10] if isinstance(v, dict) else ("" if v is None else str(v))

    delim = {"\t": "tab", ",": "comma", ";": "semicolon", "|": "bar"}.get(r.get("delimiter") or "", r.get("delimiter"))
    rows = [
        ("what it holds", r.get("kind")),
        ("format", f"{r.get('format')}" + (f", sheet {r.get('sheet')}" if r.get("sheet") else "")
                   + (f", {r.get('encoding')}" if r.get("encoding") else "") + (f", delimiter {delim}" if delim else "")),
        ("layout", f"{r.get('layout')}, header on row {r.get('header_row')}"),
        ("size", f"{r.get('n_rows')} data rows x {r.get('n_columns')} columns, {r.get('n_securities')} securities"),
    ]
    if r.get("date_column") is not None:
        rows.append(("dates", f"column {r.get('date_column')!r}, {r.get('date_order')} "
                              f"({r.get('date_order_reason')}); {d(r.get('first_date'))} to {d(r.get('last_date'))}, "
                              f"{r.get('frequency')}"))
    if r.get("security_column"):
        rows.append(("identifiers", f"column {r.get('security_column')!r}"))
    if r.get("decimal"):
        rows.append(("decimal", r.get("decimal")))
    if r.get("value_form"):
        rows.append(("values read as", r.get("value_form")))
    ex = r.get("excluded_columns")
    ex = ex.get("__tuple__") if isinstance(ex, dict) else ex
    if ex:
        rows.append(("columns left out", ", ".join(map(str, ex))))
    rows.append(("cells", f"{r.get('cells_total')} total = {r.get('cells_parsed')} read + {r.get('cells_blank')} blank + "
                          f"{r.get('cells_unparseable')} unreadable + {r.get('cells_dropped')} dropped"))
    return rows


def _frame_rows(v: Any) -> tuple[list[str], list[list[Any]]]:
    if isinstance(v, dict) and "__frame__" in v:
        return v["__frame__"], v["rows"]
    return [], []


def _in_words(cols: list[str], rows: list[list[Any]]) -> tuple[list[str], list[list[Any]]]:
    """A report table with its reason codes in words and the file's own column names quoted, as the notes quote
    them (a name such as eps_ttm is the file's, not a word of ours)."""
    if rows and "reason" in cols:
        k = cols.index("reason")
        rows = [[reason_words(v) if j == k else v for j, v in enumerate(row)] for row in rows]
    if rows and "column" in cols:
        k = cols.index("column")
        rows = [[f"'{v}'" if j == k and isinstance(v, str) and v else v for j, v in enumerate(row)] for row in rows]
    return cols, rows


def _tuple(v: Any) -> list[Any]:
    if isinstance(v, dict) and "__tuple__" in v:
        return list(v["__tuple__"])
    return list(v or [])


def _controls(rec: DatasetRecord) -> html.Div:
    o = rec.options
    rep = rec.report or {}
    suspects = _tuple(rep.get("suspect_columns"))
    return html.Details(className="vs-overrides", open=not rec.ok, children=[
        html.Summary("Change how this file is read"),
        html.Div(className="vs-override-grid", children=[
            html.Div([html.Label(_L("kind")), dcc.Dropdown(id=_pid("ds-kind", rec.id), options=KIND_OPTIONS,
                                                             value=o.kind, placeholder="detect")]),
            html.Div([html.Label(_L("layout")), dcc.Dropdown(id=_pid("ds-layout", rec.id), options=_LAYOUTS,
                                                         value=o.layout, clearable=False)]),
            html.Div([html.Label(_L("header_row") + " (counted from 1)"), dcc.Input(id=_pid("ds-header", rec.id), type="number",
                                                                    min=1, step=1, value=o.header_row,
                                                                    placeholder="detect")]),
            html.Div([html.Label(_L("date_order")), dcc.Dropdown(id=_pid("ds-dates", rec.id), options=_DATE_ORDERS,
                                                             value=o.date_order, clearable=False)]),
            html.Div([html.Label(_L("decimal")), dcc.Dropdown(id=_pid("ds-decimal", rec.id), options=_DECIMALS,
                                                                value=o.decimal, clearable=False)]),
            html.Div([html.Label(_L("id_cleanup")), dcc.Dropdown(id=_pid("ds-idclean", rec.id), options=_CLEANUPS,
                                                                      value=o.id_cleanup, clearable=False)]),
            html.Div([html.Label(_L("id_regex")), dcc.Input(id=_pid("ds-idregex", rec.id), type="text",
                                                                  value=o.id_regex or "", placeholder=r"e.g. ([A-Z]{3}\d{2})")]),
            html.Div([html.Label(_L("signal_name") + " (own signal files)"),
                      dcc.Input(id=_pid("ds-signame", rec.id), type="text", value=o.signal_name or "",
                                placeholder="e.g. book yield")]),
            html.Div([html.Label("Higher signal values mean"),
                      dcc.Dropdown(id=_pid("ds-direction", rec.id), clearable=False,
                                   value="cheaper" if o.higher_is_cheaper else "dearer",
                                   options=[{"label": "cheaper (like a yield)", "value": "cheaper"},
                                            {"label": "dearer (like a ratio of price)", "value": "dearer"}])]),
            html.Div([html.Label(_L("earnings_date_column") + " (earnings, long layout)"),
                      dcc.Input(id=_pid("ds-pubdate", rec.id), type="text", value=o.earnings_date_column or "",
                                placeholder=str(rep.get("availability_column") or "detect by name"))]),
            html.Div([html.Label(_L("earnings_form") + " (earnings files)"),
                      dcc.Dropdown(id=_pid("ds-earnform", rec.id), options=_EARNINGS_FORMS, value=o.earnings_form,
                                   clearable=False)]),
            html.Div([html.Label(_L("date_column")), dcc.Input(id=_pid("ds-datecol", rec.id), type="text",
                                                            value=o.date_column or "", placeholder="detect")]),
            html.Div([html.Label(_L("security_column") + " (long layout)"),
                      dcc.Input(id=_pid("ds-seccol", rec.id), type="text", value=o.security_column or "",
                                placeholder="detect")]),
            html.Div([html.Label(_L("value_column") + " (long layout)"),
                      dcc.Input(id=_pid("ds-valcol", rec.id), type="text", value=o.value_column or "",
                                placeholder="detect")]),
            html.Div([html.Label(_L("duplicate_rule")), dcc.Dropdown(id=_pid("ds-dups", rec.id), options=_DUPLICATES,
                                                                    value=o.duplicate_rule, clearable=False)]),
            html.Div([html.Label(_L("exclude_columns") + " (comma-separated)"),
                      dcc.Input(id=_pid("ds-exclude", rec.id), type="text", value=", ".join(o.exclude_columns),
                                placeholder=", ".join(suspects) if suspects else "none")]),
        ]),
        html.Div(className="vs-row", children=[
            html.Button("Read again with these choices", id=_pid("ds-reread", rec.id), n_clicks=0,
                        className="vs-button"),
            *([html.Button("Go back to the detected reading", id=_pid("ds-detected", rec.id), n_clicks=0,
                           className="vs-button vs-button-quiet")] if has_overrides(o) else []),
        ]),
    ])


def detected_options(options: Any) -> Any:
    """The reading intake detects by itself: every reading override cleared (left-out columns, own signal's
    name and direction kept, since they are not guesses of the reader)."""
    return replace(options, kind=None, layout="auto", header_row=None, date_order="auto", decimal="auto",
                   id_cleanup="none", id_regex=None, date_column=None, security_column=None, value_column=None,
                   duplicate_rule="last", earnings_form="auto")


def has_overrides(options: Any) -> bool:
    """Whether any reading choice differs from what intake detects by itself."""
    return detected_options(options) != options


_KIND_RANK = {k["value"]: i for i, k in enumerate(KIND_OPTIONS)}


def card_order(recs: list[DatasetRecord]) -> list[DatasetRecord]:
    """Failed reads first (they need attention), then by kind (prices first), newest first within a kind."""
    by_time = sorted(recs, key=lambda r: r.uploaded_at, reverse=True)
    return sorted(by_time, key=lambda r: (r.ok, _KIND_RANK.get(r.kind or "", 99)))


def dataset_card(rec: DatasetRecord, in_use: bool) -> html.Div:
    """One upload: status, the report (or the error) and the controls to read it differently."""
    head = html.Div(className="vs-card-head", children=[
        html.H3(rec.name, className="vs-file-name"),
        html.Span(rec.kind or "unknown kind", className="vs-badge"),
        html.Span("read" if rec.ok else "could not be read", className="vs-badge " + ("vs-ok" if rec.ok else "vs-bad")),
        html.Span(f"uploaded {rec.uploaded_at[:16].replace('T', ' ')} UTC, {rec.size:,} bytes", className="vs-hint"),
        dcc.Checklist(id=_pid("ds-use", rec.id), options=[{"label": "use in the study", "value": "on",
                                                           "disabled": not rec.ok}],
                      value=["on"] if in_use and rec.ok else [], className="vs-use"),
        html.Button("Remove", id=_pid("ds-delete", rec.id), n_clicks=0, className="vs-button vs-button-quiet"),
    ])
    body: list[Any] = []
    if not rec.ok:
        body.append(html.Div(rec.error or "The file could not be read.", className="vs-alert vs-alert-error", role="alert"))
    else:
        r = rec.report or {}
        suspects = [str(x) for x in _tuple(r.get("suspect_columns")) if str(x) not in rec.options.exclude_columns]
        if suspects:
            body.append(html.Div(className="vs-alert vs-alert-info", children=[
                f"Looks like an index, not a security: {', '.join(suspects)}. ",
                html.Button(f"Leave out {', '.join(suspects)}", id=_pid("ds-drop-suspects", rec.id), n_clicks=0,
                            className="vs-button vs-button-small"),
            ]))
        body.append(text_table(_summary_rows(r), class_name="vs-table vs-kv"))
        cols, rows = _in_words(*_frame_rows(r.get("by_reason")))
        if rows:
            body.append(html.H4("Cells not used, by reason"))
            body.append(text_table(rows, cols))
        cols, rows = _in_words(*_frame_rows(r.get("examples")))
        if rows:
            body.append(html.Details([html.Summary(f"Where (first examples, {len(rows)} shown)"),
                                      text_table(rows, cols)]))
        notes = _tuple(r.get("notes"))
        if notes:
            body.append(html.Ul([html.Li(str(n)) for n in notes], className="vs-notes-list"))
    body.append(_controls(rec))
    return html.Div(className="vs-card vs-dataset" + ("" if rec.ok else " vs-dataset-failed"),
                    id=f"card-{rec.id}", children=[head, *body])


def _text(v: Any) -> str | None:
    return (str(v).strip() or None) if v else None


def options_from_controls(base: Any, kind: Any, layout: Any, header: Any, dates: Any, decimal: Any,
                          idclean: Any, idregex: Any, exclude: Any, signal_name: Any = None,
                          direction: Any = "cheaper", pubdate: Any = None, date_column: Any = None,
                          security_column: Any = None, value_column: Any = None, duplicates: Any = None,
                          earnings_form: Any = None) -> Any:
    """New ReadOptions from the card's controls (ConfigError names a bad choice)."""
    cols = tuple(c.strip() for c in str(exclude or "").split(",") if c.strip())
    return replace(
        base,
        kind=kind or None,
        layout=layout or "auto",
        header_row=int(header) if header not in (None, "") else None,
        date_order=dates or "auto",
        decimal=decimal or "auto",
        id_cleanup=idclean or "none",
        id_regex=(idregex or None) if (idclean == "regex") else None,
        exclude_columns=cols,
        signal_name=(str(signal_name).strip() or None) if signal_name else None,
        higher_is_cheaper=direction != "dearer",
        earnings_date_column=(str(pubdate).strip() or None) if pubdate else None,
        date_column=_text(date_column),
        security_column=_text(security_column),
        value_column=_text(value_column),
        duplicate_rule=duplicates or base.duplicate_rule,
        earnings_form=earnings_form or base.earnings_form,
    )
