"""Stability page: where the study's reward comes from -- against the comparison, by period, regime and sector,
how fast it fades, whether it is size, momentum or beta in disguise, and equal against cap weight.

It shows the study of the Study page's settings on the data in use (run on the job runner with progress and
Cancel, or taken from the study cache); every number is a field of the study result, every chart a function of
:mod:`valuesift.app.figures.stability`.
"""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, dcc, html, no_update

from valuesift.app.bundle.stability_text import (
    cap_sentences,
    controls_sentences,
    decay_sentences,
    period_sentences,
    regime_sentences,
    relative_sentences,
    sector_sentences,
)
from valuesift.app.components.common import field, text_table
from valuesift.app.figures import stability as fst
from valuesift.app.figures.common import fmt_num, fmt_pct
from valuesift.app.jobs_ui import job_components, register_job_callbacks
from valuesift.app.components.graphs import graph_card, height_style
from valuesift.app.saved_studies import keep_current_settings
from valuesift.app.services import current_owner, finished_result, state
from valuesift.app.settings import config_from_settings, help_text, label, shown_horizon
from valuesift.core.errors import ValueSiftError

dash.register_page(__name__, path="/stability", name="Stability", order=6, title="ValueSift - Stability")

P = "stab"
_PORTFOLIOS = {"cheapest": "Cheapest quantile", "long_short": "Long-short"}
_GRAPHS = ("periods", "regimes", "decay", "sectors", "capweight")


def layout(**_: Any) -> html.Div:
    return html.Div(className="vs-page", children=[
        html.H1("Where the reward comes from"),
        html.P("The study of the Study page's settings on the data in use: against the comparison, by period, "
               "market regime and sector, its decay, with controls, and cap-weighted. In-sample, gross of costs "
               "unless a cost is set; associations, not causes."),
        html.Div(className="vs-row", children=[
            field(label("split_month"), dcc.Input(id=f"{P}-split", type="text", value=None, debounce=True,
                                                  maxLength=7, placeholder="YYYY-MM, empty: the middle"),
                  help_text("split_month")),
        ]),
        html.Div(id=f"{P}-split-note", className="vs-hint", role="status"),
        *job_components(P),
        html.Div(id=f"{P}-results", hidden=True, children=[
            field("Horizon shown", dcc.RadioItems(id=f"{P}-horizon", inline=True, options=[], value=None,
                                                  className="vs-horizon-pick")),
            html.Div(id=f"{P}-readings", className="vs-summary"),
            html.Div(className="vs-card", children=[html.H2("Against the comparison"), html.Div(id=f"{P}-relative")]),
            graph_card(f"{P}-periods"),
            graph_card(f"{P}-regimes"),
            graph_card(f"{P}-decay"),
            graph_card(f"{P}-sectors"),
            html.Div(className="vs-card", children=[html.H2("Is it something else in disguise?"),
                                                    html.Div(id=f"{P}-controls")]),
            graph_card(f"{P}-capweight"),
        ]),
    ])


register_job_callbacks(P)    # the study of the Study page's settings: started, polled and cancelled like the Study page's


@dash.callback(Output(f"{P}-split", "value"), Input("vs-settings", "data"), State(f"{P}-split", "value"))
def _split_shown(settings: Any, current: Any) -> Any:
    """The split month of the settings in use, in the box (on opening the page and after a change)."""
    value = str((settings or {}).get("split_month") or "") if isinstance(settings, dict) else ""
    return no_update if (current or "") == value else (value or None)


@dash.callback(
    Output("vs-settings", "data", allow_duplicate=True), Output(f"{P}-split-note", "children"),
    Input(f"{P}-split", "value"), State("vs-settings", "data"),
    prevent_initial_call=True,
)
def _split(value: Any, settings: Any) -> Any:
    """A split month typed here joins the study settings (checked first: a bad month is refused by name)."""
    text = str(value or "").strip()
    old = dict(settings) if isinstance(settings, dict) else {}
    if text == str(old.get("split_month") or ""):
        return no_update, no_update
    try:
        config_from_settings({**old, "split_month": text})
    except ValueSiftError as err:
        return no_update, str(err)
    new = {**old, "split_month": text}
    keep_current_settings(state().workspace, current_owner(), new)
    return new, None


@dash.callback(
    Output(f"{P}-horizon", "options"), Output(f"{P}-horizon", "value"),
    Input(f"{P}-job", "data"), State(f"{P}-horizon", "value"),
)
def _horizons(job: Any, current: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update, no_update
    hs = [int(h) for h in res.config.horizons]
    return [{"label": f"{h} m", "value": h} for h in hs], shown_horizon(hs, current)


def _relative_table(res: Any) -> Any:
    rel = res.relative
    if rel is None or rel.empty:
        return html.P("No backtest months to compare.")
    rows = []
    for p in rel.index:
        r = rel.loc[p]
        rows.append([_PORTFOLIOS.get(str(p), str(p)), fmt_pct(r["active_return_ann"], 1),
                     fmt_pct(r["tracking_error_ann"], 1), fmt_num(r["information_ratio"], 2),
                     fmt_num(r["information_ratio_residual"], 2), fmt_num(r["beta"], 2),
                     fmt_pct(r["alpha_ann"], 1), fmt_num(r["alpha_t"], 2), fmt_num(r["up_capture"], 2),
                     fmt_num(r["down_capture"], 2), int(r["n_months"])])
    head = ["Portfolio", "Active return a year", "Tracking error", "Information ratio", "Residual information ratio",
            "Beta", "Alpha a year", "Alpha t", "Up capture", "Down capture", "Months"]
    return [text_table(rows, head), *[html.P(s) for s in relative_sentences(res)]]


def _controls_table(res: Any, h: int) -> Any:
    c = res.fm_controls
    if c is None or c.empty:
        return html.P("No Fama-MacBeth table.")
    r = c[c["horizon"] == h]
    rows = [[f"{int(x['horizon'])} m", fmt_num(x["slope_without"], 4), fmt_num(x["t_without"], 2),
             fmt_num(x["slope_with"], 4), fmt_num(x["t_with"], 2), fmt_num(x["ic_net"], 3), fmt_num(x["ic_net_t"], 2),
             x["controls"]] for _, x in r.iterrows()]
    head = ["Horizon", "Slope without controls", "t", "Slope with controls", "t", "IC net of controls", "t", "Controls"]
    return [text_table(rows, head), *[html.P(s) for s in controls_sentences(res, h)]]


@dash.callback(
    Output(f"{P}-results", "hidden"), Output(f"{P}-relative", "children"), Output(f"{P}-periods", "figure"),
    Output(f"{P}-regimes", "figure"), Output(f"{P}-decay", "figure"), Output(f"{P}-sectors", "figure"),
    Output(f"{P}-controls", "children"), Output(f"{P}-capweight", "figure"), Output(f"{P}-readings", "children"),
    *[Output(f"{P}-{g}", "style") for g in _GRAPHS],
    Input(f"{P}-job", "data"), Input(f"{P}-horizon", "value"),
)
def _show(job: Any, horizon: Any) -> Any:
    res = finished_result(job)
    if res is None:
        if isinstance(job, dict) and job.get("status") == "running":
            return (no_update, *([no_update] * (8 + len(_GRAPHS))))
        return (True, *([no_update] * (8 + len(_GRAPHS))))    # no data or a failed study: the alert says why
    h = shown_horizon(list(res.config.horizons), horizon)
    readings = [*period_sentences(res, h), *regime_sentences(res, h), *sector_sentences(res, h),
                *decay_sentences(res), *cap_sentences(res, h)]
    figs = {"periods": fst.periods_figure(res, h), "regimes": fst.regimes_figure(res, h), "decay": fst.decay_figure(res),
            "sectors": fst.sectors_figure(res, h), "capweight": fst.cap_weight_figure(res)}
    return (False, _relative_table(res), figs["periods"], figs["regimes"], figs["decay"], figs["sectors"],
            _controls_table(res, h), figs["capweight"], [html.P(x) for x in readings],
            *[height_style(figs[g]) for g in _GRAPHS])

