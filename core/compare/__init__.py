"""Several signals side by side on the same universe, dates and settings: :func:`run_compare`."""

from valuesift.core.compare.run import COMPARE_COLUMNS, CompareResult, run_compare, signal_correlation

__all__ = ["COMPARE_COLUMNS", "CompareResult", "run_compare", "signal_correlation"]
