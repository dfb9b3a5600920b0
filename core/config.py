"""The settings of one study: :class:`StudyConfig` (frozen, validated on construction).

Every setting, with its range, default, label and help sentence, is described once in
:mod:`valuesift.core.settings`; validation here follows that table.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields
from typing import Any, get_args

from valuesift.core.choices import (
    NonPositiveRule,
    ComparisonRule,
    DividendTreatment,
    ExcessOver,
    HacLagRule,
    OutlierRule,
    SmallSectorRule,
    UniverseRule,
    ZScoreMethod,
)
from valuesift.core.errors import ConfigError
from valuesift.core.settings import DEFAULT_HORIZONS, SETTINGS, Failure, check_value, failure_message

__all__ = ["StudyConfig", "BUILTIN_SIGNALS"]

#: Signals built from the panel itself (user signals are addressed by their name).
BUILTIN_SIGNALS: tuple[str, ...] = ("earnings_yield", "dividend_yield", "composite")


#: The option-set aliases of the choice settings (checked against the settings table by a test).
_CHOICE_ALIASES: dict[str, Any] = {
    "outlier_rule": OutlierRule, "zscore_method": ZScoreMethod, "small_sector_rule": SmallSectorRule,
    "universe": UniverseRule, "dividend_treatment": DividendTreatment, "excess_over": ExcessOver,
    "hac_lag_rule": HacLagRule, "comparison": ComparisonRule, "nonpositive_lower_is_cheaper": NonPositiveRule,
}


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
    nonpositive_lower_is_cheaper : {"set_aside", "reciprocal"}, default "set_aside"
        For a user signal where lower means cheaper (P/E), values <= 0 are not
        meaningful: "set_aside" leaves them out of the ranking (counted and
        flagged), "reciprocal" studies 1/x instead (P/E becomes E/P, which keeps
        loss-makers in order, ranked dearest).
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
    split_month : str, default ""
        ``YYYY-MM``: the first month of the second half when the two halves of the history are
        compared; empty for the middle of the dates with an IC.
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
    nonpositive_lower_is_cheaper: NonPositiveRule = "set_aside"
    horizons: tuple[int, ...] = DEFAULT_HORIZONS
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
    split_month: str = ""
    holding_months: int = 1
    backtest_within_sectors: bool = False
    transaction_cost_bps: float = 0.0
    risk_free_annual: float = 0.0
    comparison: ComparisonRule = "universe"

    def __post_init__(self) -> None:
        failures: list[Failure] = []
        for st in SETTINGS:
            f = check_value(st, getattr(self, st.name))
            if f is not None:
                failures.append(f)
        bad = {f.setting for f in failures}
        comp = self.composite_of
        if "composite_of" not in bad:
            if "composite" in comp:
                failures.append(Failure("composite_of", comp, "signal names other than the composite itself",
                                        "Remove 'composite' from the composite's parts."))
            elif self.signal == "composite" and len(set(comp)) < 2:
                failures.append(Failure("composite_of", comp, "at least two different signals for a composite",
                                        "Name two or more signals for the composite."))
        if "universe_sectors" not in bad and self.universe == "sectors" and len(self.universe_sectors) == 0:
            failures.append(Failure("universe_sectors", self.universe_sectors,
                                    "at least one sector when the universe is chosen sectors",
                                    "Tick one or more sectors, or choose another universe."))
        for name, choices in _CHOICE_ALIASES.items():  # the Literal aliases and the table must agree
            if name not in bad and getattr(self, name) not in get_args(choices):
                failures.append(Failure(name, getattr(self, name), "a known choice", "Pick one of the listed choices."))
        if failures:
            raise ConfigError(failure_message(failures),
                              failures=tuple(f.as_dict() for f in failures))
        object.__setattr__(self, "composite_of", tuple(comp))
        object.__setattr__(self, "universe_sectors", tuple(self.universe_sectors))
        object.__setattr__(self, "horizons", tuple(sorted(int(h) for h in self.horizons)))
        wp = self.winsor_percentiles
        object.__setattr__(self, "winsor_percentiles", (float(wp[0]), float(wp[1])))

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
                              hint="Allowed: " + ", ".join(sorted(known)) + ".", setting=unknown[0])
        values: dict[str, Any] = {k: tuple(v) if isinstance(v, list) else v for k, v in settings.items()}
        return cls(**values)
