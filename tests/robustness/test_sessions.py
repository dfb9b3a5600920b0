"""Per-session isolation on the real server: a browser session sees its own datasets and the shared demo, never another's."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tests.robustness._data import price_eps_files
from tests.robustness._serve import DashClient, Server, workspace_hashes

pytestmark = pytest.mark.slow


def test_two_browsers_do_not_see_each_other(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    with Server(ws) as srv:
        a, b = DashClient(srv.base), DashClient(srv.base)
        assert a.http.cookies.get("valuesift_session") != b.http.cookies.get("valuesift_session")
        pa, ea = price_eps_files(31)
        sel_a = DashClient.values(a.upload([("prices-alpha.csv", pa), ("eps-alpha.csv", ea)]))["vs-selection.data"]
        pb, _ = price_eps_files(32)
        sel_b = DashClient.values(b.upload([("prices-beta.csv", pb)]))["vs-selection.data"]
        cards_a = json.dumps(DashClient.values(a.call({"data-version.data": 1, "vs-selection.data": sel_a})))
        cards_b = json.dumps(DashClient.values(b.call({"data-version.data": 1, "vs-selection.data": sel_b})))
        assert "prices-alpha.csv" in cards_a and "prices-beta.csv" not in cards_a
        assert "prices-beta.csv" in cards_b and "alpha" not in cards_b
        # B sends A's ids (a forged selection): no study, no panel, no delete
        job = DashClient.values(b.call({"vs-selection.data": sel_a, "vs-settings.data": {}}, {"study-job.data": None},
                                       output_has="..study-job.data...study-poll"))["study-job.data"]
        assert job["status"] == "empty"
        panel = json.dumps(DashClient.values(b.call({"vs-selection.data": sel_a, "data-version.data": 1},
                                                    output_has="data-coverage")))
        assert "QZ0" not in panel and "No file is in use" in panel
        before = workspace_hashes(ws)
        # the delete button's callback passes B's session as the owner: the workspace refuses A's dataset
        from valuesift.app.workspace import Workspace

        with pytest.raises(KeyError):
            Workspace(ws).delete(sel_a["ids"][0], owner=b.http.cookies.get("valuesift_session"))
        assert workspace_hashes(ws) == before
        # A still has its data
        job_a = DashClient.values(a.call({"vs-selection.data": sel_a, "vs-settings.data": {"horizons": [1]}},
                                         {"study-job.data": None}, output_has="..study-job.data...study-poll"))
        assert job_a["study-job.data"]["status"] in ("running", "done")


def test_a_sessions_latest_result_survives_cache_eviction(tmp_path: Path) -> None:
    """Many sessions' studies evict results from the small memory and file caches; each session's latest stays."""
    import flask

    from valuesift.app.server import create_app
    from valuesift.app.services import LRU
    from valuesift.app.settings import config_from_settings

    app = create_app(tmp_path / "ws")
    st = app.server.extensions["valuesift"]
    pa, ea = price_eps_files(41)
    ids = [st.workspace.add_upload("prices.csv", pa).id, st.workspace.add_upload("eps.csv", ea).id]
    with app.server.test_request_context("/"):
        flask.g.vs_session = "a" * 32
        key, res = st.run_now({"ids": ids, "splits": []}, config_from_settings({"horizons": [1]}))
    st.results = LRU(4)                     # evicted from memory ...
    with app.server.app_context():
        st.cache.clear()                    # ... and from the file cache by other sessions' studies
    assert st.result(key) is res
