"""Waiting for a dashboard study job in tests (a generous limit; never a speed check)."""

from __future__ import annotations

import time
from typing import Any

import pytest

__all__ = ["wait_for_job"]


def wait_for_job(st: Any, key: str, limit: float = 180.0) -> Any:
    """Poll ``st.job(key)`` until it leaves the queued/running states; fail after ``limit`` seconds."""
    end = time.monotonic() + limit
    while time.monotonic() < end:
        job = st.job(key)
        if job is None or job.status not in ("queued", "running"):
            return job
        time.sleep(0.05)
    pytest.fail("the study job did not finish")
