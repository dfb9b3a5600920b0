"""The Data page's upload route: a file's bytes straight from the browser, streamed to disk, then read.

The framework's own upload component sends a file base64-encoded inside a JSON
callback body, which costs about three times the file in the server's memory
before intake starts.  The Data page's script (``assets/upload.js``) instead
sends each dropped file as the raw body of ``POST /_valuesift/upload``; the
body is copied to a temporary file in the workspace in 1 MB pieces and intake
reads that file, letting its bytes go once the cells are split, so the server
holds the file at most once and not while the table is built.

Every check of the dashboard applies: the Host names, the access token and the
browser session (all ``before_request``).  The route also needs the header
``X-ValueSift-Upload: 1`` -- a page of another site cannot add a custom header
without the server's consent (no cross-origin permission is ever given), so it
cannot upload into a session -- and an ``Origin``, when the browser sends one,
naming this server.  The answer is JSON: ``{"name", "ok", "id", "message",
"known"}``; the Data page words it.  The upload is admitted against the same
memory budget as every other upload (:class:`valuesift.app.services.UploadBudget`).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Any, get_args
from urllib.parse import unquote, urlsplit

import flask

from valuesift.app.services import AppState
from valuesift.core.choices import FileKind
from valuesift.core.errors import ValueSiftError

__all__ = ["UPLOAD_PATH", "UPLOAD_HEADER", "install_upload_route", "read_body_to_file"]

#: where the Data page's script sends each file
UPLOAD_PATH = "/_valuesift/upload"
#: the header a same-origin script adds (a cross-site page cannot without the server's consent)
UPLOAD_HEADER = "X-ValueSift-Upload"
_CHUNK = 1 << 20
_KINDS = frozenset(get_args(FileKind))


def _answer(name: str, ok: bool, message: str | None = None, *, status: int = 200, dataset_id: str | None = None,
            known: str | None = None) -> flask.Response:
    resp = flask.jsonify({"name": name, "ok": ok, "id": dataset_id, "message": message, "known": known})
    resp.status_code = status
    resp.headers["Cache-Control"] = "no-store"
    return resp


def read_body_to_file(stream: Any, folder: Path, size: int) -> Path:
    """Copy ``size`` bytes of a request body to a temporary file in ``folder`` (1 MB at a time); its path.

    ValueError when the body ends early (a dropped connection) -- the partial file is removed.
    """
    fd, tmp = tempfile.mkstemp(dir=folder, prefix=f".tmp-{os.getpid()}-", suffix=".upload")
    path = Path(tmp)
    try:
        left = size
        with os.fdopen(fd, "wb") as fh:
            while left > 0:
                piece = stream.read(min(_CHUNK, left))
                if not piece:
                    raise ValueError("the upload ended before the whole file arrived")
                fh.write(piece)
                left -= len(piece)
        return path
    except BaseException:
        path.unlink(missing_ok=True)
        raise


def _same_origin(req: flask.Request) -> bool:
    origin = req.headers.get("Origin")
    if not origin:              # not sent by every browser for same-origin requests
        return True
    return urlsplit(origin).netloc.lower() == (req.headers.get("Host") or "").strip().lower()


def install_upload_route(server: flask.Flask, st: AppState) -> None:
    """Add ``POST /_valuesift/upload`` to the dashboard's server."""

    @server.post(UPLOAD_PATH)
    def _upload() -> flask.Response:
        req = flask.request
        name = unquote(req.headers.get("X-ValueSift-Name") or "upload")[:255] or "upload"
        if req.headers.get(UPLOAD_HEADER) != "1" or not _same_origin(req):
            return _answer(name, False, "Uploads are accepted only from the dashboard's own Data page.", status=403)
        kind = (req.headers.get("X-ValueSift-Kind") or "").strip() or None
        if kind is not None and kind not in _KINDS:
            return _answer(name, False, f"{name}: the kind of file {kind!r} is not one the dashboard knows.",
                           status=400)
        size = req.content_length
        if size is None:
            return _answer(name, False, f"{name}: the upload did not say how large it is; drop the file again.",
                           status=411)
        if size > st.max_upload_bytes:
            return _answer(name, False, f"{name}: the file has {size:,} bytes, above the limit of "
                                        f"{st.max_upload_bytes:,}. Split the file, or start the server with a "
                                        "larger --max-upload-mb.", status=413)
        try:
            cost = st.uploads.admit(size)       # memory for reading it, against the server's budget
        except ValueSiftError as err:
            return _answer(name, False, f"{name}: {err}", status=503)
        path: Path | None = None
        try:
            try:
                path = read_body_to_file(req.stream, st.workspace.root / "raw", size)
            except (ValueError, OSError):
                return _answer(name, False, f"{name}: the upload arrived incomplete; please drop the file again.",
                               status=400)
            rec, known = st.read_upload(name, path, kind)   # read from the file: the bytes are held once
            if rec.ok:
                return _answer(name, True, dataset_id=rec.id, known=known)
            return _answer(name, False, rec.error or f"{name} could not be read.")
        finally:
            if path is not None:
                path.unlink(missing_ok=True)
            st.uploads.release(cost)
