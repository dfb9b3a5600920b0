"""The research-use caution shown on every page and printed by the command line."""

from __future__ import annotations

__all__ = ["CAUTION"]

CAUTION = (
    "Research and information only, not investment advice. Past relations between a "
    "signal and returns may not persist. Check your data and follow your firm's "
    "compliance rules and local regulation."
)
