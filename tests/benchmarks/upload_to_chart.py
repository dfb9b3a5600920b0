"""From dropping the L pair on the Data page to the Study page's first charts, on a real server.

Run: ``python -m tests.benchmarks.upload_to_chart``.  It starts ``valuesift serve``
on a free 127.0.0.1 port with an empty workspace, then does what the browser
does, timing each step: the L prices and EPS (3,000 securities x 360 months,
wide Parquet, :func:`tests.benchmarks.synth.monthly_files`) sent as raw bodies
of the Data page's upload route, the Study page's launch callback with the
default settings, its progress polls until the study is done, the callback that
draws the eight study charts, and a change of horizon (a warm look-up).  The
times are as the client sees them on loopback (the server's work plus HTTP and
JSON encoding; no browser drawing).  Target of issue 15: upload to the first
chart within 5 s, a warm horizon change within 100 ms.  Invented data (seeded).
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
from pathlib import Path
from typing import Any

from tests.benchmarks.synth import SIZES, monthly_files
from tests.robustness._serve import DashClient, Server, _outputs

CHART = "..study-ic-horizon.figure"


def _launch(c: DashClient, sel: Any) -> dict[str, Any]:
    v = DashClient.values(c.call({"vs-selection.data": sel, "vs-settings.data": {}}, {"study-job.data": None},
                                 output_has="..study-job.data...study-poll"))
    return v["study-job.data"]


def _wait(c: DashClient, job: dict[str, Any], limit: float = 300.0) -> dict[str, Any]:
    end = time.monotonic() + limit
    while job.get("status") == "running" and time.monotonic() < end:
        job = DashClient.values(c.call({"study-poll.n_intervals": 1}, {"study-job.data": job})).get("study-job.data", job)
        if job.get("status") == "running":
            time.sleep(0.1)
    return job


def _figures(c: DashClient, job: dict[str, Any], horizon: Any, changed: str) -> dict[str, Any]:
    """The study charts' callback, as the browser posts it when ``changed`` (the job or the horizon) changed."""
    inputs = {"study-job.data": job, "study-horizon.value": horizon}
    spec = c.spec(list(inputs), CHART)
    body = {"output": spec["output"], "outputs": _outputs(spec["output"]),
            "inputs": [{"id": k.rsplit(".", 1)[0], "property": k.rsplit(".", 1)[1], "value": v} for k, v in inputs.items()],
            "changedPropIds": [changed], "state": []}
    return DashClient.values(c.http.post(c.base + "/_dash-update-component", json=body, timeout=c.timeout))


def once(files: Any) -> dict[str, float]:
    with tempfile.TemporaryDirectory() as tmp:
        with Server(Path(tmp) / "ws", "--max-upload-mb", "200") as srv:
            c = DashClient(srv.base, timeout=600)
            c.http.get(srv.base + "/data", timeout=60)                 # the Data page opened (a session)
            t0 = time.perf_counter()
            ids = []
            for kind, path in (("prices", files.prices_parquet), ("earnings", files.eps_parquet)):
                answer = c.upload_raw(path.name, path.read_bytes(), kind).json()
                assert answer["ok"], answer
                ids.append(answer["id"])
            t1 = time.perf_counter()
            job = _wait(c, _launch(c, {"ids": ids, "splits": []}))
            assert job.get("status") == "done", job
            t2 = time.perf_counter()
            first = _figures(c, job, None, "study-job.data")
            assert first.get("study-ic-horizon.figure"), "no chart drawn"
            t3 = time.perf_counter()
            _figures(c, job, 3, "study-horizon.value")
            t4 = time.perf_counter()
            _figures(c, job, 12, "study-horizon.value")
            t5 = time.perf_counter()
    return {"upload_s": t1 - t0, "study_s": t2 - t1, "first_charts_s": t3 - t2, "upload_to_chart_s": t3 - t0,
            "horizon_change_ms": 1000 * (t4 - t3), "second_horizon_change_ms": 1000 * (t5 - t4)}


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    a = ap.parse_args()
    L = SIZES["L"]
    files = monthly_files(L.n, L.t)
    runs = [once(files) for _ in range(a.repeats)]
    for k in runs[0]:
        vals = [r[k] for r in runs]
        print(f"{k:>26}: median {statistics.median(vals):8.2f}   runs {', '.join(f'{v:.2f}' for v in vals)}")
    print("targets: upload_to_chart_s <= 5 s; a warm horizon change <= 100 ms")


if __name__ == "__main__":
    main()
