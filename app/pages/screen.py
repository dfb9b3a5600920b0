"""Screen page: the holdings (or the whole universe) on one date, cheapest first; click a row for its company page."""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, dash_table, dcc, html, no_update
from dash.dash_table import FormatTemplate
from dash.dash_table.Format import Format, Scheme
from dash.exceptions import PreventUpdate

from valuesift.app.figures.common import month
from valuesift.app.ids import company_path
from valuesift.app.jobs_ui import alert, job_components, register_job_callbacks
from valuesift.app.screen_table import COLUMNS, apply_filter, apply_sort, display_frame, page, to_csv_bytes, to_xlsx_bytes
from valuesift.app.services import LRU, finished_result, job_done, state
from valuesift.core.errors import ValueSiftError
from valuesift.core.reporting.screen import screen_table

dash.register_page(__name__, path="/screen", name="Screen", order=2, title="ValueSift - Screen")

P = "screen"
_FRAMES = LRU(16)
_FORMATS = {"holding_weight": {"format": FormatTemplate.percentage(2)},
            "signal": {"format": Format(precision=4, scheme=Scheme.fixed)}}


def layout(**_: Any) -> html.Div:
    columns = [{"name": head, "id": cid, "type": kind, **_FORMATS.get(cid, {})} for cid, head, kind in COLUMNS]
    return html.Div(className="vs-page", children=[
        html.H1("Screen"),
        dcc.Location(id=f"{P}-go", refresh="callback-nav"),
        *job_components(P),
        html.Div(className="vs-row vs-toolbar", children=[
            html.Div(className="vs-field", children=[html.Label("Date", className="vs-label"),
                                                      dcc.Dropdown(id=f"{P}-date", clearable=False, options=[],
                                                                   value=None, style={"minWidth": "12rem"})]),
            html.Div(className="vs-field", children=[html.Label("Show", className="vs-label"),
                                                      dcc.RadioItems(id=f"{P}-scope", value="holdings", inline=True, options=[
                                                          {"label": "the holdings", "value": "holdings"},
                                                          {"label": "the whole universe", "value": "all"}])]),
            html.Button("Download CSV", id=f"{P}-csv", n_clicks=0, className="vs-button"),
            html.Button("Download XLSX", id=f"{P}-xlsx", n_clicks=0, className="vs-button"),
            dcc.Download(id=f"{P}-download"),
        ]),
        html.P(id=f"{P}-caption", className="vs-hint"),
        dash_table.DataTable(
            id=f"{P}-table", columns=columns, data=[], page_current=0, page_size=25, page_action="custom",
            sort_action="custom", sort_mode="multi", sort_by=[], filter_action="custom", filter_query="",
            style_table={"overflowX": "auto"}, cell_selectable=True,
            style_cell={"fontFamily": "inherit", "fontSize": "15px", "padding": "6px 10px", "textAlign": "left",
                        "whiteSpace": "normal", "height": "auto", "maxWidth": "22rem"},
            style_header={"fontWeight": "600", "backgroundColor": "#f1eee8"},
            style_data_conditional=[
                {"if": {"filter_query": "{quantile_label} contains 'cheapest'"}, "backgroundColor": "#e3ecf6"},
                {"if": {"filter_query": "{quantile_label} contains 'dearest'"}, "backgroundColor": "#f6eadc"},
                {"if": {"column_id": "security"}, "fontWeight": "600", "color": "#1f4f85", "cursor": "pointer"},
            ],
            tooltip_delay=300,
        ),
        html.P("Click a row to open that company's page. Filter with, for example, 'Banks' under Sector or "
               "'> 1' under Z-score.", className="vs-hint"),
    ])


register_job_callbacks(P)


def _frame(key: str, date: str | None, holdings: bool) -> Any:
    """The screen's display frame for a study result and date (memoised by key)."""
    cache_key = f"{key}|{date}|{holdings}"
    hit = _FRAMES.get(cache_key)
    if hit is not None:
        return hit
    res = state().result(key)
    if res is None:
        return None
    raw = res.screen if date is None else screen_table(res, date)
    has_holdings = bool(res.security_info["holding_weight"].notna().any())
    df = display_frame(raw, holdings_only=holdings and has_holdings)
    df.attrs.update({"date": raw.attrs.get("date"), "holdings": holdings and has_holdings})
    _FRAMES.put(cache_key, df)
    return df


@dash.callback(
    Output(f"{P}-date", "options"), Output(f"{P}-date", "value"),
    Input(f"{P}-job", "data"), State(f"{P}-date", "value"),
)
def _dates(job: Any, current: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update, no_update
    has = res.signal_z.notna().any(axis=1)
    dates = [d.date().isoformat() for d in res.signal_z.index[has.to_numpy()]][::-1]
    opts = [{"label": month(d), "value": d} for d in dates]
    return opts, current if current in dates else (dates[0] if dates else None)


@dash.callback(
    Output(f"{P}-table", "data"), Output(f"{P}-table", "page_count"), Output(f"{P}-caption", "children"),
    Output(f"{P}-alert", "children", allow_duplicate=True),
    Input(f"{P}-job", "data"), Input(f"{P}-date", "value"), Input(f"{P}-scope", "value"),
    Input(f"{P}-table", "page_current"), Input(f"{P}-table", "page_size"), Input(f"{P}-table", "sort_by"),
    Input(f"{P}-table", "filter_query"),
    prevent_initial_call="initial_duplicate",
)
def _table(job: Any, date: Any, scope: Any, current: Any, size: Any, sort_by: Any, query: Any) -> Any:
    if not job_done(job):
        return [], 1, "", no_update
    try:
        df = _frame(job["key"], date, scope == "holdings")
    except ValueSiftError as err:
        return [], 1, "", alert(str(err))
    if df is None:
        return [], 1, "", no_update
    try:
        shown = apply_sort(apply_filter(df, query), sort_by)
    except ValueSiftError as err:   # a filter above the length limit: say so, show nothing filtered
        return [], 1, "", alert(str(err))
    rows, n_pages = page(shown, current, size)
    res = state().result(job["key"])
    who = "holdings" if df.attrs.get("holdings") else "securities of the universe"
    cap = (f"{len(shown)} of {len(df)} {who} on {month(df.attrs.get('date'))}, cheapest first on "
           f"{res.signal_name.replace('_', ' ') if res else 'the signal'}; quantile "
           f"{res.config.n_quantiles if res else 'n'} (the highest signal) is the cheapest and 1 the "
           f"dearest, as on the Study page.")
    return rows, n_pages, cap, no_update


@dash.callback(
    Output(f"{P}-go", "href"),
    Input(f"{P}-table", "active_cell"),
    prevent_initial_call=True,
)
def _open(cell: Any) -> Any:
    if not isinstance(cell, dict) or not cell.get("row_id"):
        raise PreventUpdate
    return company_path(str(cell["row_id"]))


@dash.callback(
    Output(f"{P}-download", "data"),
    Input(f"{P}-csv", "n_clicks"), Input(f"{P}-xlsx", "n_clicks"),
    State(f"{P}-job", "data"), State(f"{P}-date", "value"), State(f"{P}-scope", "value"),
    State(f"{P}-table", "sort_by"), State(f"{P}-table", "filter_query"),
    prevent_initial_call=True,
)
def _download(n_csv: Any, n_xlsx: Any, job: Any, date: Any, scope: Any, sort_by: Any, query: Any) -> Any:
    if not job_done(job) or not (n_csv or n_xlsx):
        raise PreventUpdate
    df = _frame(job["key"], date, scope == "holdings")
    if df is None:
        raise PreventUpdate
    try:
        shown = apply_sort(apply_filter(df, query), sort_by)
    except ValueSiftError:
        raise PreventUpdate
    stamp = str(df.attrs.get("date") or "latest")
    if dash.ctx.triggered_id == f"{P}-xlsx":
        return dcc.send_bytes(to_xlsx_bytes(shown), f"screen-{stamp}.xlsx")
    return dcc.send_bytes(to_csv_bytes(shown), f"screen-{stamp}.csv")
