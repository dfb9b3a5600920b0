"""The result of one study: every number a chart, table or sentence of the study shows.

Dashboard, command line and bundle read these fields; none of them recomputes a statistic.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from valuesift.core.config import StudyConfig
from valuesift.core.portfolio.backtest import BacktestResult

__all__ = ["StudyResult"]


@dataclass(frozen=True)
class StudyResult:
    """Every number a chart or table of a study needs (frozen; never recomputed by consumers).

    Axes: ``D`` = the panel's month-end dates (``DatetimeIndex`` named ``date``),
    ``S`` = security identifiers, ``H`` = horizons in months (``int``),
    ``Q`` = quantile numbers 1..n_quantiles (1 = lowest signal = dearest,
    n = highest signal = cheapest).  Returns are decimal fractions (0.01 = 1 %),
    per horizon and *not* annualised unless a name says ``annualised``.

    Attributes
    ----------
    config : StudyConfig
    signal_name : str
        The evaluated signal (``config.signal``).
    signal_raw : DataFrame (D x S)
        The signal in its own units at each date after the reporting lag
        (earnings yield as a decimal, a user signal as supplied, the composite
        as a mean z-score); NaN where undefined.  Not restricted to the universe.
    pe : DataFrame (D x S)
        P/E for display: price / lagged EPS; NaN where not meaningful (EPS <= 0).
    universe : DataFrame (D x S, bool)
        Membership decided from data valid at each date.
    zscore : DataFrame (D x S)
        Cleaned universe-wide cross-sectional z-score, oriented higher = cheaper.
    sector_zscore : DataFrame (D x S) or None
        Within-sector z-score (None without sectors).
    signal_z : DataFrame (D x S)
        What is evaluated: ``sector_zscore`` if ``config.sector_neutral`` else ``zscore``.
    forward_returns : dict[int, DataFrame (D x S)]
        h-month forward total return from each date (excess if configured).
    delisted : DataFrame (D x H, int)
        Universe names whose last valid price falls inside the horizon.
    rank_ic, pearson_ic : DataFrame (D x H)
        Spearman and Pearson IC per date; NaN when undefined or below breadth.
    breadth : DataFrame (D x H, int)
        Names with both a signal and a forward return.
    ic_summary : DataFrame (H x statistics)
        ``mean_ic, sd_ic, ic_ir, hit_share, se_hac, t_hac, hac_lags, ci_low,
        ci_high, n_dates, se_naive, t_naive, mean_pearson_ic, mean_breadth``.
    rolling_ic : DataFrame (D x MultiIndex (horizon, window))
        Rolling mean rank IC over windows of 12 and 36 dates.
    quantile : DataFrame (D x S, float)
        Quantile number of each universe name; NaN if none.
    quantile_counts : DataFrame (D x Q, int)
    quantile_returns : dict[int, DataFrame (D x Q)]
        Equal-weight mean h-month forward return per quantile and date.
    quantile_mean : DataFrame (H x Q)
        Time-mean of ``quantile_returns``; ``quantile_mean_annualised`` likewise
        converted with ``(1 + r)^(12/h) - 1``.
    quantile_mean_annualised : DataFrame (H x Q)
    spread : DataFrame (D x H)
        Top-minus-bottom quantile forward return.
    spread_summary : DataFrame (H x statistics)
        ``mean`` (time-mean of ``spread``, per horizon), ``se_hac, t_hac,
        hac_lags, ci_low, ci_high, n_dates, se_naive``, ``mean_annualised``
        (annualised top-quantile mean minus annualised bottom-quantile mean)
        and ``monotonicity`` (Spearman of quantile order vs mean return).
    quantile_growth : DataFrame (D x Q)
        Growth of 1.0 in each quantile, rebalanced monthly with equal weights,
        from one-month total returns (not excess), dated at the month's end.
    turnover : DataFrame (D x Q)
        One-way equal-weight turnover of each quantile from the previous date.
    fm_slopes : DataFrame (D x H)
        Per-date Fama-MacBeth slope on the signal z-score.
    fm_summary : DataFrame (H x statistics)
        ``mean_slope, se_hac, t_hac, hac_lags, se_naive, n_dates``.
    backtest : BacktestResult
    eps_used : DataFrame (D x S)
        EPS in use at each date after the reporting lag (NaN without earnings).
    price_age, eps_age : DataFrame (D x S)
        Months since the last valid price / the last EPS stamp (after the lag).
    security_info : DataFrame (S rows)
        ``sector`` (str) and ``holding_weight`` (float, NaN if not held).
    screen : DataFrame (S rows)
        Screen table on the latest date (see :func:`core.evaluate.screen.screen_table`).
    date_notes : DataFrame
        Columns ``date, horizon, stage, reason, count``: every date left out of
        a part of the analysis, with why (horizon 0 = not horizon-specific).
    notes : tuple of str
        Plain-language notes (rules applied, data gaps, cautions).
    ic_by_delay : DataFrame
        ``delay_months, horizon, mean_ic, ic_t, n_dates``: the IC when the signal dated
        ``t`` is used 0-3 months later (:mod:`valuesift.core.diagnostics.delay`).
    warnings : tuple of dict
        Each with ``code``, ``message`` and the numbers behind it
        (:mod:`valuesift.core.diagnostics.warnings`).
    signal_set_aside : DataFrame (D x S, bool)
        Universe cells of a lower-is-cheaper signal set aside as not meaningful (values of 0 or below).
    rolling_spread : DataFrame (D x MultiIndex (horizon, window))
        Rolling mean of ``spread`` over 12 and 36 dates, by the rule of ``rolling_ic``
        (a window needs all its dates).
    spread_facts : DataFrame (H x statistics)
        ``positive_share`` (share of formation dates with a positive spread), ``n_dates``,
        ``names_per_quantile`` (mean count per quantile over those dates).
    pooled_fit : DataFrame (H x statistics)
        Least-squares line of forward return on ``signal_z``, all name-dates pooled:
        ``intercept`` (return), ``slope`` (return per unit of z), ``t_slope`` (classical;
        pooled points overlap in time, never the evidence), ``n_pairs``, ``n_dates``.
    pooled_bins : dict[int, DataFrame (bins x statistics)]
        The pooled pairs in 20 equal-count bins of z: ``x_mean`` (z), ``y_mean`` (return), ``count``.
    cross_section_fit : dict[int, DataFrame (D x statistics)]
        Least-squares line of one date's cross-section: ``intercept``, ``slope``, ``t_slope``
        (classical), ``n_names``.
    signal_bands : DataFrame (D x statistics)
        Universe median of ``signal_raw`` (its units) ``median``, names with a value ``n_names``,
        and the breakpoints ``b1 .. b{n-1}`` at ``k / n_quantiles`` (NaN below n_quantiles names).
    forward_return_median : DataFrame (D x H)
        Universe median of the h-month forward return at each date.
    sharpe_inference : DataFrame (portfolios x statistics)
        ``sharpe_monthly``, its Lo (2002) iid standard error ``se_monthly``, ``t``, ``n_months``.
    cohort_summary : Series
        The cheapest quantile's cohorts against the comparison (``n_cohorts, n_beat, share_beat,
        mean_excess, sd_excess, t_naive, t_hac, hac_lags, best_formed, best_excess,
        worst_formed, worst_excess``); excess returns over the holding period.
    drawdown_summary : DataFrame (portfolios x statistics)
        ``deepest`` (most negative fall from the running peak), ``trough`` (its month),
        ``share_below`` (share of months more than 10 % below the peak), ``n_months``.
    coverage : Series
        ``n_securities, n_dates, share_valid, min_names, max_names`` of the price panel,
        ``mean_universe_names`` and ``n_universe_dates`` (dates with a universe), and
        ``mean_ic_breadth`` (mean over horizons of ``ic_summary.mean_breadth``).
    relative : DataFrame (portfolios ``cheapest``, ``long_short`` x statistics)
        Against the backtest's comparison (:func:`valuesift.core.portfolio.relative.relative_performance`):
        ``active_return_ann, tracking_error_ann, information_ratio, information_ratio_residual, beta,
        beta_t, alpha_ann, alpha_t, alpha_se_method, hac_lags, residual_risk_ann, up_capture,
        down_capture, n_months, too_short, alpha_evidence, comparison``; monthly net returns.
    ic_by_period : DataFrame (rows)
        ``period`` (``YYYY`` or ``before YYYY-MM`` / ``from YYYY-MM``), ``horizon, mean_ic, ic_t, spread,
        spread_t, n_dates, too_short, evidence, spread_evidence`` (headline t on each subset of dates).
    period_difference : DataFrame (rows per horizon)
        Second half minus first half: ``split, ic_difference, ic_difference_t, spread_difference,
        spread_difference_t, too_short`` (:func:`valuesift.core.stability.subsets.difference_of_means`).
    ic_by_regime : DataFrame (rows)
        ``regime`` (``market``, ``volatility``), ``state`` (``rose``/``fell``, ``high``/``low``) and the
        columns of ``ic_by_period`` (:func:`valuesift.core.stability.subsets.regime_masks` states the rule).
    ic_by_sector : DataFrame (rows; empty without sectors)
        ``sector, horizon, mean_ic, ic_t, spread, spread_t, mean_breadth, n_dates, too_short, evidence, judged``.
    ic_decay : DataFrame (24 rows)
        ``month_ahead, marginal_ic, t, cumulative_ic, n_dates, se_method, too_short, evidence``.
    decay_facts : Series
        ``half_life_months`` (NaN: does not halve within the table, or nothing to decay),
        ``rank_autocorrelation_1m``, ``rank_autocorrelation_12m``, ``autocorrelation_dates``, ``months``.
    fm_controls : DataFrame (H rows)
        Fama-MacBeth slope on the signal without and with the controls the files allow
        (``slope_without, t_without, slope_with, t_with, n_dates_with``), ``ic_net, ic_net_t,
        n_dates_net`` (rank IC of the signal net of the controls), ``controls`` (words), per control
        ``slope_<name>``/``t_<name>``, ``too_short``, ``evidence_with``.
    cap_weighted : DataFrame (H rows; empty without a market-cap file)
        ``spread_equal, spread_equal_t, spread_cap, spread_cap_t, n_dates_cap, too_short, q1_cap..qn_cap``.
    cap_weighted_backtest : DataFrame (rows; empty without a market-cap file)
        ``portfolio, weighting`` (``equal``/``cap``), ``ann_return, ann_vol, sharpe, max_drawdown, n_months``
        from gross monthly returns.
    """

    config: StudyConfig
    signal_name: str
    signal_raw: pd.DataFrame
    pe: pd.DataFrame
    universe: pd.DataFrame
    zscore: pd.DataFrame
    sector_zscore: pd.DataFrame | None
    signal_z: pd.DataFrame
    forward_returns: dict[int, pd.DataFrame]
    delisted: pd.DataFrame
    rank_ic: pd.DataFrame
    pearson_ic: pd.DataFrame
    breadth: pd.DataFrame
    ic_summary: pd.DataFrame
    rolling_ic: pd.DataFrame
    quantile: pd.DataFrame
    quantile_counts: pd.DataFrame
    quantile_returns: dict[int, pd.DataFrame]
    quantile_mean: pd.DataFrame
    quantile_mean_annualised: pd.DataFrame
    spread: pd.DataFrame
    spread_summary: pd.DataFrame
    quantile_growth: pd.DataFrame
    turnover: pd.DataFrame
    fm_slopes: pd.DataFrame
    fm_summary: pd.DataFrame
    backtest: "BacktestResult"
    eps_used: pd.DataFrame
    price_age: pd.DataFrame
    eps_age: pd.DataFrame
    security_info: pd.DataFrame
    screen: pd.DataFrame
    date_notes: pd.DataFrame
    notes: tuple[str, ...] = field(default_factory=tuple)
    ic_by_delay: pd.DataFrame = field(default_factory=pd.DataFrame)
    warnings: tuple[dict[str, Any], ...] = field(default_factory=tuple)
    signal_set_aside: pd.DataFrame = field(default_factory=pd.DataFrame)
    rolling_spread: pd.DataFrame = field(default_factory=pd.DataFrame)
    spread_facts: pd.DataFrame = field(default_factory=pd.DataFrame)
    pooled_fit: pd.DataFrame = field(default_factory=pd.DataFrame)
    pooled_bins: dict[int, pd.DataFrame] = field(default_factory=dict)
    cross_section_fit: dict[int, pd.DataFrame] = field(default_factory=dict)
    signal_bands: pd.DataFrame = field(default_factory=pd.DataFrame)
    forward_return_median: pd.DataFrame = field(default_factory=pd.DataFrame)
    sharpe_inference: pd.DataFrame = field(default_factory=pd.DataFrame)
    cohort_summary: pd.Series = field(default_factory=lambda: pd.Series(dtype=object))
    drawdown_summary: pd.DataFrame = field(default_factory=pd.DataFrame)
    coverage: pd.Series = field(default_factory=lambda: pd.Series(dtype=float))
    relative: pd.DataFrame = field(default_factory=pd.DataFrame)
    ic_by_period: pd.DataFrame = field(default_factory=pd.DataFrame)
    period_difference: pd.DataFrame = field(default_factory=pd.DataFrame)
    ic_by_regime: pd.DataFrame = field(default_factory=pd.DataFrame)
    ic_by_sector: pd.DataFrame = field(default_factory=pd.DataFrame)
    ic_decay: pd.DataFrame = field(default_factory=pd.DataFrame)
    decay_facts: pd.Series = field(default_factory=lambda: pd.Series(dtype=float))
    fm_controls: pd.DataFrame = field(default_factory=pd.DataFrame)
    cap_weighted: pd.DataFrame = field(default_factory=pd.DataFrame)
    cap_weighted_backtest: pd.DataFrame = field(default_factory=pd.DataFrame)
