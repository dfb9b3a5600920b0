"""Valuation signals point in time (build.py), the universe per date (universe.py), cleaning and z-scores (clean.py)."""
