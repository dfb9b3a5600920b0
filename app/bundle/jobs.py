"""Bundle builds in a worker thread, for the dashboard's Export page (progress polled by the page).

A build writes into ``<folder>/<job id>/`` and leaves the ZIP and page
thumbnails there; the page sends the ZIP with ``dcc.Download``.
"""

from __future__ import annotations

import base64
import io
import logging
import shutil
import subprocess
import threading
import uuid
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable

from valuesift.app.bundle.build import BundlePaths, bundle_name, write_bundle
from valuesift.core.errors import ValueSiftError

__all__ = ["ExportJob", "start_export", "get_export", "page_thumbnails"]

log = logging.getLogger("valuesift.app")

_JOBS: dict[str, "ExportJob"] = {}
_LOCK = threading.Lock()
_MAX_KEPT = 3


@dataclass
class ExportJob:
    """One bundle build (status: running, done, failed)."""

    id: str
    study_key: str
    status: str = "running"
    stage: str = "starting"
    fraction: float = 0.0
    error: str | None = None
    paths: BundlePaths | None = None
    thumbnails: list[str] = field(default_factory=list)


def get_export(job_id: str | None) -> ExportJob | None:
    with _LOCK:
        return _JOBS.get(job_id or "")


def start_export(result: Any, panel: Any, folder: Path, study_key: str, *, study_name: str, title: str | None,
                 note: str | None, include: Iterable[str] | None, horizon: int | None,
                 sweep: Any | None = None) -> ExportJob:
    """Start building the bundle of ``result`` in a thread; returns the job at once."""
    job = ExportJob(id=uuid.uuid4().hex[:12], study_key=study_key)
    with _LOCK:
        _JOBS[job.id] = job
        for old in list(_JOBS)[:-_MAX_KEPT]:
            _JOBS.pop(old, None)
            shutil.rmtree(Path(folder) / old, ignore_errors=True)
    inc = list(include) if include is not None else None

    def work() -> None:
        def progress(stage: str, frac: float) -> None:
            job.stage, job.fraction = stage, float(frac)

        try:
            out = Path(folder) / job.id
            name = bundle_name(study_name, result)
            paths = write_bundle(result, panel, None, out / "bundle", study_name=study_name, title=title, note=note,
                                 include=inc, progress=progress, horizon=horizon,
                                 zip_path=out / "zip" / f"{name}.zip", sweep=sweep)
            job.paths = paths
            job.thumbnails = page_thumbnails(paths.folder / "report.pdf", paths.folder / "charts")
            job.status, job.stage, job.fraction = "done", "done", 1.0
        except ValueSiftError as err:
            job.status, job.error = "failed", str(err)
        except Exception as err:  # never a traceback in the page; the log keeps it
            log.exception("bundle build crashed")
            job.status = "failed"
            job.error = f"The bundle could not be built ({type(err).__name__}). The log has the details."

    threading.Thread(target=work, name=f"export-{job.id}", daemon=True).start()
    return job


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
        from PIL import Image

        for p in sorted(charts.glob("*.png"))[:limit]:
            im = Image.open(p)
            im.thumbnail((240, 135))
            buf = io.BytesIO()
            im.save(buf, format="PNG")
            pngs.append(buf.getvalue())
    return ["data:image/png;base64," + base64.b64encode(b).decode("ascii") for b in pngs]
