"""Bundle builds on the dashboard's job runner, for the Export page (progress polled by the page).

A build writes into ``<folder>/<session>/<job id>/`` and leaves the ZIP and
page thumbnails there; the page sends the ZIP with ``dcc.Download``, only to
the browser session that asked for it.
"""

from __future__ import annotations

import base64
import hashlib
import io
import logging
import shutil
import subprocess
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable

from PIL import Image

from valuesift.app.bundle.build import BundlePaths, bundle_name, write_bundle
from valuesift.app.services import current_owner, state
from valuesift.app.jobs import Job, JobRunner

__all__ = ["ExportJob", "start_export", "get_export", "page_thumbnails", "MAX_KEPT_PER_SESSION"]

log = logging.getLogger("valuesift.app")

#: finished bundles kept on disk per browser session (older ones are deleted, never another session's)
MAX_KEPT_PER_SESSION = 3


@dataclass
class ExportJob:
    """What the Export page sees of one bundle build (status: queued, running, done, failed, cancelled)."""

    id: str
    study_key: str
    status: str = "running"
    stage: str = "starting"
    fraction: float = 0.0
    error: str | None = None
    paths: BundlePaths | None = None
    thumbnails: list[str] = field(default_factory=list)


def _owner() -> str:
    return current_owner() or ""


def _session_folder(folder: Path, owner: str) -> Path:
    """``<exports>/<hash of the session>``: one folder per browser session (the id itself is never on disk)."""
    return Path(folder) / hashlib.sha256(("session:" + owner).encode()).hexdigest()[:24]


def _view(job: Job) -> ExportJob:
    out: dict[str, Any] = job.result or {}
    status = "running" if job.status in ("queued", "running") else job.status
    return ExportJob(id=job.id, study_key=str(out.get("study_key", "")), status=status, stage=job.stage,
                     fraction=job.fraction, error=job.error, paths=out.get("paths"), thumbnails=out.get("thumbnails", []))


def get_export(job_id: str | None, runner: JobRunner | None = None) -> ExportJob | None:
    """The export of this id, when it belongs to the current browser session (else None)."""
    runner = runner or _runner()
    job = runner.get(job_id, _owner())
    if job is None or job.kind != "bundle":
        return None
    return _view(job)


def _runner() -> JobRunner:
    return state().runner


def start_export(result: Any, panel: Any, folder: Path, study_key: str, *, study_name: str, title: str | None,
                 note: str | None, include: Iterable[str] | None, horizon: int | None,
                 sweep: Any | None = None, comparison: Any | None = None,
                 runner: JobRunner | None = None) -> ExportJob:
    """Queue the build of the bundle of ``result`` on the job runner; returns the job at once.

    The bundle is written into ``<folder>/<session>/<job id>/``; the session's
    oldest bundles beyond :data:`MAX_KEPT_PER_SESSION` are deleted when a new
    one finishes.  Raises :class:`~valuesift.app.jobs.Busy` when the queue is full.
    """
    owner = _owner()
    runner = runner or _runner()
    inc = list(include) if include is not None else None
    base = _session_folder(folder, owner)

    def work(job: Job) -> dict[str, Any]:
        out = base / job.id
        name = bundle_name(study_name, result)
        paths = write_bundle(result, panel, None, out / "bundle", study_name=study_name, title=title, note=note,
                             include=inc, progress=job.progress, horizon=horizon,
                             zip_path=out / "zip" / f"{name}.zip", sweep=sweep, comparison=comparison)
        thumbs = page_thumbnails(paths.folder / "report.pdf", paths.folder / "charts")
        _prune(base, keep=job.id)
        return {"study_key": study_key, "paths": paths, "thumbnails": thumbs}

    job = runner.submit("bundle", owner, work)
    view = _view(job)
    view.study_key = study_key
    return view


def _prune(base: Path, keep: str) -> None:
    """Delete the session's oldest bundle folders beyond :data:`MAX_KEPT_PER_SESSION`."""
    try:
        dirs = sorted((d for d in base.iterdir() if d.is_dir()), key=lambda d: d.stat().st_mtime)
    except OSError:
        return
    for d in dirs[:max(0, len(dirs) - MAX_KEPT_PER_SESSION)]:
        if d.name != keep:
            shutil.rmtree(d, ignore_errors=True)


def page_thumbnails(pdf: Path, charts: Path, *, limit: int = 16) -> list[str]:
    """Small PNGs (data URIs) of the report's pages via pdftoppm; without it, of the chart images."""
    pngs: list[bytes] = []
    exe = shutil.which("pdftoppm")
    if exe and pdf.exists():
        tmp = pdf.parent.parent / "thumbs"
        tmp.mkdir(parents=True, exist_ok=True)
        try:
            subprocess.run([exe, "-png", "-r", "18", "-l", str(limit), str(pdf), str(tmp / "p")], check=True,
                           timeout=60, capture_output=True)
            pngs = [p.read_bytes() for p in sorted(tmp.glob("p-*.png"))]
        except (subprocess.SubprocessError, OSError):
            log.debug("pdftoppm failed", exc_info=True)
    if not pngs:

        for p in sorted(charts.glob("*.png"))[:limit]:
            im = Image.open(p)
            im.thumbnail((240, 135))
            buf = io.BytesIO()
            im.save(buf, format="PNG")
            pngs.append(buf.getvalue())
    return ["data:image/png;base64," + base64.b64encode(b).decode("ascii") for b in pngs]
