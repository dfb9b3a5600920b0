"""Option sets used across the core package, in one place."""

from __future__ import annotations

from typing import Literal

__all__ = [
    "Layout",
    "DateOrder",
    "DecimalStyle",
    "FileKind",
    "DuplicateRule",
    "IdCleanup",
    "EarningsForm",
    "ZScoreMethod",
    "OutlierRule",
    "DividendTreatment",
    "ExcessOver",
    "SmallSectorRule",
    "UniverseRule",
    "HacLagRule",
    "ComparisonRule",
    "NonPositiveRule",
    "SeMethod",
]

Layout = Literal["auto", "wide", "long"]
DateOrder = Literal["auto", "dmy", "mdy", "ymd"]
DecimalStyle = Literal["auto", "point", "comma"]
FileKind = Literal[
    "prices", "earnings", "dividends", "sectors", "holdings", "benchmark", "market_cap", "signal"
]
DuplicateRule = Literal["last", "first", "error"]
IdCleanup = Literal["none", "upper", "first_token", "regex"]
EarningsForm = Literal["auto", "eps", "pe"]
ZScoreMethod = Literal["mean_std", "median_mad"]
OutlierRule = Literal["winsorise", "clip_robust_z", "none"]
DividendTreatment = Literal["reinvest", "uninvested"]
ExcessOver = Literal["none", "universe", "benchmark"]
SmallSectorRule = Literal["pool", "drop", "raw"]
UniverseRule = Literal["all", "sectors", "holdings"]
HacLagRule = Literal["overlap", "overlap_or_auto"]
ComparisonRule = Literal["universe", "benchmark"]
NonPositiveRule = Literal["set_aside", "reciprocal"]
SeMethod = Literal["hansen_hodrick", "newey_west", "newey_west_fallback", "iid"]
