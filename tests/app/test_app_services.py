"""Server-side state: demo loading, memoised studies, background jobs, clear messages for degenerate studies."""

from __future__ import annotations

import threading
import time
from pathlib import Path

import pytest

from tests.job_support import wait_for_job

import valuesift.app.services as services
from valuesift.app import jobs_ui
from valuesift.app.server import create_app
from valuesift.app.services import normalise_selection
from valuesift.app.settings import config_from_settings
from valuesift.core.errors import InsufficientDataError


def _wait(st, key: str, limit: float = 120.0):  # type: ignore[no-untyped-def]
    return wait_for_job(st, key, limit)


@pytest.fixture(scope="module")
def demo_app(tmp_path_factory: pytest.TempPathFactory):  # type: ignore[no-untyped-def]
    ws = tmp_path_factory.mktemp("ws")
    app = create_app(ws, demo=True)
    st = app.server.extensions["valuesift"]
    sel = normalise_selection(st.workspace.get_setting("selection"))
    key = st.study_key(sel, config_from_settings({}))
    _wait(st, key)
    return app, ws, sel, key


def test_demo_selects_every_demo_file(demo_app) -> None:  # type: ignore[no-untyped-def]
    app, _, sel, key = demo_app
    st = app.server.extensions["valuesift"]
    kinds = sorted(st.workspace.get(i).kind for i in sel["ids"])
    assert kinds == ["benchmark", "dividends", "earnings", "holdings", "prices", "sectors"]
    res = st.result(key)
    assert res is not None and set(res.config.horizons) == {1, 3, 6, 12, 24, 36}
    assert "Maren All-Share" not in res.signal_raw.columns


def test_horizon_change_reuses_the_result(demo_app, monkeypatch: pytest.MonkeyPatch) -> None:  # type: ignore[no-untyped-def]
    app, _, sel, key = demo_app
    st = app.server.extensions["valuesift"]

    def boom(*a, **k):  # type: ignore[no-untyped-def]
        raise AssertionError("the study must not run again")

    monkeypatch.setattr(services, "run_study", boom)
    job = st.start_study(sel, config_from_settings({}))
    assert job.status == "done" and job.key == key
    from valuesift.app.figures.study import ic_over_time_figure

    for h in (1, 3, 12, 36):                           # every horizon is in the one result
        assert ic_over_time_figure(st.result(key), h).data


def test_results_survive_a_restart_through_the_filesystem_cache(demo_app, monkeypatch: pytest.MonkeyPatch) -> None:  # type: ignore[no-untyped-def]
    _, ws, sel, key = demo_app
    monkeypatch.setattr(services, "run_study", lambda *a, **k: (_ for _ in ()).throw(AssertionError("rerun")))
    app2 = create_app(ws, demo=False)
    st2 = app2.server.extensions["valuesift"]
    assert st2.study_key(sel, config_from_settings({})) == key
    assert st2.result(key) is not None                 # from the flask-caching folder, not recomputed
    assert any((Path(ws) / "cache").iterdir())


@pytest.mark.parametrize("settings, words", [
    ({"min_history_months": 240}, "Not enough data"),
    ({"universe": "sectors", "universe_sectors": ["No Such Sector"]}, "Not enough data"),
    ({"universe": "sectors", "universe_sectors": []}, "Sectors kept"),
    ({"horizons": []}, "Horizons (months)"),
])
def test_degenerate_studies_give_the_error_text(demo_app, settings, words) -> None:  # type: ignore[no-untyped-def]
    app, _, sel, _ = demo_app
    st = app.server.extensions["valuesift"]
    with app.server.test_request_context("/"):
        job, poll_off, msg, _fs, _hidden = jobs_ui.launch(sel, settings, None)
        if job["status"] == "running":
            _wait(st, job["key"])
            job, *_rest = jobs_ui.poll(job)
            msg = _rest[3]
        assert job["status"] == "failed"
        assert words in msg.children and "Traceback" not in msg.children
        assert "universe_sectors" not in msg.children and "n_quantiles" not in msg.children  # words, not codes
        assert msg.className.endswith("error")


def test_no_data_gives_a_pointer_to_the_data_page(demo_app) -> None:  # type: ignore[no-untyped-def]
    app, *_ = demo_app
    with app.server.test_request_context("/"):
        job, poll_off, msg, *_ = jobs_ui.launch({"ids": []}, {}, None)
    assert job["status"] == "empty" and poll_off and "Data page" in msg.children


def test_a_running_study_can_be_cancelled(demo_app, monkeypatch: pytest.MonkeyPatch) -> None:  # type: ignore[no-untyped-def]
    app, _, sel, _ = demo_app
    st = app.server.extensions["valuesift"]
    started = threading.Event()

    def slow(panel, config, progress=None):  # type: ignore[no-untyped-def]
        for i in range(100000):
            progress("working", i / 100000)            # the job raises here once cancelled
            started.set()
            time.sleep(0.001)
        raise AssertionError("not cancelled")

    monkeypatch.setattr(services, "run_study", slow)
    job = st.start_study(sel, config_from_settings({"n_quantiles": 7}))
    assert started.wait(60)
    st.cancel(job.key)
    assert _wait(st, job.key).status == "cancelled"
    with app.server.test_request_context("/"):
        out = jobs_ui.poll({"key": job.key, "status": "running"})
    assert out[0]["status"] == "cancelled" and "cancelled" in out[4].children


def test_a_running_study_shows_progress_and_disables_the_controls(demo_app, monkeypatch: pytest.MonkeyPatch) -> None:  # type: ignore[no-untyped-def]
    app, _, sel, _ = demo_app
    st = app.server.extensions["valuesift"]
    release = threading.Event()
    reached = threading.Event()

    def staged(panel, config, progress=None):  # type: ignore[no-untyped-def]
        progress("quantiles", 0.55)
        reached.set()
        release.wait(60)
        raise InsufficientDataError("the test universe", "10 names", "3")

    monkeypatch.setattr(services, "run_study", staged)
    with app.server.test_request_context("/"):
        job, poll_off, msg, fs_disabled, hidden = jobs_ui.launch(sel, {"n_quantiles": 9}, None)
        assert job["status"] == "running" and not poll_off and fs_disabled and not hidden
        assert reached.wait(60)
        out = jobs_ui.poll(job)
        assert out[2] == {"width": "55%"} and "quantiles" in out[3] and out[5] is True and out[6] is False
        release.set()
        end = _wait(st, job["key"])
        assert end.status == "failed"
        out = jobs_ui.poll(job)
        assert out[0]["status"] == "failed" and "Not enough data for the test universe" in out[4].children
        assert out[5] is False and out[6] is True        # controls enabled again, progress hidden
