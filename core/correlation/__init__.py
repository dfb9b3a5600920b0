"""Correlation of a signal with later returns: average ranks, row-wise Pearson and Spearman, information coefficients (ic.py)."""
