"""ValueSift core: intake, signals, forward returns, evaluation, backtest and study.

This package is pure computation over pandas/numpy objects; it never imports
Dash, Flask or Plotly.
"""

from importlib.metadata import PackageNotFoundError, version

__all__ = ["__version__"]

try:
    __version__ = version("valuesift")
except PackageNotFoundError:  # running from a source tree without install
    __version__ = "0.0.0+source"
