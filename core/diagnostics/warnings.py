"""The warnings of a study: machine-readable codes, each with the numbers behind it and one plain sentence.

The sentences here are part of ``summary.json``'s contract (field ``warnings``); the
dashboard and the report show them as they are.

Codes
-----
``possible_lookahead``, ``implausible_ic``, ``period_dates_without_lag``,
``all_negative_earnings``, ``too_short_history``, ``holdings_applied_backwards``,
``survivors_only``, ``nonpositive_set_aside``.
"""

from __future__ import annotations

import re
from typing import Any

import numpy as np
import pandas as pd

__all__ = [
    "WARNING_CODES", "IMPLAUSIBLE_IC", "LOOKAHEAD_DATE_IC", "LOOKAHEAD_DROP", "LOOKAHEAD_DROP_SHARE",
    "LOOKAHEAD_DROP_T", "lookahead_warnings", "input_warnings", "PERIOD_NAME",
]

WARNING_CODES: tuple[str, ...] = (
    "possible_lookahead", "implausible_ic", "period_dates_without_lag", "all_negative_earnings",
    "too_short_history", "holdings_applied_backwards", "survivors_only", "nonpositive_set_aside",
)

#: A mean one-month rank IC beyond this is implausible for an equity valuation signal (common practice,
#: no source: published monthly rank ICs of value signals are of the order of 0.02 to 0.10).
IMPLAUSIBLE_IC = 0.25
#: A single date's rank IC above this is the fingerprint of a signal built from the returns themselves.
LOOKAHEAD_DATE_IC = 0.9
#: The IC at the shortest horizon falling from delay 0 to some delay of 1-3 months by more than this
#: (absolute) and by more than :data:`LOOKAHEAD_DROP_SHARE` of itself, with a t-statistic of the per-date
#: drop of at least :data:`LOOKAHEAD_DROP_T`, raises ``possible_lookahead``.  Calibrated on the invented
#: demo universe (clean drop 0.005; EPS taken one month from the future: 0.040; three months: 0.117).
LOOKAHEAD_DROP = 0.02
LOOKAHEAD_DROP_SHARE = 0.25
LOOKAHEAD_DROP_T = 3.0
#: Column names that look like fiscal period ends rather than publication dates.
PERIOD_NAME = re.compile(r"period|fiscal|quarter|\bfy\b|year[ _-]?end|_end\b|\bend\b", re.IGNORECASE)


def _w(code: str, message: str, **values: Any) -> dict[str, Any]:
    return {"code": code, "message": message, **values}


def lookahead_warnings(delay_table: pd.DataFrame, drop_t: dict[int, float], max_date_ic: float,
                       shortest: int, persistence: dict[int, float] | None = None) -> list[dict[str, Any]]:
    """``possible_lookahead`` and ``implausible_ic`` from the IC-by-delay table.

    Notes
    -----
    A signal that keeps its ranking from month to month should keep its IC when used a few
    months late: without look-ahead ``IC(d)`` is close to ``IC(0) rho_d``, where ``rho_d``
    (``persistence``) is the mean rank correlation of the signal with itself ``d`` months
    earlier.  The alarm fires when the IC falls short of that by more than
    :data:`LOOKAHEAD_DROP` and :data:`LOOKAHEAD_DROP_SHARE` of ``IC(0)``, with a headline
    t-statistic of the per-date shortfall (``drop_t``) of at least :data:`LOOKAHEAD_DROP_T`,
    or when a single date's rank IC exceeds :data:`LOOKAHEAD_DATE_IC`.
    """
    out: list[dict[str, Any]] = []
    tab = delay_table[delay_table["horizon"] == shortest].set_index("delay_months")["mean_ic"]
    ic0 = float(tab.get(0, np.nan))
    rho = persistence or {}
    worst_d, worst = None, 0.0
    for d, v in tab.items():
        if int(d) == 0 or not np.isfinite(v) or not np.isfinite(ic0):
            continue
        keep = float(rho.get(int(d), 1.0))
        drop = ic0 * (keep if np.isfinite(keep) else 1.0) - float(v)
        if drop > worst:
            worst_d, worst = int(d), drop
    fired_drop = (worst_d is not None and worst > LOOKAHEAD_DROP and worst > LOOKAHEAD_DROP_SHARE * abs(ic0)
                  and float(drop_t.get(worst_d, np.nan)) >= LOOKAHEAD_DROP_T)
    if fired_drop or (np.isfinite(max_date_ic) and max_date_ic > LOOKAHEAD_DATE_IC):
        why = []
        if fired_drop:
            late = float(tab.get(worst_d, np.nan))
            why.append(f"the {shortest}-month IC falls from {ic0:.3f} to {late:.3f} when the signal is used "
                       f"{worst_d} month{'s' if worst_d != 1 else ''} after its date, far more than the signal's own "
                       "month-to-month persistence explains")
        if np.isfinite(max_date_ic) and max_date_ic > LOOKAHEAD_DATE_IC:
            why.append(f"on at least one date the rank IC is {max_date_ic:.3f}")
        out.append(_w("possible_lookahead",
                      "Possible look-ahead in the input files: " + " and ".join(why) + ". A valuation signal fades "
                      "slowly, so this usually means the signal's values were known only after their dates (for "
                      "example earnings dated at the period end without a reporting lag). Check the dates before "
                      "trusting any figure of this study.",
                      ic_delay0=ic0, largest_drop=worst if worst_d is not None else None, drop_delay=worst_d,
                      max_date_ic=max_date_ic))
    if shortest <= 3 and np.isfinite(ic0) and abs(ic0) > IMPLAUSIBLE_IC:
        out.append(_w("implausible_ic",
                      f"The mean {shortest}-month rank IC is {ic0:.3f}, beyond the {IMPLAUSIBLE_IC:.2f} that equity "
                      "valuation signals show in practice (typically 0.02 to 0.10). A figure this high usually "
                      "comes from a data error or look-ahead rather than from the signal.",
                      mean_ic=ic0, threshold=IMPLAUSIBLE_IC))
    return out


def input_warnings(
    *,
    signal: str,
    uses_earnings: bool,
    reporting_lag: int,
    eps_dated_by_availability: bool,
    earnings_date_column: str | None,
    earnings_dates: pd.DatetimeIndex | None,
    earnings_yield_universe: np.ndarray | None,
    independent_periods: dict[int, float],
    too_short_limit: float,
    universe_rule: str,
    holdings_date: pd.Timestamp | None,
    first_date: pd.Timestamp,
    last_date: pd.Timestamp,
    first_valid: np.ndarray,
    last_valid: np.ndarray,
    n_dates: int,
    set_aside: int,
) -> list[dict[str, Any]]:
    """The warnings about the inputs and the sample (everything but look-ahead from the returns)."""
    out: list[dict[str, Any]] = []
    if uses_earnings and reporting_lag == 0 and not eps_dated_by_availability:
        by_name = bool(earnings_date_column and PERIOD_NAME.search(earnings_date_column))
        by_dates = False
        if earnings_dates is not None and len(earnings_dates) >= 4:
            months = pd.DatetimeIndex(earnings_dates).month
            by_dates = bool(np.isin(months, (3, 6, 9, 12)).all())
        if by_name or by_dates:
            why = (f"its date column is called {earnings_date_column!r}" if by_name
                   else "every earnings date falls at a calendar quarter end")
            out.append(_w("period_dates_without_lag",
                          f"The earnings file looks dated by fiscal period end ({why}) while the reporting lag is 0: "
                          "each figure is then used before it was published. Set the reporting lag (3 months is "
                          "usual for period-end dates), or read the file's announcement-date column.",
                          column=earnings_date_column))
    if uses_earnings and earnings_yield_universe is not None:
        ey = earnings_yield_universe[np.isfinite(earnings_yield_universe)]
        if ey.size and not (ey > 0).any():
            out.append(_w("all_negative_earnings",
                          "Every name in the universe has zero or negative earnings on every date: earnings yield "
                          "then ranks the smallest loss-maker as the cheapest, which says little about value. "
                          "Read the results with that in mind or choose another signal.",
                          n_values=int(ey.size)))
    # A horizon with no usable date at all (0 periods) is not "short": the headline says why it has no number.
    short = {h: ip for h, ip in independent_periods.items() if 0 < ip < too_short_limit}
    if short:
        hs = ", ".join(f"{h} month{'s' if h != 1 else ''} ({ip:.1f} independent periods)"
                       for h, ip in sorted(short.items()))
        out.append(_w("too_short_history",
                      f"Too short to judge at {hs}: fewer than {too_short_limit:.0f} non-overlapping windows. "
                      "Those horizons' numbers are shown but get no verdict; load a longer history or look at "
                      "shorter horizons.",
                      horizons=sorted(int(h) for h in short)))
    if universe_rule == "holdings":
        asof = holdings_date if holdings_date is not None else last_date
        if asof > first_date:
            out.append(_w("holdings_applied_backwards",
                          f"The holdings as of {asof.date().isoformat()} are applied to every date from "
                          f"{first_date.date().isoformat()}: the study asks how today's holdings would have fared, "
                          "not how the portfolio you held did. Names you sold or never held are missing from the "
                          "past.", holdings_date=asof.date().isoformat()))
    fv = first_valid[np.isfinite(first_valid)]
    lv = last_valid[np.isfinite(last_valid)]
    if fv.size and lv.size and not (lv < n_dates - 1).any() and not (fv > 0).any():
        out.append(_w("survivors_only",
                      "No security in the price file ends before the last date and none starts after the first: the "
                      "file looks like today's constituents carried back in time. Names that failed or were taken "
                      "over are missing, which flatters cheap, distressed names (survivorship bias) whatever the "
                      "engine does. Use a file with every name that was in the universe at each date."))
    if set_aside > 0:
        out.append(_w("nonpositive_set_aside",
                      f"The signal {signal!r} is lower-is-cheaper; {set_aside} values of 0 or below are not "
                      "meaningful on that scale and were set aside (not ranked). Study the reciprocal instead to "
                      "keep them, ranked dearest.", count=int(set_aside)))
    return out
