"""Sweep page: build a sweep from controls and run it, or pick a finished one; its table in words, its heat map.

The form crosses the values ticked under each control into a grid
(:func:`valuesift.core.sweep.controls.grid_from_controls`, the same validation as a grid file), says how
many configurations that makes before anything runs, and runs it on the data chosen on the Data page
through the dashboard's one job runner (in this process, one configuration after another, with a
progress bar and a Cancel button).  The settings the form does not vary are the Study page's.

Where sweeps live: ``<workspace>/sweeps/<name>/`` -- the form saves there, and so does
``valuesift sweep ... --out <workspace>/sweeps/<name>``.  Every sub-folder holding ``sweep.json`` and
``comparison.parquet`` is offered.  Clicking a row opens that configuration on the Study page
(``/study?sweep=<name>&point=<id>``), which runs it on the data chosen on the Data page; the page says
whether that data is the data the sweep ran on.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any
from urllib.parse import urlencode

import dash
import dash_ag_grid as dag
from dash import Input, Output, State, dcc, html, no_update
from dash.exceptions import PreventUpdate

from valuesift.app.components.common import field, panel_choices
from valuesift.app.components.grid import grid_columns, grid_number
from valuesift.app.figures.sweep import sweep_heatmap_figure
from valuesift.app.jobs_ui import alert, job_components
from valuesift.app.services import normalise_selection, state
from valuesift.app.settings import HORIZON_CHOICES, config_from_settings, help_text, label
from valuesift.app.sweeps import (
    configuration_words,
    dimension_settings,
    dimension_words,
    list_sweeps,
    load_named_sweep,
    sweep_name,
    sweep_root,
)
from valuesift.core.errors import ValueSiftError
from valuesift.core.settings import SETTING_BY_NAME, SIGNAL_WORDS, describe_value
from valuesift.core.sweep import MAX_IN_PROCESS_POINTS, count_configurations, grid_from_controls, panel_fingerprint
from valuesift.core.sweep.controls import FORM_DIMENSIONS, HOLDOUT_LABEL, NAME_LABEL, check_holdout, outlier_choices

dash.register_page(__name__, path="/sweep", name="Sweep", order=3, title="ValueSift - Sweep")

P = "sweep"
RUN = f"{P}-run"          # prefix of the run's job store, poll, progress bar, Cancel button and alert

__all__ = ["table_columns", "table_records", "layout", "form_values"]

#: Metric columns of the table (id, header, decimals, percent); the adjusted ones sit right after the raw t.
_METRICS: tuple[tuple[str, str, int, bool], ...] = (
    ("mean_ic", "Mean IC", 3, False), ("ic_t", "HAC t (raw)", 2, False), ("ic_t_bh", "t, BH adjusted", 2, False),
    ("ic_t_bonferroni", "t, Bonferroni", 2, False), ("ic_p", "p (raw)", 3, False), ("ic_p_bh", "p, BH", 3, False),
    ("ic_p_bonferroni", "p, Bonferroni", 3, False), ("spread", "Spread", 2, True), ("spread_t", "Spread t", 2, False),
    ("spread_t_bh", "Spread t, BH adjusted", 2, False),
    ("sharpe", "Long-short Sharpe", 2, False), ("sharpe_t", "Sharpe t (Lo)", 2, False),
    ("sharpe_t_bh", "Sharpe t, BH adjusted", 2, False), ("max_drawdown", "Max drawdown", 1, True),
    ("breadth", "Breadth", 0, False), ("n_dates", "Dates", 0, False),
)

#: The hold-out table: in-sample beside out-of-sample (id, header).
_HOLDOUT: tuple[tuple[str, str], ...] = (
    ("point_id", "Configuration"), ("horizon", "Horizon (m)"), ("rank_in", "Rank before"), ("ic_t", "IC t before"),
    ("mean_ic", "Mean IC before"), ("sharpe", "Sharpe before"), ("rank_out", "Rank on hold-out"),
    ("oos_ic_t", "IC t on hold-out"), ("oos_mean_ic", "Mean IC on hold-out"), ("oos_sharpe", "Sharpe on hold-out"),
)

_STATUS_WORDS = {"ok": "computed", "failed": "failed"}
#: Longer words for a header, shown when the pointer rests on it.
_TOOLTIPS = {"sharpe": "Long-short Sharpe ratio (a year), the portfolio held for the row's horizon",
             "ic_t_bh": "HAC t of the mean IC after the Benjamini-Hochberg false-discovery-rate adjustment",
             "ic_t_bonferroni": "HAC t of the mean IC after the Bonferroni adjustment",
             "spread": "Mean return of the cheapest quantile less the dearest, over the horizon",
             "breadth": "Names with a signal and a return on an average date", "n_dates": "Dates with an IC"}

# -- the form's choices (presentation: which values are offered; the ranges are the settings table's) ----------
_LAGS = (0, 1, 2, 3, 4, 6, 9, 12, 18, 24)
_COSTS = (0, 5, 10, 25, 50, 100)
#: form control id -> grid dimension
_CONTROLS: dict[str, str] = {f"{P}-signals": "signal", f"{P}-horizons": "horizons", f"{P}-quantiles": "quantiles",
                             f"{P}-outliers": "outliers", f"{P}-neutral": "sector_neutral", f"{P}-lags": "reporting_lag",
                             f"{P}-costs": "cost_bps"}
_DEFAULTS: dict[str, list[Any]] = {"signal": ["earnings_yield"], "horizons": [1, 12], "quantiles": [5],
                                   "outliers": ["winsorise:1:99"], "sector_neutral": ["False"], "reporting_lag": [0],
                                   "cost_bps": [0]}


def _in_range(name: str, values: tuple[int, ...]) -> list[int]:
    s = SETTING_BY_NAME[name]
    return [v for v in values if (s.lo is None or v >= s.lo) and (s.hi is None or v <= s.hi)]


def _signal_options(user: list[str] | None = None) -> list[dict[str, Any]]:
    builtin = [{"label": w[:1].upper() + w[1:], "value": c} for c, w in SIGNAL_WORDS.items()]
    return builtin + [{"label": f"Your signal: {n}", "value": n} for n in (user or [])]


def _checklist(cid: str, options: list[dict[str, Any]], value: list[Any]) -> dcc.Checklist:
    return dcc.Checklist(id=cid, options=options, value=value, inline=True, className="vs-sweep-choices")


def _form() -> html.Fieldset:
    q = SETTING_BY_NAME["n_quantiles"]
    neutral = SETTING_BY_NAME["sector_neutral"]
    return html.Fieldset(id=f"{P}-form", className="vs-controls vs-sweep-form", children=[
        html.Legend("Run a sweep on the data chosen on the Data page"),
        html.Div(className="vs-sweep-fields", children=[
            field(NAME_LABEL, dcc.Input(id=f"{P}-name", type="text", value="", debounce=False, maxLength=60,
                                        placeholder="empty: the date and time"),
                  "The folder of the sweep in the workspace; the picker below lists it by this name."),
            field(HOLDOUT_LABEL, dcc.Input(id=f"{P}-holdout", type="text", value="", maxLength=7,
                                           placeholder="YYYY-MM, optional"),
                  "Judge out of sample: the best configuration is chosen on the dates before this month and shown "
                  "on the dates from it on. Empty: every figure is in-sample."),
            field(label("signal"), _checklist(f"{P}-signals", _signal_options(), _DEFAULTS["signal"]),
                  help_text("signal")),
            field(label("horizons"), _checklist(f"{P}-horizons", [{"label": str(h), "value": h}
                                                                  for h in HORIZON_CHOICES], _DEFAULTS["horizons"]),
                  help_text("horizons") + " Every configuration is tested at each horizon ticked."),
            field(label("n_quantiles"), _checklist(f"{P}-quantiles", [{"label": str(k), "value": k} for k in
                                                                      range(int(q.lo or 2), int(q.hi or 20) + 1)],
                                                   _DEFAULTS["quantiles"]), help_text("n_quantiles")),
            field(label("outlier_rule"), _checklist(f"{P}-outliers", [{"label": w[:1].upper() + w[1:], "value": c}
                                                                      for c, w in outlier_choices()],
                                                    _DEFAULTS["outliers"]), help_text("outlier_rule")),
            field(label("sector_neutral"), _checklist(f"{P}-neutral", [{"label": w, "value": c}
                                                                       for c, w in reversed(neutral.choices)],
                                                      _DEFAULTS["sector_neutral"]), help_text("sector_neutral")),
            field(label("reporting_lag_months"), _checklist(f"{P}-lags", [{"label": str(v), "value": v} for v in
                                                                          _in_range("reporting_lag_months", _LAGS)],
                                                            _DEFAULTS["reporting_lag"]),
                  help_text("reporting_lag_months")),
            field(label("transaction_cost_bps"), _checklist(f"{P}-costs", [{"label": str(v), "value": v} for v in
                                                                           _in_range("transaction_cost_bps", _COSTS)],
                                                            _DEFAULTS["cost_bps"]),
                  help_text("transaction_cost_bps")),
        ]),
        html.P(id=f"{P}-count", className="vs-summary"),
        html.P(id=f"{P}-base", className="vs-hint"),
        html.Button("Run sweep", id=f"{P}-run-button", className="vs-button", n_clicks=0),
    ])


def layout(**_: Any) -> html.Div:
    try:
        root = sweep_root(state().workspace.root)
        names = list_sweeps(state().workspace.root)
    except Exception:  # outside a request (unit tests of the layout)
        root, names = Path("<workspace>") / "sweeps", []
    return html.Div(className="vs-page", children=[
        html.H1("Sweep"),
        html.P(["Many studies at once, judged with multiple-testing discipline. Tick the values to cross below and "
                "run them here, or run a grid file from the command line with ",
                html.Code(f"valuesift sweep --grid GRID.toml --out {root / 'NAME'} --prices ..."),
                " (see README, Sweeps). Finished sweeps are kept in ", html.Code(str(root)),
                ". Click a row of the table to open that configuration as a study."], className="vs-lead"),
        _form(),
        *job_components(RUN),
        html.H2("Finished sweeps"),
        dcc.Dropdown(id=f"{P}-pick", options=[{"label": n, "value": n} for n in names],
                     value=names[0] if names else None, clearable=False, placeholder="no finished sweep yet"),
        html.P(id=f"{P}-statement", className="vs-summary"),
        html.P(id=f"{P}-data-note", className="vs-notes"),
        dcc.Graph(id=f"{P}-heatmap", config={"displaylogo": False}, style={"display": "none"}),
        # the table and the judged best appear once a sweep is chosen (no empty grid or empty card before)
        html.Div(id=f"{P}-results", hidden=True, children=[
            dag.AgGrid(
                id=f"{P}-table", columnDefs=[], rowData=[], getRowId="params.data.row_id",
                columnSize="responsiveSizeToFit",
                defaultColDef={"resizable": True, "sortable": True, "minWidth": 120, "wrapHeaderText": True,
                               "autoHeaderHeight": True},
                dashGridOptions={"pagination": True, "paginationPageSize": 25, "paginationPageSizeSelector": False,
                                 "domLayout": "autoHeight", "tooltipShowDelay": 300,
                                 "suppressColumnVirtualisation": True},   # a small table: every column in the page
                rowClassRules={"vs-row-cheap": "params.data && params.data.ic_t_bh >= 1.96"},
                className="ag-theme-quartz vs-grid-table", style={"width": "100%"},
            ),
            html.P("Rows shaded blue are significant at 5 % after the Benjamini-Hochberg adjustment. Sort by a column "
                   "from its header; click a row to open that configuration on the Study page.", className="vs-hint"),
            html.Div(id=f"{P}-open-note", className="vs-notes"),
            html.Div(id=f"{P}-judged", className="vs-card", children=[
                html.H2("The best configuration, judged"),
                html.P(id=f"{P}-deflated", className="vs-summary"),
                html.P(id=f"{P}-holdout-sentence", className="vs-summary"),
                dag.AgGrid(id=f"{P}-holdout-table", columnDefs=_holdout_columns(),
                    rowData=[], columnSize="responsiveSizeToFit",
                    defaultColDef={"resizable": True, "sortable": True, "minWidth": 84, "wrapHeaderText": True,
                                   "autoHeaderHeight": True},
                    dashGridOptions={"domLayout": "autoHeight"}, className="ag-theme-quartz vs-grid-table",
                    style={"width": "100%"}),
            ]),
        ]),
        dcc.Location(id=f"{P}-go", refresh=True),
    ])


def _holdout_columns() -> list[dict[str, Any]]:
    cols = grid_columns([(c, n, "text" if c == "point_id" else "numeric") for c, n in _HOLDOUT], pinned="point_id",
                        formats={"horizon": (0, False), "rank_in": (0, False), "rank_out": (0, False),
                                 "ic_t": (2, False), "oos_ic_t": (2, False), "mean_ic": (3, False),
                                 "oos_mean_ic": (3, False), "sharpe": (2, False), "oos_sharpe": (2, False)})
    cols[0].update(minWidth=260, wrapText=False, autoHeight=False)   # the configuration in words, on one line
    return cols


# -- the form ------------------------------------------------------------------------------------------------------
def form_values(*values: Any) -> dict[str, list[Any]]:
    """The form's chosen values by grid dimension (in the order of :data:`_CONTROLS`)."""
    return {dim: list(v or []) for dim, v in zip(_CONTROLS.values(), values)}


def _base(settings: Any) -> dict[str, Any]:
    """The Study page's settings as the sweep's shared settings (ConfigError names a bad one)."""
    return config_from_settings(settings).to_dict()


def _base_words(base: dict[str, Any]) -> str:
    varied = {st.name for d in FORM_DIMENSIONS for st in dimension_settings(d)}
    parts = []
    for name in ("universe", "min_breadth", "min_history_months", "zscore_method", "excess_over", "dividend_treatment",
                 "holding_months"):
        if name in varied:
            continue
        st = SETTING_BY_NAME[name]
        words = dimension_words("universe", base) if name == "universe" else describe_value(st, base[name])
        parts.append(f"{st.label.lower()} {words}")
    return ("The settings the form does not vary are those of the Study page: " + "; ".join(parts)
            + ". Change them there.")


@dash.callback(Output(f"{P}-signals", "options"), Input("vs-selection", "data"))
def _signals(sel: Any) -> Any:
    st = state()
    try:
        sel = normalise_selection(sel)
        ch = panel_choices(st.panel(sel)) if st.usable_ids(sel) else None
    except Exception:  # the Data page says why a panel cannot be built
        ch = None
    return _signal_options(ch["signals"] if ch else None)


@dash.callback(
    Output(f"{P}-count", "children"), Output(f"{P}-base", "children"), Output(f"{P}-run-button", "disabled"),
    *[Input(cid, "value") for cid in _CONTROLS], Input(f"{P}-holdout", "value"), Input("vs-settings", "data"),
)
def _count(*args: Any) -> Any:
    *vals, holdout, settings = args
    values = form_values(*vals)
    try:
        base = _base(settings)
        grid = grid_from_controls(values, base=base, name="count")
        check_holdout(holdout)
    except ValueSiftError as err:
        return html.Span(str(err), className="vs-alert-text", role="alert"), None, True
    n, h = len(grid.points), len(grid.horizons)
    dup = (f" ({count_configurations(values) - n} repeated combination(s) counted once)"
           if count_configurations(values) > n else "")
    text = (f"{n} configuration{'s' if n != 1 else ''}{dup} × {h} horizon{'s' if h != 1 else ''} = "
            f"{grid.n_tests} signal tests (at most {MAX_IN_PROCESS_POINTS} configurations run here).")
    return text, _base_words(base), False


@dash.callback(
    Output(f"{RUN}-job", "data"), Output(f"{RUN}-poll", "disabled"), Output(f"{RUN}-alert", "children"),
    Output(f"{P}-form", "disabled"), Output(f"{RUN}-progress-box", "hidden"),
    Input(f"{P}-run-button", "n_clicks"),
    *[State(cid, "value") for cid in _CONTROLS], State(f"{P}-holdout", "value"), State(f"{P}-name", "value"),
    State("vs-settings", "data"), State("vs-selection", "data"),
    prevent_initial_call=True,
)
def _run(n: Any, *args: Any) -> Any:
    if not n:
        raise PreventUpdate
    *vals, holdout, name, settings, sel = args
    st = state()
    sel = normalise_selection(sel)
    if not st.usable_ids(sel):
        return (None, True, alert("No price file is in use yet. Upload your files (or open the demo) on the Data "
                                  "page, then run the sweep.", "info"), False, True)
    try:
        folder = sweep_name(name, st.workspace.root)
        grid = grid_from_controls(form_values(*vals), base=_base(settings), name=folder)
        job = st.start_sweep(sel, grid, folder, check_holdout(holdout))
    except ValueSiftError as err:
        return None, True, alert(str(err)), False, True
    return {"id": job.id, "name": folder, "status": "running", "n": len(grid.points)}, False, None, True, False


@dash.callback(
    Output(f"{RUN}-job", "data", allow_duplicate=True), Output(f"{RUN}-poll", "disabled", allow_duplicate=True),
    Output(f"{RUN}-progress-bar", "style"), Output(f"{RUN}-progress-text", "children"),
    Output(f"{RUN}-alert", "children", allow_duplicate=True), Output(f"{P}-form", "disabled", allow_duplicate=True),
    Output(f"{RUN}-progress-box", "hidden", allow_duplicate=True),
    Output(f"{P}-pick", "options"), Output(f"{P}-pick", "value"),
    Input(f"{RUN}-poll", "n_intervals"), State(f"{RUN}-job", "data"),
    prevent_initial_call=True,
)
def _poll(_n: Any, data: Any) -> Any:
    if not isinstance(data, dict) or data.get("status") != "running":
        return no_update, True, no_update, no_update, no_update, False, True, no_update, no_update
    st = state()
    job = st.sweep_job(data.get("id"))
    name = str(data.get("name"))
    if job is None:
        return ({**data, "status": "lost"}, True, {}, "", alert("The sweep was lost (the server restarted?); run it "
                                                                "again."), False, True, no_update, no_update)
    if job.active:
        pct = f"{100 * max(0.02, min(job.fraction, 1.0)):.0f}%"
        text = ("waiting for a running job to finish" if job.status == "queued"
                else f"sweep {name}: stopping after the configuration being computed" if job.cancel_event.is_set()
                else f"sweep {name}: {job.stage}")
        return no_update, False, {"width": pct}, text, no_update, True, False, no_update, no_update
    if job.status == "done":
        names = list_sweeps(st.workspace.root)
        return ({**data, "status": "done"}, True, {"width": "100%"}, "",
                alert(f"The sweep {name} is finished and saved in the workspace; it is shown below.", "info"),
                False, True, [{"label": n, "value": n} for n in names], name)
    if job.status == "cancelled":
        return ({**data, "status": "cancelled"}, True, {}, "",
                alert(f"The sweep {name} was cancelled; nothing was saved.", "info"), False, True, no_update, no_update)
    return ({**data, "status": "failed"}, True, {}, "", alert(job.error or "The sweep failed."), False, True,
            no_update, no_update)


@dash.callback(
    Output(f"{RUN}-cancel", "n_clicks"), Input(f"{RUN}-cancel", "n_clicks"), State(f"{RUN}-job", "data"),
    prevent_initial_call=True,
)
def _cancel(n: Any, data: Any) -> Any:
    if n and isinstance(data, dict):
        state().cancel_sweep(data.get("id"))
    return no_update


# -- a finished sweep ------------------------------------------------------------------------------------------------
def _shown_dimensions(result: Any) -> list[str]:
    """The table's setting columns: the signal first (pinned), then the other varied dimensions."""
    return ["signal", *(d for d in result.dimensions if d not in ("signal", "horizons"))]


def _dimension_header(dim: str) -> str:
    rows = dimension_settings(dim)
    return rows[0].label if rows else dim.replace("_", " ")


def table_records(result: Any) -> list[dict[str, Any]]:
    """The comparison table as grid rows: settings in words (numbers stay numbers), metrics as numbers."""
    t = result.table
    metrics = [c for c, *_ in _METRICS if c in t.columns]
    dims = _shown_dimensions(result)
    rows = []
    for rec in t[["point_id", "horizon", "status", "error", *metrics]].to_dict("records"):
        cfg = result.configs.get(rec["point_id"], {})
        row: dict[str, Any] = {"row_id": f"{rec['point_id']}|{int(rec['horizon'])}", "point_id": rec["point_id"]}
        for d in dims:
            v = dimension_words(d, cfg)
            row[d] = SIGNAL_WORDS.get(v, v) if d == "signal" else v
        row["horizon"] = int(rec["horizon"])
        row["status"] = _STATUS_WORDS.get(str(rec["status"]), str(rec["status"]))
        for c in metrics:
            row[c] = grid_number(rec[c])
        row["error"] = "" if rec["error"] is None or (isinstance(rec["error"], float) and math.isnan(rec["error"])) \
            else str(rec["error"])
        rows.append(row)
    return rows


def table_columns(result: Any, rows: list[dict[str, Any]] | None = None) -> list[dict[str, Any]]:
    """``columnDefs`` of the table: settings in words (the signal pinned), horizon, status, raw and adjusted metrics."""
    rows = table_records(result) if rows is None else rows
    dims = _shown_dimensions(result)
    spec: list[tuple[str, str, str]] = []
    formats: dict[str, tuple[int, bool]] = {"horizon": (0, False)}
    for d in dims:
        vals = [r[d] for r in rows]
        numeric = bool(vals) and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in vals)
        spec.append((d, _dimension_header(d), "numeric" if numeric else "text"))
        if numeric:
            formats[d] = (0 if all(float(v).is_integer() for v in vals) else 1, False)
    failed = any(r.get("error") for r in rows)
    spec += [("horizon", "Horizon (months)", "numeric"), *([("status", "Status", "text")] if failed else [])]
    for c, head, dec, pct in _METRICS:
        if c in result.table.columns:
            spec.append((c, head, "numeric"))
            formats[c] = (dec, pct)
    if failed:
        spec.append(("error", "Why it failed", "text"))
    cols = grid_columns(spec, pinned="signal", formats=formats, p_values=[c for c, *_ in _METRICS if "_p" in c])
    for c in cols:
        c["headerTooltip"] = _TOOLTIPS.get(c["field"], c["headerName"])
        if c["field"] == "signal":
            c.update(minWidth=150, wrapText=False, autoHeight=False)
        elif "bonferroni" in c["field"]:
            c["minWidth"] = 140          # the header's longest word whole
    return cols


@dash.callback(
    Output(f"{P}-deflated", "children"), Output(f"{P}-holdout-sentence", "children"),
    Output(f"{P}-holdout-table", "rowData"), Output(f"{P}-holdout-table", "style"),
    Input(f"{P}-pick", "value"),
)
def _judged(name: Any) -> Any:
    from valuesift.app.sweeps import judged_best  # the core computes; the page words

    res = load_named_sweep(state().workspace.root, name)
    if res is None:
        return None, None, [], {"display": "none"}
    deflated, sentence, rows = judged_best(res)
    return deflated, sentence, rows, ({"width": "100%"} if rows else {"display": "none"})


@dash.callback(
    Output(f"{P}-table", "columnDefs"), Output(f"{P}-table", "rowData"), Output(f"{P}-statement", "children"),
    Output(f"{P}-heatmap", "figure"), Output(f"{P}-data-note", "children"), Output(f"{P}-heatmap", "style"),
    Output(f"{P}-results", "hidden"),
    Input(f"{P}-pick", "value"), State("vs-selection", "data"),
)
def _show(name: Any, sel: Any) -> Any:
    st = state()
    res = load_named_sweep(st.workspace.root, name)
    if res is None:
        msg = ("No finished sweep in this workspace yet." if not list_sweeps(st.workspace.root)
               else "Choose a sweep above.")
        return [], [], msg, {}, None, {"display": "none"}, True
    rows = table_records(res)
    return (table_columns(res, rows), rows, res.statement, sweep_heatmap_figure(res), _data_note(st, sel, res), {},
            False)


def _data_note(st: Any, sel: Any, res: Any) -> str:
    try:
        sel = normalise_selection(sel)
        same = bool(st.usable_ids(sel)) and panel_fingerprint(st.panel(sel).with_(report=None)) == res.input_key
    except Exception:
        same = False
    if same:
        return "The data chosen on the Data page is the data this sweep ran on."
    return ("The data chosen on the Data page is not the data this sweep ran on: a configuration opened as a "
            "study runs on the chosen data.")


@dash.callback(
    Output(f"{P}-go", "href"), Output(f"{P}-open-note", "children"),
    Input(f"{P}-table", "cellClicked"), State(f"{P}-pick", "value"),
    prevent_initial_call=True,
)
def _open(cell: Any, name: Any) -> Any:
    if not isinstance(cell, dict) or not isinstance(cell.get("rowId"), str) or not isinstance(name, str):
        return no_update, no_update
    point, _, horizon = cell["rowId"].partition("|")
    res = load_named_sweep(state().workspace.root, name)
    if res is None or point not in res.configs:
        return no_update, "That configuration is no longer in the sweep folder."
    query = {"sweep": name, "point": point, **({"horizon": horizon} if horizon.isdigit() else {})}
    return "/study?" + urlencode(query), f"Opening {configuration_words(res, point)} ..."
