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
import math
import os
import re
import secrets
import sys
import threading
import time
from pathlib import Path
from typing import Any, Iterable

import dash
import flask
import waitress  # called as waitress.serve, so a test can stand in for the real server

# Dash offers no public way to reset its process-wide callback registry, and the framework supports one
# app per process; create_app clears it so that a second app in the same process (the tests) gets the
# pages' callbacks once. The one private name of another library the project uses (tests/architecture.py).
from dash import _callback
from valuesift import app as _app_pkg
from valuesift.app import shell
from valuesift.app.services import (
    SESSION_COOKIE,
    AppState,
    normalise_selection,
    selection_key,
)
from valuesift.app.settings import config_from_settings
from valuesift.app.upload_route import install_upload_route
from valuesift.app.workspace import Workspace, user_data_dir, warm_intake
from valuesift.core.demo import write_demo
from valuesift.core.demo.write import INDEX_COLUMN
from valuesift.core.errors import ConfigError
from valuesift.core.intake import ReadOptions

__all__ = ["create_app", "serve", "load_demo", "DEFAULT_WORKSPACE", "TOKEN_COOKIE", "TOKEN_ENV", "assets_folder",
           "user_data_dir", "allowed_hosts", "token_strength_bits", "read_token", "MIN_TOKEN_BITS"]

log = logging.getLogger("valuesift.app")

#: The persistent workspace of ``serve`` and ``serve --demo`` (``--workspace`` overrides it).
DEFAULT_WORKSPACE = user_data_dir() / "workspace"
TOKEN_COOKIE = "valuesift_token"
#: environment variable that may hold the access token (never the command line: the process list shows it)
TOKEN_ENV = "VALUESIFT_TOKEN"
#: the least estimated randomness of an access token, in bits
MIN_TOKEN_BITS = 128
#: wrong tokens from one address before it has to wait; the wait doubles with each further failure
_FREE_FAILURES = 5
_MAX_LOCK_S = 300.0
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

    folder = Path(folder) if folder is not None else ws.root / "demo-files"
    known = {r.id for r in ws.records()}
    done = ws.get_setting("demo_ids", None)
    if isinstance(done, list) and done and all(i in known for i in done):
        # Added once: a restart keeps the user's own selection and choices.
        if not (ws.get_setting("selection", {}) or {}).get("ids"):
            ws.set_setting("selection", {"ids": done, "splits": []})
        return list(done)
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
    ws.set_setting("demo_ids", ids)
    return ids


def _is_loopback(host: str) -> bool:
    if host in ("localhost",):
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def token_strength_bits(token: str) -> float:
    """An estimate of a token's randomness: its length times log2 of the size of the character classes it uses.

    A token of one repeated character, or with fewer than 12 distinct
    characters, counts as 0 (it is not random whatever its length).
    """
    if len(set(token)) < 12:
        return 0.0
    pool = 0
    pool += 10 if any(c.isdigit() for c in token) else 0
    pool += 26 if any(c.islower() for c in token) else 0
    pool += 26 if any(c.isupper() for c in token) else 0
    pool += 32 if any(not c.isalnum() for c in token) else 0
    if all(c in "0123456789abcdef" for c in token) or all(c in "0123456789ABCDEF" for c in token):
        pool = 16
    return len(token) * math.log2(max(pool, 2))


def read_token(token_file: str | None = None, *, environ: dict[str, str] | None = None) -> str | None:
    """The user's access token from ``token_file`` (its first line) or the ``VALUESIFT_TOKEN`` variable; None if neither.

    Raises ConfigError when the file cannot be read or is readable by other users.
    """

    env = os.environ if environ is None else environ
    if token_file:
        path = Path(token_file).expanduser()
        try:
            st = path.stat()
            text = path.read_text(encoding="utf-8")
        except OSError as err:
            raise ConfigError(f"The token file {str(path)!r} cannot be read.",
                              hint="Check the path, or put the token in the VALUESIFT_TOKEN environment variable.") from err
        if st.st_mode & 0o077:
            raise ConfigError(f"The token file {str(path)!r} can be read by other users of this computer.",
                              hint=f"Make it private with: chmod 600 {path}")
        first = text.strip().splitlines()
        return first[0].strip() if first else ""
    value = env.get(TOKEN_ENV)
    return value.strip() if value is not None else None


def _check_token(token: str) -> None:

    if token_strength_bits(token) < MIN_TOKEN_BITS:
        raise ConfigError(f"The access token is too easy to guess (about {token_strength_bits(token):.0f} bits of "
                          f"randomness; at least {MIN_TOKEN_BITS} are required).",
                          hint="Leave the token out to have one generated, or make one with: "
                               "python -c \"import secrets; print(secrets.token_urlsafe(32))\"")


class _Throttle:
    """Wrong tokens from one address: the first few are free, then each needs a wait that doubles (up to 5 minutes)."""

    def __init__(self) -> None:
        self._fails: dict[str, tuple[int, float]] = {}
        self._lock = threading.Lock()

    def wait_left(self, addr: str) -> float:
        with self._lock:
            n, until = self._fails.get(addr, (0, 0.0))
        return max(0.0, until - time.monotonic())

    def failed(self, addr: str) -> None:
        with self._lock:
            n, _ = self._fails.get(addr, (0, 0.0))
            n += 1
            wait = 0.0 if n <= _FREE_FAILURES else min(_MAX_LOCK_S, 2.0 ** (n - _FREE_FAILURES))
            self._fails[addr] = (n, time.monotonic() + wait)
            if len(self._fails) > 10_000:          # bounded: forget the oldest addresses
                for k in list(self._fails)[:1000]:
                    self._fails.pop(k, None)

    def succeeded(self, addr: str) -> None:
        with self._lock:
            self._fails.pop(addr, None)


def _install_token_guard(server: flask.Flask, token: str) -> None:
    """Every request needs the token: once as ``?token=``, then from an http-only cookie.

    Wrong tokens are counted per client address: after a few, that address
    must wait (doubling up to five minutes) before the next attempt is even
    compared; a browser that already holds the right cookie is never slowed.
    """
    throttle = _Throttle()
    server.extensions["valuesift_throttle"] = throttle

    @server.before_request
    def _guard() -> Any:
        req = flask.request
        addr = req.remote_addr or "?"
        cookie = req.cookies.get(TOKEN_COOKIE, "")
        if cookie and hmac.compare_digest(cookie.encode(), token.encode()):
            return None
        given = req.args.get("token")
        if given is None and not cookie:
            return flask.Response("Access token required: open the address printed when the server started.",
                                  status=403, mimetype="text/plain")
        left = throttle.wait_left(addr)
        if left > 0:
            resp = flask.Response(f"Too many wrong access tokens from this computer. Wait {math.ceil(left)} seconds, "
                                  "then open the address printed when the server started.", status=429,
                                  mimetype="text/plain")
            resp.headers["Retry-After"] = str(math.ceil(left))
            return resp
        if given is not None and hmac.compare_digest(given.encode(), token.encode()):
            throttle.succeeded(addr)
            resp = flask.redirect(req.path, code=303)
            resp.set_cookie(TOKEN_COOKIE, token, httponly=True, samesite="Strict")
            return resp
        throttle.failed(addr)
        return flask.Response("Wrong access token: open the address printed when the server started.",
                              status=403, mimetype="text/plain")


def allowed_hosts(host: str, port: int, names: Iterable[str] = ()) -> frozenset[str]:
    """The Host header values the server answers to (lower case, with the port).

    Always the loopback names ``127.0.0.1``, ``localhost`` and ``[::1]``; when
    bound to a specific non-loopback address, that address too; and any
    ``names`` given (``--public-name``) for a remote bind.  Anything else is
    refused, so a page of another site cannot reach the server by making its
    own name resolve to this computer (DNS rebinding).
    """
    hosts = {"127.0.0.1", "localhost", "[::1]"}
    if host not in ("0.0.0.0", "::", ""):
        hosts.add(f"[{host}]" if ":" in host else host)
    hosts.update(str(n).strip().lower() for n in names if str(n).strip())
    return frozenset(f"{h.lower()}:{port}" for h in hosts)


def _install_host_check(server: flask.Flask, hosts: frozenset[str]) -> None:
    @server.before_request
    def _host() -> Any:
        given = (flask.request.headers.get("Host") or "").strip().lower()
        if given in hosts:
            return None
        return flask.Response("This address is not one the dashboard answers to. Open the address printed when the "
                              "server started (for example http://127.0.0.1 with its port).", status=421,
                              mimetype="text/plain")


_SESSION_RE = re.compile(r"^[0-9a-f]{32}$")


def _install_sessions(server: flask.Flask) -> None:
    """Give every browser a random session id (an http-only cookie) that scopes its datasets."""

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
               max_upload_mb: float = 200.0, token: str | None = None,
               hosts: frozenset[str] | None = None) -> dash.Dash:
    """The dashboard on one workspace folder.

    Parameters
    ----------
    workspace : path, optional
        Folder for datasets and caches (default :data:`DEFAULT_WORKSPACE`, in the user's data folder).
    demo : bool
        Load the invented demo universe into the workspace and select it.
    dev : bool
        Dash's debug tools (never in normal use).
    max_upload_mb : float
        Largest accepted upload, in megabytes (checked by the browser, by
        Flask's ``MAX_CONTENT_LENGTH`` and by intake).
    token : str, optional
        Require this access token on every request.
    hosts : frozenset of str, optional
        Accept only these ``Host`` header values (see :func:`allowed_hosts`); ``serve`` always sets them.
    """

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
    if hosts is not None:
        _install_host_check(server, hosts)
    if token:
        _install_token_guard(server, token)
    _install_sessions(server)
    install_upload_route(server, st)

    @server.before_request
    def _root() -> Any:
        if flask.request.path == "/":
            sel = ws.get_setting(selection_key(flask.g.get("vs_session")), None) or ws.get_setting("selection", {}) or {}
            return flask.redirect("/study" if sel.get("ids") else "/data", code=302)
        return None

    icon = assets_folder() / "favicon.ico"

    @server.before_request
    def _icon() -> Any:
        # Our own icon wherever a browser asks for one (the framework's /_favicon.ico serves its stock logo).
        if flask.request.path in ("/favicon.ico", "/_favicon.ico"):
            return flask.send_file(icon, mimetype="image/x-icon", max_age=3600)
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

    sel = normalise_selection(st.workspace.get_setting("selection", {}))
    try:
        st.start_study(sel, config_from_settings({}))
    except Exception:  # pragma: no cover - warming is only a convenience
        log.debug("warm-up study not started", exc_info=True)


def serve(host: str = "127.0.0.1", port: int = 8750, demo: bool = False, workspace: str | None = None,
          dev: bool = False, allow_remote: bool = False, token: str | None = None, *,
          threads: int = 6, max_upload_mb: float = 200.0, public_names: Iterable[str] = ()) -> int:
    """Start the dashboard and block until interrupted; returns the exit code.

    A non-loopback ``host`` needs ``allow_remote=True``; it prints a warning
    and requires an access token on every request (``token``, or one of 256
    bits made with :mod:`secrets`); a given token needs at least 128 bits of
    estimated randomness.  ``dev`` (the framework's debugger) is refused on
    any non-loopback address.  Only the Host names of :func:`allowed_hosts`
    are answered.
    """

    remote = not _is_loopback(host)
    if remote and not allow_remote:
        raise ConfigError(f"Listening on {host!r} would expose the dashboard to other computers.",
                          hint="Use the default 127.0.0.1, or add --allow-remote (a token is then required).")
    if remote and dev:
        raise ConfigError(f"Developer mode (--dev) serves the framework's debugger, which must never be reachable "
                          f"from other computers; it cannot be used with --host {host}.",
                          hint="Use --dev only with the default 127.0.0.1, or leave --dev out.")
    if token is not None:
        _check_token(token)
    if remote:
        token = token or secrets.token_urlsafe(32)
        print(f"WARNING: listening on {host}, reachable from other computers. Anyone with the token "
              "can see and change your data. Use it only on a network you trust.", file=sys.stderr)
    # One persistent workspace for serve and serve --demo: uploads, choices and sweeps survive a restart.
    ws_path = Path(workspace).expanduser() if workspace else DEFAULT_WORKSPACE
    app = create_app(ws_path, demo=demo, dev=dev, max_upload_mb=max_upload_mb, token=token,
                     hosts=allowed_hosts(host, port, public_names))
    # the readers' one-time set-up now, not inside the first upload's memory; in a thread of its own that then
    # ends, so that the memory it set up is left to the threads that serve the uploads
    warm = threading.Thread(target=warm_intake, name="intake warm-up")
    warm.start()
    warm.join()
    shown = "127.0.0.1" if host in ("0.0.0.0", "::") else host
    start = "/study" if demo else "/"
    url = f"http://{shown}:{port}{start}" + (f"?token={token}" if token else "")
    print(f"ValueSift dashboard (workspace {ws_path}): open {url}", flush=True)
    print("Press Ctrl+C to stop.", flush=True)
    if dev:
        app.run(host=host, port=port, debug=True)
        return 0

    waitress.serve(app.server, host=host, port=port, threads=threads, ident="ValueSift",
                   max_request_body_size=server_body_limit(app))
    return 0


def server_body_limit(app: dash.Dash) -> int:
    """The largest request body waitress accepts (the same as Flask's limit)."""
    return int(app.server.config["MAX_CONTENT_LENGTH"])
