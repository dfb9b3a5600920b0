"""Server-side state of one dashboard: workspace, panels, memoised studies and study jobs.

Callbacks reach it with :func:`state` (it hangs on the Flask app, so several
apps in one process never share it).  The browser only ever holds a
*selection* (dataset ids and confirmed splits) and small settings; panels
and results stay here, keyed by content hashes.
"""

from __future__ import annotations

import hashlib
import json
import logging
import threading
import uuid
from collections import OrderedDict
from dataclasses import dataclass, field
from typing import Any

import flask
from flask_caching import Cache

from valuesift.app.workspace import Workspace, options_to_dict
from valuesift.core.errors import ValueSiftError
from valuesift.core.intake import PanelOptions, build_panel
from valuesift.core.panel import Panel
from valuesift.core.config import StudyConfig
from valuesift.core.result import StudyResult
from valuesift.core.study import run_study

__all__ = ["job_done", "finished_result", "AppState", "StudyJob", "Selection", "state", "normalise_selection", "LRU", "current_owner",
           "SESSION_COOKIE", "selection_key"]

log = logging.getLogger("valuesift.app")

#: The selection as the browser holds it: dataset ids in use and confirmed splits.
Selection = dict[str, list[str]]

#: Cookie holding the browser session id (random, set by the server on the first request).
SESSION_COOKIE = "valuesift_session"


def selection_key(owner: str | None) -> str:
    """The settings key of a session's last selection (the shared one without a session)."""
    return f"selection:{owner}" if owner else "selection"


def current_owner() -> str | None:
    """The browser session of the current request (None outside a served request: no filtering).

    Every dataset a session uploads is owned by it; a session sees its own
    datasets and the shared ones (the demo), never another session's, even
    when it sends another session's dataset ids.
    """
    if not flask.has_request_context():
        return None
    return flask.g.get("vs_session")


def normalise_selection(sel: Any) -> Selection:
    """A clean selection dict from whatever the store held (None, partial, stale)."""
    sel = sel if isinstance(sel, dict) else {}
    ids = [str(i) for i in (sel.get("ids") or []) if isinstance(i, str)]
    splits = sorted({str(s) for s in (sel.get("splits") or []) if isinstance(s, str)})
    return {"ids": list(dict.fromkeys(ids)), "splits": splits}


class LRU:
    """A small thread-safe least-recently-used map (result objects in memory)."""

    def __init__(self, maxsize: int) -> None:
        self.maxsize = maxsize
        self._d: OrderedDict[str, Any] = OrderedDict()
        self._lock = threading.Lock()

    def get(self, key: str) -> Any:
        with self._lock:
            if key not in self._d:
                return None
            self._d.move_to_end(key)
            return self._d[key]

    def put(self, key: str, value: Any) -> None:
        with self._lock:
            self._d[key] = value
            self._d.move_to_end(key)
            while len(self._d) > self.maxsize:
                self._d.popitem(last=False)

    def __contains__(self, key: str) -> bool:
        with self._lock:
            return key in self._d

    def values(self) -> list[Any]:
        with self._lock:
            return list(self._d.values())


class _Cancelled(Exception):
    pass


@dataclass
class StudyJob:
    """One study running in a worker thread (progress polled by the page)."""

    key: str
    status: str = "queued"          # queued, running, done, failed, cancelled
    stage: str = "waiting"
    fraction: float = 0.0
    error: str | None = None
    cancel: threading.Event = field(default_factory=threading.Event)
    owners: set[str] = field(default_factory=set)   # browser sessions waiting for it


class AppState:
    """Everything one dashboard keeps on the server."""

    def __init__(self, workspace: Workspace, server: flask.Flask, *, demo: bool = False,
                 max_upload_bytes: int = 200 * 1024 * 1024) -> None:
        self.workspace = workspace
        self.server = server
        self.demo = demo
        self.max_upload_bytes = max_upload_bytes
        self.cache = Cache(server, config={
            "CACHE_TYPE": "FileSystemCache",
            "CACHE_DIR": str(workspace.cache_dir),
            "CACHE_DEFAULT_TIMEOUT": 0,
            "CACHE_THRESHOLD": 16,      # results of large universes are big; keep the folder bounded
        })
        self.results = LRU(4)
        # Each browser session's latest result stays in memory, so a finished study cannot be evicted
        # (by other sessions' studies) between "done" and the page fetching it.
        self.pins = LRU(32)
        self.panels = LRU(4)
        self.jobs: dict[str, StudyJob] = {}
        self._jobs_lock = threading.Lock()
        self._run_lock = threading.Semaphore(1)   # one study at a time on a small machine
        self.instance = uuid.uuid4().hex[:8]

    # -- selection -> panel ----------------------------------------------------------
    def selection_fingerprint(self, sel: Selection) -> str:
        """Hash of the datasets' content and options plus the confirmed splits."""
        parts = []
        owner = current_owner()
        for did in sorted(sel["ids"]):
            try:
                rec = self.workspace.get(did, owner=owner)
            except KeyError:
                continue
            if rec.ok:
                parts.append([rec.sha256, options_to_dict(rec.options)])
        blob = json.dumps({"files": parts, "splits": sel["splits"]}, sort_keys=True, default=str)
        return hashlib.sha256(blob.encode()).hexdigest()

    def usable_ids(self, sel: Selection) -> list[str]:
        """The ids of a selection that are readable and visible to the current session."""
        out = []
        owner = current_owner()
        for did in sel["ids"]:
            try:
                if self.workspace.get(did, owner=owner).ok:
                    out.append(did)
            except KeyError:
                continue
        return out

    def visible(self, sel: Selection) -> Selection:
        """The selection restricted to the datasets the current session may use."""
        sel = normalise_selection(sel)
        return {"ids": self.usable_ids(sel), "splits": sel["splits"]}

    def panel(self, sel: Selection) -> Panel:
        """The panel of a selection (memoised); IntakeError when it cannot be built."""
        sel = normalise_selection(sel)
        key = self.selection_fingerprint(sel)
        hit = self.panels.get(key)
        if hit is not None:
            return hit
        files = [self.workspace.parsed_file(i) for i in self.usable_ids(sel)]
        panel = build_panel(files, PanelOptions(confirmed_splits=frozenset(sel["splits"])))
        self.panels.put(key, panel)
        return panel

    # -- studies ------------------------------------------------------------------------
    def study_key(self, sel: Selection, config: StudyConfig) -> str:
        blob = json.dumps({"data": self.selection_fingerprint(normalise_selection(sel)),
                           "config": config.to_dict()}, sort_keys=True, default=str)
        return "study-" + hashlib.sha256(blob.encode()).hexdigest()[:32]

    def result(self, key: str | None) -> StudyResult | None:
        """A finished result from memory, else from the filesystem cache, else None."""
        if not key:
            return None
        hit = self.results.get(key)
        if hit is not None:
            return hit
        for pinned_key, pinned in self.pins.values():
            if pinned_key == key:
                return pinned
        with self.server.app_context():
            try:
                hit = self.cache.get(key)
            except Exception:  # a damaged cache file is only a cache miss
                log.debug("cache read failed", exc_info=True)
                hit = None
        if isinstance(hit, StudyResult):
            self.results.put(key, hit)
            return hit
        return None

    def job(self, key: str | None) -> StudyJob | None:
        with self._jobs_lock:
            return self.jobs.get(key or "")

    def start_study(self, sel: Selection, config: StudyConfig) -> StudyJob:
        """Return a finished job at once when memoised; else start (or join) a worker thread."""
        sel = self.visible(sel)   # the worker thread has no session: hand it the session's ids only
        key = self.study_key(sel, config)
        owner = current_owner() or ""
        res = self.result(key)
        if res is not None:
            self.pins.put(owner, (key, res))
            return StudyJob(key=key, status="done", stage="done", fraction=1.0)
        with self._jobs_lock:
            job = self.jobs.get(key)
            if job is not None and job.status in ("queued", "running"):
                job.owners.add(owner)
                return job
            job = StudyJob(key=key, owners={owner})
            self.jobs[key] = job
        thread = threading.Thread(target=self._work, args=(job, normalise_selection(sel), config),
                                  name=f"study-{key[-6:]}", daemon=True)
        thread.start()
        return job

    def run_now(self, sel: Selection, config: StudyConfig) -> tuple[str, StudyResult]:
        """Run (or fetch) a study in the calling thread; ValueSiftError when it cannot run."""
        sel = self.visible(sel)
        key = self.study_key(sel, config)
        res = self.result(key)
        if res is None:
            res = run_study(self.panel(sel), config)
            self._store(key, res)
        self.pins.put(current_owner() or "", (key, res))
        return key, res

    def _store(self, key: str, res: StudyResult) -> None:
        self.results.put(key, res)
        with self.server.app_context():
            try:
                self.cache.set(key, res)
            except Exception:
                log.warning("could not write the study cache", exc_info=True)

    def _work(self, job: StudyJob, sel: Selection, config: StudyConfig) -> None:
        def progress(stage: str, fraction: float) -> None:
            if job.cancel.is_set():
                raise _Cancelled()
            job.stage, job.fraction = stage, float(fraction)

        with self._run_lock:
            if job.cancel.is_set():
                job.status = "cancelled"
                return
            job.status, job.stage = "running", "reading the data"
            try:
                panel = self.panel(sel)
                res = run_study(panel, config, progress=progress)
            except _Cancelled:
                job.status, job.stage = "cancelled", "cancelled"
                return
            except ValueSiftError as err:
                job.status, job.error = "failed", str(err)
                log.debug("study failed", exc_info=True)
                return
            except Exception as err:  # never a traceback in the page; the log keeps it
                log.exception("study crashed")
                job.status = "failed"
                job.error = f"The study could not be computed ({type(err).__name__}). The log has the details."
                return
            self._store(job.key, res)
            with self._jobs_lock:
                for owner in job.owners:
                    self.pins.put(owner, (job.key, res))
            job.status, job.stage, job.fraction = "done", "done", 1.0

    def cancel(self, key: str | None) -> None:
        job = self.job(key)
        if job is not None and job.status in ("queued", "running"):
            job.cancel.set()


def state() -> AppState:
    """The AppState of the Flask app serving the current request."""
    return flask.current_app.extensions["valuesift"]


def job_done(job: Any) -> bool:
    """Whether a page's job store (``{"key", "status", ...}``) holds a finished study."""
    return isinstance(job, dict) and job.get("status") == "done"


def finished_result(job: Any, st: "AppState | None" = None) -> StudyResult | None:
    """The result of a page's finished study job, else None (running, failed or no job)."""
    return (st or state()).result(job.get("key")) if job_done(job) else None


