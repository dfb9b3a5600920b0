"""Study page: choose the universe, signal and method; see every chart of the evaluation."""

from __future__ import annotations

from typing import Any
from urllib.parse import quote

import dash
import numpy as np
from dash import Input, Output, State, dcc, html, no_update

from valuesift.app.components.common import chart, field, panel_choices
from valuesift.app.figures import study as fs
from valuesift.app.figures.common import month
from valuesift.app.figures.cache import HORIZON_CHARTS, scatter_for, study_figures, warm_study
from valuesift.app.jobs_ui import job_components, register_job_callbacks
from valuesift.app.saved_studies import current_settings, keep_current_settings, save_study, saved_studies, saved_study
from valuesift.app.services import current_owner, finished_result, normalise_selection, selection_key, state
from valuesift.app.settings import (
    DEFAULT_SETTINGS,
    HORIZON_CHOICES,
    OTHER_PAGE_SETTINGS,
    bounds,
    config_from_settings,
    help_text,
    label,
    options,
    shown_horizon,
    study_settings,
)
from valuesift.app.sweeps import opened_from_query
from valuesift.app.words import evidence_words, stage_words
from valuesift.core.errors import ValueSiftError
from valuesift.core.settings import SETTING_BY_NAME

dash.register_page(__name__, path="/study", name="Study", order=1, title="ValueSift - Study")

P = "study"
_D = DEFAULT_SETTINGS
_SIGNALS = [{"label": "Earnings yield (EPS / price)", "value": "earnings_yield"},
            {"label": "Dividend yield (trailing 12 months)", "value": "dividend_yield"},
            {"label": "Composite of both yields", "value": "composite"}]
# The controls show the session's current settings, kept in the workspace (app.saved_studies.current_settings),
# not the browser's per-control memory: opening a sweep row or a saved study then stays in force.
_PERSIST: dict[str, Any] = {}
_CHARTS = ["ic-horizon", "ic-time", "quantiles", "spread", "fm", "growth", "drawdown", "cohorts"]


def _number(name: str, cid: str, value: Any, persist: dict[str, Any], step: float = 1) -> Any:
    """A number control with its label, range and help sentence from the settings table."""
    return field(label(name), dcc.Input(id=f"{P}-{cid}", type="number", step=step, value=value, debounce=True,
                                        **bounds(name), **persist), help_text(name))


def _controls(d: dict[str, Any] = _D, persist: dict[str, Any] = _PERSIST) -> html.Fieldset:
    q = SETTING_BY_NAME["n_quantiles"]
    return html.Fieldset(id=f"{P}-controls", className="vs-controls", children=[
        html.Legend("Study settings"),
        field(label("signal"), dcc.Dropdown(id=f"{P}-signal", options=_SIGNALS, value=d["signal"], clearable=False,
                                            **persist), help_text("signal")),
        field(label("universe"), dcc.RadioItems(id=f"{P}-universe", value=d["universe"], options=options("universe"),
                                                **persist), help_text("universe")),
        field(label("universe_sectors"), dcc.Dropdown(id=f"{P}-sectors", multi=True,
                                                      value=list(d.get("universe_sectors") or []),
                                                      placeholder="pick one or more", **persist),
              help_text("universe_sectors")),
        _number("min_history_months", "min-history", d["min_history_months"], persist),
        _number("min_breadth", "min-breadth", d["min_breadth"], persist),
        field(label("horizons"), dcc.Checklist(id=f"{P}-horizons", value=d["horizons"], inline=True,
                                               options=[{"label": str(h), "value": h} for h in HORIZON_CHOICES],
                                               **persist),
              help_text("horizons") + " All chosen horizons are computed in one study."),
        field(label("n_quantiles"), dcc.Dropdown(id=f"{P}-n-quantiles", value=d["n_quantiles"], clearable=False,
                                                 options=[{"label": str(k), "value": k}
                                                          for k in range(int(q.lo or 2), int(q.hi or 10) + 1)],
                                                 **persist), help_text("n_quantiles")),
        field(label("outlier_rule"), dcc.Dropdown(id=f"{P}-outliers", value=d["outlier_rule"], clearable=False,
                                                  options=options("outlier_rule"), **persist), help_text("outlier_rule")),
        field(label("winsor_percentiles") + ": lower", dcc.Input(id=f"{P}-winsor", type="number", min=0, max=49,
                                                                 step=0.5, value=d["winsor_lower"], debounce=True,
                                                                 **persist),
              help_text("winsor_percentiles") + " The upper one mirrors it (1 means 1st and 99th)."),
        field(label("zscore_method"), dcc.RadioItems(id=f"{P}-zscore", value=d["zscore_method"],
                                                     options=options("zscore_method"), **persist),
              help_text("zscore_method")),
        field(label("sector_neutral"), dcc.Checklist(id=f"{P}-neutral", value=["on"] if d.get("sector_neutral") else [],
                                                     options=[{"label": "on", "value": "on"}], **persist),
              help_text("sector_neutral")),
        _number("reporting_lag_months", "lag", d["reporting_lag_months"], persist),
        field(label("dividend_treatment"), dcc.RadioItems(id=f"{P}-dividends", value=d["dividend_treatment"],
                                                          options=options("dividend_treatment"), **persist),
              help_text("dividend_treatment")),
        field(label("excess_over"), dcc.RadioItems(id=f"{P}-excess", value=d["excess_over"],
                                                   options=options("excess_over"), **persist), help_text("excess_over")),
        _number("holding_months", "holding", d["holding_months"], persist),
        _number("transaction_cost_bps", "cost", d["transaction_cost_bps"], persist),
    ])


def _query_horizon(query: dict[str, Any]) -> int | None:
    """The horizon of the sweep row opened (``&horizon=H``): drawn first when the study has it."""
    try:
        return int(str(query.get("horizon")))
    except ValueError:
        return None


def _opened_saved(name: str) -> tuple[dict[str, Any], list[str], dict[str, Any], str] | None:
    """A saved study's page settings, the labels it sets that the page cannot show, its selection and when
    it was saved (None when the session has no study of that name)."""
    ws, owner = state().workspace, current_owner()
    rec = saved_study(ws, name, owner)
    if rec is None:
        return None
    sel, cfg = rec
    settings, gaps = study_settings(cfg.to_dict())
    return settings, gaps, sel, str(saved_studies(ws, owner).get(name, {}).get("saved", ""))


def _current() -> dict[str, Any]:
    """The session's current settings for the controls (the defaults before the first change)."""
    try:
        kept = current_settings(state().workspace, current_owner())
    except Exception:  # outside a request (unit tests of the layout)
        kept = None
    out = dict(_D)
    if kept:
        out.update({k: v for k, v in kept.items() if k in _D and v is not None})
    return out


def _saved_box() -> html.Fieldset:
    """Save the study on screen under a name; open a saved one (its data and settings) here again."""
    return html.Fieldset(className="vs-controls", children=[
        html.Legend("Saved studies"),
        field("Save the study on screen as", dcc.Input(id=f"{P}-save-name", type="text", maxLength=60,
                                                     placeholder="e.g. yield, 3-month lag")),
        html.Button("Save", id=f"{P}-save", n_clicks=0, className="vs-button"),
        html.Div(id=f"{P}-save-note", className="vs-hint", role="status"),
        field("Open a saved study", dcc.Dropdown(id=f"{P}-saved-pick", options=[], value=None,
                                                 placeholder="no saved study yet"),
              "Opens its data and its settings on this page; saved studies are kept in the workspace."),
        dcc.Link("Open", id=f"{P}-open-saved", href="", className="vs-button vs-button-quiet",
                 style={"display": "none"}),
    ])


def layout(**query: Any) -> html.Div:
    # Hook for the Sweep page: /study?sweep=NAME&point=ID opens that sweep configuration's settings;
    # /study?saved=NAME opens a saved study: its settings and its data.  Otherwise the controls show the
    # session's current settings.
    found = opened_from_query(state().workspace.root, query) if query.get("sweep") else None
    opened, gaps = found if found else (None, [])
    what = "This sweep configuration"
    open_sel: dict[str, Any] | None = None
    saved_note = None
    if query.get("saved") and not found:
        got = _opened_saved(str(query["saved"]))
        if got is None:
            saved_note = html.Div(f"There is no saved study called {str(query['saved'])[:60]!r} in this browser's "
                                  "workspace; the page shows your current settings.",
                                  className="vs-alert vs-alert-info", role="status", id=f"{P}-saved-missing")
        else:
            opened, gaps, open_sel, when = got
            what = f"The saved study {str(query['saved'])!r}"
            saved_note = html.Div(f"Opened the saved study {str(query['saved'])!r} (saved {when[:16].replace('T', ' ')} "
                                  "UTC): its data and its settings.", className="vs-alert vs-alert-info",
                                  role="status", id=f"{P}-saved-opened")
    gap_note = (html.Div(f"{what} also sets {', '.join(gaps)}, which the Study page has no "
                         "control for: the study here uses the usual value instead.",
                         id=f"{P}-sweep-gaps", className="vs-alert vs-alert-info", role="status") if gaps else None)
    return html.Div(className="vs-page vs-two-col", children=[
        html.Aside([_controls(opened or _current()), _saved_box(), dcc.Store(id=f"{P}-open-selection", data=open_sel),
                    # settings of the opened study that another page shows (the split month)
                    dcc.Store(id=f"{P}-open-other", data={k: opened.get(k) for k in OTHER_PAGE_SETTINGS}
                              if opened else None)],
                   className="vs-sidebar"),
        html.Section(className="vs-content", children=[
            html.H1("Study"),
            saved_note,
            gap_note,
            *job_components(P),
            html.Div(id=f"{P}-summary", className="vs-summary"),
            html.Div(id=f"{P}-results", hidden=True, children=[
                html.Div(className="vs-row", children=[
                    field("Horizon shown", dcc.RadioItems(id=f"{P}-horizon", inline=True, options=[],
                                                          value=_query_horizon(query) if opened else None,
                                                          className="vs-horizon-pick")),
                ]),
                html.Div(className="vs-grid", children=[chart(f"{P}-ic-horizon"), chart(f"{P}-ic-time")]),
                html.Div(className="vs-grid", children=[chart(f"{P}-quantiles"), chart(f"{P}-spread")]),
                html.Div(className="vs-grid", children=[
                    html.Div(className="vs-card", children=[
                        field("Scatter date", dcc.Dropdown(id=f"{P}-scatter-date", clearable=False, value="pooled",
                                                           options=[{"label": "all dates pooled (binned)", "value": "pooled"}])),
                        dcc.Graph(id=f"{P}-scatter", config={"displaylogo": False}),
                    ]),
                    chart(f"{P}-fm"),
                ]),
                chart(f"{P}-growth", tall=True),
                html.Div(className="vs-grid", children=[chart(f"{P}-drawdown"), chart(f"{P}-cohorts")]),
                html.Div(id=f"{P}-notes", className="vs-notes"),
            ]),
        ]),
    ])


register_job_callbacks(P, controls_id=f"{P}-controls")


@dash.callback(
    Output("vs-settings", "data"),
    Input(f"{P}-signal", "value"), Input(f"{P}-universe", "value"), Input(f"{P}-sectors", "value"),
    Input(f"{P}-min-history", "value"), Input(f"{P}-horizons", "value"), Input(f"{P}-n-quantiles", "value"),
    Input(f"{P}-outliers", "value"), Input(f"{P}-winsor", "value"), Input(f"{P}-zscore", "value"),
    Input(f"{P}-neutral", "value"), Input(f"{P}-lag", "value"), Input(f"{P}-dividends", "value"),
    Input(f"{P}-excess", "value"), Input(f"{P}-holding", "value"), Input(f"{P}-cost", "value"),
    Input(f"{P}-min-breadth", "value"),
    State("vs-settings", "data"), State(f"{P}-open-other", "data"),
)
def _settings(signal: Any, universe: Any, sectors: Any, min_hist: Any, horizons: Any, n_q: Any, outliers: Any,
              winsor: Any, zscore: Any, neutral: Any, lag: Any, dividends: Any, excess: Any, holding: Any,
              cost: Any, min_breadth: Any, old: Any, opened_other: Any = None) -> Any:
    new = {
        "signal": signal, "universe": universe, "universe_sectors": list(sectors or []),
        "min_history_months": min_hist, "horizons": sorted(horizons or []), "n_quantiles": n_q,
        "outlier_rule": outliers, "winsor_lower": winsor, "zscore_method": zscore,
        "sector_neutral": bool(neutral), "reporting_lag_months": lag, "dividend_treatment": dividends,
        "excess_over": excess, "holding_months": holding, "transaction_cost_bps": cost,
        "min_breadth": min_breadth,
    }
    for k in OTHER_PAGE_SETTINGS:   # set on another page (the Stability page's split month): kept, or the opened study's
        if isinstance(opened_other, dict) and opened_other.get(k) is not None:
            new[k] = opened_other[k]
        else:
            new[k] = (old or {}).get(k, DEFAULT_SETTINGS[k]) if isinstance(old, dict) else DEFAULT_SETTINGS[k]
    keep_current_settings(state().workspace, current_owner(), new)
    return no_update if new == old else new


@dash.callback(
    Output(f"{P}-sectors", "options"), Output(f"{P}-signal", "options"),
    Input("vs-selection", "data"),
)
def _choices(sel: Any) -> Any:
    st = state()
    try:
        ch = panel_choices(st.panel(normalise_selection(sel))) if st.usable_ids(normalise_selection(sel)) else None
    except Exception:  # the Data page shows why a panel cannot be built
        ch = None
    if ch is None:
        return [], _SIGNALS
    signals = _SIGNALS + [{"label": f"Your signal: {n}", "value": n} for n in ch["signals"]]
    return [{"label": s, "value": s} for s in ch["sectors"]], signals


@dash.callback(
    Output(f"{P}-horizon", "options"), Output(f"{P}-horizon", "value"),
    Output(f"{P}-scatter-date", "options"),
    Input(f"{P}-job", "data"), State(f"{P}-horizon", "value"),
)
def _horizons(job: Any, current: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update, no_update, no_update
    hs = list(res.config.horizons)
    value = shown_horizon(hs, current)
    dates = [d for d in res.rank_ic.index[res.rank_ic.notna().any(axis=1)]]
    opts = [{"label": "all dates pooled (binned)", "value": "pooled"}] + [
        {"label": month(d), "value": d.date().isoformat()} for d in reversed(dates)]
    return [{"label": f"{h} m", "value": h} for h in hs], value, opts


@dash.callback(
    *[Output(f"{P}-{c}", "figure") for c in _CHARTS],
    Output(f"{P}-summary", "children"), Output(f"{P}-notes", "children"), Output(f"{P}-results", "hidden"),
    Input(f"{P}-job", "data"), Input(f"{P}-horizon", "value"),
)
def _figures(job: Any, horizon: Any) -> Any:
    res = finished_result(job)
    if res is None:
        if isinstance(job, dict) and job.get("status") == "running":
            return (no_update,) * (len(_CHARTS) + 3)
        # No result (no data, or the study failed: the alert says why): show no stale charts.
        return (*([no_update] * len(_CHARTS)), None, None, True)
    h = shown_horizon(res.config.horizons, horizon)
    built = study_figures(job["key"], res, h)
    warm_study(job["key"], res)  # the other horizons, in the background: later changes are look-ups
    if dash.ctx.triggered_id == f"{P}-horizon":
        # Only the horizon changed: the study-wide charts on screen are already right.
        figs = [built[c] if c in HORIZON_CHARTS else no_update for c in _CHARTS]
    else:
        figs = [built[c] for c in _CHARTS]
    return (*figs, _summary(res, h), _notes(res), False)


@dash.callback(
    Output(f"{P}-scatter", "figure"),
    Input(f"{P}-job", "data"), Input(f"{P}-horizon", "value"), Input(f"{P}-scatter-date", "value"),
)
def _scatter(job: Any, horizon: Any, date: Any) -> Any:
    res = finished_result(job)
    if res is None:
        return no_update
    h = shown_horizon(res.config.horizons, horizon)
    return scatter_for(job["key"], res, h, None if date in (None, "pooled") else str(date))


def _summary(res: Any, h: int) -> Any:
    """The warnings first (each its plain sentence), then the headline of the shown horizon in words."""
    row = res.ic_summary.loc[h]
    present = res.universe.index[res.universe.any(axis=1).to_numpy()]
    cov = res.coverage
    out: list[Any] = [html.Div(str(w.get("message", "")), className="vs-alert vs-alert-warning", role="alert",
                               **{"data-code": str(w.get("code", ""))}) for w in res.warnings]
    lead: list[Any] = [html.Strong(fs.signal_label(res)), f" over {int(cov['n_universe_dates'])} month-ends "
                       f"({month(present.min())} to {month(present.max())}), {cov['mean_universe_names']:.0f} names "
                       "on average. "]
    if not np.isfinite(float(row["mean_ic"])):
        lead.append(f"At {h} {'month' if h == 1 else 'months'} there is no information coefficient: no date has at least "
                    f"{res.config.min_breadth} names with both a signal and a return (the minimum names per date). "
                    "Lower that minimum or load more names.")
    else:
        method = {"hansen_hodrick": "Hansen-Hodrick", "newey_west": "Newey-West",
                  "newey_west_fallback": "Newey-West"}.get(str(row["se_method"]), "")
        lead += [f"At {h} {'month' if h == 1 else 'months'} the mean rank IC is ", html.Strong(f"{row['mean_ic']:.3f}"),
                 f" ({method} t = {row['t_hac']:.2f}, 95% interval {row['ci_low']:.3f} to {row['ci_high']:.3f}, "
                 f"{int(row['n_dates'])} dates, {row['independent_periods']:.1f} independent periods): ",
                 html.Strong(evidence_words(row["evidence"], row["independent_periods"])), "."]
        tab = res.ic_by_delay
        if len(tab):
            d = tab[tab["horizon"] == h].sort_values("delay_months")
            if len(d):
                lead.append(" Used 0, 1, 2 and 3 months late the signal's IC is "
                            + ", ".join(f"{v:.3f}" for v in d["mean_ic"]) + " (a valuation signal fades slowly; a "
                            "sharp drop points to look-ahead in the files).")
    out.append(html.P(lead, id=f"{P}-headline"))
    return out


def _notes(res: Any) -> Any:
    items = [html.Li(n) for n in res.notes]
    dn = res.date_notes
    if dn is not None and len(dn):
        for _, r in dn.groupby(["stage", "reason"], as_index=False)["date"].nunique().iterrows():
            items.append(html.Li(f"{stage_words(r['stage'])}: {r['reason']} on {int(r['date'])} date(s)."))
    return [html.H3("Notes on this study"), html.Ul(items)] if items else None


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True),
    Input(f"{P}-open-selection", "data"), State("vs-selection", "data"),
    prevent_initial_call="initial_duplicate",
)
def _open_selection(sel: Any, current: Any) -> Any:
    """A saved study opened: put its data in use (what of it this session can still read)."""
    if not isinstance(sel, dict):
        return no_update
    st = state()
    want = normalise_selection(sel)
    want = {"ids": st.usable_ids(want), "splits": want["splits"]}
    if not want["ids"] or normalise_selection(current) == want:
        return no_update
    key = selection_key(current_owner())
    st.workspace.set_setting(key, want)
    return {**want, "instance": st.instance}


@dash.callback(
    Output(f"{P}-saved-pick", "options"), Output(f"{P}-save-note", "children"),
    Input(f"{P}-save", "n_clicks"),
    State(f"{P}-save-name", "value"), State("vs-selection", "data"), State("vs-settings", "data"),
)
def _save(n: Any, name: Any, sel: Any, settings: Any) -> Any:
    st = state()
    owner = current_owner()
    note: Any = None
    if n:
        try:
            if not st.usable_ids(normalise_selection(sel)):
                raise ValueSiftError("No data is in use: open the demo or upload files on the Data page first.")
            save_study(st.workspace, str(name or ""), normalise_selection(st.visible(normalise_selection(sel))),
                       config_from_settings(settings), owner)
            note = (f"Saved as {str(name).strip()!r}: the data in use and these settings. Open it here again, or "
                    "add it to a comparison on the Compare page.")
        except ValueSiftError as err:
            note = str(err)
    opts = [{"label": f"{k} (saved {str(rec.get('saved', ''))[:10]})", "value": k}
            for k, rec in saved_studies(st.workspace, owner).items()]
    return opts, note


@dash.callback(
    Output(f"{P}-open-saved", "href"), Output(f"{P}-open-saved", "style"),
    Input(f"{P}-saved-pick", "value"),
)
def _open_link(name: Any) -> Any:
    if not name:
        return "", {"display": "none"}
    return f"/study?saved={quote(str(name))}", {}
