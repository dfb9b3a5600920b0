"""A bounded load test of ``valuesift serve`` on 127.0.0.1: simulated users upload their own files and run studies.

Full run (the README figure)::

    python -m tests.robustness.load --users 20 --seconds 60

Each simulated user is one browser session (its own cookie jar) that uploads
its own invented price and EPS files, then, until the time is up, runs
studies with changing settings exactly as the Study page does (the launch
callback, the progress poll every 0.35 s, the figures callback), checks that
its Data page lists only its own files, that its results are computed from
its own data, and that another user's dataset ids give it nothing.  The
server is started here on a free loopback port with a temporary workspace
and stopped at the end; the run stops by itself.
"""

from __future__ import annotations

import argparse
import json
import random
import tempfile
import threading
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from tests.robustness._data import price_eps_files
from tests.robustness._serve import DashClient, Server

__all__ = ["LoadResult", "run_load", "main"]

_POLL_S = 0.35


@dataclass
class LoadResult:
    users: int
    seconds: float
    requests: int = 0
    server_errors: int = 0
    client_errors: list[str] = field(default_factory=list)
    isolation_violations: list[str] = field(default_factory=list)
    studies: int = 0
    callback_ms: list[float] = field(default_factory=list)     # every study callback request (launch, poll, figures)
    study_ms: list[float] = field(default_factory=list)        # settings change -> figures shown
    lock: threading.Lock = field(default_factory=threading.Lock, repr=False)

    def percentiles(self, values: list[float]) -> dict[str, float]:
        if not values:
            return {"p50": float("nan"), "p95": float("nan"), "p99": float("nan")}
        a = np.asarray(values, dtype=float)
        return {f"p{q}": float(np.percentile(a, q)) for q in (50, 95, 99)}

    def summary(self) -> dict[str, Any]:
        return {"users": self.users, "seconds": self.seconds, "requests": self.requests,
                "server_errors": self.server_errors, "client_errors": len(self.client_errors),
                "isolation_violations": len(self.isolation_violations), "studies": self.studies,
                "study_callback_ms": self.percentiles(self.callback_ms),
                "time_to_result_ms": self.percentiles(self.study_ms)}


class _User:
    def __init__(self, u: int, base: str, res: LoadResult, ids: dict[int, list[str]], deadline: float) -> None:
        self.u, self.base, self.res, self.ids, self.deadline = u, base, res, ids, deadline
        self.tag = f"u{u:02d}"
        self.n_sec = 8 + u % 17
        self.rng = random.Random(1000 + u)

    def _post(self, c: DashClient, inputs: dict[str, Any], states: dict[str, Any] | None = None,
              output_has: str | None = None, timed: bool = False) -> dict[str, Any]:
        t0 = time.perf_counter()
        r = c.call(inputs, states, output_has=output_has)
        ms = 1000 * (time.perf_counter() - t0)
        with self.res.lock:
            self.res.requests += 1
            if timed:
                self.res.callback_ms.append(ms)
            if r.status_code >= 500:
                self.res.server_errors += 1
        if r.status_code >= 400:
            raise RuntimeError(f"{self.tag}: HTTP {r.status_code} for {list(inputs)}")
        return DashClient.values(r)

    def run(self) -> None:
        try:
            self._run()
        except Exception as err:  # recorded; the run goes on for the other users
            with self.res.lock:
                self.res.client_errors.append(f"{self.tag}: {type(err).__name__}: {err}")

    def _run(self) -> None:
        c = DashClient(self.base)
        with self.res.lock:
            self.res.requests += 2
        prices, eps = price_eps_files(500 + self.u, n_sec=self.n_sec, n_months=60, prefix=f"Q{self.tag.upper()}X")
        r = c.upload([(f"prices-{self.tag}.csv", prices), (f"eps-{self.tag}.csv", eps)])
        with self.res.lock:
            self.res.requests += 1
            self.res.server_errors += int(r.status_code >= 500)
        sel = DashClient.values(r)["vs-selection.data"]
        with self.res.lock:
            self.ids[self.u] = list(sel["ids"])
        job: Any = None
        n = 0
        while time.monotonic() < self.deadline:
            n += 1
            settings = {"n_quantiles": self.rng.choice([2, 3, 4]), "horizons": self.rng.choice([[1], [1, 3], [1, 3, 12]]),
                        "winsor_lower": self.rng.choice([0.0, 1.0, 2.5]), "zscore_method": self.rng.choice(["mean_std", "median_mad"])}
            t_start = time.perf_counter()
            v = self._post(c, {"vs-selection.data": sel, "vs-settings.data": settings}, {"study-job.data": job},
                           output_has="..study-job.data...study-poll", timed=True)
            job = v["study-job.data"]
            end = time.monotonic() + 600
            while job.get("status") == "running" and time.monotonic() < end:
                time.sleep(_POLL_S)
                v = self._post(c, {"study-poll.n_intervals": n}, {"study-job.data": job}, timed=True)
                job = v.get("study-job.data", job)
            if job.get("status") != "done":
                raise RuntimeError(f"{self.tag}: study ended as {job.get('status')}")
            figs = self._post(c, {"study-job.data": job, "study-horizon.value": 1}, timed=True)
            with self.res.lock:
                self.res.study_ms.append(1000 * (time.perf_counter() - t_start))
                self.res.studies += 1
            summary = json.dumps(figs.get("study-summary.children"))
            if f"{self.n_sec} names on average" not in summary:   # computed from this user's own universe
                self._violation(f"summary does not show this user's {self.n_sec} names: {summary[:200]}")
            if n % 3 == 1:
                self._check_cards(c, sel)
            if n % 4 == 2:
                self._check_forged(c)

    def _check_cards(self, c: DashClient, sel: Any) -> None:
        cards = json.dumps(self._post(c, {"data-version.data": 1, "vs-selection.data": sel}))
        if f"prices-{self.tag}.csv" not in cards:
            self._violation("own file missing from the Data page")
        for other in range(self.res.users):
            if other != self.u and f"-u{other:02d}.csv" in cards:
                self._violation(f"sees files of user {other}")

    def _check_forged(self, c: DashClient) -> None:
        with self.res.lock:
            others = [i for k, v in self.ids.items() if k != self.u for i in v]
        if not others:
            return
        v = self._post(c, {"vs-selection.data": {"ids": others[:2], "splits": []}, "vs-settings.data": {}},
                       {"study-job.data": None}, output_has="..study-job.data...study-poll")
        if v["study-job.data"].get("status") != "empty":
            self._violation("another user's dataset ids gave a study")

    def _violation(self, what: str) -> None:
        with self.res.lock:
            self.res.isolation_violations.append(f"{self.tag}: {what}")


def run_load(users: int = 20, seconds: float = 60.0, workspace: Path | None = None) -> LoadResult:
    """Start a server, run ``users`` simulated users for ``seconds``, stop the server; returns the figures."""
    res = LoadResult(users=users, seconds=seconds)
    tmp = Path(tempfile.mkdtemp(prefix="valuesift-load-")) if workspace is None else Path(workspace)
    with Server(tmp / "ws") as srv:
        ids: dict[int, list[str]] = {}
        deadline = time.monotonic() + seconds
        threads = [threading.Thread(target=_User(u, srv.base, res, ids, deadline).run, name=f"user-{u}", daemon=True)
                   for u in range(users)]
        for t in threads:
            t.start()
        for t in threads:
            t.join(seconds + 900)
        log = srv.log()
    res.server_log_tracebacks = log.count("Traceback")  # type: ignore[attr-defined]
    return res


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--users", type=int, default=20)
    p.add_argument("--seconds", type=float, default=60.0)
    a = p.parse_args(argv)
    res = run_load(a.users, a.seconds)
    out = res.summary()
    out["server_log_tracebacks"] = getattr(res, "server_log_tracebacks", 0)
    print(json.dumps(out, indent=1))
    for e in res.client_errors[:10] + res.isolation_violations[:10]:
        print("problem:", e)
    ok = not (res.server_errors or res.client_errors or res.isolation_violations or out["server_log_tracebacks"])
    return 0 if ok else 1


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
