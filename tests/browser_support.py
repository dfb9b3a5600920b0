"""Shared support of the browser tests: Debian's chromium, a server on a free loopback port.

The server is the real ``python -m valuesift.app.cli serve`` in a subprocess, bound to
127.0.0.1, and it is always stopped at the end (terminate, then kill).
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.request
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import pytest

__all__ = ["CHROMIUM", "CHROMIUM_ARGS", "ROOT", "ARTIFACTS", "need_browser", "free_port", "running_server"]

CHROMIUM = "/usr/bin/chromium"
#: Flags for headless chromium on a machine with no network but the package registries.
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"]
ROOT = Path(__file__).resolve().parents[1]
ARTIFACTS = ROOT / "test-artifacts"     # screenshots, git-ignored


def need_browser() -> None:
    """Skip without a browser locally; under CI a missing browser is a failure (CI must run these)."""
    problem = None
    if not Path(CHROMIUM).exists():
        problem = f"{CHROMIUM} is not installed (apt-get install chromium)"
    else:
        try:
            import playwright.sync_api  # noqa: F401
        except ImportError:
            problem = "the playwright Python package is not installed"
    if problem:
        if os.environ.get("CI"):
            pytest.fail(f"{problem}; CI must run the browser tests.")
        pytest.skip(f"{problem}; the browser tests run in CI.")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@contextmanager
def running_server(workspace: Path, *, ready_path: str = "/data", extra: Sequence[str] = (),
                   start_timeout: float = 120.0) -> Iterator[str]:
    """``valuesift serve`` on a free 127.0.0.1 port with ``workspace``; yields its base address."""
    port = free_port()
    log_path = workspace / "server.log"
    log = open(log_path, "w")
    proc = subprocess.Popen([sys.executable, "-m", "valuesift.app.cli", "serve", *extra, "--port", str(port),
                             "--workspace", str(workspace)], cwd=ROOT, stdout=log, stderr=subprocess.STDOUT)
    base = f"http://127.0.0.1:{port}"
    try:
        end = time.monotonic() + start_timeout
        while True:
            try:
                urllib.request.urlopen(base + ready_path, timeout=2).read()
                break
            except OSError:
                if proc.poll() is not None or time.monotonic() > end:
                    log.flush()
                    pytest.fail("the server did not start: " + log_path.read_text())
                time.sleep(0.3)
        yield base
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=20)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(timeout=20)
        log.close()


@contextmanager
def browser_page(width: int = 1440, height: int = 1000, timeout_ms: int = 90_000) -> Iterator[Any]:
    """A headless Chromium page of the given size with a default timeout; closed on leaving."""
    from playwright.sync_api import expect, sync_playwright

    expect.set_options(timeout=timeout_ms)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        try:
            page = browser.new_page(viewport={"width": width, "height": height})
            page.set_default_timeout(timeout_ms)
            yield page
        finally:
            browser.close()
