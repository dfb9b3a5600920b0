"""Build and serve the ValueSift dashboard.

``create_app`` is the factory (tests use it directly); ``serve`` is what
``valuesift serve`` calls: it binds to 127.0.0.1 unless told otherwise,
requires an access token for any other address, serves through waitress
with several threads and never turns on Dash's debug tools unless ``dev``.
"""

from __future__ import annotations

import hmac
import ipaddress
import logging
import re
import secrets
import sys
import tempfile
from pathlib import Path
from typing import Any

import dash
import flask

from valuesift import app as _app_pkg
from valuesift.app import shell
from valuesift.app.services import AppState, selection_key
from valuesift.app.workspace import Workspace

__all__ = ["create_app", "serve", "load_demo", "DEFAULT_WORKSPACE", "TOKEN_COOKIE", "assets_folder"]

log = logging.getLogger("valuesift.app")

DEFAULT_WORKSPACE = Path("~/.valuesift/workspace")
TOKEN_COOKIE = "valuesift_token"
_APP_DIR = Path(_app_pkg.__file__).parent


def assets_folder() -> Path:
    """``app/assets`` when installed as a package, else the repository's top-level ``assets/``."""
    installed = _APP_DIR / "assets"
    return installed if installed.is_dir() else _APP_DIR.parent / "assets"


def load_demo(ws: Workspace, folder: Path | None = None) -> list[str]:
    """Write the invented demo universe (once) and catalogue its files; returns the dataset ids.

    The demo price file carries a market index column among the securities on
    purpose; the demo reads it with that column excluded so the first study is
    clean (the Data page shows the choice and lets the user change it).
    """
    from valuesift.core.demo import write_demo
    from valuesift.core.demo.write import INDEX_COLUMN
    from valuesift.core.intake import ReadOptions

    folder = Path(folder) if folder is not None else ws.root / "demo-files"
    if not (folder / "prices.csv").exists():
        write_demo(folder)
    ids = []
    for path in sorted(folder.glob("*.csv")):
        opts = ReadOptions(exclude_columns=(INDEX_COLUMN,)) if path.name == "prices.csv" else ReadOptions()
        rec = ws.add_upload(path.name, path.read_bytes(), opts, demo=True)
        if rec.ok:
            ids.append(rec.id)
        else:  # pragma: no cover - the demo files are generated to be readable
            log.warning("demo file %s could not be read: %s", path.name, rec.error)
    ws.set_setting("selection", {"ids": ids, "splits": []})
    return ids


def _is_loopback(host: str) -> bool:
    if host in ("localhost",):
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def _install_token_guard(server: flask.Flask, token: str) -> None:
    """Every request needs the token: once as ``?token=``, then from an http-only cookie."""

    @server.before_request
    def _guard() -> Any:
        req = flask.request
        given = req.args.get("token")
        if given is not None and hmac.compare_digest(given.encode(), token.encode()):
            resp = flask.redirect(req.path, code=303)
            resp.set_cookie(TOKEN_COOKIE, token, httponly=True, samesite="Strict")
            return resp
        cookie = req.cookies.get(TOKEN_COOKIE, "")
        if cookie and hmac.compare_digest(cookie.encode(), token.encode()):
            return None
        return flask.Response("Access token required: open the address printed when the server started.",
                              status=403, mimetype="text/plain")


_SESSION_RE = re.compile(r"^[0-9a-f]{32}$")


def _install_sessions(server: flask.Flask) -> None:
    """Give every browser a random session id (an http-only cookie) that scopes its datasets."""
    from valuesift.app.services import SESSION_COOKIE

    @server.before_request
    def _session() -> None:
        sid = flask.request.cookies.get(SESSION_COOKIE, "")
        if not _SESSION_RE.match(sid):
            sid = secrets.token_hex(16)
            flask.g.vs_new_session = True
        flask.g.vs_session = sid

    @server.after_request
    def _session_cookie(resp: flask.Response) -> flask.Response:
        if flask.g.get("vs_new_session"):
            resp.set_cookie(SESSION_COOKIE, flask.g.vs_session, httponly=True, samesite="Strict",
                            max_age=400 * 24 * 3600)
        return resp


def create_app(workspace: str | Path | None = None, demo: bool = False, *, dev: bool = False,
               max_upload_mb: float = 200.0, token: str | None = None) -> dash.Dash:
    """The dashboard on one workspace folder.

    Parameters
    ----------
    workspace : path, optional
        Folder for datasets and caches (default ``~/.valuesift/workspace``).
    demo : bool
        Load the invented demo universe into the workspace and select it.
    dev : bool
        Dash's debug tools (never in normal use).
    max_upload_mb : float
        Largest accepted upload, in megabytes (checked by the browser, by
        Flask's ``MAX_CONTENT_LENGTH`` and by intake).
    token : str, optional
        Require this access token on every request.
    """
    from dash import _callback

    ws = Workspace(workspace if workspace is not None else DEFAULT_WORKSPACE)
    if demo:
        load_demo(ws)
    # Page modules are executed by Dash for each app; drop callbacks left by an earlier import.
    _callback.GLOBAL_CALLBACK_LIST.clear()
    _callback.GLOBAL_CALLBACK_MAP.clear()
    server = flask.Flask("valuesift", root_path=str(_APP_DIR))
    max_bytes = int(max_upload_mb * 1024 * 1024)
    # Uploads travel base64-encoded inside a JSON callback body (4/3 larger, plus framing).
    server.config["MAX_CONTENT_LENGTH"] = int(max_bytes * 4 / 3) + 256 * 1024
    app = dash.Dash(
        "valuesift.app",
        server=server,
        use_pages=True,
        pages_folder=str(_APP_DIR / "pages"),
        assets_folder=str(assets_folder()),
        title="ValueSift",
        suppress_callback_exceptions=True,
        update_title=None,
    )
    st = AppState(ws, server, demo=demo, max_upload_bytes=max_bytes)
    server.extensions["valuesift"] = st
    app.layout = shell.layout
    shell.register_shell_callbacks(app)
    if token:
        _install_token_guard(server, token)
    _install_sessions(server)

    @server.before_request
    def _root() -> Any:
        if flask.request.path == "/":
            sel = ws.get_setting(selection_key(flask.g.get("vs_session")), None) or ws.get_setting("selection", {}) or {}
            return flask.redirect("/study" if sel.get("ids") else "/data", code=302)
        return None

    @server.after_request
    def _headers(resp: flask.Response) -> flask.Response:
        resp.headers.setdefault("X-Content-Type-Options", "nosniff")
        resp.headers.setdefault("X-Frame-Options", "DENY")
        resp.headers.setdefault("Referrer-Policy", "no-referrer")
        return resp

    # Take over the callbacks of the page modules now, so a second app in the same process gets its own.
    with server.test_request_context("/"):
        app._setup_server()
    app.config.suppress_callback_exceptions = True
    server.config["VALUESIFT_DEV"] = bool(dev)
    if demo:
        _warm(st)
    return app


def _warm(st: AppState) -> None:
    """Start the default study in the background so the demo's Study page is ready at once."""
    from valuesift.app.settings import config_from_settings
    from valuesift.app.services import normalise_selection

    sel = normalise_selection(st.workspace.get_setting("selection", {}))
    try:
        st.start_study(sel, config_from_settings({}))
    except Exception:  # pragma: no cover - warming is only a convenience
        log.debug("warm-up study not started", exc_info=True)


def serve(host: str = "127.0.0.1", port: int = 8750, demo: bool = False, workspace: str | None = None,
          dev: bool = False, allow_remote: bool = False, token: str | None = None, *,
          threads: int = 6, max_upload_mb: float = 200.0) -> int:
    """Start the dashboard and block until interrupted; returns the exit code.

    A non-loopback ``host`` needs ``allow_remote=True``; it prints a warning
    and requires an access token on every request (``token`` or one made with
    :mod:`secrets`).
    """
    from valuesift.core.errors import ConfigError

    remote = not _is_loopback(host)
    if remote and not allow_remote:
        raise ConfigError(f"Listening on {host!r} would expose the dashboard to other computers.",
                          hint="Use the default 127.0.0.1, or add --allow-remote (a token is then required).")
    if remote:
        token = token or secrets.token_urlsafe(24)
        print(f"WARNING: listening on {host}, reachable from other computers. Anyone with the token "
              "can see and change your data. Use it only on a network you trust.", file=sys.stderr)
    if workspace is None and demo:
        # The demo without a chosen workspace lives in a temporary folder, apart from the user's data.
        ws_path: Path = Path(tempfile.mkdtemp(prefix="valuesift-demo-"))
    else:
        ws_path = Path(workspace).expanduser() if workspace else DEFAULT_WORKSPACE.expanduser()
    app = create_app(ws_path, demo=demo, dev=dev, max_upload_mb=max_upload_mb, token=token)
    shown = "127.0.0.1" if host in ("0.0.0.0", "::") else host
    start = "/study" if demo else "/"
    url = f"http://{shown}:{port}{start}" + (f"?token={token}" if token else "")
    print(f"ValueSift dashboard (workspace {ws_path}): open {url}", flush=True)
    print("Press Ctrl+C to stop.", flush=True)
    if dev:
        app.run(host=host, port=port, debug=True)
        return 0
    from waitress import serve as waitress_serve

    waitress_serve(app.server, host=host, port=port, threads=threads, ident="ValueSift",
                   max_request_body_size=server_body_limit(app))
    return 0


def server_body_limit(app: dash.Dash) -> int:
    """The largest request body waitress accepts (the same as Flask's limit)."""
    return int(app.server.config["MAX_CONTENT_LENGTH"])
