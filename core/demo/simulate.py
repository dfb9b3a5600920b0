"""Simulation of the demo market: clean numpy arrays, no file mess.

Everything here is on the month-end calendar (``T`` months x ``N``
companies, companies sorted by code).  Prices are split-adjusted and rounded
to cents, EPS to cents, dividends to 1/10,000: these are exactly the values
the writer puts in the files before it adds the planted mess, so the signal
computed from the arrays is the signal computed from the files.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from valuesift.core.demo import _constants as C
from valuesift.core.demo._names import invent_names
from valuesift.core.errors import ConfigError

__all__ = ["DemoMarket", "DemoRoles", "DividendEvent", "simulate_demo", "month_end_dates", "random_stream"]

FloatArray = npt.NDArray[np.float64]
BoolArray = npt.NDArray[np.bool_]
IntArray = npt.NDArray[np.int64]

# independent random streams (spawn keys) so that one part can change without moving the others
_NAMES, _ROLES, _PRICES0, _YIELDS, _RETURNS, _DIVIDENDS, _HOLDINGS = range(7)
MESS_STREAM = 7


@dataclass(frozen=True)
class DividendEvent:
    """One dividend: the security code, the ex-date and the cash amount per share."""

    code: str
    ex_date: dt.date
    amount: float


@dataclass(frozen=True)
class DemoRoles:
    """Which company plays which planted part (codes), and when (0-based month indexes)."""

    late_lister: str
    delister: str
    split: str
    near_zero_eps: str
    dividend_cutter: str
    pre_history_payer: str
    loss_makers: tuple[str, ...]
    heavy_price: tuple[str, ...]
    never_payers: tuple[str, ...]
    quarterly_payers: tuple[str, ...]
    annual_payers: tuple[str, ...]
    listing_month: int
    delisting_month: int
    split_month: int
    near_zero_month: int
    cut_month: int


@dataclass(frozen=True, eq=False)
class DemoMarket:
    """The clean simulated market (read-only arrays; axes: months x companies sorted by code).

    ``price``, ``eps``: split-adjusted price and trailing EPS, NaN when not listed.
    ``dividend``: cash per share going ex in the month (0 when none).
    ``earnings_yield`` = eps / price; ``signal_z``: its cross-sectional z-score
    (ddof 0) over the names listed that month.  ``model_return[t]``: the
    planted return from month t-1 to t; ``total_return[t]`` = (price[t] +
    dividend[t]) / price[t-1] - 1 from the rounded values (differs from the
    planted one by price rounding only).  ``idio``, ``sector_effect``,
    ``market_return`` are the drawn components.
    """

    seed: int
    dates: tuple[dt.date, ...]
    codes: tuple[str, ...]
    names: tuple[str, ...]
    sector_names: tuple[str, ...]
    sectors: tuple[str, ...]
    sector_index: IntArray
    listed: BoolArray
    price: FloatArray
    eps: FloatArray
    dividend: FloatArray
    dividend_events: tuple[DividendEvent, ...]
    earnings_yield: FloatArray
    signal_z: FloatArray
    model_return: FloatArray
    total_return: FloatArray
    market_return: FloatArray
    sector_effect: FloatArray
    idio: FloatArray
    index_level: FloatArray
    benchmark_level: FloatArray
    holdings: tuple[tuple[str, float], ...]
    roles: DemoRoles


def month_end_dates(start: str = C.START_MONTH, n_months: int = C.N_MONTHS) -> tuple[dt.date, ...]:
    """Calendar month-ends from ``start`` for ``n_months`` months.

    Parameters
    ----------
    start : str
        First month as "yyyy-mm".
    n_months : int
        Number of month-ends.

    Returns
    -------
    tuple of datetime.date
        The last calendar day of each month.

    Notes
    -----
    Month-end = first day of the next month minus one day.

    Examples
    --------
    >>> [d.isoformat() for d in month_end_dates("2024-01", 2)]
    ['2024-01-31', '2024-02-29']
    """
    months = np.arange(np.datetime64(start, "M"), np.datetime64(start, "M") + n_months)
    ends = (months + 1).astype("datetime64[D]") - np.timedelta64(1, "D")
    return tuple(dt.date.fromisoformat(str(d)) for d in ends)


def random_stream(seed: int, key: int) -> np.random.Generator:
    """The independent random generator of one part of the demo (``key``) for ``seed`` (NumPy SeedSequence spawn key)."""
    return np.random.default_rng(np.random.SeedSequence(seed, spawn_key=(key,)))


def _check_seed(seed: object) -> int:
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or int(seed) < 0:
        raise ConfigError(
            f"The demo seed must be a whole number of at least 0; got {seed!r}.",
            hint="Leave it out to get the committed sample_data/ universe.",
        )
    return int(seed)


def _frozen(a: np.ndarray) -> np.ndarray:
    a = np.array(a, copy=True)
    a.setflags(write=False)
    return a


def _zscore(x: FloatArray, mask: BoolArray) -> FloatArray:
    out = np.full(x.shape, np.nan)
    v = x[mask]
    sd = v.std()
    out[mask] = (v - v.mean()) / sd
    return out


def simulate_demo(seed: int = C.DEFAULT_SEED) -> DemoMarket:
    """Simulate the invented demo market.

    Parameters
    ----------
    seed : int
        Non-negative seed; the same seed always gives the same market.

    Returns
    -------
    DemoMarket
        Clean arrays (no file mess) and the planted roles.

    Raises
    ------
    ConfigError
        If ``seed`` is not a non-negative whole number.

    Notes
    -----
    For every company listed at months ``t`` and ``t + 1``:
    ``(P_{t+1} + D_{t+1}) / P_t - 1 = m_{t+1} + s_{k,t+1} + GAMMA z_t + e_{t+1}``
    (up to rounding ``P_{t+1}`` to cents), ``z_t`` the ddof-0 cross-sectional
    z-score of ``EPS_t / P_t``.  EPS is refreshed in report months as
    ``round(y_t P_t, 2)`` from a latent AR(1) yield ``y`` and held in between,
    so earnings yield is persistent and close to normal across names.

    References
    ----------
    The design is documented in docs/demo_universe.md ("The demo universe").

    Examples
    --------
    >>> m = simulate_demo()
    >>> m.price.shape
    (180, 120)
    """
    seed = _check_seed(seed)
    T, N = C.N_MONTHS, C.N_COMPANIES
    dates = month_end_dates()

    # -- who is who -------------------------------------------------------------------
    sectors_unsorted = tuple(np.repeat(np.array(C.SECTOR_NAMES), C.SECTOR_SIZES).tolist())
    names_u, codes_u = invent_names(sectors_unsorted, random_stream(seed, _NAMES))
    order = np.argsort(np.array(codes_u), kind="stable")
    codes = tuple(codes_u[i] for i in order)
    names = tuple(names_u[i] for i in order)
    sectors = tuple(sectors_unsorted[i] for i in order)
    sector_index = np.array([C.SECTOR_NAMES.index(s) for s in sectors], dtype=np.int64)

    rr = random_stream(seed, _ROLES)
    pick = rr.permutation(N)
    late, delist, split, near0, cutter, prehist = (int(i) for i in pick[:6])
    loss = np.sort(pick[6 : 6 + C.N_LOSS_MAKERS])
    heavy = np.sort(pick[6 + C.N_LOSS_MAKERS : 6 + C.N_LOSS_MAKERS + C.N_HEAVY_PRICE])
    kind = rr.choice(3, size=N, p=[C.NEVER_PAYER_SHARE, C.ANNUAL_PAYER_SHARE,
                                    1 - C.NEVER_PAYER_SHARE - C.ANNUAL_PAYER_SHARE])  # 0 never, 1 annual, 2 quarterly
    kind[[split, near0]] = 0
    kind[[cutter, prehist]] = 2
    kind[loss] = 0
    first_ex_month = rr.integers(1, 13, size=N)        # calendar month of the first ex-date in a year
    first_ex_month[prehist] = 2                        # Feb, May, Aug, Nov: the Nov 2009 event precedes the data
    payout_yield = rr.uniform(0.015, 0.05, size=N)

    first = np.zeros(N, dtype=np.int64)
    first[late] = C.LATE_LISTING_MONTH
    stop = np.full(N, T, dtype=np.int64)               # first month without a price
    stop[delist] = C.DELISTING_MONTH
    month_idx = np.arange(T)
    listed = (month_idx[:, None] >= first[None, :]) & (month_idx[:, None] < stop[None, :])

    # -- starting prices --------------------------------------------------------------
    rp = random_stream(seed, _PRICES0)
    p0 = np.exp(rp.uniform(np.log(12.0), np.log(150.0), size=N))
    p0[heavy] = rp.uniform(1000.0, 3000.0, size=len(heavy))
    p0[split] = rp.uniform(550.0, 900.0)               # quoted at 2x before the split: above 1,000
    p0 = np.round(p0, 2)

    # -- latent earnings yield ---------------------------------------------------------
    ry = random_stream(seed, _YIELDS)
    mu = np.array(C.SECTOR_MEAN_YIELD)[sector_index] + ry.normal(0.0, C.YIELD_COMPANY_SD, size=N)
    mu[loss] = C.LOSS_MAKER_YIELD
    phi = C.YIELD_PERSISTENCE
    shocks = ry.normal(0.0, C.YIELD_WITHIN_SD * np.sqrt(1 - phi**2), size=(T, N))
    y = np.empty((T, N))
    y[0] = mu + ry.normal(0.0, C.YIELD_WITHIN_SD, size=N)
    for t in range(1, T):
        y[t] = mu + phi * (y[t - 1] - mu) + shocks[t]
    # the near-zero company: a steady slide from 6 % to -4 % with a little noise
    y[:, near0] = np.linspace(0.06, -0.04, T) + 0.2 * (y[:, near0] - mu[near0])

    # -- return components -------------------------------------------------------------
    rret = random_stream(seed, _RETURNS)
    market = rret.normal(C.MARKET_MEAN, C.MARKET_SD, size=T)
    sector_eff = rret.normal(0.0, C.SECTOR_SD, size=(T, len(C.SECTOR_NAMES)))
    idio = rret.normal(0.0, C.IDIO_SD, size=(T, N))
    market[0] = np.nan
    sector_eff[0] = np.nan
    idio[0] = np.nan

    rd = random_stream(seed, _DIVIDENDS)
    ex_day = rd.integers(2, 29, size=(T, N))

    price = np.full((T, N), np.nan)
    eps = np.full((T, N), np.nan)
    div = np.zeros((T, N))
    ey = np.full((T, N), np.nan)
    z = np.full((T, N), np.nan)
    r_model = np.full((T, N), np.nan)
    amount = np.full(N, np.nan)                        # current dividend per event
    events: list[DividendEvent] = []
    near_zero_month = -1
    cut_done = False
    cut_month = -1
    calendar_month = np.array([d.month for d in dates])

    for t in range(T):
        now = listed[t]
        if t > 0:
            cont = now & listed[t - 1]
            r = market[t] + sector_eff[t, sector_index] + C.GAMMA * z[t - 1] + idio[t]
            r_model[t, cont] = r[cont]
            # dividends going ex this month
            freq_month = np.where(kind == 2, (calendar_month[t] - first_ex_month) % 3 == 0,
                                  calendar_month[t] == first_ex_month)
            pays = cont & (kind > 0) & freq_month
            for i in np.flatnonzero(pays):
                per_year = 4 if kind[i] == 2 else 1
                target = payout_yield[i] * price[t - 1, i] / per_year
                cutting = i == cutter and t >= C.CUT_MONTH
                if cutting:
                    target *= C.CUT_FACTOR
                if np.isnan(amount[i]):
                    new = target
                elif cutting and not cut_done:
                    new = amount[i] * C.CUT_FACTOR          # the cut itself
                    cut_done = True
                    cut_month = t
                elif calendar_month[t] == first_ex_month[i]:  # progressive policy: reset once a year
                    new = amount[i] * min(max(target / amount[i], 0.75), 1.15)
                else:
                    new = amount[i]
                amount[i] = round(float(new), 4)
                div[t, i] = amount[i]
                events.append(DividendEvent(codes[i], dates[t].replace(day=int(ex_day[t, i])), float(amount[i])))
            price[t, cont] = np.round(price[t - 1, cont] * (1.0 + r[cont]) - div[t, cont], 2)
        new_names = now & ~(listed[t - 1] if t > 0 else np.zeros(N, dtype=bool))
        price[t, new_names] = p0[new_names]
        if np.any(price[t, now] <= 0):
            raise ConfigError(
                f"Demo seed {seed} drives a price to zero or below in month {t + 1}; the demo cannot use it.",
                hint="Choose another seed.",
            )
        # trailing EPS: refreshed in report months (and at listing), held in between
        report = now & ((calendar_month[t] in C.REPORT_MONTHS) | new_names)
        eps[t, now] = eps[t - 1, now] if t > 0 else np.nan
        fresh = np.round(y[t] * price[t], 2)
        fresh = np.where(fresh == 0.0, np.where(y[t] >= 0, 0.01, -0.01), fresh)   # never exactly zero
        if report[near0] and near_zero_month < 0 and eps[t, near0] > 0 and fresh[near0] <= 0:
            fresh[near0] = 0.01                        # the report where earnings pass through zero
            near_zero_month = t
        eps[t, report] = fresh[report]
        ey[t, now] = eps[t, now] / price[t, now]
        z[t] = _zscore(ey[t], now)

    if near_zero_month < 0 or cut_month < 0:
        raise ConfigError(
            f"Demo seed {seed} does not produce the planted earnings crossing or dividend cut.",
            hint="Choose another seed.",
        )
    total = np.full((T, N), np.nan)
    total[1:] = (price[1:] + div[1:]) / price[:-1] - 1.0
    # the dividend paid before the price history starts (same amount as its first in-sample one)
    first_pay = next(e for e in events if e.code == codes[prehist])
    pre = dates[0].replace(day=1) - dt.timedelta(days=1)                 # Dec 2009
    pre = (pre.replace(day=1) - dt.timedelta(days=1)).replace(day=16)    # 16 Nov 2009
    events.insert(0, DividendEvent(codes[prehist], pre, first_pay.amount))
    events.sort(key=lambda e: (e.code, e.ex_date))

    index_level, bench = _levels(price, div, listed)
    holdings = _holdings(codes, listed[-1], random_stream(seed, _HOLDINGS))
    roles = DemoRoles(
        late_lister=codes[late], delister=codes[delist], split=codes[split], near_zero_eps=codes[near0],
        dividend_cutter=codes[cutter], pre_history_payer=codes[prehist],
        loss_makers=tuple(codes[i] for i in loss), heavy_price=tuple(codes[i] for i in heavy),
        never_payers=tuple(c for c, k in zip(codes, kind) if k == 0),
        quarterly_payers=tuple(c for c, k in zip(codes, kind) if k == 2),
        annual_payers=tuple(c for c, k in zip(codes, kind) if k == 1),
        listing_month=C.LATE_LISTING_MONTH, delisting_month=C.DELISTING_MONTH, split_month=C.SPLIT_MONTH,
        near_zero_month=near_zero_month, cut_month=cut_month,
    )
    return DemoMarket(
        seed=seed, dates=dates, codes=codes, names=names, sector_names=C.SECTOR_NAMES, sectors=sectors,
        sector_index=_frozen(sector_index), listed=_frozen(listed), price=_frozen(price), eps=_frozen(eps),
        dividend=_frozen(div), dividend_events=tuple(events), earnings_yield=_frozen(ey), signal_z=_frozen(z),
        model_return=_frozen(r_model), total_return=_frozen(total), market_return=_frozen(market),
        sector_effect=_frozen(sector_eff), idio=_frozen(idio), index_level=_frozen(index_level),
        benchmark_level=_frozen(bench), holdings=holdings, roles=roles,
    )


def _levels(price: FloatArray, div: FloatArray, listed: BoolArray) -> tuple[FloatArray, FloatArray]:
    """Equal-weight price index (1,000 at the start, cents) and total-return benchmark (100, 4 dp)."""
    T = price.shape[0]
    idx = np.empty(T)
    bench = np.empty(T)
    idx_raw, bench_raw = 1000.0, 100.0
    idx[0], bench[0] = idx_raw, bench_raw
    for t in range(1, T):
        cont = listed[t] & listed[t - 1]
        pr = price[t, cont] / price[t - 1, cont] - 1.0
        tr = (price[t, cont] + div[t, cont]) / price[t - 1, cont] - 1.0
        idx_raw *= 1.0 + float(pr.mean())
        bench_raw *= 1.0 + float(tr.mean())
        idx[t], bench[t] = idx_raw, bench_raw
    return np.round(idx, 2), np.round(bench, 4)


def _holdings(codes: tuple[str, ...], listed_last: BoolArray, rng: np.random.Generator) -> tuple[tuple[str, float], ...]:
    """About 30 names listed at the end, weights in percent with 2 decimals summing to exactly 100."""
    chosen = np.sort(rng.choice(np.flatnonzero(listed_last), size=C.N_HOLDINGS, replace=False))
    raw = rng.gamma(2.0, size=C.N_HOLDINGS)
    bp = raw / raw.sum() * 10_000.0                    # hundredths of a percent
    cents = np.floor(bp).astype(np.int64)
    short = 10_000 - int(cents.sum())
    cents[np.argsort(-(bp - cents), kind="stable")[:short]] += 1   # largest remainders
    return tuple((codes[i], int(c) / 100.0) for i, c in zip(chosen, cents))
