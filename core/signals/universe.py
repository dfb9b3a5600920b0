"""The study universe per date, decided from data valid at that date."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.errors import ConfigError

__all__ = ["base_universe"]


def base_universe(
    valid_price: np.ndarray,
    securities: pd.Index,
    *,
    sectors: pd.Series | None,
    holdings: pd.Series | None,
    rule: str,
    keep_sectors: tuple[str, ...],
    min_history: int,
) -> np.ndarray:
    """Universe membership per date from data valid at that date.

    Notes
    -----
    A name is in on date ``t`` when it has a valid price at ``t``, passes the
    static filter (sector list or holdings), and has at least ``min_history``
    valid month-end prices strictly before ``t``.  Late listers enter when they
    qualify and delisted names leave after their last valid price: nobody is
    dropped for the whole study (no survivorship bias).
    """
    keep = np.ones(len(securities), dtype=bool)
    if rule == "sectors":
        if sectors is None:
            raise ConfigError(
                "Study setting 'universe' is 'sectors' but the panel has no sector data.",
                hint="Load a sectors file or use universe='all'.",
            )
        sec = sectors.reindex(securities)
        keep &= sec.isin(list(keep_sectors)).to_numpy()
    elif rule == "holdings":
        if holdings is None:
            raise ConfigError(
                "Study setting 'universe' is 'holdings' but the panel has no holdings.",
                hint="Load a holdings file or use universe='all'.",
            )
        keep &= np.asarray(securities.isin(list(holdings.index)))
    u = valid_price & keep[None, :]
    if min_history > 0:
        before = np.cumsum(valid_price, axis=0) - valid_price
        u &= before >= min_history
    return np.asarray(u, dtype=bool)
