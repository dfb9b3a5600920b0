"""One job runner for the dashboard's long work: studies and bundle builds (and any later kind).

It keeps the contract of Dash's background callbacks -- a job is *running*
(the page disables its controls), reports *progress* (a stage and a
fraction) and can be *cancelled* -- but runs in this process, on a fixed
pool of worker threads fed from one bounded queue, because the work needs the
server's in-memory panels and results (a background-callback manager would
run it in another process and pickle them across).

Bounds (a careful machine has two cores and many browser tabs):

* at most ``workers`` jobs run at once; the others wait in the queue;
* at most ``max_queued`` jobs wait overall, and at most ``max_per_owner``
  jobs (waiting or running) belong to one browser session;
* a new job of a kind supersedes the same session's earlier job of that kind
  that has not finished: it is cancelled, or, when another session waits for
  the same result, that session keeps it (a kind submitted with
  ``supersede=False`` -- sweeps, which are long and started on purpose --
  keeps the earlier jobs running, within the per-session bound);
* beyond the bounds :meth:`JobRunner.submit` raises :class:`Busy`, whose
  message says what happened and what to do;
* the queue is served round-robin by session, so one session's burst cannot
  make another wait behind all of it.

Jobs with the same ``key`` (the same study on the same data) are one job:
a second session joins it instead of starting another.  A job belongs to the
sessions that asked for it; :meth:`JobRunner.get` returns it to them only.
Job ids are 128-bit random hex strings.
"""

from __future__ import annotations

import logging
import secrets
import threading
import time
from collections import deque
from dataclasses import dataclass, field
from typing import Any, Callable

from valuesift.core.errors import ValueSiftError

__all__ = ["Job", "JobRunner", "Busy", "Cancelled", "ACTIVE"]

log = logging.getLogger("valuesift.app")

#: statuses of a job that has not finished
ACTIVE = ("queued", "running")


class Busy(ValueSiftError):
    """The job was not accepted: the queue of the session or of the server is full."""


class Cancelled(Exception):
    """Raised inside a job's work by :meth:`Job.progress` once the job is cancelled."""


@dataclass
class Job:
    """One unit of long work (status: queued, running, done, failed, cancelled)."""

    id: str
    kind: str
    key: str | None
    owners: set[str]
    work: Callable[["Job"], Any] = field(repr=False)
    status: str = "queued"
    stage: str = "waiting"
    fraction: float = 0.0
    error: str | None = None
    result: Any = field(default=None, repr=False)
    cancel_event: threading.Event = field(default_factory=threading.Event, repr=False)
    created: float = field(default_factory=time.monotonic)
    finished: float | None = None

    @property
    def active(self) -> bool:
        return self.status in ACTIVE

    def progress(self, stage: str, fraction: float) -> None:
        """Report progress from the work; raises :class:`Cancelled` once the job is cancelled."""
        if self.cancel_event.is_set():
            raise Cancelled()
        self.stage, self.fraction = stage, float(fraction)


class JobRunner:
    """A bounded queue and a fixed pool of worker threads (see the module notes)."""

    def __init__(self, *, workers: int = 2, max_queued: int = 32, max_per_owner: int = 3,
                 keep_finished: int = 200, name: str = "valuesift-job") -> None:
        self.workers = max(1, int(workers))
        self.max_queued = int(max_queued)
        self.max_per_owner = int(max_per_owner)
        self.keep_finished = int(keep_finished)
        self._name = name
        self._lock = threading.Condition()
        self._queue: deque[Job] = deque()
        self._jobs: dict[str, Job] = {}
        self._by_key: dict[str, Job] = {}
        self._threads: list[threading.Thread] = []
        self._last_owner: str | None = None
        self.refused = 0

    # -- submitting ------------------------------------------------------------------
    def submit(self, kind: str, owner: str, work: Callable[[Job], Any], *, key: str | None = None,
               supersede: bool = True) -> Job:
        """Queue ``work(job)`` for ``owner``; join the active job of the same ``key`` when there is one.

        With ``supersede`` (the default) the session's unfinished jobs of the same kind are withdrawn;
        without it they keep running (a second sweep started from another tab must not cancel the first).

        Raises
        ------
        Busy
            When the session already has ``max_per_owner`` jobs, or ``max_queued`` jobs wait overall.
        """
        with self._lock:
            if key is not None:
                same = self._by_key.get(key)
                if same is not None and same.active and not same.cancel_event.is_set():
                    same.owners.add(owner)
                    if supersede:
                        self._supersede(kind, owner, keep=same)
                    return same
            if supersede:
                self._supersede(kind, owner, keep=None)
            mine = [j for j in self._jobs.values() if j.active and owner in j.owners]
            if len(mine) >= self.max_per_owner:
                self.refused += 1
                raise Busy(f"This browser already has {len(mine)} jobs waiting or running, the most one browser may have.",
                           hint="Wait for one to finish, or cancel it, then try again.")
            if len(self._queue) >= self.max_queued:
                self.refused += 1
                raise Busy(f"The dashboard is busy: {len(self._queue)} jobs of other users are waiting.",
                           hint="Try again in a minute.")
            job = Job(id=secrets.token_hex(16), kind=kind, key=key, owners={owner}, work=work)
            self._jobs[job.id] = job
            if key is not None:
                self._by_key[key] = job
            self._queue.append(job)
            self._forget_old()
            self._ensure_workers()
            self._lock.notify()
            return job

    def _supersede(self, kind: str, owner: str, keep: Job | None) -> None:
        """Withdraw ``owner`` from its unfinished jobs of ``kind`` (cancelling those nobody else waits for)."""
        for j in list(self._jobs.values()):
            if j is keep or j.kind != kind or not j.active or owner not in j.owners:
                continue
            j.owners.discard(owner)
            if not j.owners:
                self._cancel(j)

    # -- looking and cancelling --------------------------------------------------------
    def get(self, job_id: str | None, owner: str | None = None) -> Job | None:
        """The job with this id, when ``owner`` is one of its sessions (``None``: no check)."""
        with self._lock:
            job = self._jobs.get(job_id or "")
        if job is None or (owner is not None and owner not in job.owners):
            return None
        return job

    def by_key(self, key: str | None, owner: str | None = None) -> Job | None:
        """The latest job of a dedupe key (same owner rule as :meth:`get`)."""
        with self._lock:
            job = self._by_key.get(key or "")
        if job is None or (owner is not None and owner not in job.owners):
            return None
        return job

    def cancel(self, job_id: str | None, owner: str | None = None) -> bool:
        """Withdraw ``owner`` from a job; the job is cancelled when no session waits for it any more."""
        with self._lock:
            job = self._jobs.get(job_id or "")
            if job is None or not job.active:
                return False
            if owner is not None:
                if owner not in job.owners:
                    return False
                job.owners.discard(owner)
                if job.owners:
                    return True
            self._cancel(job)
            return True

    def _cancel(self, job: Job) -> None:
        job.cancel_event.set()
        if job.status == "queued":
            try:
                self._queue.remove(job)
            except ValueError:
                pass
            job.status, job.stage, job.finished = "cancelled", "cancelled", time.monotonic()

    def _unkey(self, job: Job) -> None:
        if job.key is not None and self._by_key.get(job.key) is job:
            del self._by_key[job.key]

    def position(self, job: Job) -> int:
        """How many queued jobs are before ``job`` (0 when it runs next or is not queued)."""
        with self._lock:
            for i, j in enumerate(self._queue):
                if j is job:
                    return i
        return 0

    def counts(self) -> dict[str, int]:
        """How many jobs are queued and running, and how many were refused (for tests and the log)."""
        with self._lock:
            running = sum(1 for j in self._jobs.values() if j.status == "running")
            return {"queued": len(self._queue), "running": running, "refused": self.refused,
                    "threads": sum(1 for t in self._threads if t.is_alive())}

    # -- workers ----------------------------------------------------------------------------
    def _ensure_workers(self) -> None:
        self._threads = [t for t in self._threads if t.is_alive()]
        while len(self._threads) < self.workers:
            t = threading.Thread(target=self._loop, name=f"{self._name}-{len(self._threads)}", daemon=True)
            self._threads.append(t)
            t.start()

    def _next(self) -> Job:
        """The next queued job, round-robin by session (called with the lock held)."""
        while not self._queue:
            self._lock.wait()
        for j in self._queue:
            if self._last_owner not in j.owners:
                self._queue.remove(j)
                break
        else:
            j = self._queue.popleft()
        self._last_owner = next(iter(j.owners), None)
        return j

    def _loop(self) -> None:
        while True:
            with self._lock:
                job = self._next()
                job.status, job.stage = "running", "starting"
            self._run(job)

    def _run(self, job: Job) -> None:
        try:
            result = job.work(job)
            status, error = "done", None
        except Cancelled:
            status, error, result = "cancelled", None, None
        except ValueSiftError as err:
            status, error, result = "failed", str(err), None
            log.debug("%s job failed", job.kind, exc_info=True)
        except MemoryError:
            log.exception("%s job ran out of memory", job.kind)
            status, error, result = "failed", ("The server ran out of memory for this job. Close other studies or "
                                               "exports, or use a smaller universe, then try again."), None
        except OSError as err:
            log.exception("%s job could not write", job.kind)
            status, error, result = "failed", (f"The server could not read or write a file ({err.strerror or err}). "
                                               "Check that the workspace disk has free space, then try again."), None
        except Exception as err:  # never a traceback in the page; the log keeps it
            log.exception("%s job crashed", job.kind)
            status, error, result = "failed", (f"The {job.kind} could not be finished because of an internal error "
                                               f"({type(err).__name__}); the server log has the details."), None
        with self._lock:
            if status == "failed" and job.cancel_event.is_set():
                status, error = "cancelled", None
            job.result, job.error = result, error
            job.stage = "done" if status == "done" else status
            if status == "done":
                job.fraction = 1.0
            job.status, job.finished = status, time.monotonic()

    def _forget_old(self) -> None:
        """Drop the oldest finished jobs beyond ``keep_finished`` (their results live elsewhere)."""
        done = [j for j in self._jobs.values() if not j.active]
        for j in sorted(done, key=lambda j: j.finished or 0.0)[:max(0, len(done) - self.keep_finished)]:
            self._jobs.pop(j.id, None)
            self._unkey(j)
