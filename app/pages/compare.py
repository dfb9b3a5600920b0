"""Compare page: two to eight signals (and saved studies) side by side on the data in use and the Study page's
settings; the rank correlation between them as a heat map; which one carries information the others do not.

Callbacks are thin: the comparison runs on the job runner (:func:`valuesift.app.compare_service.start_compare`,
with progress per study and Cancel), the charts
from :mod:`valuesift.app.figures.compare`, the sentences from :mod:`valuesift.app.bundle.stability_text`.
"""

from __future__ import annotations

from typing import Any

import dash
import dash_ag_grid as dag
from dash import Input, Output, State, dcc, html, no_update

from valuesift.app.bundle.stability_text import compare_sentences, evidence_phrase
from valuesift.app.compare_service import compare_result, start_compare
from valuesift.app.components.common import field, panel_choices
from valuesift.app.components.grid import grid_columns, grid_number
from valuesift.app.components.graphs import graph_card, height_style
from valuesift.app.figures.compare import compare_ic_figure, correlation_heatmap_figure, joint_fm_figure, signal_words
from valuesift.app.jobs_ui import alert, job_components
from valuesift.app.saved_studies import delete_study, save_study, saved_studies
from valuesift.app.services import current_owner, normalise_selection, state
from valuesift.app.settings import config_from_settings, shown_horizon
from valuesift.core.errors import ValueSiftError

dash.register_page(__name__, path="/compare", name="Compare", order=5, title="ValueSift - Compare")

P = "compare"
_BUILTIN = [{"label": "Earnings yield", "value": "earnings_yield"},
            {"label": "Dividend yield", "value": "dividend_yield"},
            {"label": "Composite of both yields", "value": "composite"}]


def layout(**_: Any) -> html.Div:
    return html.Div(className="vs-page vs-two-col", children=[
        html.Aside(className="vs-sidebar", children=[
            html.Fieldset(id=f"{P}-controls", className="vs-controls", children=[
                html.Legend("What to compare"),
                field("Signals", dcc.Checklist(id=f"{P}-signals", options=_BUILTIN,
                                               value=["earnings_yield", "dividend_yield", "composite"],
                                               persistence=True, persistence_type="local"),
                      "Each is studied with the Study page's settings on the data in use; it keeps its own dates."),
                field("Saved studies", dcc.Dropdown(id=f"{P}-saved", multi=True, options=[], value=[],
                                                    placeholder="add saved studies"),
                      "A saved study keeps its own settings."),
                html.Button("Compare", id=f"{P}-run", n_clicks=0, className="vs-button"),
            ]),
            html.Fieldset(className="vs-controls", children=[
                html.Legend("Save the current study"),
                field("Name", dcc.Input(id=f"{P}-save-name", type="text", maxLength=60, debounce=False,
                                        placeholder="e.g. yield, 3-month lag")),
                html.Button("Save", id=f"{P}-save", n_clicks=0, className="vs-button"),
                html.Button("Delete the chosen saved studies", id=f"{P}-delete", n_clicks=0,
                            className="vs-button vs-button-quiet"),
                html.Div(id=f"{P}-save-note", className="vs-hint"),
            ]),
        ]),
        html.Section(className="vs-content", children=[
            html.H1("Compare signals"),
            *job_components(P),
            html.Div(id=f"{P}-results", hidden=True, children=[
                field("Horizon shown", dcc.RadioItems(id=f"{P}-horizon", inline=True, options=[], value=None,
                                                      className="vs-horizon-pick")),
                html.Div(id=f"{P}-sentences", className="vs-summary"),
                html.Div(className="vs-card", children=dag.AgGrid(
                    id=f"{P}-table", columnDefs=table_columns(), rowData=[], columnSize="responsiveSizeToFit",
                    defaultColDef={"resizable": True, "sortable": True, "minWidth": 96, "wrapHeaderText": True,
                                   "autoHeaderHeight": True},
                    dashGridOptions={"domLayout": "autoHeight",
                                     "overlayNoRowsTemplate": "No rows match the filters.",
                                     "tooltipShowDelay": 300},
                    className="ag-theme-quartz vs-grid-table", style={"width": "100%"})),
                html.Div(className="vs-grid", children=[graph_card(f"{P}-heatmap"), graph_card(f"{P}-ic")]),
                graph_card(f"{P}-joint"),
                html.Div(id=f"{P}-notes", className="vs-notes"),
            ]),
            dcc.Store(id=f"{P}-done"),
        ]),
    ])


@dash.callback(Output(f"{P}-signals", "options"), Input("vs-selection", "data"))
def _signal_options(sel: Any) -> Any:
    st = state()
    try:
        ch = panel_choices(st.panel(normalise_selection(sel))) if st.usable_ids(normalise_selection(sel)) else None
    except Exception:  # the Data page says why a panel cannot be built
        ch = None
    extra = [{"label": f"Your signal: {n}", "value": n} for n in (ch or {}).get("signals", [])]
    return _BUILTIN + extra


@dash.callback(
    Output(f"{P}-saved", "options"), Output(f"{P}-save-note", "children"), Output(f"{P}-saved", "value"),
    Input(f"{P}-save", "n_clicks"), Input(f"{P}-delete", "n_clicks"),
    State(f"{P}-save-name", "value"), State("vs-selection", "data"), State("vs-settings", "data"),
    State(f"{P}-saved", "value"),
)
def _save(n_save: Any, n_delete: Any, name: Any, sel: Any, settings: Any, chosen: Any) -> Any:
    st = state()
    owner = current_owner()
    note: Any = None
    value: Any = no_update
    trig = dash.ctx.triggered_id
    if trig == f"{P}-save" and n_save:
        try:
            if not st.usable_ids(normalise_selection(sel)):
                raise ValueSiftError("No data is in use: open the demo or upload files on the Data page first.")
            save_study(st.workspace, str(name or ""), normalise_selection(sel), config_from_settings(settings), owner)
            note = f"Saved as {str(name).strip()!r}: the Study page's settings on the data in use."
        except ValueSiftError as err:
            note = str(err)
    elif trig == f"{P}-delete" and n_delete:
        for n in chosen or []:
            delete_study(st.workspace, str(n), owner)
        note, value = (f"Deleted {len(chosen or [])} saved studies.", [])
    opts = [{"label": f"{n} (saved {rec.get('saved', '')[:10]})", "value": n}
            for n, rec in saved_studies(st.workspace, owner).items()]
    return opts, note, value


@dash.callback(
    Output(f"{P}-job", "data"), Output(f"{P}-poll", "disabled"), Output(f"{P}-alert", "children"),
    Output(f"{P}-controls", "disabled"), Output(f"{P}-progress-box", "hidden"), Output(f"{P}-done", "data"),
    Input(f"{P}-run", "n_clicks"),
    State("vs-selection", "data"), State("vs-settings", "data"), State(f"{P}-signals", "value"),
    State(f"{P}-saved", "value"),
    prevent_initial_call=True,
)
def _run(n: Any, sel: Any, settings: Any, signals: Any, saved: Any) -> Any:
    st = state()
    if not n:
        return no_update, True, no_update, False, True, no_update
    if not st.usable_ids(normalise_selection(sel)):
        return (None, True, alert("No price file is in use yet. Upload your files (or open the demo) on the Data "
                                  "page.", "info"), False, True, None)
    try:
        job, key, left = start_compare(st, sel, config_from_settings(settings), list(signals or []),
                                       list(saved or []), words=signal_words)
    except ValueSiftError as err:
        return None, True, alert(str(err)), False, True, None
    done = {"key": key, "left": left}
    if job is None:                     # already compared: drawn at once
        return {"status": "done"}, True, None, False, True, done
    return {"id": job.id, "status": "running", "done": done}, False, None, True, False, no_update


@dash.callback(
    Output(f"{P}-job", "data", allow_duplicate=True), Output(f"{P}-poll", "disabled", allow_duplicate=True),
    Output(f"{P}-progress-bar", "style"), Output(f"{P}-progress-text", "children"),
    Output(f"{P}-alert", "children", allow_duplicate=True), Output(f"{P}-controls", "disabled", allow_duplicate=True),
    Output(f"{P}-progress-box", "hidden", allow_duplicate=True), Output(f"{P}-done", "data", allow_duplicate=True),
    Input(f"{P}-poll", "n_intervals"), State(f"{P}-job", "data"),
    prevent_initial_call=True,
)
def _poll(_n: Any, data: Any) -> Any:
    if not isinstance(data, dict) or data.get("status") != "running":
        return no_update, True, no_update, no_update, no_update, False, True, no_update
    job = state().own_job(data.get("id"), "comparison")
    if job is None:
        return ({"status": "lost"}, True, {}, "", alert("The comparison was lost (the server restarted?); press "
                                                         "Compare again."), False, True, no_update)
    if job.active:
        pct = f"{100 * max(0.02, min(job.fraction, 1.0)):.0f}%"
        text = "waiting for a running job to finish" if job.status == "queued" else f"comparing: {job.stage}"
        return no_update, False, {"width": pct}, text, no_update, True, False, no_update
    if job.status == "done":
        return {"status": "done"}, True, {"width": "100%"}, "", None, False, True, data.get("done")
    if job.status == "cancelled":
        return ({"status": "cancelled"}, True, {}, "", alert("The comparison was cancelled.", "info"), False, True,
                no_update)
    return {"status": "failed"}, True, {}, "", alert(job.error or "The comparison failed."), False, True, no_update


@dash.callback(
    Output(f"{P}-cancel", "n_clicks"), Input(f"{P}-cancel", "n_clicks"), State(f"{P}-job", "data"),
    prevent_initial_call=True,
)
def _cancel(n: Any, data: Any) -> Any:
    if n and isinstance(data, dict):
        st = state()
        job = st.own_job(data.get("id"), "comparison")
        if job is not None:
            st.runner.cancel(job.id)
    return no_update


@dash.callback(
    Output(f"{P}-horizon", "options"), Output(f"{P}-horizon", "value"),
    Input(f"{P}-done", "data"), State(f"{P}-horizon", "value"),
)
def _horizons(done: Any, current: Any) -> Any:
    cmp = compare_result(done.get("key")) if isinstance(done, dict) else None
    if cmp is None:
        return no_update, no_update
    hs = [int(h) for h in cmp.config.horizons]
    return [{"label": f"{h} m", "value": h} for h in hs], shown_horizon(hs, current)


#: The comparison grid's columns: (id, header, kind) and the format of each number (decimals, percent).
_COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("signal", "Signal", "text"), ("mean_ic", "Mean IC", "numeric"), ("ic_t", "IC t", "numeric"),
    ("spread", "Spread", "numeric"), ("spread_t", "Spread t", "numeric"),
    ("sharpe", "Sharpe", "numeric"), ("max_drawdown", "Worst drawdown", "numeric"),
    ("turnover", "Turnover", "numeric"), ("mean_breadth", "Names", "numeric"), ("n_dates", "Dates", "numeric"),
    ("verdict", "Verdict", "text"),
)
#: The longer words of a header, shown when the pointer rests on it.
_TOOLTIPS = {"mean_ic": "Mean rank information coefficient", "ic_t": "Headline t of the mean IC",
             "spread": "Cheapest minus dearest quantile, mean return over the horizon",
             "spread_t": "Headline t of the spread",
             "sharpe": "Sharpe ratio (a year) of the cheapest quantile held for the horizon",
             "max_drawdown": "Worst fall of the cheapest quantile from its running peak",
             "turnover": "Share of the cheapest quantile replaced each month", "mean_breadth": "Names a date, mean",
             "n_dates": "Dates with an IC", "verdict": "How strong the evidence is, by the headline t"}
_FORMATS = {"mean_ic": (3, False), "ic_t": (2, False), "spread": (2, True), "spread_t": (2, False),
            "sharpe": (2, False), "max_drawdown": (1, True), "turnover": (1, True), "mean_breadth": (0, False),
            "n_dates": (0, False)}


def table_columns() -> list[dict[str, Any]]:
    """``columnDefs`` of the comparison grid: the signal pinned, numbers sorting and filtering as numbers."""
    cols = grid_columns(_COLUMNS, pinned="signal", formats=_FORMATS)
    for c in cols:
        c["headerTooltip"] = _TOOLTIPS.get(c["field"], c["headerName"])
        if c["field"] == "signal":
            c.update(minWidth=170, wrapText=False, autoHeight=False)
        elif c["field"] == "verdict":
            c.update(minWidth=330)
        elif c["field"] == "max_drawdown":
            c["minWidth"] = 136          # "drawdown" whole beside the header's filter and sort marks
        else:
            c["minWidth"] = 112
    return cols


def table_records(cmp: Any, h: int) -> list[dict[str, Any]]:
    """One grid row per signal at horizon ``h``: numbers as numbers (missing as empty), words for the rest."""
    t = cmp.table[cmp.table["horizon"] == h]
    rows = []
    for _, r in t.iterrows():
        row: dict[str, Any] = {c: grid_number(r.get(c)) for c, _, kind in _COLUMNS if kind == "numeric"}
        row.update(signal=signal_words(r["signal"]), verdict=evidence_phrase(r["evidence"]))
        rows.append(row)
    return rows


@dash.callback(
    Output(f"{P}-results", "hidden"), Output(f"{P}-sentences", "children"), Output(f"{P}-table", "rowData"),
    Output(f"{P}-heatmap", "figure"), Output(f"{P}-ic", "figure"), Output(f"{P}-joint", "figure"),
    Output(f"{P}-notes", "children"), Output(f"{P}-heatmap", "style"), Output(f"{P}-ic", "style"),
    Output(f"{P}-joint", "style"),
    Input(f"{P}-done", "data"), Input(f"{P}-horizon", "value"),
)
def _show(done: Any, horizon: Any) -> Any:
    if not isinstance(done, dict):
        return True, None, [], no_update, no_update, no_update, None, no_update, no_update, no_update
    cmp = compare_result(done.get("key"))
    if cmp is None:
        return (True, alert("This comparison is no longer in memory (the server restarted, or many comparisons were "
                            "run since); press Compare again.", "info"), [], no_update, no_update, no_update, None,
                no_update, no_update, no_update)
    h = shown_horizon(list(cmp.config.horizons), horizon)
    notes = [html.Li(n) for n in [*cmp.notes, *done.get("left", [])]]
    figs = [correlation_heatmap_figure(cmp), compare_ic_figure(cmp, h), joint_fm_figure(cmp, h)]
    return (False, [html.P(s) for s in compare_sentences(cmp, h)], table_records(cmp, h), *figs, html.Ul(notes),
            *[height_style(f) for f in figs])
