"""Writing the demo market to files, with the planted real-world mess.

The clean arrays of :func:`core.demo.simulate.simulate_demo` are written in
the formats agreed for ``sample_data/``; the mess (preamble, thousands
separators, missing-value spellings, a duplicated date row, an unadjusted
split, an index column, blank and ``n.m.`` earnings) is added here only, so
the simulation stays clean.  Output is byte-for-byte deterministic: fixed
float formats, ``\\n`` line ends, UTF-8 without BOM, stable ordering.
"""

from __future__ import annotations

import csv
import os
import pathlib
from collections.abc import Iterable, Sequence

import numpy as np

from valuesift.core.demo import _constants as C
from valuesift.core.demo._readme import readme_text
from valuesift.core.demo.simulate import MESS_STREAM, DemoMarket, random_stream, simulate_demo
from valuesift.core.errors import ConfigError

__all__ = [
    "write_demo",
    "FILE_NAMES",
    "INDEX_COLUMN",
    "PRICE_PREAMBLE",
    "PRICE_MISSING_SPELLINGS",
    "EPS_MISSING_SPELLINGS",
]

FILE_NAMES = (
    "prices.csv", "earnings.csv", "dividends.csv", "sectors.csv", "holdings.csv", "benchmark.csv", "README.md",
)
INDEX_COLUMN = "Maren All-Share"
PRICE_PREAMBLE = ("Maren exchange closing prices", "Exported 2025-01-03", "")
PRICE_MISSING_SPELLINGS = ("#N/A", "n.a.", "--", "NA", "")
EPS_MISSING_SPELLINGS = ("n.m.", "")
_N_REVISED = 4          # prices revised between the two copies of the duplicated date row


def write_demo(out_dir: str | os.PathLike[str], seed: int = C.DEFAULT_SEED) -> list[pathlib.Path]:
    """Write the invented demo universe files into ``out_dir``.

    Parameters
    ----------
    out_dir : str or path-like
        Folder to write to; created if missing.  Files of the same names are
        overwritten; nothing else in the folder is touched.
    seed : int
        Non-negative seed (default: the seed behind the committed
        ``sample_data/``).

    Returns
    -------
    list of pathlib.Path
        The files written, in the order of :data:`FILE_NAMES`.

    Raises
    ------
    ConfigError
        If the seed is not a non-negative whole number, or the folder cannot
        be created or written (names the folder and the reason).

    Notes
    -----
    The files follow the agreed demo formats (see ``sample_data/README.md``,
    which is written too).  The planted relation is
    ``r_{t+1} = m + s_k + gamma z_t(EPS_t / P_t) + e`` with the true values
    in :data:`core.demo.DEMO_TRUTH`.

    References
    ----------
    docs/demo_universe.md, section "The demo universe".

    Examples
    --------
    >>> import tempfile
    >>> with tempfile.TemporaryDirectory() as d:
    ...     [p.name for p in write_demo(d)][:2]
    ['prices.csv', 'earnings.csv']
    """
    market = simulate_demo(seed)
    out = pathlib.Path(out_dir)
    if out.exists() and not out.is_dir():
        raise ConfigError(
            f"The demo output {str(out)!r} exists and is not a folder.",
            hint="Give --out a folder name (it is created if missing).",
        )
    texts = {
        "prices.csv": _prices_text(market),
        "earnings.csv": _earnings_text(market),
        "dividends.csv": _dividends_text(market),
        "sectors.csv": _csv_text(["code", "sector"], zip(market.codes, market.sectors)),
        "holdings.csv": _csv_text(["code", "weight"], ((c, f"{w:.2f}%") for c, w in market.holdings)),
        "benchmark.csv": _csv_text(
            ["date", "level"], ((d.isoformat(), f"{v:.4f}") for d, v in zip(market.dates, market.benchmark_level))
        ),
        "README.md": readme_text(market),
    }
    paths = []
    try:
        out.mkdir(parents=True, exist_ok=True)
        for name in FILE_NAMES:
            path = out / name
            path.write_bytes(texts[name].encode("utf-8"))
            paths.append(path)
    except OSError as err:
        raise ConfigError(
            f"Could not write the demo files to {str(out)!r}: {err.strerror or err}.",
            hint="Choose a folder you can write to.",
        ) from err
    return paths


# -- formatting ------------------------------------------------------------------------
def _csv_text(header: Sequence[str], rows: Iterable[Sequence[str]], delimiter: str = ",") -> str:
    lines: list[str] = []

    class _Sink:
        def write(self, s: str) -> int:
            lines.append(s)
            return len(s)

    w = csv.writer(_Sink(), delimiter=delimiter, lineterminator="\n", quoting=csv.QUOTE_MINIMAL)
    w.writerow(header)
    w.writerows(rows)
    return "".join(lines)


def _money(v: float) -> str:
    """Two decimals, thousands separator from 1,000 up (the csv writer then quotes it)."""
    return f"{v:,.2f}"


def _decimal_comma(v: float) -> str:
    return f"{v:.2f}".replace(".", ",")


# -- prices.csv ----------------------------------------------------------------------------
def _raw_prices(m: DemoMarket) -> np.ndarray:
    """Prices as the exchange export shows them: the split company unadjusted before its split."""
    raw = np.array(m.price, copy=True)
    j = m.codes.index(m.roles.split)
    raw[: m.roles.split_month, j] *= C.SPLIT_FACTOR
    return raw


def _regular_columns(m: DemoMarket) -> np.ndarray:
    r = m.roles
    special = {r.late_lister, r.delister, r.split, r.near_zero_eps, r.dividend_cutter, r.pre_history_payer}
    return np.array([c not in special for c in m.codes])


def _prices_text(m: DemoMarket) -> str:
    rng = random_stream(m.seed, MESS_STREAM)
    T, N = m.price.shape
    raw = _raw_prices(m)
    cells = np.where(np.isfinite(raw), np.vectorize(_money, otypes=[object])(np.nan_to_num(raw)), "").astype(object)

    # missing-value spellings on ordinary cells (not the first or last month, not the duplicated row)
    ok = m.listed & _regular_columns(m)[None, :]
    ok[[0, T - 1, C.DUPLICATE_MONTH], :] = False
    flat = np.flatnonzero(ok.ravel())
    k = C.N_PRICE_MISSING_PER_SPELLING
    chosen = rng.choice(flat, size=k * len(PRICE_MISSING_SPELLINGS), replace=False)
    for n, spelling in enumerate(PRICE_MISSING_SPELLINGS):
        for f in chosen[n * k : (n + 1) * k]:
            cells[f // N, f % N] = spelling

    # the first copy of the duplicated date: a preliminary row with a few prices revised afterwards
    dup = C.DUPLICATE_MONTH
    prelim = cells[dup].copy()
    cols = rng.choice(np.flatnonzero(m.listed[dup] & _regular_columns(m)), size=_N_REVISED, replace=False)
    for j in np.sort(cols):
        bump = rng.choice([-1.0, 1.0]) * rng.uniform(0.002, 0.01)
        prelim[j] = _money(round(float(raw[dup, j]) * (1.0 + bump), 2))

    rows: list[list[str]] = []
    for t, d in enumerate(m.dates):
        stamp = d.strftime("%d/%m/%Y")
        idx = _money(float(m.index_level[t]))
        if t == dup:
            rows.append([stamp, idx, *prelim])
        rows.append([stamp, idx, *cells[t]])
    body = _csv_text(["Date", INDEX_COLUMN, *m.codes], rows)
    return "".join(line + "\n" for line in PRICE_PREAMBLE) + body


# -- earnings.csv --------------------------------------------------------------------------
def _earnings_text(m: DemoMarket) -> str:
    rng = random_stream(m.seed, MESS_STREAM + 1)
    T, N = m.eps.shape
    cells = np.full((T, N), "", dtype=object)
    for t, j in zip(*np.nonzero(m.listed)):
        cells[t, j] = _decimal_comma(float(m.eps[t, j]))
    regular = m.listed & _regular_columns(m)[None, :]
    k = C.N_EPS_MISSING_PER_SPELLING
    losses = np.flatnonzero((regular & (m.eps < 0)).ravel())      # "not meaningful" is printed for losses
    for f in rng.choice(losses, size=k, replace=False):
        cells[f // N, f % N] = EPS_MISSING_SPELLINGS[0]
    others = np.flatnonzero((regular & (m.eps > 0)).ravel())
    for f in rng.choice(others, size=k, replace=False):
        cells[f // N, f % N] = EPS_MISSING_SPELLINGS[1]
    rows = [
        [m.dates[t].isoformat(), m.codes[j], cells[t, j]]
        for t in range(T)
        for j in range(N)
        if m.listed[t, j]
    ]
    return _csv_text(["known_on", "code", "eps_ttm"], rows, delimiter=";")


# -- dividends.csv -------------------------------------------------------------------------
def _dividends_text(m: DemoMarket) -> str:
    rows = [[e.code, e.ex_date.strftime("%m/%d/%Y"), f"{e.amount:.4f}"] for e in m.dividend_events]
    return _csv_text(["code", "ex_date", "amount"], rows)
