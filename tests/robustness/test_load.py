"""The bounded load test in CI: 20 simulated users for 15 s against ``valuesift serve`` on 127.0.0.1.

The full run (20 users, 60 s) is ``python -m tests.robustness.load --users 20 --seconds 60``;
its figures are in tests/robustness/README_robustness.md.  Latencies are printed, never asserted.
"""

from __future__ import annotations

import json

import pytest

from tests.robustness.load import run_load

pytestmark = pytest.mark.slow


def test_twenty_users_fifteen_seconds(tmp_path) -> None:  # type: ignore[no-untyped-def]
    res = run_load(users=20, seconds=15.0, workspace=tmp_path)
    out = res.summary()
    print("\nload (CI variant):", json.dumps(out))
    assert res.server_errors == 0
    assert not res.client_errors, res.client_errors[:5]
    assert not res.isolation_violations, res.isolation_violations[:5]
    assert getattr(res, "server_log_tracebacks", 0) == 0
    assert res.studies >= 20            # every user finished at least one study (no time limit implied)
