"""Component ids are unique across the whole app (shell and every page).

A duplicate id is not a cosmetic fault: Dash binds a callback's Input to the first element with
that id, so a control that shares its id with a chart silently feeds the chart's properties into
the study (this is how the Quantiles control once did nothing).  Ids are compared across pages too,
so a control moved between pages, or a shared component, can never collide.
"""

from __future__ import annotations

from collections import Counter
from pathlib import Path
from typing import Any, Iterator

import dash

from valuesift.app.server import create_app


def _ids(node: Any) -> Iterator[str]:
    if isinstance(node, (list, tuple)):
        for child in node:
            yield from _ids(child)
        return
    if not isinstance(node, dash.development.base_component.Component):
        return
    cid = getattr(node, "id", None)
    if cid is not None:
        yield cid if isinstance(cid, str) else repr(sorted(cid.items()))
    for prop in node._prop_names:  # noqa: SLF001 (Dash's public-by-convention list of a component's properties)
        value = getattr(node, prop, None)
        if isinstance(value, (dash.development.base_component.Component, list, tuple)):
            yield from _ids(value)


def _app_ids(workspace: Path) -> dict[str, list[str]]:
    app = create_app(workspace)
    from valuesift.app import shell

    out = {"shell": list(_ids(shell.layout()))}
    with app.server.test_request_context("/"):
        for page in dash.page_registry.values():
            layout = page["layout"]
            tree = layout(code="QZX01") if callable(layout) else layout
            out[page["module"]] = list(_ids(tree))
    return out


def test_no_component_id_is_used_twice_anywhere_in_the_app(tmp_path: Path) -> None:
    per_page = _app_ids(tmp_path)
    assert len(per_page) >= 7                    # the shell and at least six pages were walked
    assert all(per_page.values())
    # Dash's page container holds ids of its own ("_pages_location" ...) once, in the shell.
    counts = Counter(i for ids in per_page.values() for i in ids)
    twice = {i: [p for p, ids in per_page.items() if i in ids] for i, n in counts.items() if n > 1}
    assert not twice, f"component ids used more than once: {twice}"


def test_the_walk_finds_a_planted_duplicate() -> None:
    from dash import dcc, html

    tree = html.Div([dcc.Dropdown(id="x-quantiles"), html.Div(dcc.Graph(id="x-quantiles"))])
    assert Counter(_ids(tree))["x-quantiles"] == 2
