"""Stability of a signal's reward: by sub-period, by market regime and by sector."""
