"""The intake account (every count, first location, note and parsed value) equals the committed snapshot.

The snapshot (``intake_reports.json``) was written by ``report_snapshot.py``
with the intake code as it stood before issue 15's speed work, so this test
pins that the faster intake keeps the cell-by-cell account of the demo files,
the awkward corpus and the hostile corpus unchanged (reference: the earlier
code's own output, committed before the change).
"""

from __future__ import annotations

import json

import pytest

from tests.core.intake.report_snapshot import SNAPSHOT, snapshot

OLD = json.loads(SNAPSHOT.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def new() -> dict:
    return snapshot()


def test_same_cases(new: dict) -> None:
    assert sorted(new) == sorted(OLD)


@pytest.mark.parametrize("case", sorted(OLD))
def test_case_unchanged(case: str, new: dict) -> None:
    assert new[case] == OLD[case]
