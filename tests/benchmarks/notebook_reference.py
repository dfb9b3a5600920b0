"""The idiomatic-pandas reference for the whole-process study: forward returns and rank IC only.

    python tests/benchmarks/notebook_reference.py PRICES.parquet EARNINGS.parquet

What an analyst would write in a notebook: read both wide files, earnings yield
= EPS / price, forward price returns at 1, 3, 6, 12, 24 and 36 months, and per
date the Spearman correlation of the yield with each forward return over the
names that have both (pandas ``rank`` then ``corrwith``).  It prints the mean
rank IC per horizon.  It does none of the study's other work (dividends,
universe rules, winsorising, quantiles, regressions, backtest, inference,
diagnostics, screen, the cell-by-cell intake account, the tables).
"""

from __future__ import annotations

import sys

import pandas as pd

HORIZONS = (1, 3, 6, 12, 24, 36)


def main(prices: str, earnings: str) -> None:
    px = pd.read_parquet(prices).set_index("date")
    eps = pd.read_parquet(earnings).set_index("date")
    sig = eps / px
    for h in HORIZONS:
        fwd = px.shift(-h) / px - 1.0
        both = sig.notna() & fwd.notna()
        ic = sig.where(both).rank(axis=1).corrwith(fwd.where(both).rank(axis=1), axis=1)
        print(f"{h:>3}m mean rank IC {ic.mean():+.4f}")


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
