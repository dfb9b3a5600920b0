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
import os
import threading
import uuid
from collections import OrderedDict
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import flask

from valuesift.app.jobs import Busy, Job, JobRunner
from valuesift.app.result_cache import SignedCache, load_secret
from valuesift.app.workspace import Workspace, options_to_dict
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel
from valuesift.core.panel import Panel
from valuesift.core.config import StudyConfig
from valuesift.core.result import StudyResult
from valuesift.core.study import run_study
from valuesift.core.sweep import SweepGrid, run_sweep

__all__ = ["job_done", "finished_result", "AppState", "StudyJob", "Selection", "state", "normalise_selection", "LRU", "current_owner",
           "SESSION_COOKIE", "selection_key", "UploadBudget", "Busy"]

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


@dataclass
class StudyJob:
    """What a page sees of a study: its key, status, progress and error (a view of the runner's job)."""

    key: str
    status: str = "queued"          # queued, running, done, failed, cancelled
    stage: str = "waiting"
    fraction: float = 0.0
    error: str | None = None
    id: str | None = None
    ahead: int = 0                  # jobs queued before it (while queued)


class AppState:
    """Everything one dashboard keeps on the server: the workspace, panels, results and the job runner.

    It is the one owner of server state: the Study, Screen, Company and Export
    pages reach results through it (owner-checked), and every long job (a
    study, a bundle build) runs on its :class:`~valuesift.app.jobs.JobRunner`.
    """

    def __init__(self, workspace: Workspace, server: flask.Flask, *, demo: bool = False,
                 max_upload_bytes: int = 200 * 1024 * 1024, upload_budget_bytes: int | None = None,
                 runner: JobRunner | None = None) -> None:
        self.workspace = workspace
        self.server = server
        self.demo = demo
        self.max_upload_bytes = max_upload_bytes
        # results of large universes are big; keep the folder bounded (signed entries only, see result_cache)
        self.cache = SignedCache(workspace.cache_dir, load_secret(workspace.root / "cache.key"), threshold=16)
        self.results = LRU(4)
        # Each browser session's latest result stays in memory, so a finished study cannot be evicted
        # (by other sessions' studies) between "done" and the page fetching it.
        self.pins = LRU(32)
        self.panels = LRU(4)
        self._owners = LRU(2048)        # study key -> sessions that asked for it
        self._owners_lock = threading.Lock()
        self.runner = runner or JobRunner(workers=2, max_queued=32, max_per_owner=3)
        self.uploads = UploadBudget(upload_budget_bytes if upload_budget_bytes is not None else default_upload_budget())
        self.instance = uuid.uuid4().hex[:8]

    # -- owners of results ------------------------------------------------------------
    def _add_owner(self, key: str, owner: str) -> None:
        with self._owners_lock:
            owners = self._owners.get(key)
            if owners is None:
                owners = set()
                self._owners.put(key, owners)
            owners.add(owner)

    def owns(self, key: str, owner: str | None) -> bool:
        """Whether the session ``owner`` asked for the study ``key`` (``None``, outside a request: yes)."""
        if owner is None:
            return True
        with self._owners_lock:
            owners = self._owners.get(key)
            return owners is not None and owner in owners

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

    def read_upload(self, name: str, raw: bytes | Path, kind: str | None = None) -> tuple[Any, str | None]:
        """One uploaded file (its bytes, or the file they were written to) for the current session:
        ``(record, None)`` after reading it, or ``(the dataset already read from the same bytes, its name)``
        -- reused with its reading choices, not catalogued twice.  The caller admits the upload against
        :attr:`uploads` around this."""
        owner = current_owner() or ""
        digest = self.workspace.digest(raw)  # hashed once for both steps (each would read a large file again)
        known = self.workspace.find_upload(raw, owner=owner, digest=digest)
        if known is not None:
            return known, known.name
        rec = self.workspace.add_upload(name, raw, ReadOptions(kind=kind or None, max_bytes=self.max_upload_bytes),
                                        owner=owner, digest=digest)
        return rec, None

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
        """A finished result from memory, else from the signed file cache, else None.

        In a served request only a result the session asked for is returned
        (a key seen in another browser gives nothing).
        """
        if not key or not self.owns(key, current_owner()):
            return None
        hit = self.results.get(key)
        if hit is not None:
            return hit
        for pinned_key, pinned in self.pins.values():
            if pinned_key == key:
                return pinned
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
        """The study job of ``key`` as the current session sees it (None when it is not the session's)."""
        job = self.runner.by_key(key, current_owner())
        return None if job is None else self._view(job)

    def _view(self, job: Job) -> StudyJob:
        ahead = self.runner.position(job) if job.status == "queued" else 0
        return StudyJob(key=job.key or "", status=job.status, stage=job.stage, fraction=job.fraction,
                        error=job.error, id=job.id, ahead=ahead)

    def start_study(self, sel: Selection, config: StudyConfig) -> StudyJob:
        """Return a finished job at once when memoised; else queue (or join) the study on the runner.

        Raises :class:`~valuesift.app.jobs.Busy` when the session's or the server's queue is full.
        """
        sel = self.visible(sel)   # the worker thread has no session: hand it the session's ids only
        key = self.study_key(sel, config)
        owner = current_owner() or ""
        self._add_owner(key, owner)
        res = self.result(key)
        if res is not None:
            self.pins.put(owner, (key, res))
            return StudyJob(key=key, status="done", stage="done", fraction=1.0)
        sel = normalise_selection(sel)

        def work(job: Job) -> None:
            job.progress("reading the data", 0.0)
            panel = self.panel(sel)
            res = run_study(panel, config, progress=job.progress)
            self._store(key, res)
            for o in list(job.owners):
                self.pins.put(o, (key, res))

        return self._view(self.runner.submit("study", owner, work, key=key))

    def run_now(self, sel: Selection, config: StudyConfig) -> tuple[str, StudyResult]:
        """Run (or fetch) a study in the calling thread; ValueSiftError when it cannot run."""
        sel = self.visible(sel)
        key = self.study_key(sel, config)
        self._add_owner(key, current_owner() or "")
        res = self.result(key)
        if res is None:
            res = run_study(self.panel(sel), config)
            self._store(key, res)
        self.pins.put(current_owner() or "", (key, res))
        return key, res

    def _store(self, key: str, res: StudyResult) -> None:
        self.results.put(key, res)
        try:
            self.cache.set(key, res)
        except Exception:
            log.warning("could not write the study cache", exc_info=True)

    def start_studies(self, kind: str, entries: list[tuple[str, str, Selection, StudyConfig]],
                      finish: Any, *, key: str) -> Job:
        """Queue several studies as one job of ``kind`` (each taken from the study cache when it is there),
        then ``finish(results, job)`` with the results by label; returns the runner's job.

        ``entries`` are ``(label, words, selection, config)``: ``words`` names the study in the progress
        text.  The selections are narrowed to the current session's datasets here, in the request, because
        the worker thread has no session.  Raises :class:`~valuesift.app.jobs.Busy` when the queue is full.
        """
        owner = current_owner() or ""
        prepared = []
        for label, words, sel, cfg in entries:
            vis = normalise_selection(self.visible(sel))
            k = self.study_key(vis, cfg)
            self._add_owner(k, owner)
            prepared.append((label, words, vis, cfg, k))

        def work(job: Job) -> Any:
            n = len(prepared)
            results: dict[str, StudyResult] = {}
            for i, (label, words, vis, cfg, k) in enumerate(prepared):
                stage = f"study {i + 1} of {n} ({words})"
                job.progress(stage, i / (n + 1))
                res = self.result(k)
                if res is None:
                    def step(what: str, frac: float, i: int = i, stage: str = stage) -> None:
                        job.progress(f"{stage}: {what}", (i + max(0.0, min(float(frac), 1.0))) / (n + 1))
                    res = run_study(self.panel(vis), cfg, progress=step)
                    self._store(k, res)
                results[label] = res
            job.progress("putting the studies side by side", n / (n + 1))
            return finish(results, job)

        return self.runner.submit(kind, owner, work, key=key)

    def own_job(self, job_id: Any, kind: str) -> Job | None:
        """The current session's job of ``kind`` with this id (None for another session's or an unknown id)."""
        job = self.runner.get(job_id if isinstance(job_id, str) else None, current_owner())
        return job if job is not None and job.kind == kind else None

    # -- sweeps ----------------------------------------------------------------------------
    def start_sweep(self, sel: Selection, grid: SweepGrid, name: str, holdout: str | None = None) -> Job:
        """Queue a sweep of ``grid`` on the selection's panel; when it finishes it is saved as ``sweeps/<name>``.

        The points run one after another in the runner's worker thread (no cluster: nothing to start, and
        nothing logged by one); progress is the share of points finished, and a cancel takes effect after
        the point being computed.  Raises :class:`~valuesift.app.jobs.Busy` when the queue is full.
        """
        from valuesift.app.sweeps import CACHE_FOLDER, save_named_sweep, sweep_root

        sel = normalise_selection(self.visible(sel))
        owner = current_owner() or ""
        root = self.workspace.root

        def work(job: Job) -> str:
            job.progress("reading the data", 0.0)
            panel = self.panel(sel)
            n = len(grid.points)
            job.progress(f"0 of {n} configurations", 0.0)

            def step(done: int, total: int, _point: str, _status: str) -> None:
                job.progress(f"{done} of {total} configurations", done / total if total else 1.0)

            res = run_sweep(panel, grid, cache_dir=sweep_root(root) / CACHE_FOLDER, progress=step, holdout=holdout)
            job.progress("saving the sweep", 1.0)
            save_named_sweep(root, name, res)
            return name

        return self.runner.submit("sweep", owner, work, supersede=False)

    def sweep_job(self, job_id: Any) -> Job | None:
        """The current session's sweep job with this id (None for another session's or an unknown id)."""
        job = self.runner.get(job_id if isinstance(job_id, str) else None, current_owner())
        return job if job is not None and job.kind == "sweep" else None

    def cancel_sweep(self, job_id: Any) -> bool:
        """Cancel the current session's sweep job (a sweep has one session, which keeps seeing it as cancelled)."""
        job = self.sweep_job(job_id)
        return job is not None and self.runner.cancel(job.id)

    def cancel(self, key: str | None) -> None:
        """Withdraw the current session from the study ``key`` (cancelled when nobody else waits for it)."""
        owner = current_owner()
        job = self.runner.by_key(key, owner)
        if job is not None:
            self.runner.cancel(job.id, owner)


def default_upload_budget() -> int:
    """Half of the machine's physical memory (2 GB when it cannot be read)."""
    try:
        return int(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") // 2)
    except (ValueError, OSError, AttributeError):
        return 2 * 1024 ** 3


class UploadBudget:
    """Admission of uploads against one memory budget for all uploads being read at once.

    Reading an upload costs a multiple of its size plus a fixed part, as
    measured by ``tests/benchmarks/upload_memory.py`` on a server just started
    (the first upload, so nothing an earlier one left behind is reused):
    through the Data page's upload route a wide daily price file peaked at
    3.5 times its size above the server's baseline at 41 MB and 3.2 times at
    90 MB, a 16 MB one at 77 MB (4.7 times: about 30 MB of it does not grow
    with the file); through the older callback path (the file base64-encoded
    in a JSON body) 6.6 times at 41 MB.  ``COST`` and ``CALLBACK_COST`` are
    those multiples and ``FIXED`` the fixed part, each with a margin.  An
    upload whose cost does not fit the remaining budget is refused with a
    message, never queued behind the others; one upload alone is always
    admitted (the size limit bounds it).
    """

    COST = 4
    CALLBACK_COST = 8
    FIXED = 48 * 1024 * 1024

    def __init__(self, budget_bytes: int) -> None:
        self.budget = int(budget_bytes)
        self.in_use = 0
        self._lock = threading.Lock()

    def admit(self, size: int, multiple: int | None = None) -> int:
        """Reserve the memory of one upload of ``size`` bytes (``multiple`` of it, :attr:`COST` unless
        given, plus :attr:`FIXED`); returns the reservation (release it)."""
        cost = max(1, int(size)) * (self.COST if multiple is None else int(multiple)) + self.FIXED
        with self._lock:
            if self.in_use and self.in_use + cost > self.budget:
                raise Busy(f"The server is reading other uploads right now and has no memory left for a file of "
                           f"{size / 1e6:.0f} MB.", hint="Drop the file again in a minute.")
            self.in_use += cost
        return cost

    def release(self, cost: int) -> None:
        with self._lock:
            self.in_use = max(0, self.in_use - cost)


def state() -> AppState:
    """The AppState of the Flask app serving the current request."""
    return flask.current_app.extensions["valuesift"]


def job_done(job: Any) -> bool:
    """Whether a page's job store (``{"key", "status", ...}``) holds a finished study."""
    return isinstance(job, dict) and job.get("status") == "done"


def finished_result(job: Any, st: "AppState | None" = None) -> StudyResult | None:
    """The result of a page's finished study job, else None (running, failed or no job)."""
    return (st or state()).result(job.get("key")) if job_done(job) else None


