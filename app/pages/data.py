"""Data page: upload files, read each intake report, adjust how a file is read, check coverage and splits."""

from __future__ import annotations

import base64
import binascii
from dataclasses import replace
from typing import Any

import dash
from dash import ALL, Input, Output, State, ctx, dcc, html, no_update
from dash.exceptions import PreventUpdate

from valuesift.app.components.common import GRAPH_CONFIG, text_table
from valuesift.app.components.intake_view import (KIND_OPTIONS, card_order, dataset_card, detected_options,
                                                   options_from_controls)
from valuesift.app.figures.common import message_figure
from valuesift.app.figures.data import coverage_figure
from valuesift.app.jobs_ui import alert
from valuesift.app.services import current_owner, normalise_selection, selection_key, state
from valuesift.app.upload_route import UPLOAD_PATH
from valuesift.app.words import SECURITY_FLAG_WORDS, reason_words
from valuesift.app.workspace import UNDO_S
from valuesift.core.errors import ValueSiftError
from valuesift.core.intake.options import READ_CHOICES

dash.register_page(__name__, path="/data", name="Data", order=0, title="ValueSift - Data")

P = "data"
_SINGLE = {"prices", "earnings", "dividends", "sectors", "holdings", "benchmark", "market_cap"}


def layout(**_: Any) -> html.Div:
    max_bytes = state().max_upload_bytes
    return html.Div(className="vs-page", children=[
        html.H1("Data"),
        html.P("Drop your price, earnings, dividend, sector, holdings and benchmark files here (CSV, XLSX or "
               "Parquet; several at once). Each file is read at once and its report shown below; nothing is "
               "sent anywhere but this computer.", className="vs-lead"),
        dcc.Store(id=f"{P}-version", data=0),
        dcc.Upload(id=f"{P}-upload", multiple=True, max_size=max_bytes, className="vs-upload",
                   className_active="vs-upload-active",
                   children=html.Div(["Drag and drop files here, or ", html.Span("choose files", className="vs-link"),
                                      html.Div(f"up to {max_bytes / 1024 / 1024:.0f} MB per upload", className="vs-hint")])),
        html.Div(className="vs-row vs-upload-choices", children=[
            html.Label([READ_CHOICES["kind"][0], " (of the files dropped next)"], htmlFor=f"{P}-upload-kind"),
            dcc.Dropdown(id=f"{P}-upload-kind", options=KIND_OPTIONS, value=None, clearable=True,
                         placeholder="detect from each file's name and header", className="vs-upload-kind"),
        ]),
        # assets/upload.js sends each dropped file straight to the upload route (never base64 in a callback) and
        # puts the route's answers here; the limit is read by the script to refuse a too-large file at once
        dcc.Store(id=f"{P}-upload-done"), dcc.Store(id=f"{P}-upload-kind-seen"),
        html.Div(id=f"{P}-upload-limit", hidden=True, **{"data-max-bytes": str(max_bytes), "data-path": UPLOAD_PATH}),
        html.Div(id=f"{P}-upload-progress", className="vs-hint", role="status"),
        dcc.Loading(html.Div(id=f"{P}-upload-alert"), type="dot"),
        dcc.Store(id=f"{P}-removed"),
        html.Div(id=f"{P}-undo-box", hidden=True, className="vs-alert vs-alert-info vs-undo", role="status", children=[
            html.Span(id=f"{P}-undo-text"),
            html.Button("Undo", id=f"{P}-undo", n_clicks=0, className="vs-button vs-button-quiet"),
        ]),
        html.P(["Files are kept in the workspace folder ", html.Code(str(state().workspace.root), id=f"{P}-workspace"),
                ": they are here again after a restart (start the server with --workspace to use another folder)."],
               className="vs-hint"),
        html.H2("Your files"),
        html.Div(id=f"{P}-cards"),
        html.H2("The combined panel"),
        html.Div(id=f"{P}-panel-alert"),
        html.Div(id=f"{P}-panel-summary"),
        html.Div(className="vs-card vs-chart", children=[dcc.Loading(dcc.Graph(id=f"{P}-coverage", config=GRAPH_CONFIG),
                                                                     type="dot")]),
        html.H2("Suspected unadjusted splits"),
        html.Div(id=f"{P}-splits"),
        html.Div(className="vs-row", children=[
            dcc.Checklist(id=f"{P}-split-pick", options=[], value=[], className="vs-split-pick"),
            html.Button("Apply the adjustment to the confirmed splits", id=f"{P}-apply-splits", n_clicks=0,
                        className="vs-button"),
        ]),
    ])


def _out(sel: dict[str, list[str]]) -> dict[str, Any]:
    st = state()
    key = selection_key(current_owner())
    if sel != normalise_selection(st.workspace.get_setting(key, None)):  # unchanged: write nothing
        st.workspace.set_setting(key, sel)
    return {**sel, "instance": st.instance}


def _already_loaded(name: str, known: str) -> html.Div:
    return alert(f"{name} is already loaded (as {known}); it is used as it was read, with the choices made for it.",
                 "info")


def _with(sel: dict[str, list[str]], rec: Any) -> dict[str, list[str]]:
    """Put a dataset in use; it replaces another of the same kind (except user signals)."""
    ws = state().workspace
    ids = []
    for i in sel["ids"]:
        try:
            other = ws.get(i, owner=current_owner())
        except KeyError:
            continue
        if rec.kind in _SINGLE and other.kind == rec.kind and other.id != rec.id:
            continue
        ids.append(i)
    if rec.id not in ids:
        ids.append(rec.id)
    return {"ids": ids, "splits": sel["splits"]}


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children"), Output(f"{P}-upload", "contents"),
    Input(f"{P}-upload", "contents"), State(f"{P}-upload", "filename"), State("vs-selection", "data"),
    State(f"{P}-version", "data"), State(f"{P}-upload-kind", "value"),
    prevent_initial_call=True,
)
def _upload(contents: Any, names: Any, sel_raw: Any, version: Any, kind: Any = None) -> Any:
    if not contents:
        raise PreventUpdate
    st = state()
    contents = contents if isinstance(contents, list) else [contents]
    names = names if isinstance(names, list) else [names]
    sel = normalise_selection(sel_raw)
    messages = []
    for content, name in zip(contents, names):
        name = str(name or "upload")
        text = str(content)
        try:
            cost = st.uploads.admit(len(text) * 3 // 4, st.uploads.CALLBACK_COST)  # its memory, against the budget
        except ValueSiftError as err:
            messages.append(alert(f"{name}: {err}"))
            continue
        try:
            try:
                raw = base64.b64decode(text[text.index(",") + 1:], validate=False)
            except (ValueError, binascii.Error):
                messages.append(alert(f"{name}: the upload arrived damaged; please drop the file again."))
                continue
            rec, known = st.read_upload(name, raw, kind)
            if known is not None:       # the same bytes again: the dataset already read, with its reading choices
                messages.append(_already_loaded(name, known))
            del raw
        finally:
            st.uploads.release(cost)
        if rec.ok:
            sel = _with(sel, rec)
        else:
            messages.append(alert(rec.error or f"{name} could not be read."))
    ok = len(contents) - sum(1 for m in messages if "vs-alert-error" in str(getattr(m, "className", "")))
    if ok:
        messages.insert(0, alert(f"Read {ok} of {len(contents)} file(s); their reports are below.", "info"))
    return _out(sel), int(version or 0) + 1, messages, None


# the kind chosen by the drop area, where the upload script reads it
dash.clientside_callback(
    "function(kind) { window.vsUploadKind = kind || ''; return window.dash_clientside.no_update; }",
    Output(f"{P}-upload-kind-seen", "data"), Input(f"{P}-upload-kind", "value"),
)


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True),
    Input(f"{P}-upload-done", "data"), State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _uploaded(done: Any, sel_raw: Any, version: Any) -> Any:
    """The upload route's answers for the files just dropped: the read ones join the selection."""
    results = done.get("results") if isinstance(done, dict) else None
    if not isinstance(results, list) or not results:
        raise PreventUpdate
    st = state()
    sel = normalise_selection(sel_raw)
    messages, ok = [], 0
    for r in results:
        if not isinstance(r, dict):
            continue
        name = str(r.get("name") or "upload")
        if not r.get("ok"):
            messages.append(alert(str(r.get("message") or f"{name} could not be read.")))
            continue
        try:
            rec = st.workspace.get(str(r.get("id")), owner=current_owner())
        except KeyError:
            messages.append(alert(f"{name} was read but is no longer in the workspace; drop the file again."))
            continue
        ok += 1
        if r.get("known"):
            messages.append(_already_loaded(name, str(r["known"])))
        sel = _with(sel, rec)
    if ok:
        messages.insert(0, alert(f"Read {ok} of {len(results)} file(s); their reports are below.", "info"))
    return _out(sel), int(version or 0) + 1, messages


@dash.callback(
    Output(f"{P}-cards", "children"),
    Input(f"{P}-version", "data"), Input("vs-selection", "data"),
)
def _cards(_v: Any, sel_raw: Any) -> Any:
    st = state()
    sel = normalise_selection(sel_raw)
    recs = st.workspace.records(owner=current_owner())
    if not recs:
        return html.P("No files yet.", className="vs-hint")
    return [dataset_card(r, r.id in sel["ids"]) for r in card_order(recs)]


def _triggered(values: list[Any]) -> str:
    tid = ctx.triggered_id
    if not isinstance(tid, dict) or not ctx.triggered or not ctx.triggered[0].get("value"):
        raise PreventUpdate
    return str(tid["id"])


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True),
    Input({"type": "ds-reread", "id": ALL}, "n_clicks"),
    State({"type": "ds-reread", "id": ALL}, "id"),
    State({"type": "ds-kind", "id": ALL}, "value"), State({"type": "ds-layout", "id": ALL}, "value"),
    State({"type": "ds-header", "id": ALL}, "value"), State({"type": "ds-dates", "id": ALL}, "value"),
    State({"type": "ds-decimal", "id": ALL}, "value"), State({"type": "ds-idclean", "id": ALL}, "value"),
    State({"type": "ds-idregex", "id": ALL}, "value"), State({"type": "ds-exclude", "id": ALL}, "value"),
    State({"type": "ds-signame", "id": ALL}, "value"), State({"type": "ds-direction", "id": ALL}, "value"),
    State({"type": "ds-pubdate", "id": ALL}, "value"),
    State({"type": "ds-datecol", "id": ALL}, "value"), State({"type": "ds-seccol", "id": ALL}, "value"),
    State({"type": "ds-valcol", "id": ALL}, "value"), State({"type": "ds-dups", "id": ALL}, "value"),
    State({"type": "ds-earnform", "id": ALL}, "value"),
    State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _reread(clicks: Any, ids: Any, kinds: Any, layouts: Any, headers: Any, dates: Any, decimals: Any,
            cleans: Any, regexes: Any, excludes: Any, signames: Any, directions: Any, pubdates: Any,
            datecols: Any, seccols: Any, valcols: Any, dups: Any, forms: Any, sel_raw: Any, version: Any) -> Any:
    did = _triggered(clicks)
    j = [i["id"] for i in ids].index(did)
    st = state()
    try:
        old = st.workspace.get(did, owner=current_owner())
    except KeyError:
        raise PreventUpdate
    try:
        opts = options_from_controls(old.options, kinds[j], layouts[j], headers[j], dates[j], decimals[j],
                                     cleans[j], regexes[j], excludes[j], signames[j], directions[j], pubdates[j],
                                     datecols[j], seccols[j], valcols[j], dups[j], forms[j])
    except ValueSiftError as err:
        return no_update, no_update, alert(str(err))
    return _reread_with(did, opts, sel_raw, version)


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True),
    Input({"type": "ds-drop-suspects", "id": ALL}, "n_clicks"),
    State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _drop_suspects(clicks: Any, sel_raw: Any, version: Any) -> Any:
    did = _triggered(clicks)
    try:
        old = state().workspace.get(did, owner=current_owner())
    except KeyError:
        raise PreventUpdate
    rep = old.report or {}
    sus = rep.get("suspect_columns") or {}
    sus = sus.get("__tuple__", []) if isinstance(sus, dict) else list(sus)
    cols = tuple(dict.fromkeys([*old.options.exclude_columns, *map(str, sus)]))
    return _reread_with(did, replace(old.options, exclude_columns=cols), sel_raw, version)


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True),
    Input({"type": "ds-detected", "id": ALL}, "n_clicks"),
    State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _detected(clicks: Any, sel_raw: Any, version: Any) -> Any:
    did = _triggered(clicks)
    try:
        old = state().workspace.get(did, owner=current_owner())
    except KeyError:
        raise PreventUpdate
    return _reread_with(did, detected_options(old.options), sel_raw, version)


def _reread_with(did: str, opts: Any, sel_raw: Any, version: Any) -> Any:
    st = state()
    owner = current_owner() or ""
    try:
        was_shared = st.workspace.get(did, owner=owner).owner != owner
        rec = st.workspace.reread(did, opts, owner=owner)
    except KeyError:
        raise PreventUpdate
    if not rec.ok:   # nothing changed: the dataset stays as it was read before
        return no_update, no_update, alert((rec.error or f"{rec.name} could not be read.")
                                           + " The file stays as it was read before.")
    sel = normalise_selection(sel_raw)
    sel = _with({"ids": [i for i in sel["ids"] if i != did], "splits": sel["splits"]}, rec)
    copy = " (your own copy: the shared file stays as it was for everyone)" if was_shared else ""
    return _out(sel), int(version or 0) + 1, alert(f"{rec.name} was read again{copy}.", "info")


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True), Output(f"{P}-removed", "data"),
    Input({"type": "ds-delete", "id": ALL}, "n_clicks"),
    State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _delete(clicks: Any, sel_raw: Any, version: Any) -> Any:
    """Remove answers at once and can be undone for ten minutes (the files stay until then)."""
    did = _triggered(clicks)
    st = state()
    try:
        rec = st.workspace.remove(did, owner=current_owner() or "")
    except KeyError:
        raise PreventUpdate
    except ValueSiftError as err:       # a shared dataset: read-only to every browser
        return no_update, no_update, alert(str(err), "info"), no_update
    sel = normalise_selection(sel_raw)
    removed = {"id": did, "name": rec.name, "in_use": did in sel["ids"]}
    return (_out({"ids": [i for i in sel["ids"] if i != did], "splits": sel["splits"]}), int(version or 0) + 1,
            None, removed)


@dash.callback(
    Output(f"{P}-undo-box", "hidden"), Output(f"{P}-undo-text", "children"),
    Input(f"{P}-removed", "data"),
)
def _undo_offer(removed: Any) -> Any:
    if not isinstance(removed, dict) or not removed.get("id"):
        return True, ""
    return False, (f"{removed.get('name', 'The file')} was removed. You can bring it back with its reading "
                   f"choices for the next {UNDO_S / 60:.0f} minutes.")


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True), Output(f"{P}-version", "data", allow_duplicate=True),
    Output(f"{P}-upload-alert", "children", allow_duplicate=True),
    Output(f"{P}-removed", "data", allow_duplicate=True),
    Input(f"{P}-undo", "n_clicks"),
    State(f"{P}-removed", "data"), State("vs-selection", "data"), State(f"{P}-version", "data"),
    prevent_initial_call=True,
)
def _undo(clicks: Any, removed: Any, sel_raw: Any, version: Any) -> Any:
    if not clicks or not isinstance(removed, dict) or not removed.get("id"):
        raise PreventUpdate
    name = str(removed.get("name", "The file"))
    try:
        rec = state().workspace.restore(str(removed["id"]), owner=current_owner() or "")
    except KeyError:
        return no_update, no_update, alert(f"{name} can no longer be brought back (it was removed more than "
                                           f"{UNDO_S / 60:.0f} minutes ago). Drop the file again."), None
    sel = normalise_selection(sel_raw)
    if removed.get("in_use"):
        sel = _with(sel, rec)
    return _out(sel), int(version or 0) + 1, alert(f"{name} is back.", "info"), None


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True),
    Input({"type": "ds-use", "id": ALL}, "value"), State({"type": "ds-use", "id": ALL}, "id"),
    State("vs-selection", "data"),
    prevent_initial_call=True,
)
def _use(values: Any, ids: Any, sel_raw: Any) -> Any:
    if not isinstance(ctx.triggered_id, dict):
        raise PreventUpdate
    sel = normalise_selection(sel_raw)
    did = str(ctx.triggered_id["id"])
    on = bool(values[[i["id"] for i in ids].index(did)])
    if on == (did in sel["ids"]):
        raise PreventUpdate
    ws = state().workspace
    if on:
        try:
            new = _with(sel, ws.get(did, owner=current_owner()))
        except KeyError:
            raise PreventUpdate
    else:
        new = {"ids": [i for i in sel["ids"] if i != did], "splits": sel["splits"]}
    return _out(new)


@dash.callback(
    Output(f"{P}-coverage", "figure"), Output(f"{P}-panel-summary", "children"), Output(f"{P}-panel-alert", "children"),
    Output(f"{P}-splits", "children"), Output(f"{P}-split-pick", "options"), Output(f"{P}-split-pick", "value"),
    Input("vs-selection", "data"), Input(f"{P}-version", "data"),
)
def _panel_view(sel_raw: Any, _v: Any) -> Any:
    st = state()
    sel = normalise_selection(sel_raw)
    empty = message_figure("Coverage", "Put a price file in use to see the coverage of the panel.")
    if not st.usable_ids(sel):
        return empty, None, alert("No file is in use yet.", "info"), None, [], []
    try:
        panel = st.panel(sel)
    except ValueSiftError as err:
        return empty, None, alert(str(err)), None, [], []
    rep = panel.report
    kinds = {o["value"]: o["label"] for o in KIND_OPTIONS}
    in_use = []
    for did in st.usable_ids(sel):
        rec = st.workspace.get(did, owner=current_owner())
        in_use.append(f"{rec.name} ({kinds.get(rec.kind or '', rec.kind or 'file')})")
    summary: list[Any] = [html.P("In use: " + "; ".join(in_use) + ".", id=f"{P}-in-use", className="vs-hint")]
    if rep is not None:
        sec = rep.securities
        flags: dict[str, int] = {}
        for f in sec["flags"].fillna("").astype(str):
            for x in filter(None, f.split(";")):
                flags[x] = flags.get(x, 0) + 1
        if flags:
            summary.append(text_table([(SECURITY_FLAG_WORDS.get(k, k.replace("_", " ")), v)
                                       for k, v in sorted(flags.items())], ["What was noticed", "Securities"]))
        al = rep.alignment
        if al is not None and len(al):
            summary.append(html.H4("Set aside while aligning to month-ends"))
            summary.append(text_table([(f, reason_words(r), c) for f, r, c in
                                       al[["file", "reason", "count"]].itertuples(index=False, name=None)],
                                      ["File", "Why", "Values"]))
        if rep.panel_notes:
            summary.append(html.Ul([html.Li(n) for n in rep.panel_notes], className="vs-notes-list"))
    splits = rep.suspected_splits if rep is not None else None
    if splits is None or splits.empty:
        return coverage_figure(panel), summary, None, html.P("None found.", className="vs-hint"), [], []
    rows = [(r["security"], str(r["date"])[:10], f"{float(r['ratio']):g}",
             "applied" if bool(r["applied"]) else "not applied") for _, r in splits.iterrows()]
    table = text_table(rows, ["security", "month", "ratio", "adjustment"])
    opts = [{"label": f"confirm {r['security']} ({float(r['ratio']):g} for 1 on {str(r['date'])[:10]})",
             "value": str(r["security"])} for _, r in splits.iterrows()]
    return coverage_figure(panel), summary, None, table, opts, list(sel["splits"])


@dash.callback(
    Output("vs-selection", "data", allow_duplicate=True),
    Input(f"{P}-apply-splits", "n_clicks"), State(f"{P}-split-pick", "value"), State("vs-selection", "data"),
    prevent_initial_call=True,
)
def _apply_splits(n: Any, picked: Any, sel_raw: Any) -> Any:
    if not n:
        raise PreventUpdate
    sel = normalise_selection(sel_raw)
    return _out({"ids": sel["ids"], "splits": sorted(str(p) for p in (picked or []))})
