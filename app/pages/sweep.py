"""Sweep page: a finished sweep from the workspace, sortable, adjusted columns beside the raw ones.

Where sweeps live: ``<workspace>/sweeps/<name>/``, i.e. run
``valuesift sweep ... --out <workspace>/sweeps/<name>`` (or copy a finished
``--out`` folder there).  Every sub-folder holding ``sweep.json`` and
``comparison.parquet`` is offered.  Clicking a row opens that configuration
on the Study page (``/study?sweep=<name>&point=<id>``), which runs it on the
data chosen on the Data page; the page says whether that data is the data
the sweep ran on.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any
from urllib.parse import urlencode

import dash
from dash import Input, Output, State, dash_table, dcc, html, no_update

from dash.dash_table.Format import Format, Scheme

from valuesift.app.figures.sweep import sweep_heatmap_figure
from valuesift.app.services import normalise_selection, state
from valuesift.app.sweeps import list_sweeps, load_named_sweep, sweep_root
from valuesift.core.settings import SETTINGS
from valuesift.core.sweep import panel_fingerprint

dash.register_page(__name__, path="/sweep", name="Sweep", order=3, title="ValueSift - Sweep")

P = "sweep"

__all__ = ["table_columns", "table_records", "layout"]

#: Display columns: (id, header); the adjusted ones sit right after the raw t.
_METRICS: tuple[tuple[str, str], ...] = (
    ("mean_ic", "Mean IC"), ("ic_t", "HAC t (raw)"), ("ic_t_bh", "t, BH adjusted"),
    ("ic_t_bonferroni", "t, Bonferroni"), ("ic_p", "p (raw)"), ("ic_p_bh", "p, BH"),
    ("ic_p_bonferroni", "p, Bonferroni"), ("spread", "Spread"), ("spread_t", "Spread t"),
    ("spread_t_bh", "Spread t, BH adjusted"),
    ("sharpe", "Long-short Sharpe (held for the horizon)"), ("sharpe_t", "Sharpe t (Lo)"),
    ("sharpe_t_bh", "Sharpe t, BH adjusted"), ("max_drawdown", "Max drawdown"), ("breadth", "Breadth"),
    ("n_dates", "Dates"),
)

#: The hold-out table: in-sample beside out-of-sample (id, header).
_HOLDOUT: tuple[tuple[str, str], ...] = (
    ("point_id", "Configuration"), ("horizon", "Horizon (m)"), ("rank_in", "Rank before"), ("ic_t", "IC t before"),
    ("mean_ic", "Mean IC before"), ("sharpe", "Sharpe before"), ("rank_out", "Rank on hold-out"),
    ("oos_ic_t", "IC t on hold-out"), ("oos_mean_ic", "Mean IC on hold-out"), ("oos_sharpe", "Sharpe on hold-out"),
)


def _dimension_label(dim: str) -> str:
    """A grid dimension's header: the label of the first setting it sets in the settings table."""
    for st in SETTINGS:
        if st.grid == dim:
            return st.label
    return dim.replace("_", " ")


def table_columns(result: Any) -> list[dict[str, Any]]:
    cols: list[dict[str, Any]] = [{"id": "point_id", "name": "Configuration"}]
    cols += [{"id": d, "name": _dimension_label(d)} for d in result.dimensions]
    cols += [{"id": "horizon", "name": "Horizon (m)", "type": "numeric"}, {"id": "status", "name": "Status"}]
    for cid, name in _METRICS:
        if cid not in result.table.columns:
            continue
        fmt = Format(precision=0 if cid == "n_dates" else 3, scheme=Scheme.fixed)
        cols.append({"id": cid, "name": name, "type": "numeric", "format": fmt})
    cols.append({"id": "error", "name": "Error"})
    return cols


def table_records(result: Any) -> list[dict[str, Any]]:
    """The comparison table as rows for the page (small: one row per configuration and horizon)."""
    keep = ["point_id", *result.dimensions, "horizon", "status", *(c for c, _ in _METRICS if c in result.table), "error"]
    t = result.table[keep].astype(object)
    t = t.where(t.notna(), None)
    return t.to_dict("records")


def layout(**_: Any) -> html.Div:
    try:
        root = sweep_root(state().workspace.root)
        names = list_sweeps(state().workspace.root)
    except Exception:  # outside a request (unit tests of the layout)
        root, names = Path("<workspace>") / "sweeps", []
    return html.Div(className="vs-page", children=[
        html.H1("Sweep"),
        html.P(["Finished sweeps in the workspace folder ", html.Code(str(root)), ". Run one with ",
                html.Code(f"valuesift sweep --grid GRID.toml --out {root / 'NAME'} --prices ..."),
                " (see README, Sweeps). Click a row to open that configuration as a study."]),
        dcc.Dropdown(id=f"{P}-pick", options=[{"label": n, "value": n} for n in names],
                     value=names[0] if names else None, clearable=False, placeholder="no finished sweep yet"),
        html.P(id=f"{P}-statement", className="vs-summary"),
        html.P(id=f"{P}-data-note", className="vs-notes"),
        dcc.Graph(id=f"{P}-heatmap", config={"displaylogo": False}, style={"display": "none"}),
        dash_table.DataTable(id=f"{P}-table", columns=[], data=[], sort_action="native", sort_mode="multi",
                             page_size=25, style_table={"overflowX": "auto"},
                             style_cell={"fontFamily": "inherit", "fontSize": 14, "padding": "4px 8px"}),
        html.Div(id=f"{P}-open-note", className="vs-notes"),
        html.Div(id=f"{P}-judged", className="vs-card", children=[
            html.H2("The best configuration, judged"),
            html.P(id=f"{P}-deflated", className="vs-summary"),
            html.P(id=f"{P}-holdout-sentence", className="vs-summary"),
            dash_table.DataTable(id=f"{P}-holdout", columns=[{"id": c, "name": n} for c, n in _HOLDOUT], data=[],
                                 page_size=10, style_table={"overflowX": "auto"},
                                 style_cell={"fontFamily": "inherit", "fontSize": 14, "padding": "4px 8px"}),
        ]),
        dcc.Location(id=f"{P}-go", refresh=True),
    ])


@dash.callback(
    Output(f"{P}-deflated", "children"), Output(f"{P}-holdout-sentence", "children"), Output(f"{P}-holdout", "data"),
    Input(f"{P}-pick", "value"),
)
def _judged(name: Any) -> Any:
    from valuesift.app.sweeps import judged_best  # the core computes; the page words

    res = load_named_sweep(state().workspace.root, name)
    if res is None:
        return None, None, []
    deflated, sentence, rows = judged_best(res)
    return deflated, sentence, rows


@dash.callback(
    Output(f"{P}-table", "columns"), Output(f"{P}-table", "data"), Output(f"{P}-statement", "children"),
    Output(f"{P}-heatmap", "figure"), Output(f"{P}-data-note", "children"), Output(f"{P}-heatmap", "style"),
    Input(f"{P}-pick", "value"), State("vs-selection", "data"),
)
def _show(name: Any, sel: Any) -> Any:
    st = state()
    res = load_named_sweep(st.workspace.root, name)
    if res is None:
        msg = ("No finished sweep in this workspace yet." if not list_sweeps(st.workspace.root)
               else "Choose a sweep above.")
        return [], [], msg, {}, None, {"display": "none"}
    return (table_columns(res), table_records(res), res.statement, sweep_heatmap_figure(res),
            _data_note(st, sel, res), {})


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
    Input(f"{P}-table", "active_cell"), State(f"{P}-table", "derived_viewport_data"), State(f"{P}-pick", "value"),
    prevent_initial_call=True,
)
def _open(cell: Any, rows: Any, name: Any) -> Any:
    if not cell or not rows or not isinstance(name, str):
        return no_update, no_update
    i = cell.get("row")
    if not isinstance(i, int) or not 0 <= i < len(rows):
        return no_update, no_update
    point = rows[i].get("point_id")
    res = load_named_sweep(state().workspace.root, name)
    if res is None or point not in res.configs:
        return no_update, "That configuration is no longer in the sweep folder."
    return "/study?" + urlencode({"sweep": name, "point": point}), None
