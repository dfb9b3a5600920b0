"""Sizes and model settings of the invented demo market (one place, no magic numbers elsewhere)."""

from __future__ import annotations

import math

__all__ = [
    "DEFAULT_SEED",
    "N_COMPANIES",
    "N_MONTHS",
    "START_MONTH",
    "SECTOR_NAMES",
    "SECTOR_SIZES",
    "SECTOR_MEAN_YIELD",
    "LATE_LISTING_MONTH",
    "DELISTING_MONTH",
    "SPLIT_MONTH",
    "SPLIT_FACTOR",
    "CUT_MONTH",
    "CUT_FACTOR",
    "DUPLICATE_MONTH",
    "REPORT_MONTHS",
    "MARKET_MEAN",
    "MARKET_SD",
    "SECTOR_SD",
    "IDIO_SD",
    "RHO",
    "GAMMA",
    "YIELD_PERSISTENCE",
    "YIELD_COMPANY_SD",
    "YIELD_WITHIN_SD",
    "LOSS_MAKER_YIELD",
    "N_LOSS_MAKERS",
    "N_HEAVY_PRICE",
    "NEVER_PAYER_SHARE",
    "ANNUAL_PAYER_SHARE",
    "N_HOLDINGS",
    "N_PRICE_MISSING_PER_SPELLING",
    "N_EPS_MISSING_PER_SPELLING",
]

DEFAULT_SEED = 20240101

# -- shape of the market ---------------------------------------------------------------
N_COMPANIES = 120
N_MONTHS = 180                      # month-ends 2010-01 .. 2024-12
START_MONTH = "2010-01"
SECTOR_NAMES = (
    "Banks", "Energy", "Health Care", "Industrials", "Materials",
    "Property", "Retail", "Technology", "Utilities",
)
SECTOR_SIZES = (16, 15, 14, 14, 13, 13, 12, 12, 11)   # sums to N_COMPANIES
# long-run earnings yield by sector (modest spread: cheap and dear sectors exist)
SECTOR_MEAN_YIELD = (0.075, 0.070, 0.045, 0.060, 0.065, 0.065, 0.055, 0.045, 0.070)

# -- events (0-based month indexes into the calendar) ------------------------------------
LATE_LISTING_MONTH = 60             # 2015-01: first valid price of the late lister
DELISTING_MONTH = 141               # 2021-10: first month without a price of the delister
SPLIT_MONTH = 100                   # 2018-05: first month quoted after a 2-for-1 split
SPLIT_FACTOR = 2
CUT_MONTH = 77                      # 2016-06: from this month on the cutter pays 40 % of before
CUT_FACTOR = 0.4
DUPLICATE_MONTH = 77                # 2016-06-30 appears twice in prices.csv
REPORT_MONTHS = (3, 6, 9, 12)       # calendar months in which trailing EPS is updated

# -- returns: r_{t+1} = market_{t+1} + sector_{t+1} + GAMMA * z_t + idio_{t+1} -----------------
MARKET_MEAN = 0.007
MARKET_SD = 0.045
SECTOR_SD = 0.020
IDIO_SD = 0.065
RHO = 0.10                          # planted cross-sectional Pearson correlation of z_t and r_{t+1}
GAMMA = RHO * math.sqrt(SECTOR_SD**2 + IDIO_SD**2) / math.sqrt(1.0 - RHO**2)

# -- earnings yield process (latent yield y; EPS = y * price at each report) ---------------
YIELD_PERSISTENCE = 0.98            # monthly AR(1) coefficient of the latent yield
YIELD_COMPANY_SD = 0.015            # spread of long-run yields within a sector
YIELD_WITHIN_SD = 0.025             # stationary spread of a company's yield around its long run
LOSS_MAKER_YIELD = -0.03            # long-run yield of the few loss makers
N_LOSS_MAKERS = 4
N_HEAVY_PRICE = 5                   # companies quoted above 1,000 (thousands separators)

# -- dividends and the fund ---------------------------------------------------------------
NEVER_PAYER_SHARE = 0.30
ANNUAL_PAYER_SHARE = 0.25           # the rest pay quarterly
N_HOLDINGS = 30

# -- write-time mess ----------------------------------------------------------------------
N_PRICE_MISSING_PER_SPELLING = 8
N_EPS_MISSING_PER_SPELLING = 10
