"""Study settings as the browser holds them (plain JSON) and their StudyConfig.

The controls of the Study page write a small dict; :func:`config_from_settings`
turns it into a validated :class:`core.study.StudyConfig` (a ConfigError names
the setting when a value is not allowed).
"""

from __future__ import annotations

from typing import Any

from valuesift.core.config import StudyConfig

__all__ = ["DEFAULT_SETTINGS", "HORIZON_CHOICES", "config_from_settings", "clean_settings"]

HORIZON_CHOICES: tuple[int, ...] = (1, 3, 6, 12, 24, 36, 60)

DEFAULT_SETTINGS: dict[str, Any] = {
    "signal": "earnings_yield",
    "universe": "all",
    "universe_sectors": [],
    "min_history_months": 0,
    "horizons": [1, 3, 6, 12, 24, 36],
    "n_quantiles": 5,
    "outlier_rule": "winsorise",
    "winsor_lower": 1.0,
    "zscore_method": "mean_std",
    "sector_neutral": False,
    "reporting_lag_months": 0,
    "dividend_treatment": "reinvest",
    "excess_over": "none",
    "holding_months": 1,
    "transaction_cost_bps": 0.0,
}


def clean_settings(raw: Any) -> dict[str, Any]:
    """Defaults overlaid with the known keys of ``raw`` (unknown keys dropped)."""
    out = dict(DEFAULT_SETTINGS)
    if isinstance(raw, dict):
        for k in DEFAULT_SETTINGS:
            if k in raw and raw[k] is not None:
                out[k] = raw[k]
    return out


def _int(v: Any, default: int) -> Any:
    if v is None or v == "":
        return default
    try:
        f = float(v)
    except (TypeError, ValueError):
        return v            # let StudyConfig name the bad value
    return int(f) if f.is_integer() else f


def config_from_settings(raw: Any) -> StudyConfig:
    """The StudyConfig for a settings dict (ConfigError when a value is not allowed)."""
    s = clean_settings(raw)
    lower = s["winsor_lower"]
    try:
        lower = float(lower)
    except (TypeError, ValueError):
        pass
    upper = 100.0 - lower if isinstance(lower, float) else lower
    return StudyConfig(
        signal=str(s["signal"]),
        universe=s["universe"],
        universe_sectors=tuple(s["universe_sectors"] or ()) if s["universe"] == "sectors" else (),
        min_history_months=_int(s["min_history_months"], 0),
        horizons=tuple(sorted(int(h) for h in (s["horizons"] or []))),
        n_quantiles=_int(s["n_quantiles"], 5),
        outlier_rule=s["outlier_rule"],
        winsor_percentiles=(lower, upper),
        zscore_method=s["zscore_method"],
        sector_neutral=bool(s["sector_neutral"]),
        reporting_lag_months=_int(s["reporting_lag_months"], 0),
        dividend_treatment=s["dividend_treatment"],
        excess_over=s["excess_over"],
        holding_months=_int(s["holding_months"], 1),
        transaction_cost_bps=float(s["transaction_cost_bps"] or 0.0),
    )
