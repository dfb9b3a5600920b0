"""Export page: the committee bundle of the study on screen (same selection, settings and cache key)."""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, dcc, html, no_update
from dash.exceptions import PreventUpdate

from valuesift.app.bundle import CHARTS, NO_BROWSER_HINT, TABLES, find_browser
from valuesift.app.bundle.jobs import get_export, start_export
from valuesift.app.bundle.text import universe_words
from valuesift.app.compare_service import last_comparison
from valuesift.app.components.common import field
from valuesift.app.figures.common import span
from valuesift.app.figures.compare import signal_words
from valuesift.app.figures.study import signal_label
from valuesift.app.jobs_ui import alert, job_components, register_job_callbacks
from valuesift.app.settings import shown_horizon
from valuesift.app.sweeps import list_sweeps, load_named_sweep
from valuesift.app.services import finished_result, normalise_selection, state
from valuesift.core.errors import ValueSiftError

dash.register_page(__name__, path="/export", name="Export", order=4, title="ValueSift - Export")

P = "export"
_POLL_MS = 400
_THUMB = {"width": "150px", "border": "1px solid #cfc9bf", "margin": "0 8px 8px 0", "background": "#fff"}


def _browser_hint() -> Any:
    if find_browser() is None:
        return alert("Images: " + NO_BROWSER_HINT, "info")
    return None


def _sweep_options() -> list[dict[str, str]]:
    try:
        names = list_sweeps(state().workspace.root)
    except Exception:  # outside a request (unit tests of the layout)
        names = []
    return [{"label": "no sweep", "value": ""}] + [{"label": f"sweep {n}", "value": n} for n in names]


def _compare_options() -> list[dict[str, Any]]:
    """The session's latest comparison (Compare page), or a disabled line saying there is none yet."""
    try:
        cmp = last_comparison()
    except Exception:  # outside a request (unit tests of the layout)
        cmp = None
    if cmp is None:
        return [{"label": "no comparison in this browser yet (run one on the Compare page)", "value": "latest",
                 "disabled": True}]
    names = ", ".join(signal_words(str(s)) for s in cmp.signals)
    return [{"label": f"the latest comparison: {names}", "value": "latest"}]


def layout(**_: Any) -> html.Div:
    sweeps = _sweep_options()
    return html.Div(className="vs-page", children=[
        html.H1("Export the committee bundle"),
        html.P("One download for the investment committee: the PDF report, slide-ready images, interactive "
               "charts, the tables behind every chart and a manifest that lets anyone reproduce the numbers. "
               "It is built from the study on the Study page, with its current settings.", className="vs-lead"),
        *job_components(P),
        html.Div(id=f"{P}-study-line", className="vs-summary"),
        html.Div(id=f"{P}-browser-hint", children=_browser_hint()),
        html.Fieldset(id=f"{P}-form", className="vs-controls", children=[
            html.Legend("What goes in"),
            field("Study name (cover and file name)", dcc.Input(id=f"{P}-name", type="text", value="study",
                                                              maxLength=80, debounce=True)),
            field("Title on the cover", dcc.Input(id=f"{P}-title", type="text", value="", maxLength=160,
                                                  placeholder="default: a question about the signal")),
            field("Note on the cover (optional)", dcc.Textarea(id=f"{P}-note", value="", maxLength=1200,
                                                               style={"width": "100%", "minHeight": "4rem"})),
            field("Horizon of the per-horizon charts", dcc.Dropdown(id=f"{P}-horizon", options=[], value=None,
                                                                    clearable=False)),
            field("Charts", dcc.Checklist(id=f"{P}-charts", value=[c.key for c in CHARTS],
                                          options=[{"label": c.title, "value": c.key} for c in CHARTS])),
            field("Tables", dcc.Checklist(id=f"{P}-tables", value=list(TABLES),
                                          options=[{"label": html.Span([v[:1].upper() + v[1:] + " ",
                                                                                   html.Code(f"{k}.csv")]),
                                                                    "value": k} for k, v in TABLES.items()])),
            field("A finished sweep to include (heat map, comparison table with adjusted columns)",
                  dcc.Dropdown(id=f"{P}-sweep", options=sweeps, value="", clearable=False,
                               disabled=len(sweeps) == 1)),
            field("A comparison of signals to include (its chart, heat map and tables)",
                  dcc.Checklist(id=f"{P}-compare", value=[], options=_compare_options())),
            html.Button("Build the bundle", id=f"{P}-build", n_clicks=0, className="vs-button"),
        ]),
        dcc.Store(id=f"{P}-build-job"),
        dcc.Interval(id=f"{P}-build-poll", interval=_POLL_MS, disabled=True),
        html.Div(id=f"{P}-build-box", className="vs-progress-box", hidden=True, children=[
            html.Div(className="vs-progress", children=[html.Div(id=f"{P}-build-bar", className="vs-progress-bar")]),
            html.Span(id=f"{P}-build-text", className="vs-progress-text"),
        ]),
        html.Div(id=f"{P}-build-alert"),
        html.Div(id=f"{P}-result"),
        html.Button("Download again", id=f"{P}-again", n_clicks=0, className="vs-button vs-button-quiet", hidden=True),
        dcc.Download(id=f"{P}-download"),
    ])


register_job_callbacks(P, controls_id=f"{P}-form")


def _result(job: Any) -> Any:
    return finished_result(job)


@dash.callback(
    Output(f"{P}-horizon", "options"), Output(f"{P}-horizon", "value"), Output(f"{P}-study-line", "children"),
    Input(f"{P}-job", "data"), State(f"{P}-horizon", "value"),
)
def _study(job: Any, current: Any) -> Any:
    res = _result(job)
    if res is None:
        return no_update, no_update, None
    hs = list(res.config.horizons)
    uni = res.universe.sum(axis=1)
    used = uni[uni > 0]
    line = html.P([
        "Exporting: ", html.Strong(signal_label(res)), f" over {universe_words(res)}, horizons ",
        ", ".join(str(h) for h in hs), f" months, {span(used.index)}, about {used.mean():.0f} names ",
        "(the study as on the Study page).",
    ])
    value = shown_horizon(hs, current)
    return [{"label": f"{h} months", "value": h} for h in hs], value, line


@dash.callback(
    Output(f"{P}-build-job", "data"), Output(f"{P}-build-poll", "disabled"), Output(f"{P}-build-box", "hidden"),
    Output(f"{P}-build-alert", "children"), Output(f"{P}-form", "disabled", allow_duplicate=True),
    Output(f"{P}-result", "children", allow_duplicate=True),
    Input(f"{P}-build", "n_clicks"),
    State(f"{P}-job", "data"), State("vs-selection", "data"), State(f"{P}-name", "value"),
    State(f"{P}-title", "value"), State(f"{P}-note", "value"), State(f"{P}-horizon", "value"),
    State(f"{P}-charts", "value"), State(f"{P}-tables", "value"), State(f"{P}-sweep", "value"),
    State(f"{P}-compare", "value"),
    prevent_initial_call=True,
)
def _build(n: Any, job: Any, sel: Any, name: Any, title: Any, note: Any, horizon: Any, charts: Any,
           tables: Any, sweep_name: Any = None, compare: Any = None) -> Any:
    if not n:
        raise PreventUpdate
    res = _result(job)
    if res is None:
        return no_update, True, True, alert("The study is not ready yet; wait for it to finish.", "info"), False, None
    st = state()
    try:
        panel = st.panel(normalise_selection(sel))
    except ValueSiftError as err:
        return no_update, True, True, alert(str(err)), False, None
    sweep = None
    if sweep_name:
        if sweep_name not in list_sweeps(st.workspace.root):  # only listed folder names are ever read
            return no_update, True, True, alert(f"No finished sweep named {sweep_name!r} in this workspace."), False, None
        try:
            sweep = load_named_sweep(st.workspace.root, sweep_name)
        except ValueSiftError as err:
            return no_update, True, True, alert(str(err)), False, None
    comparison = None
    if compare:
        comparison = last_comparison()
        if comparison is None:
            return no_update, True, True, alert("The comparison is no longer in memory (the server restarted?); "
                                                "run it again on the Compare page, or untick it."), False, None
    include = [f"chart:{c}" for c in (charts or [])] + [f"table:{t}" for t in (tables or [])]
    try:
        ej = start_export(res, panel, st.workspace.root / "exports", str(job["key"]),
                          study_name=str(name or "study").strip() or "study", title=(title or "").strip() or None,
                          note=(note or "").strip() or None, include=include,
                          horizon=int(horizon) if horizon in res.config.horizons else None, sweep=sweep,
                          comparison=comparison)
    except ValueSiftError as err:     # the job queue is full: say so, keep the form usable
        return no_update, True, True, alert(str(err)), False, None
    return {"id": ej.id}, False, False, None, True, None


def _thumbs(ej: Any) -> Any:
    p = ej.paths
    size = p.zip.stat().st_size / 1e6
    parts: list[Any] = [html.P(f"Built {p.zip.name}: {len(p.files)} files, {size:.1f} MB, report of {p.pages} pages. "
                               "The download starts by itself.")]
    if p.note:
        parts.append(alert("Images: " + p.note, "info"))
    parts.append(html.Div([html.Img(src=src, style=_THUMB, alt=f"page {i + 1}")
                           for i, src in enumerate(ej.thumbnails)], id=f"{P}-thumbs",
                          style={"display": "flex", "flexWrap": "wrap"}))
    return parts


@dash.callback(
    Output(f"{P}-build-poll", "disabled", allow_duplicate=True), Output(f"{P}-build-bar", "style"),
    Output(f"{P}-build-text", "children"), Output(f"{P}-build-box", "hidden", allow_duplicate=True),
    Output(f"{P}-build-alert", "children", allow_duplicate=True),
    Output(f"{P}-form", "disabled", allow_duplicate=True), Output(f"{P}-result", "children"),
    Output(f"{P}-download", "data"), Output(f"{P}-again", "hidden"),
    Input(f"{P}-build-poll", "n_intervals"), State(f"{P}-build-job", "data"),
    prevent_initial_call=True,
)
def _poll(_n: Any, data: Any) -> Any:
    ej = get_export(data.get("id") if isinstance(data, dict) else None)
    if ej is None:
        return True, {}, "", True, alert("The export was lost; build it again."), False, None, no_update, True
    if ej.status == "running":
        pct = f"{100 * max(0.02, min(ej.fraction, 1.0)):.0f}%"
        return False, {"width": pct}, f"building: {ej.stage}", False, no_update, True, no_update, no_update, True
    if ej.status == "failed" or ej.paths is None:
        return True, {}, "", True, alert(ej.error or "The bundle could not be built."), False, None, no_update, True
    return (True, {"width": "100%"}, "", True, None, False, _thumbs(ej), dcc.send_file(str(ej.paths.zip)), False)


@dash.callback(
    Output(f"{P}-download", "data", allow_duplicate=True),
    Input(f"{P}-again", "n_clicks"), State(f"{P}-build-job", "data"),
    prevent_initial_call=True,
)
def _again(n: Any, data: Any) -> Any:
    ej = get_export(data.get("id") if isinstance(data, dict) else None)
    if not n or ej is None or ej.paths is None:
        raise PreventUpdate
    return dcc.send_file(str(ej.paths.zip))
