"""Company page: one security's signal against the universe, its own later returns and its data flags."""

from __future__ import annotations

from typing import Any

import dash
import pandas as pd
from dash import Input, Output, State, dcc, html, no_update

from valuesift.app.components.common import GRAPH_CONFIG, text_table
from valuesift.app.figures.company import later_returns_figure, signal_history_figure
from valuesift.app.figures.common import message_figure
from valuesift.app.ids import decode_id
from valuesift.app.jobs_ui import job_components, register_job_callbacks
from valuesift.app.services import finished_result, normalise_selection, state
from valuesift.app.settings import shown_horizon
from valuesift.app.words import SECURITY_COLUMN_WORDS, screen_in_words, security_flag_words
from valuesift.core.reporting.screen import SINGLE_NAME_CAUTION

dash.register_page(__name__, path_template="/company/<code>", name="Company", nav=False, order=9,
                   title="ValueSift - Company")

P = "company"


def layout(code: str | None = None, **_: Any) -> html.Div:
    security = decode_id(code or "")
    if security is None:
        return html.Div(className="vs-page", children=[
            html.H1("Company"),
            html.Div("This address does not name a security. Open a company from the Screen page.",
                     className="vs-alert vs-alert-error", role="alert"),
        ])
    return html.Div(className="vs-page", children=[
        dcc.Store(id=f"{P}-security", data=security),
        html.Div(className="vs-row", children=[dcc.Link("Back to the screen", href="/screen", className="vs-link")]),
        html.H1(security, id=f"{P}-title"),        # a text node: identifiers are never rendered as markup
        html.P(id=f"{P}-facts", className="vs-lead"),
        *job_components(P),
        html.Div(className="vs-row", children=[
            html.Label("Horizon of the later returns", className="vs-label"),
            dcc.RadioItems(id=f"{P}-horizon", inline=True, options=[], value=None),
        ]),
        html.Div(className="vs-card vs-chart", children=[dcc.Graph(id=f"{P}-signal", config=GRAPH_CONFIG)]),
        html.Div(className="vs-card vs-chart", children=[dcc.Graph(id=f"{P}-returns", config=GRAPH_CONFIG)]),
        html.P(SINGLE_NAME_CAUTION, className="vs-hint"),
        html.H2("The data behind this name"),
        html.Div(id=f"{P}-flags"),
    ])


register_job_callbacks(P)


@dash.callback(
    Output(f"{P}-horizon", "options"), Output(f"{P}-horizon", "value"),
    Input(f"{P}-job", "data"), State(f"{P}-horizon", "value"),
)
def _horizons(job: Any, current: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update, no_update
    hs = list(res.config.horizons)
    return [{"label": f"{h} m", "value": h} for h in hs], shown_horizon(hs, current)


@dash.callback(
    Output(f"{P}-signal", "figure"), Output(f"{P}-returns", "figure"), Output(f"{P}-facts", "children"),
    Output(f"{P}-flags", "children"),
    Input(f"{P}-job", "data"), Input(f"{P}-horizon", "value"), State(f"{P}-security", "data"),
    State("vs-selection", "data"),
)
def _company(job: Any, horizon: Any, security: Any, sel: Any) -> Any:
    st = state()
    res = finished_result(job, st)
    if res is None:
        if isinstance(job, dict) and job.get("status") in ("failed", "empty", "cancelled"):
            msg = message_figure("", "No study result: see the message above.")
            return msg, msg, "", None
        return no_update, no_update, no_update, no_update
    sec = str(security)
    if sec not in res.signal_raw.columns:
        msg = message_figure("", f"{sec} is not among the securities of the data in use.")
        return msg, msg, "", None
    h = shown_horizon(res.config.horizons, horizon)
    info = res.security_info.loc[sec] if sec in res.security_info.index else None
    facts = []
    if info is not None:
        facts.append(f"Sector: {info.get('sector') if isinstance(info.get('sector'), str) else 'not given'}")
        w = info.get("holding_weight")
        facts.append(f"holding weight {w:.2%}" if isinstance(w, float) and w == w else "not held")
    screen = screen_in_words(res.screen, res.config.n_quantiles)
    row = screen.loc[sec] if sec in screen.index else None
    if row is not None:
        facts.append(f"P/E {row['pe_display']}" if row["pe_display"] else "no P/E")
        if row["quantile_label"]:
            facts.append(f"quantile {row['quantile_label']} on {res.screen.attrs.get('date')}")
    flags = []
    if row is not None and row["flags"]:
        flags.append(("noticed on the screen", row["flags"]))
    try:
        panel = st.panel(normalise_selection(sel))
        rep = panel.report
        if rep is not None and sec in rep.securities.index:
            r = rep.securities.loc[sec]
            for k in rep.securities.columns:
                v = r[k]
                if k == "flags":
                    v = security_flag_words(v) or "none"
                elif k == "coverage" and isinstance(v, float):
                    v = f"{v:.1%}"
                if v is None or (not isinstance(v, str) and pd.isna(v)) or v == "":
                    continue          # nothing to say (no suspected split, say): left out, not shown blank
                flags.append((SECURITY_COLUMN_WORDS.get(k, k.replace("_", " ")), v))
    except Exception:  # flags are a convenience; the Data page shows intake problems
        pass
    return (signal_history_figure(res, sec), later_returns_figure(res, sec, h), ", ".join(facts),
            text_table(flags, class_name="vs-table vs-kv") if flags
            else html.P("The intake noticed nothing about this name.", className="vs-hint"))
