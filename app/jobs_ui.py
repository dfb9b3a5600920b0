"""A study job on a page: start it, poll its progress, cancel it, show its error.

Each page that shows a study result calls :func:`job_components` in its
layout and :func:`register_job_callbacks` once at import.  While the job
runs, the page's controls (an ``html.Fieldset``) are disabled and a progress
bar moves; when it ends, ``<prefix>-job`` holds ``{"key", "status"}`` and the
page's figure callbacks fetch the result from the server by that key.
"""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, dcc, html, no_update

from valuesift.app.services import normalise_selection, state
from valuesift.app.settings import config_from_settings
from valuesift.core.errors import ValueSiftError

__all__ = ["job_components", "register_job_callbacks", "alert"]

_POLL_MS = 350


def alert(message: str, kind: str = "error") -> html.Div:
    """A message box; the text is rendered as text (never as HTML)."""
    return html.Div(message, className=f"vs-alert vs-alert-{kind}", role="alert")


def job_components(prefix: str) -> list[Any]:
    """Store, poll timer, progress bar, cancel button and alert area of a page's study job."""
    return [
        dcc.Store(id=f"{prefix}-job"),
        dcc.Interval(id=f"{prefix}-poll", interval=_POLL_MS, disabled=True),
        html.Div(id=f"{prefix}-progress-box", className="vs-progress-box", hidden=True, children=[
            html.Div(className="vs-progress", children=[html.Div(id=f"{prefix}-progress-bar", className="vs-progress-bar")]),
            html.Span(id=f"{prefix}-progress-text", className="vs-progress-text"),
            html.Button("Cancel", id=f"{prefix}-cancel", className="vs-button vs-button-quiet", n_clicks=0),
        ]),
        html.Div(id=f"{prefix}-alert"),
    ]


def _no_data_message() -> str:
    return "No price file is in use yet. Upload your files (or open the demo) on the Data page."


def launch(sel_raw: Any, settings: Any, previous: Any) -> tuple[Any, bool, Any, bool, bool]:
    """Start the study for a selection and settings: (job, poll disabled, alert, fieldset disabled, box hidden)."""
    st = state()
    sel = normalise_selection(sel_raw)
    if not st.usable_ids(sel):
        return {"key": None, "status": "empty"}, True, alert(_no_data_message(), "info"), False, True
    try:
        config = config_from_settings(settings)
        job = st.start_study(sel, config)
    except ValueSiftError as err:
        return {"key": None, "status": "failed"}, True, alert(str(err)), False, True
    if isinstance(previous, dict) and previous.get("key") not in (None, job.key):
        st.cancel(previous.get("key"))
    if job.status == "done":
        return {"key": job.key, "status": "done"}, True, None, False, True
    return {"key": job.key, "status": "running"}, False, None, True, False


def poll(job_data: Any) -> tuple[Any, bool, dict[str, str], str, Any, bool, bool]:
    """One look at a running job: (job, poll disabled, bar style, text, alert, fieldset disabled, box hidden)."""
    if not isinstance(job_data, dict) or job_data.get("status") != "running":
        return no_update, True, no_update, no_update, no_update, False, True
    st = state()
    job = st.job(job_data.get("key"))
    if job is None:
        if st.result(job_data.get("key")) is not None:
            return {"key": job_data["key"], "status": "done"}, True, {"width": "100%"}, "", None, False, True
        return {"key": None, "status": "failed"}, True, {}, "", alert("The study was lost; change a setting to run it again."), False, True
    pct = f"{100 * max(0.02, min(job.fraction, 1.0)):.0f}%"
    if job.status in ("queued", "running"):
        if job.status == "queued":
            text = ("waiting for a running job to finish" if job.ahead == 0
                    else f"waiting: {job.ahead} jobs before it in the queue")
        else:
            text = f"computing: {job.stage}"
        return no_update, False, {"width": pct}, text, no_update, True, False
    if job.status == "done":
        return {"key": job.key, "status": "done"}, True, {"width": "100%"}, "", None, False, True
    if job.status == "cancelled":
        return {"key": None, "status": "cancelled"}, True, {}, "", alert("The study was cancelled.", "info"), False, True
    return {"key": None, "status": "failed"}, True, {}, "", alert(job.error or "The study failed."), False, True


def register_job_callbacks(prefix: str, controls_id: str | None = None) -> None:
    """The launch, poll and cancel callbacks of one page (``controls_id``: a Fieldset to disable)."""
    fs_out = [Output(controls_id, "disabled", allow_duplicate=True)] if controls_id else []
    launch_fs = [Output(controls_id, "disabled")] if controls_id else []

    @dash.callback(
        Output(f"{prefix}-job", "data"),
        Output(f"{prefix}-poll", "disabled"),
        Output(f"{prefix}-alert", "children"),
        *launch_fs,
        Output(f"{prefix}-progress-box", "hidden"),
        Input("vs-selection", "data"),
        Input("vs-settings", "data"),
        State(f"{prefix}-job", "data"),
    )
    def _launch(sel: Any, settings: Any, previous: Any) -> Any:
        job, poll_off, msg, fs, hidden = launch(sel, settings, previous)
        return (job, poll_off, msg, *([fs] if controls_id else []), hidden)

    @dash.callback(
        Output(f"{prefix}-job", "data", allow_duplicate=True),
        Output(f"{prefix}-poll", "disabled", allow_duplicate=True),
        Output(f"{prefix}-progress-bar", "style"),
        Output(f"{prefix}-progress-text", "children"),
        Output(f"{prefix}-alert", "children", allow_duplicate=True),
        *fs_out,
        Output(f"{prefix}-progress-box", "hidden", allow_duplicate=True),
        Input(f"{prefix}-poll", "n_intervals"),
        State(f"{prefix}-job", "data"),
        prevent_initial_call=True,
    )
    def _poll(_n: int, job_data: Any) -> Any:
        job, off, style, text, msg, fs, hidden = poll(job_data)
        return (job, off, style, text, msg, *([fs] if controls_id else []), hidden)

    @dash.callback(
        Output(f"{prefix}-cancel", "n_clicks"),
        Input(f"{prefix}-cancel", "n_clicks"),
        State(f"{prefix}-job", "data"),
        prevent_initial_call=True,
    )
    def _cancel(n: int, job_data: Any) -> Any:
        if n and isinstance(job_data, dict):
            state().cancel(job_data.get("key"))
        return no_update
