"""The study entry point: a validated configuration in, one result object out.

Everything the dashboard, the headless command and the chart bundle show is
held by :class:`StudyResult`; none of them recomputes.  The formulas are in
``docs/methodology.md`` and in the docstrings of the modules named below.

Pipeline (:func:`run_study`)
----------------------------
1. ``core.signals``: reporting lag on earnings, raw signals, universe per date,
   outlier treatment and cross-sectional z-scores (optionally sector-neutral).
2. ``core.returns``: total-return index and forward returns per horizon.
3. ``core.evaluate``: information coefficients, quantiles, Fama-MacBeth.
4. ``core.backtest``: overlapping-cohort portfolios.
5. ``core.evaluate.screen``: the screen table for the latest date.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field, fields, replace
from typing import Any, Callable, get_args

import numpy as np
import pandas as pd

from valuesift.core._typing import (
    ComparisonRule,
    DividendTreatment,
    ExcessOver,
    HacLagRule,
    OutlierRule,
    SmallSectorRule,
    UniverseRule,
    ZScoreMethod,
)
from valuesift.core.backtest import BacktestResult
from valuesift.core.errors import ConfigError
from valuesift.core.evaluate.summary import ic_by_date_frame, summary_dict
from valuesift.core.panel import Panel

__all__ = [
    "StudyConfig",
    "StudyResult",
    "run_study",
    "summary_dict",
    "ic_by_date_frame",
    "BUILTIN_SIGNALS",
]

#: Signals built from the panel itself (user signals are addressed by their name).
BUILTIN_SIGNALS: tuple[str, ...] = ("earnings_yield", "dividend_yield", "composite")


def _bad(setting: str, value: object, allowed: str) -> ConfigError:
    return ConfigError(
        f"Study setting {setting!r} has the value {value!r}, which is not allowed.",
        hint=f"Allowed: {allowed}.",
    )


def _check_int(name: str, value: object, lo: int, hi: int) -> None:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or not lo <= int(value) <= hi:
        raise _bad(name, value, f"a whole number from {lo} to {hi}")


def _check_float(name: str, value: object, lo: float, hi: float, *, lo_open: bool = False) -> None:
    ok = isinstance(value, (int, float, np.floating, np.integer)) and not isinstance(value, bool)
    if ok:
        v = float(value)  # type: ignore[arg-type]
        ok = bool(np.isfinite(v)) and (v > lo if lo_open else v >= lo) and v <= hi
    if not ok:
        left = "(" if lo_open else "["
        raise _bad(name, value, f"a number in {left}{lo}, {hi}]")


def _check_choice(name: str, value: object, alias: Any) -> None:
    choices = get_args(alias)
    if value not in choices:
        raise _bad(name, value, "one of " + ", ".join(repr(c) for c in choices))


def _check_bool(name: str, value: object) -> None:
    if not isinstance(value, (bool, np.bool_)):
        raise _bad(name, value, "True or False")


@dataclass(frozen=True)
class StudyConfig:
    """All settings of one study (frozen; validated on construction).

    Attributes
    ----------
    signal : str, default "earnings_yield"
        ``"earnings_yield"`` (EPS / price), ``"dividend_yield"`` (trailing
        twelve months), ``"composite"`` (mean of the z-scores of
        ``composite_of``) or the name of a user signal in ``Panel.signals``.
    composite_of : tuple of str, default ("earnings_yield", "dividend_yield")
        Components of the composite (at least two; built-in or user names).
    reporting_lag_months : int, default 0, range 0..24
        Months by which EPS stamps are delayed before use (0 for series stamped
        by availability date; e.g. 3 for fiscal-period-end stamps).
    eps_max_age_months : int, default 15, range 1..60
        The last reported EPS (after the lag) stays in use this many months.
    horizons : tuple of int, default (1, 3, 6, 12, 24, 36), each 1..120
        Forward-return horizons in months (distinct; stored sorted).
    outlier_rule : {"winsorise", "clip_robust_z", "none"}, default "winsorise"
    winsor_percentiles : (float, float), default (1.0, 99.0)
        Lower and upper percentile, ``0 <= lower < 50 < upper <= 100``.
    robust_z_limit : float, default 3.0, range (0, 20]
        Limit for ``clip_robust_z``: values beyond median +/- limit x 1.4826 MAD are clipped.
    zscore_method : {"mean_std", "median_mad"}, default "mean_std"
    sector_neutral : bool, default False
        Evaluate the within-sector z-score instead of the universe z-score.
    min_sector_size : int, default 5, range 2..10000
    small_sector_rule : {"pool", "drop", "raw"}, default "pool"
        Sectors below ``min_sector_size`` names on a date: pooled into one group
        ("pool"), left out ("drop") or given the universe z-score ("raw").
    universe : {"all", "sectors", "holdings"}, default "all"
    universe_sectors : tuple of str, default ()
        Sectors kept when ``universe == "sectors"`` (at least one).
    min_history_months : int, default 0, range 0..240
        Months of valid price needed before a date for a name to be in the universe.
    dividend_treatment : {"reinvest", "uninvested"}, default "reinvest"
    excess_over : {"none", "universe", "benchmark"}, default "none"
    delisting_return : float, default 0.0, range [-1, 1]
        Return assumed on delisting, applied after the last valid price.
    min_breadth : int, default 10, range 2..1000000
        Dates with fewer usable names are reported and get no IC.
    n_quantiles : int, default 5, range 2..20
    hac_lag_rule : {"overlap", "overlap_or_auto"}, default "overlap_or_auto"
        Newey-West lags: ``h - 1`` ("overlap") or
        ``max(h - 1, floor(4 (T/100)^(2/9)))`` ("overlap_or_auto").
    fm_sector_dummies, fm_log_market_cap : bool, default False
        Controls in the Fama-MacBeth regressions.
    holding_months : int, default 1, range 1..60
        Backtest holding period (overlapping cohorts, 1/h of capital each).
    backtest_within_sectors : bool, default False
        Form the backtest quantiles within each sector.
    transaction_cost_bps : float, default 0.0, range [0, 1000]
        Cost per unit of traded value (buys plus sells), in basis points.
    risk_free_annual : float, default 0.0, range [-0.05, 0.5]
        Annual risk-free rate for the Sharpe ratio (compounded to monthly).
    comparison : {"universe", "benchmark"}, default "universe"
        What the backtest's hit rate and cohorts are compared with.
    """

    signal: str = "earnings_yield"
    composite_of: tuple[str, ...] = ("earnings_yield", "dividend_yield")
    reporting_lag_months: int = 0
    eps_max_age_months: int = 15
    horizons: tuple[int, ...] = (1, 3, 6, 12, 24, 36)
    outlier_rule: OutlierRule = "winsorise"
    winsor_percentiles: tuple[float, float] = (1.0, 99.0)
    robust_z_limit: float = 3.0
    zscore_method: ZScoreMethod = "mean_std"
    sector_neutral: bool = False
    min_sector_size: int = 5
    small_sector_rule: SmallSectorRule = "pool"
    universe: UniverseRule = "all"
    universe_sectors: tuple[str, ...] = ()
    min_history_months: int = 0
    dividend_treatment: DividendTreatment = "reinvest"
    excess_over: ExcessOver = "none"
    delisting_return: float = 0.0
    min_breadth: int = 10
    n_quantiles: int = 5
    hac_lag_rule: HacLagRule = "overlap_or_auto"
    fm_sector_dummies: bool = False
    fm_log_market_cap: bool = False
    holding_months: int = 1
    backtest_within_sectors: bool = False
    transaction_cost_bps: float = 0.0
    risk_free_annual: float = 0.0
    comparison: ComparisonRule = "universe"

    def __post_init__(self) -> None:
        if not isinstance(self.signal, str) or not self.signal.strip():
            raise _bad("signal", self.signal, "'earnings_yield', 'dividend_yield', 'composite' or a user signal name")
        comp = tuple(self.composite_of) if isinstance(self.composite_of, (tuple, list)) else None
        if comp is None or any(not isinstance(c, str) or not c for c in comp):
            raise _bad("composite_of", self.composite_of, "a tuple of signal names")
        if "composite" in comp:
            raise _bad("composite_of", self.composite_of, "signal names other than 'composite'")
        if self.signal == "composite" and len(set(comp)) < 2:
            raise _bad("composite_of", self.composite_of, "at least two different signal names for a composite")
        object.__setattr__(self, "composite_of", comp)
        _check_int("reporting_lag_months", self.reporting_lag_months, 0, 24)
        _check_int("eps_max_age_months", self.eps_max_age_months, 1, 60)
        hz = self.horizons
        if not isinstance(hz, (tuple, list)) or len(hz) == 0:
            raise _bad("horizons", hz, "a non-empty tuple of whole months from 1 to 120")
        for h in hz:
            _check_int("horizons", h, 1, 120)
        if len(set(int(h) for h in hz)) != len(hz):
            raise _bad("horizons", hz, "distinct horizons (each month count once)")
        object.__setattr__(self, "horizons", tuple(sorted(int(h) for h in hz)))
        _check_choice("outlier_rule", self.outlier_rule, OutlierRule)
        wp = self.winsor_percentiles
        if not isinstance(wp, (tuple, list)) or len(wp) != 2:
            raise _bad("winsor_percentiles", wp, "a pair (lower, upper) with 0 <= lower < 50 < upper <= 100")
        _check_float("winsor_percentiles", wp[0], 0.0, 50.0)
        _check_float("winsor_percentiles", wp[1], 50.0, 100.0)
        if not (float(wp[0]) < 50.0 < float(wp[1])):
            raise _bad("winsor_percentiles", wp, "a pair (lower, upper) with 0 <= lower < 50 < upper <= 100")
        object.__setattr__(self, "winsor_percentiles", (float(wp[0]), float(wp[1])))
        _check_float("robust_z_limit", self.robust_z_limit, 0.0, 20.0, lo_open=True)
        _check_choice("zscore_method", self.zscore_method, ZScoreMethod)
        _check_bool("sector_neutral", self.sector_neutral)
        _check_int("min_sector_size", self.min_sector_size, 2, 10_000)
        _check_choice("small_sector_rule", self.small_sector_rule, SmallSectorRule)
        _check_choice("universe", self.universe, UniverseRule)
        us = self.universe_sectors
        if not isinstance(us, (tuple, list)) or any(not isinstance(s, str) for s in us):
            raise _bad("universe_sectors", us, "a tuple of sector names")
        object.__setattr__(self, "universe_sectors", tuple(us))
        if self.universe == "sectors" and len(us) == 0:
            raise _bad("universe_sectors", us, "at least one sector name when universe is 'sectors'")
        _check_int("min_history_months", self.min_history_months, 0, 240)
        _check_choice("dividend_treatment", self.dividend_treatment, DividendTreatment)
        _check_choice("excess_over", self.excess_over, ExcessOver)
        _check_float("delisting_return", self.delisting_return, -1.0, 1.0)
        _check_int("min_breadth", self.min_breadth, 2, 1_000_000)
        _check_int("n_quantiles", self.n_quantiles, 2, 20)
        _check_choice("hac_lag_rule", self.hac_lag_rule, HacLagRule)
        _check_bool("fm_sector_dummies", self.fm_sector_dummies)
        _check_bool("fm_log_market_cap", self.fm_log_market_cap)
        _check_int("holding_months", self.holding_months, 1, 60)
        _check_bool("backtest_within_sectors", self.backtest_within_sectors)
        _check_float("transaction_cost_bps", self.transaction_cost_bps, 0.0, 1000.0)
        _check_float("risk_free_annual", self.risk_free_annual, -0.05, 0.5)
        _check_choice("comparison", self.comparison, ComparisonRule)

    def to_dict(self) -> dict[str, Any]:
        """The settings as a JSON-ready dict (tuples become lists)."""
        d = asdict(self)
        return {k: list(v) if isinstance(v, tuple) else v for k, v in d.items()}

    @classmethod
    def from_dict(cls, settings: dict[str, Any]) -> "StudyConfig":
        """Build a configuration from a dict such as :meth:`to_dict` gives (lists become tuples).

        Raises
        ------
        ConfigError
            For an unknown setting name or an invalid value.
        """
        if not isinstance(settings, dict):
            raise ConfigError("Study settings must be a mapping of setting names to values.",
                              hint="Pass a dict such as StudyConfig().to_dict().")
        known = {f.name for f in fields(cls)}
        unknown = sorted(set(settings) - known)
        if unknown:
            raise ConfigError(f"Unknown study setting(s): {', '.join(repr(u) for u in unknown)}.",
                              hint="Allowed: " + ", ".join(sorted(known)) + ".")
        values: dict[str, Any] = {k: tuple(v) if isinstance(v, list) else v for k, v in settings.items()}
        return cls(**values)


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



def run_study(
    panel: Panel,
    config: StudyConfig,
    progress: Callable[[str, float], None] | None = None,
) -> StudyResult:
    """Run a full study of ``config.signal`` on ``panel``.

    Parameters
    ----------
    panel : Panel
        The data (never modified).
    config : StudyConfig
        Validated settings.
    progress : callable(stage: str, fraction: float), optional
        Called at the start of each stage with the fraction done (0..1).

    Returns
    -------
    StudyResult

    Raises
    ------
    ConfigError
        A setting does not fit this panel (unknown signal, no sectors for a
        sector setting, no benchmark for a benchmark setting, ...).
    InsufficientDataError
        A horizon as long as the history, a universe filter that leaves
        nothing, fewer names than quantiles on every date.

    Notes
    -----
    See ``docs/methodology.md`` for every formula; each step's docstring in
    ``core.signals``, ``core.returns``, ``core.evaluate`` and ``core.backtest``
    states its own.

    References
    ----------
    Fama & MacBeth (1973), JPE 81(3); Newey & West (1987), Econometrica 55(3);
    Jegadeesh & Titman (1993), J. Finance 48(1).
    """
    from valuesift.core._study_steps import compute_study
    from valuesift.core.evaluate.screen import screen_table

    if not isinstance(config, StudyConfig):
        raise ConfigError("run_study needs a StudyConfig.", hint="Build one with StudyConfig(...).")
    if not isinstance(panel, Panel):
        raise ConfigError("run_study needs a Panel.", hint="Build one with intake or core.panel.Panel(...).")
    fields = compute_study(panel, config, progress)
    res = StudyResult(config=config, screen=pd.DataFrame(), **fields)
    res = replace(res, screen=screen_table(res))
    if progress is not None:
        progress("done", 1.0)
    return res

