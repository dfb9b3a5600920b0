"""The page shell: header with navigation from ``dash.page_registry``, page container, footer."""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, dcc, html

from valuesift.app.caution import CAUTION
from valuesift.app.services import current_owner, normalise_selection, selection_key, state

__all__ = ["layout", "register_shell_callbacks", "nav_links"]


def nav_links() -> list[Any]:
    """One link per registered page that asks to be in the navigation (in registry order)."""
    links = []
    for page in dash.page_registry.values():
        if page.get("nav", True) is False:
            continue
        links.append(dcc.Link(page["name"], href=page["relative_path"], className="vs-nav-link",
                              id=f"nav-{page['name'].lower()}"))
    return links


def layout() -> Any:
    """The whole page around ``dash.page_container`` (called per request)."""
    return html.Div(className="vs-root", children=[
        dcc.Store(id="vs-selection", storage_type="local"),
        dcc.Store(id="vs-settings", storage_type="local"),
        dcc.Location(id="vs-url"),
        html.Header(className="vs-header", children=[
            dcc.Link([html.Img(src=dash.get_asset_url("valuesift-icon.svg"), alt="", className="vs-brand-icon",
                               id="vs-brand-icon"), "ValueSift"], href="/study", className="vs-brand"),
            html.Span("is a valuation signal rewarded in your universe?", className="vs-tagline"),
            html.Nav(nav_links(), className="vs-nav"),
        ]),
        html.Main(dash.page_container, className="vs-main"),
        html.Footer(className="vs-footer", children=[html.P(CAUTION, id="vs-caution")]),
    ])


def register_shell_callbacks(app: dash.Dash) -> None:
    """Mark the current page in the navigation; fill an empty or stale selection from the workspace."""

    pages = [p for p in dash.page_registry.values() if p.get("nav", True) is not False]

    @app.callback(
        *[Output(f"nav-{p['name'].lower()}", "className") for p in pages],
        Input("vs-url", "pathname"),
    )
    def _active(path: str | None) -> Any:
        return tuple("vs-nav-link vs-nav-active" if (path or "").startswith(p["relative_path"]) else "vs-nav-link"
                     for p in pages)

    @app.callback(
        Output("vs-selection", "data"),
        Input("vs-url", "pathname"),
        State("vs-selection", "data"),
    )
    def _boot(_path: str | None, sel: Any) -> Any:
        st = state()
        if isinstance(sel, dict) and sel.get("instance") == st.instance:
            raise dash.exceptions.PreventUpdate
        owner = current_owner()
        known = {r.id for r in st.workspace.records(owner=owner)}   # this browser session's and the shared ones
        current = normalise_selection(sel)
        kept = [i for i in current["ids"] if i in known]
        if sel is None or (current["ids"] and not kept):
            current = normalise_selection(st.workspace.get_setting(selection_key(owner), None)
                                          or st.workspace.get_setting("selection", {}))
            kept = [i for i in current["ids"] if i in known]
        return {"ids": kept, "splits": current["splits"], "instance": st.instance}
