"""Quantile portfolios of a signal: membership (assign.py), mean returns (means.py), spread (spread.py), turnover (turnover.py)."""
