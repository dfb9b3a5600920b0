"""Several signals side by side on the same universe, dates and settings: :func:`run_compare`."""

from valuesift.core.compare.run import COMPARE_COLUMNS, CompareResult, compare_results, run_compare, signal_correlation

__all__ = ["COMPARE_COLUMNS", "CompareResult", "compare_results", "run_compare", "signal_correlation"]
