"""Helpers of the robustness suite: start ``valuesift serve`` on a free 127.0.0.1 port and talk to it as the browser does.

The browser reaches every callback with a JSON POST to ``/_dash-update-component``
(Dash's callback protocol); :class:`DashClient` sends the same requests, with
its own cookie jar (one client = one browser session).  Only processes started
here are stopped, by their pid.
"""

from __future__ import annotations

import base64
import hashlib
import os
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path
from typing import Any, Iterator

import requests

__all__ = ["free_port", "Server", "DashClient", "workspace_hashes", "data_url", "check_workspace"]

ROOT = Path(__file__).resolve().parents[2]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


class Server:
    """``python -m valuesift.app.cli serve`` in a subprocess on 127.0.0.1 (a context manager; always stopped)."""

    def __init__(self, workspace: Path, *args: str, port: int | None = None, start_timeout: float = 120.0,
                 env: dict[str, str] | None = None, preexec_fn: Any = None) -> None:
        self.workspace = Path(workspace)
        self.env = env
        self.preexec_fn = preexec_fn
        self.port = port or free_port()
        self.base = f"http://127.0.0.1:{self.port}"
        self.args = args
        self.start_timeout = start_timeout
        self.proc: subprocess.Popen[bytes] | None = None
        self.log_path = self.workspace.parent / f"server-{self.port}-{int(time.time() * 1000)}.log"

    def start(self) -> "Server":
        self.workspace.mkdir(parents=True, exist_ok=True)
        log = open(self.log_path, "wb")
        self.proc = subprocess.Popen([sys.executable, "-m", "valuesift.app.cli", "serve", "--port", str(self.port),
                                      "--workspace", str(self.workspace), *self.args],
                                     cwd=ROOT, stdout=log, stderr=subprocess.STDOUT,
                                     env=None if self.env is None else {**os.environ, **self.env},
                                     preexec_fn=self.preexec_fn)
        end = time.monotonic() + self.start_timeout
        while time.monotonic() < end:
            if self.proc.poll() is not None:
                raise RuntimeError("the server stopped at start: " + self.log())
            try:
                requests.get(self.base + "/_dash-layout", timeout=5)
                return self
            except requests.RequestException:
                time.sleep(0.25)
        self.stop()
        raise RuntimeError("the server did not start in time: " + self.log())

    def peak_rss_mb(self) -> float:
        """The server process's peak resident memory so far (VmHWM of /proc), in MB."""
        assert self.proc is not None
        for line in Path(f"/proc/{self.proc.pid}/status").read_text().splitlines():
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024
        raise RuntimeError("no VmHWM line")

    def threads(self) -> int:
        """The number of threads of the server process now (from /proc)."""
        assert self.proc is not None
        for line in Path(f"/proc/{self.proc.pid}/status").read_text().splitlines():
            if line.startswith("Threads:"):
                return int(line.split()[1])
        raise RuntimeError("no Threads line")

    def log(self) -> str:
        try:
            return self.log_path.read_text(errors="replace")
        except OSError:
            return ""

    def kill(self) -> None:
        """SIGKILL (no clean-up of any kind in the server)."""
        if self.proc is not None and self.proc.poll() is None:
            os.kill(self.proc.pid, signal.SIGKILL)
            self.proc.wait(30)

    def stop(self) -> None:
        if self.proc is not None and self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(20)
            except subprocess.TimeoutExpired:
                self.kill()

    def __enter__(self) -> "Server":
        return self.start()

    def __exit__(self, *_: object) -> None:
        self.stop()


def _outputs(spec: str) -> list[dict[str, str]]:
    parts = spec[2:-2].split("...") if spec.startswith("..") else [spec]
    out = []
    for p in parts:
        base = p.split("@", 1)[0]
        cid, prop = base.rsplit(".", 1)
        out.append({"id": cid, "property": p[len(cid) + 1:]})
    return out


class DashClient:
    """One simulated browser session (its own cookies) calling the dashboard's callbacks."""

    def __init__(self, base: str, timeout: float = 300.0) -> None:
        self.base = base
        self.http = requests.Session()
        self.timeout = timeout
        self.http.get(base + "/data", timeout=timeout).raise_for_status()   # the session cookie is set here
        self.deps = self.http.get(base + "/_dash-dependencies", timeout=timeout).json()

    def spec(self, inputs: list[str], output_has: str | None = None) -> dict[str, Any]:
        for c in self.deps:
            ins = [f"{i['id']}.{i['property']}" for i in c["inputs"]]
            if ins == inputs and (output_has is None or output_has in c["output"]):
                return c
        raise LookupError(f"no callback with inputs {inputs} (output containing {output_has!r})")

    def call(self, inputs: dict[str, Any], states: dict[str, Any] | None = None, *,
             output_has: str | None = None) -> requests.Response:
        """POST one callback the way the browser does; returns the raw response."""
        c = self.spec(list(inputs), output_has)
        states = states or {}
        body = {
            "output": c["output"],
            "outputs": _outputs(c["output"]) if c["output"].startswith("..") else _outputs(c["output"])[0],
            "inputs": [{"id": k.rsplit(".", 1)[0], "property": k.rsplit(".", 1)[1], "value": v} for k, v in inputs.items()],
            "changedPropIds": [list(inputs)[0]],
            "state": [{"id": f"{s['id']}", "property": s["property"], "value": states.get(f"{s['id']}.{s['property']}")}
                      for s in c["state"]],
        }
        return self.http.post(self.base + "/_dash-update-component", json=body, timeout=self.timeout)

    @staticmethod
    def values(resp: requests.Response) -> dict[str, Any]:
        """``{"id.prop": value}`` of a callback response (empty for 204 'no update')."""
        if resp.status_code == 204:
            return {}
        resp.raise_for_status()
        out: dict[str, Any] = {}
        for cid, props in resp.json().get("response", {}).items():
            for prop, val in props.items():
                out[f"{cid}.{prop}"] = val
        return out

    def upload(self, files: list[tuple[str, bytes]], sel: Any = None, version: int = 0) -> requests.Response:
        contents = [data_url(raw) for _, raw in files]
        return self.call({"data-upload.contents": contents},
                         {"data-upload.filename": [n for n, _ in files], "vs-selection.data": sel,
                          "data-version.data": version})


    def upload_raw(self, name: str, raw: bytes, kind: str | None = None, *,
                   headers: dict[str, str] | None = None) -> requests.Response:
        """Send one file the way the Data page's script does: the raw bytes as the body of the upload route."""
        from urllib.parse import quote

        head = {"X-ValueSift-Upload": "1", "X-ValueSift-Name": quote(name), "X-ValueSift-Kind": kind or "",
                "Content-Type": "application/octet-stream", **(headers or {})}
        return self.http.post(self.base + "/_valuesift/upload", data=raw, headers=head, timeout=self.timeout)


def data_url(raw: bytes, mime: str = "text/csv") -> str:
    return f"data:{mime};base64," + base64.b64encode(raw).decode()


def _walk(root: Path) -> Iterator[Path]:
    for p in sorted(root.rglob("*")):
        if p.is_file():
            yield p


def workspace_hashes(root: Path) -> dict[str, str]:
    """sha256 of every file under the workspace, by relative path (server logs live outside it)."""
    return {str(p.relative_to(root)): hashlib.sha256(p.read_bytes()).hexdigest() for p in _walk(root)}


def check_workspace(root: Path) -> list[dict[str, Any]]:
    """Assert the catalogue is consistent with the files; returns the catalogue rows."""
    import sqlite3

    import pandas as pd

    con = sqlite3.connect(root / "catalogue.sqlite3")
    con.row_factory = sqlite3.Row
    try:
        assert con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        rows = [dict(r) for r in con.execute("SELECT * FROM datasets").fetchall()]
    finally:
        con.close()
    for r in rows:
        raw = root / "raw" / f"{r['sha256']}.bin"
        assert raw.exists(), r["name"]
        assert hashlib.sha256(raw.read_bytes()).hexdigest() == r["sha256"], r["name"]
        assert raw.stat().st_size == r["size"]
        if r["status"] == "ok":
            data = root / "data" / f"{r['id']}.parquet"
            assert data.exists(), r["name"]
            pd.read_parquet(data)                      # complete (a torn Parquet file does not read)
    return rows
