"""The canonical in-memory panel every study runs on.

A :class:`Panel` is what intake produces from the user's files and what the
study engine consumes.  It is immutable in spirit: a frozen dataclass whose
frames are never modified in place (functions return new objects).

Axes and units
--------------
* ``prices``: month-end ``DatetimeIndex`` (named ``date``, sorted, unique,
  normalised to midnight) x security identifiers (``str`` columns, sorted).
  float64 prices in the security's currency, split-adjusted where the user
  confirmed a suspected split, *not* adjusted for dividends. ``NaN`` means no
  valid price at that month-end (not listed yet, delisted, stale or dropped).
* ``eps``: same axes as ``prices``; trailing-twelve-month earnings per share
  as stamped in the file (the reporting lag is applied by the study, not here).
* ``dividends``: one row per event, columns ``security`` (str), ``ex_date``
  (datetime64), ``amount`` (float64 per share).  Sorted by security, ex_date.
* ``sectors``: ``Series`` security -> sector name (str).
* ``holdings``: ``Series`` security -> weight (float, as given; see the report
  for whether they sum to 1).
* ``benchmark``: ``Series`` on the month-end index: a benchmark price or
  total-return level.
* ``market_cap``: optional, same axes as ``prices``.
* ``signals``: user-supplied signals, name -> frame on the same axes.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.intake.report import IntakeReport

__all__ = ["Panel", "UserSignal", "month_end_index"]


def month_end_index(dates: pd.DatetimeIndex | pd.Series) -> pd.DatetimeIndex:
    """Map dates to their calendar month-end (midnight)."""
    idx = pd.DatetimeIndex(dates)
    return (idx.to_period("M").to_timestamp(how="end")).normalize()


@dataclass(frozen=True)
class UserSignal:
    """A signal supplied by the user as its own file.

    ``values`` sits on the panel's axes; ``higher_is_cheaper`` says which end
    of the signal is the "cheap" end (True for yields, False for ratios such
    as P/E or price-to-book).
    """

    name: str
    values: pd.DataFrame
    higher_is_cheaper: bool = True


@dataclass(frozen=True)
class Panel:
    """Aligned month-end data for one universe.  See the module docstring for axes."""

    prices: pd.DataFrame
    eps: pd.DataFrame | None = None
    dividends: pd.DataFrame | None = None
    sectors: pd.Series | None = None
    holdings: pd.Series | None = None
    benchmark: pd.Series | None = None
    market_cap: pd.DataFrame | None = None
    signals: tuple[UserSignal, ...] = ()
    report: "IntakeReport | None" = None
    sources: tuple[dict[str, Any], ...] = field(default_factory=tuple)
    #: True when every EPS row is dated by the day the figure became public (an announcement-date
    #: column was read): the study then uses each figure from that month-end on, with no fixed lag.
    eps_dated_by_availability: bool = False

    # -- shape -----------------------------------------------------------------
    @property
    def dates(self) -> pd.DatetimeIndex:
        return pd.DatetimeIndex(self.prices.index)

    @property
    def securities(self) -> pd.Index:
        return self.prices.columns

    @property
    def shape(self) -> tuple[int, int]:
        return self.prices.shape

    def valid_price_mask(self) -> np.ndarray:
        """Boolean (dates x securities): a finite, positive price at that month-end."""
        p = self.prices.to_numpy(dtype=float)
        with np.errstate(invalid="ignore"):
            return np.isfinite(p) & (p > 0)

    # -- dividends on the month grid ------------------------------------------
    def dividend_matrix(self) -> pd.DataFrame:
        """Dividends per share summed by the month-end of their ex-date.

        Returns a frame on the price axes (zeros where nothing went ex).
        Events whose month-end is outside the price index are ignored here;
        intake has already reported them.
        """
        out = pd.DataFrame(0.0, index=self.prices.index, columns=self.prices.columns)
        if self.dividends is None or self.dividends.empty:
            return out
        d = self.dividends
        me = month_end_index(d["ex_date"])
        grouped = (
            pd.DataFrame({"date": me, "security": d["security"].to_numpy(), "amount": d["amount"].to_numpy()})
            .groupby(["date", "security"], sort=True)["amount"]
            .sum()
            .unstack("security")
        )
        grouped = grouped.reindex(index=out.index, columns=out.columns).fillna(0.0)
        return grouped.astype(float)

    def with_(self, **changes: Any) -> "Panel":
        """Return a copy with some fields replaced (the panel is never mutated)."""
        return replace(self, **changes)
