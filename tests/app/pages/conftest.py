"""Fixtures of the sweep tests in this folder (defined once in tests/sweep_support.py)."""

from tests.sweep_support import client, panel  # noqa: F401  (pytest fixtures)
