"""Screen page: the holdings (or the whole universe) on one date, cheapest first; click a row for its company page.

The table is a data grid fed from the server block by block (its infinite row model with pages of 25):
sorting, filtering and paging run on the server, so a universe of thousands of names never travels to
the browser whole.  Numbers stay numbers (they sort and filter as numbers) and are shown with one
format per column from :data:`valuesift.app.screen_table.NUMBER_FORMATS`.
"""

from __future__ import annotations

from typing import Any

import dash
import dash_ag_grid as dag
from dash import Input, Output, State, dcc, html, no_update
from dash.exceptions import PreventUpdate

from valuesift.app.components.grid import grid_columns
from valuesift.app.figures.common import month
from valuesift.app.ids import company_path
from valuesift.app.jobs_ui import alert, job_components, register_job_callbacks
from valuesift.app.screen_table import COLUMNS, NUMBER_FORMATS, display_frame, grid_rows, to_csv_bytes, to_xlsx_bytes
from valuesift.app.services import LRU, finished_result, job_done, state
from valuesift.core.errors import ValueSiftError
from valuesift.core.reporting.screen import screen_table
from valuesift.core.settings import SIGNAL_WORDS

dash.register_page(__name__, path="/screen", name="Screen", order=2, title="ValueSift - Screen")

P = "screen"
_FRAMES = LRU(16)


def layout(**_: Any) -> html.Div:
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
        dcc.Store(id=f"{P}-view"),
        html.Div(id=f"{P}-empty", className="vs-alert vs-alert-info", hidden=True,
                 children="No rows match the filters. Clear or change a filter in the column headers."),
        dag.AgGrid(
            id=f"{P}-table", columnDefs=grid_columns(COLUMNS, pinned="security", hidden=("pe_note",), formats=NUMBER_FORMATS,
                                                       notes={"pe": "pe_note"}),
            rowModelType="infinite", getRowId="params.data.security", columnSize="responsiveSizeToFit",
            defaultColDef={"resizable": True, "sortable": True, "minWidth": 90, "wrapHeaderText": True,
                           "autoHeaderHeight": True},
            dashGridOptions={"pagination": True, "paginationPageSize": 25, "cacheBlockSize": 25,
                             "paginationPageSizeSelector": False, "maxBlocksInCache": 20, "domLayout": "autoHeight"},
            rowClassRules={"vs-row-cheap": "params.data && params.data.quantile_label.includes('cheapest')",
                           "vs-row-dear": "params.data && params.data.quantile_label.includes('dearest')"},
            className="ag-theme-quartz vs-grid-table", style={"width": "100%"},
        ),
        html.P("Click a row to open that company's page. Filter from a column's menu: text columns by words, number columns by "
               "ranges (for example Z-score greater than 1).", className="vs-hint"),
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
    Output(f"{P}-scope", "options"), Output(f"{P}-scope", "value"),
    Input(f"{P}-job", "data"), State(f"{P}-date", "value"), State(f"{P}-scope", "value"),
)
def _dates(job: Any, current: Any, scope: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update, no_update, no_update, no_update
    has = res.signal_z.notna().any(axis=1)
    dates = [d.date().isoformat() for d in res.signal_z.index[has.to_numpy()]][::-1]
    opts = [{"label": month(d), "value": d} for d in dates]
    held = bool(res.security_info["holding_weight"].notna().any())
    # Without a holdings file "the holdings" cannot be chosen: the choice shown is the table shown.
    scopes = [{"label": "the holdings" if held else "the holdings (no holdings file)", "value": "holdings",
               "disabled": not held}, {"label": "the whole universe", "value": "all"}]
    return opts, current if current in dates else (dates[0] if dates else None), scopes, \
        (scope if held and scope in ("holdings", "all") else "all" if not held else "holdings")


# A new study, date or scope: the grid drops its cached blocks and asks the server again.
dash.clientside_callback(
    """async function(job, date, scope) {
        const api = await window.dash_ag_grid.getApiAsync("screen-table");
        api.purgeInfiniteCache();
        return window.dash_clientside.no_update;
    }""",
    Output(f"{P}-view", "data", allow_duplicate=True),
    Input(f"{P}-job", "data"), Input(f"{P}-date", "value"), Input(f"{P}-scope", "value"),
    prevent_initial_call=True,
)


@dash.callback(
    Output(f"{P}-table", "getRowsResponse"), Output(f"{P}-caption", "children"), Output(f"{P}-empty", "hidden"),
    Output(f"{P}-view", "data"), Output(f"{P}-alert", "children", allow_duplicate=True),
    Input(f"{P}-table", "getRowsRequest"),
    State(f"{P}-job", "data"), State(f"{P}-date", "value"), State(f"{P}-scope", "value"),
    prevent_initial_call=True,
)
def _rows(request: Any, job: Any, date: Any, scope: Any) -> Any:
    empty = {"rowData": [], "rowCount": 0}
    if not job_done(job) or not isinstance(request, dict):
        return empty, "", True, no_update, no_update
    try:
        df = _frame(job["key"], date, scope == "holdings")
        if df is None:
            return empty, "", True, no_update, no_update
        shown, rows = grid_rows(df, request)
    except ValueSiftError as err:   # a filter above the length limit: say so, show nothing filtered
        return empty, "", True, no_update, alert(str(err))
    res = state().result(job["key"])
    who = "holdings" if df.attrs.get("holdings") else "securities of the universe"
    signal = SIGNAL_WORDS.get(res.signal_name, res.signal_name) if res else "the signal"
    n_q = res.config.n_quantiles if res else "n"
    cap = (f"{len(shown)} of {len(df)} {who} on {month(df.attrs.get('date'))}, cheapest first on {signal}; "
           f"{n_q} quantiles: quantile {n_q} (the highest signal) is the cheapest and 1 the dearest, as on the "
           f"Study page.")
    view = {"filterModel": request.get("filterModel") or {}, "sortModel": request.get("sortModel") or []}
    return {"rowData": rows, "rowCount": len(shown)}, cap, len(shown) > 0, view, None


@dash.callback(
    Output(f"{P}-go", "href"),
    Input(f"{P}-table", "cellClicked"),
    prevent_initial_call=True,
)
def _open(cell: Any) -> Any:
    if not isinstance(cell, dict) or not cell.get("rowId"):
        raise PreventUpdate
    return company_path(str(cell["rowId"]))


@dash.callback(
    Output(f"{P}-download", "data"),
    Input(f"{P}-csv", "n_clicks"), Input(f"{P}-xlsx", "n_clicks"),
    State(f"{P}-job", "data"), State(f"{P}-date", "value"), State(f"{P}-scope", "value"), State(f"{P}-view", "data"),
    prevent_initial_call=True,
)
def _download(n_csv: Any, n_xlsx: Any, job: Any, date: Any, scope: Any, view: Any) -> Any:
    if not job_done(job) or not (n_csv or n_xlsx):
        raise PreventUpdate
    df = _frame(job["key"], date, scope == "holdings")
    if df is None:
        raise PreventUpdate
    try:
        shown, _ = grid_rows(df, {**(view or {}), "startRow": 0, "endRow": 0})
    except ValueSiftError:
        raise PreventUpdate
    stamp = str(df.attrs.get("date") or "latest")
    if dash.ctx.triggered_id == f"{P}-xlsx":
        return dcc.send_bytes(to_xlsx_bytes(shown), f"screen-{stamp}.xlsx")
    return dcc.send_bytes(to_csv_bytes(shown), f"screen-{stamp}.csv")
