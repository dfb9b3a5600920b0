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

from valuesift.app.services import normalise_selection, state

dash.register_page(__name__, path="/sweep", name="Sweep", order=3, title="ValueSift - Sweep")

P = "sweep"

__all__ = ["sweep_root", "list_sweeps", "table_columns", "table_records", "study_settings", "settings_from_query",
           "layout"]

#: Display columns: (id, header); the adjusted ones sit right after the raw t.
_METRICS: tuple[tuple[str, str], ...] = (
    ("mean_ic", "Mean IC"), ("ic_t", "HAC t (raw)"), ("ic_t_bh", "t, BH adjusted"),
    ("ic_t_bonferroni", "t, Bonferroni"), ("ic_p", "p (raw)"), ("ic_p_bh", "p, BH"),
    ("ic_p_bonferroni", "p, Bonferroni"), ("spread", "Spread"), ("spread_t", "Spread t"),
    ("sharpe", "Long-short Sharpe"), ("max_drawdown", "Max drawdown"), ("breadth", "Breadth"),
    ("n_dates", "Dates"),
)


def sweep_root(workspace_root: Path) -> Path:
    """The folder of finished sweeps inside a workspace."""
    return Path(workspace_root) / "sweeps"


def list_sweeps(workspace_root: Path) -> list[str]:
    """Names of the finished sweep folders (newest first)."""
    root = sweep_root(workspace_root)
    if not root.is_dir():
        return []
    found = [d for d in root.iterdir() if (d / "sweep.json").is_file() and (d / "comparison.parquet").is_file()]
    return [d.name for d in sorted(found, key=lambda d: (d / "sweep.json").stat().st_mtime, reverse=True)]


def _load(workspace_root: Path, name: Any) -> Any:
    from valuesift.core.sweep import load_sweep

    names = list_sweeps(workspace_root)
    if not isinstance(name, str) or name not in names:  # only folders we listed: no path from the browser
        return None
    return load_sweep(sweep_root(workspace_root) / name)


def table_columns(result: Any) -> list[dict[str, Any]]:
    from dash.dash_table.Format import Format, Scheme

    cols: list[dict[str, Any]] = [{"id": "point_id", "name": "Configuration"}]
    cols += [{"id": d, "name": d.replace("_", " ")} for d in result.dimensions]
    cols += [{"id": "horizon", "name": "Horizon (m)", "type": "numeric"}, {"id": "status", "name": "Status"}]
    for cid, name in _METRICS:
        fmt = Format(precision=0 if cid == "n_dates" else 3, scheme=Scheme.fixed)
        cols.append({"id": cid, "name": name, "type": "numeric", "format": fmt})
    cols.append({"id": "error", "name": "Error"})
    return cols


def table_records(result: Any) -> list[dict[str, Any]]:
    """The comparison table as rows for the page (small: one row per configuration and horizon)."""
    keep = ["point_id", *result.dimensions, "horizon", "status", *(c for c, _ in _METRICS), "error"]
    t = result.table[keep].astype(object)
    t = t.where(t.notna(), None)
    return t.to_dict("records")


def study_settings(config: dict[str, Any]) -> tuple[dict[str, Any], list[str]]:
    """The Study page's settings for a sweep configuration, and the settings that page cannot show.

    Returns ``(settings, not_shown)``: ``settings`` has the keys of
    ``app.settings.DEFAULT_SETTINGS``; ``not_shown`` names the configuration's
    settings that differ from the defaults but have no control on the Study page.
    """
    from valuesift.app.settings import DEFAULT_SETTINGS
    from valuesift.core.config import StudyConfig

    s = dict(DEFAULT_SETTINGS)
    for k in s:
        if k in config:
            s[k] = config[k]
    s["universe_sectors"] = list(config.get("universe_sectors") or [])
    s["horizons"] = sorted(int(h) for h in config.get("horizons", s["horizons"]))
    lo, hi = config.get("winsor_percentiles", (1.0, 99.0))
    s["winsor_lower"] = float(lo)
    default = StudyConfig().to_dict()
    shown = set(DEFAULT_SETTINGS) | {"winsor_percentiles"}
    not_shown = sorted(k for k, v in config.items() if k not in shown and default.get(k) != v)
    if float(hi) != 100.0 - float(lo):
        not_shown.append("winsor_percentiles (the page mirrors the lower one)")
    return s, not_shown


def settings_from_query(workspace_root: Path, query: dict[str, Any]) -> dict[str, Any] | None:
    """Study settings for ``/study?sweep=NAME&point=ID`` (None when the query names no sweep point)."""
    name, point = query.get("sweep"), query.get("point")
    if not name or not point:
        return None
    try:
        res = _load(workspace_root, name)
    except Exception:  # a damaged folder: open the study page with its usual settings
        return None
    if res is None or point not in res.configs:
        return None
    return study_settings(res.configs[point])[0]


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
        dcc.Location(id=f"{P}-go", refresh=True),
    ])


@dash.callback(
    Output(f"{P}-table", "columns"), Output(f"{P}-table", "data"), Output(f"{P}-statement", "children"),
    Output(f"{P}-heatmap", "figure"), Output(f"{P}-data-note", "children"), Output(f"{P}-heatmap", "style"),
    Input(f"{P}-pick", "value"), State("vs-selection", "data"),
)
def _show(name: Any, sel: Any) -> Any:
    from valuesift.app.figures.sweep import sweep_heatmap_figure

    st = state()
    res = _load(st.workspace.root, name)
    if res is None:
        msg = ("No finished sweep in this workspace yet." if not list_sweeps(st.workspace.root)
               else "Choose a sweep above.")
        return [], [], msg, {}, None, {"display": "none"}
    return (table_columns(res), table_records(res), res.statement, sweep_heatmap_figure(res),
            _data_note(st, sel, res), {})


def _data_note(st: Any, sel: Any, res: Any) -> str:
    from valuesift.core.sweep import panel_fingerprint

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
    res = _load(state().workspace.root, name)
    if res is None or point not in res.configs:
        return no_update, "That configuration is no longer in the sweep folder."
    return "/study?" + urlencode({"sweep": name, "point": point}), None
