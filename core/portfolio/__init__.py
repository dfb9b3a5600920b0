"""Portfolios and their performance figures: the overlapping-cohort backtest (backtest.py), Sharpe, drawdown, hit rate (performance.py)."""
