"""How much of a panel holds a usable price: the facts the Data page and the report's coverage reading state."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from valuesift.core.panel import Panel

__all__ = ["price_coverage"]


def price_coverage(panel: Panel) -> pd.Series:
    """Coverage of the price panel.

    Returns
    -------
    Series with ``n_securities``, ``n_dates``, ``share_valid`` (share of security-months
    with a finite, positive price), ``min_names`` and ``max_names`` (names with a valid
    price on the thinnest and the fullest month-end).
    """
    mask = panel.valid_price_mask()
    per = mask.sum(axis=1)
    cells = mask.size
    return pd.Series({
        "n_securities": float(mask.shape[1]),
        "n_dates": float(mask.shape[0]),
        "share_valid": float(np.count_nonzero(mask) / cells) if cells else math.nan,
        "min_names": float(per.min()) if per.size else math.nan,
        "max_names": float(per.max()) if per.size else math.nan,
    })
