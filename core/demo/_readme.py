"""The sample_data/README.md text, generated from the simulated market (so it cannot drift)."""

from __future__ import annotations

import numpy as np
from scipy import stats

from valuesift.core.demo import _constants as C
from valuesift.core.demo.simulate import DemoMarket
from valuesift.core.demo.truth import DEMO_TRUTH, expected_spearman_ic, horizon_ic_approx, ic_standard_error

__all__ = ["readme_text", "monthly_spearman_ic", "z_autocorrelation"]

_HORIZONS = (3, 6, 12)


def monthly_spearman_ic(m: DemoMarket) -> np.ndarray:
    """Spearman correlation of z_t with the total return t -> t+1, one value per month t (clean arrays)."""
    out = []
    for t in range(len(m.dates) - 1):
        ok = np.isfinite(m.signal_z[t]) & np.isfinite(m.total_return[t + 1])
        out.append(stats.spearmanr(m.signal_z[t, ok], m.total_return[t + 1, ok]).statistic)
    return np.array(out, dtype=float)


def z_autocorrelation(m: DemoMarket, max_lag: int) -> list[float]:
    """Mean over t of the cross-sectional Pearson correlation of z_t and z_{t+k}, k = 1..max_lag."""
    out = []
    for k in range(1, max_lag + 1):
        cs = []
        for t in range(len(m.dates) - k):
            ok = np.isfinite(m.signal_z[t]) & np.isfinite(m.signal_z[t + k])
            cs.append(float(np.corrcoef(m.signal_z[t, ok], m.signal_z[t + k, ok])[0, 1]))
        out.append(float(np.mean(cs)))
    return out


def readme_text(m: DemoMarket) -> str:
    r = m.roles
    d = m.dates
    ic = monthly_spearman_ic(m)
    n_avg = float(np.mean([np.sum(np.isfinite(m.signal_z[t]) & np.isfinite(m.total_return[t + 1]))
                           for t in range(len(d) - 1)]))
    se = ic_standard_error(n_avg, len(ic))
    acf = z_autocorrelation(m, max(_HORIZONS) - 1)
    j_nz = m.codes.index(r.near_zero_eps)
    pe_nz = m.price[r.near_zero_month, j_nz] / m.eps[r.near_zero_month, j_nz]
    j_split = m.codes.index(r.split)
    raw_ratio = m.price[r.split_month, j_split] / (C.SPLIT_FACTOR * m.price[r.split_month - 1, j_split])
    horizons = "\n".join(
        f"| {h} | {horizon_ic_approx(h, acf):.4f} |" for h in _HORIZONS
    )
    t = DEMO_TRUTH
    pre = min(e.ex_date for e in m.dividend_events)
    return f"""# Demo universe files (an invented market)

Everything here is invented: the Maren exchange, its {len(m.codes)} companies, their codes, prices,
earnings and dividends. Written by `valuesift demo --out DIR` (seed {m.seed}); a test checks
that these files equal a fresh run byte for byte. Month-ends {d[0].isoformat()} to
{d[-1].isoformat()} ({len(d)} months), {len(m.sector_names)} sectors.

## Files

| file | layout |
|---|---|
| `prices.csv` | wide: `Date` (dd/mm/yyyy), `Maren All-Share`, then one column per security code; month-end closing prices, 2 decimals |
| `earnings.csv` | long, `;`-delimited, decimal comma: `known_on;code;eps_ttm` (ISO dates: the month-end at which each trailing-twelve-month EPS was public), trailing-twelve-month EPS |
| `dividends.csv` | `code,ex_date,amount` with ex_date as mm/dd/yyyy; cash per share |
| `sectors.csv` | `code,sector` |
| `holdings.csv` | `code,weight`: an invented fund of {len(m.holdings)} names, weights in percent with a % sign, summing to 100% |
| `benchmark.csv` | `date,level` (ISO dates): total-return level of an invented benchmark (equal-weight, dividends reinvested, 100 at the start) |

## Mess planted on purpose

- `prices.csv` has three lines above the header (a title, an export stamp, a blank line).
- Prices of 1,000 and more carry thousands separators inside quotes (`"1,234.50"`).
- Missing prices are spelled `#N/A`, `n.a.`, `--`, `NA` or left blank ({C.N_PRICE_MISSING_PER_SPELLING} cells each, scattered).
- `Maren All-Share` is a market index level, not a security: exclude it.
- {d[C.DUPLICATE_MONTH].strftime('%d/%m/%Y')} appears twice; the second row is the revised one (a few prices differ).
- {r.late_lister} lists five years late: blank before {d[r.listing_month].strftime('%d/%m/%Y')}.
- {r.delister} delists: last price {d[r.delisting_month - 1].strftime('%d/%m/%Y')}, blank after.
- {r.split} had a 2-for-1 split effective {d[r.split_month].strftime('%d/%m/%Y')}; earlier prices are NOT adjusted
  (raw ratio that month {raw_ratio:.4f}). Its EPS is on the post-split basis throughout (consistent with
  adjusted prices); it pays no dividends. Confirm the split at intake to adjust the earlier prices.
- `earnings.csv`: some EPS are negative ({len(r.loss_makers)} loss makers, others at times); {r.near_zero_eps} reports
  EPS 0.01 on {d[r.near_zero_month].isoformat()} (P/E {pe_nz:,.0f}) on its way from profit to loss;
  {C.N_EPS_MISSING_PER_SPELLING} values are `n.m.` and {C.N_EPS_MISSING_PER_SPELLING} are blank. EPS changes in
  report months (Mar, Jun, Sep, Dec) and is held in between.
- `dividends.csv`: {len(r.never_payers)} companies never pay, {len(r.quarterly_payers)} pay quarterly,
  {len(r.annual_payers)} annually; {r.dividend_cutter} cuts its dividend by {100 * (1 - C.CUT_FACTOR):.0f}% from
  {d[r.cut_month].strftime('%m/%Y')}; one {r.pre_history_payer} event ({pre.strftime('%m/%d/%Y')}) predates the price history.

## The planted relation (true values)

For every company listed at month-ends t and t+1:

    (P[t+1] + D[t+1]) / P[t] - 1 = m[t+1] + s[sector, t+1] + gamma * z[t] + e[t+1]

z[t] is the cross-sectional z-score (mean and standard deviation, ddof 0) of earnings yield
EPS[t] / P[t] over the names listed at t, computed from the values in these files before the
mess (split-adjusted prices, EPS as stamped, no reporting lag). D[t+1] is the cash going ex in
month t+1. m ~ N({t['market_mean']}, {t['market_sd']}^2) is common to all, s ~ N(0, {t['sector_sd']}^2) is drawn
afresh each month for each sector independently of z, e ~ N(0, {t['idio_sd']}^2).

| quantity | true value |
|---|---|
| gamma | {t['gamma']:.6f} |
| Pearson correlation of z[t] and the next month's return (rho) | {t['rho_pearson']:.4f} |
| Spearman IC, bivariate normal: (6/pi) asin(rho/2) | {t['spearman_ic']:.4f} |
| expected sample Spearman IC with {n_avg:.0f} names (Moran 1948) | {expected_spearman_ic(t['rho_pearson'], round(n_avg)):.4f} |
| standard error of the mean monthly IC, 1/sqrt(N-1)/sqrt(T) | {se:.4f} |

In this sample (seed {m.seed}) the mean monthly Spearman IC on the clean values is {ic.mean():.4f}
over {len(ic)} months.

Only the one-month relation is planted. Earnings yield is persistent (its z-score has a mean
lag-1 cross-sectional autocorrelation of {acf[0]:.3f} here), so longer horizons also show a
relation; approximately IC(h) = rho (1 + a1 + ... + a(h-1)) / sqrt(h) for summed monthly
returns, with the a(k) measured in this sample (not planted):

| horizon (months) | approximate IC |
|---|---|
{horizons}

To recover the planted value: exclude `Maren All-Share`, confirm the split of {r.split}, use
earnings yield with no reporting lag, plain z-scores (no winsorising, not sector-neutral),
total returns with dividends, one-month horizon.
"""
