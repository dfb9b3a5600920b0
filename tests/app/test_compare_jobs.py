"""Comparisons on the job runner: progress per study, Cancel, the same numbers as the one-thread path."""

from __future__ import annotations

import threading
import time

import pytest

import valuesift.app.services as services
from valuesift.app import compare_service
from valuesift.app.server import create_app
from valuesift.app.services import normalise_selection
from valuesift.app.settings import config_from_settings


def _until_done(job, limit: float = 240.0):  # type: ignore[no-untyped-def]
    end = time.monotonic() + limit
    while job.active and time.monotonic() < end:
        time.sleep(0.05)
    return job


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory):  # type: ignore[no-untyped-def]
    app = create_app(tmp_path_factory.mktemp("ws"), demo=True)
    st = app.server.extensions["valuesift"]
    return app, st, normalise_selection(st.workspace.get_setting("selection"))


def test_a_comparison_runs_as_a_job_and_equals_the_one_thread_comparison(demo) -> None:  # type: ignore[no-untyped-def]
    app, st, sel = demo
    cfg = config_from_settings({"horizons": [1, 12]})
    stages: list[str] = []
    with app.server.test_request_context("/"):
        job, key, left = compare_service.start_compare(st, sel, cfg, ["earnings_yield", "dividend_yield"], [],
                                                       words=lambda s: s.replace("_", " "))
        assert job is not None and left == []
        while job.active:                       # the stage names each study in words while it runs
            stages.append(job.stage)
            time.sleep(0.02)
        assert _until_done(job).status == "done", job.error
        assert any("study 1 of 2 (earnings yield)" in s for s in stages), stages
        got = compare_service.compare_result(key)
        assert got is not None
        again, _ = compare_service.compare_now(st, sel, cfg, ["earnings_yield", "dividend_yield"], [])
        assert again is got                     # the one-thread path finds the job's comparison in the cache
        # and a second start finds it finished: no job
        job2, key2, _ = compare_service.start_compare(st, sel, cfg, ["earnings_yield", "dividend_yield"], [])
        assert job2 is None and key2 == key
    # its numbers are each signal's own study (source: the definition of the comparison table, issue 12)
    with app.server.test_request_context("/"):
        _, own = st.run_now(sel, cfg)
    row = got.table[(got.table["signal"] == "earnings_yield") & (got.table["horizon"] == 12)].iloc[0]
    assert row["mean_ic"] == pytest.approx(float(own.ic_summary.loc[12, "mean_ic"]), abs=1e-15)
    # another browser session cannot fetch it by key
    with app.server.test_request_context("/"):
        import flask
        flask.g.vs_session = "someone-else"
        assert compare_service.compare_result(key) is None


def test_a_running_comparison_can_be_cancelled(demo, monkeypatch: pytest.MonkeyPatch) -> None:  # type: ignore[no-untyped-def]
    app, st, sel = demo
    started = threading.Event()

    def slow(panel, config, progress=None):  # type: ignore[no-untyped-def]
        for i in range(100000):
            progress("working", i / 100000)            # the job raises here once cancelled
            started.set()
            time.sleep(0.001)
        raise AssertionError("not cancelled")

    monkeypatch.setattr(services, "run_study", slow)
    with app.server.test_request_context("/"):
        job, key, _ = compare_service.start_compare(st, sel, config_from_settings({"n_quantiles": 7}),
                                                    ["earnings_yield", "composite"], [])
        assert started.wait(60)
        assert "study 1 of 2" in job.stage and "working" in job.stage
        assert st.own_job(job.id, "comparison") is job
        st.runner.cancel(job.id)
        assert _until_done(job).status == "cancelled"
        assert compare_service.compare_result(key) is None
