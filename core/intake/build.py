"""Building the canonical :class:`~core.panel.Panel` from parsed files."""

from __future__ import annotations

import os
from typing import Mapping, Sequence

import numpy as np
import pandas as pd

from valuesift.core.collector import collector_paused
from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake.align import align_to_months, month_calendar
from valuesift.core.intake.files import ParsedFile, read_table
from valuesift.core.intake.flags import security_table
from valuesift.core.intake.options import PanelOptions, ReadOptions
from valuesift.core.intake.report import IntakeReport
from valuesift.core.intake.splits import apply_split, detect_splits, shows_same_jump
from valuesift.core.panel import Panel, UserSignal, month_end_index

__all__ = ["build_panel", "load_files"]

_PANEL = "(panel)"


def _names(xs: Sequence[str], k: int = 5) -> str:
    xs = list(xs)
    return ", ".join(map(str, xs[:k])) + (f" and {len(xs) - k} more" if len(xs) > k else "")


def build_panel(files: Sequence[ParsedFile], options: PanelOptions = PanelOptions()) -> Panel:
    """Align parsed files on one month-end calendar and account for everything set aside.

    Parameters
    ----------
    files : sequence of ParsedFile
        Exactly one ``prices`` file; at most one of each other kind except
        ``signal`` (any number).
    options : PanelOptions

    Returns
    -------
    Panel
        With ``report`` (an :class:`IntakeReport`) and ``sources``.

    Raises
    ------
    IntakeError
        No or several price files, two files of one kind, or a price file without valid prices.

    Notes
    -----
    Calendar: every month-end from the price file's first to last month.
    Month value: the last valid observation in the month (daily input: missing
    when older than ``staleness_days``).  Coverage of a security = valid months
    / calendar months.  Split adjustment (confirmed or all suspected): prices
    before the split month are divided by the ratio; EPS stamped before it is
    divided likewise only when the EPS series shows the same jump (the last EPS
    before vs the first within six months after, same sign, within 15 % in
    logs); dividends by the same rule.  P/E input is turned into EPS = price /
    P/E with unadjusted prices before any adjustment.

    References
    ----------
    Common practice for month-end sampling of price histories.
    """
    try:
        with collector_paused():  # (see core.collector)
            return _build(files, options)
    except IntakeError:
        raise
    except Exception as err:
        raise IntakeError(_PANEL, Reason.UNREADABLE, f"the files could not be combined ({type(err).__name__}).",
                          hint="Check that each file was read with the right kind.") from err


def _by_kind(files: Sequence[ParsedFile]) -> dict[str, list[ParsedFile]]:
    out: dict[str, list[ParsedFile]] = {}
    for f in files:
        if not isinstance(f, ParsedFile):
            raise IntakeError(_PANEL, Reason.BAD_OPTION, f"expected parsed files, got {type(f).__name__}.",
                              hint="Read each file with read_table first.")
        out.setdefault(f.kind, []).append(f)
    prices = out.get("prices", [])
    if len(prices) != 1:
        raise IntakeError(_PANEL, Reason.PRICE_FILE_COUNT,
                          f"exactly one price file is needed, found {len(prices)}" + (f" ({_names([p.name for p in prices])})" if prices else "") + ".",
                          hint="Add the price file, or set kind='prices' on it (and another kind on the others).")
    for kind, fs in out.items():
        if kind != "signal" and len(fs) > 1:
            raise IntakeError(fs[1].name, Reason.DUPLICATE_KIND, f"more than one {kind} file given ({_names([f.name for f in fs])}).",
                              hint="Give one file per kind, or set the right kind on each.")
    return out


def _build(files: Sequence[ParsedFile], o: PanelOptions) -> Panel:
    by = _by_kind(files)
    pf = by["prices"][0]
    notes: list[str] = []
    align_rows: list[tuple[str, str, int]] = []
    cal = month_calendar(pf.data["date"])
    if len(cal) == 0:
        raise IntakeError(pf.name, Reason.NO_DATA, "the price file has no valid prices.",
                          hint="Check the report of the file: every cell was blank, unparseable or dropped.")
    pa = align_to_months(pf.data, cal, staleness_days=o.staleness_days, frequency=pf.report.frequency)
    _note_align(pf, pa.superseded, pa.n_stale, pa.outside, align_rows)
    raw_prices = pa.values
    secs = raw_prices.columns

    # earnings (P/E -> EPS with unadjusted prices)
    eps = None
    ef = by.get("earnings", [None])[0]
    if ef is not None:
        ea = align_to_months(ef.data, cal, staleness_days=o.staleness_days, frequency=ef.report.frequency)
        _note_align(ef, ea.superseded, ea.n_stale, ea.outside, align_rows)
        _note_unknown(ef, set(ef.data["security"].unique()) - set(secs), "earnings rows", notes, align_rows, len_of=ef.data)
        eps = ea.values.reindex(columns=secs)
        if ef.report.value_form == "pe":
            pe = eps
            with np.errstate(divide="ignore", invalid="ignore"):
                eps = raw_prices / pe.where(pe != 0)
            notes.append(f"{ef.name}: P/E values turned into EPS = month-end price / P/E (zero P/E left missing)")

    # splits
    found = detect_splits(raw_prices, o.split_threshold)
    prices = raw_prices
    divs = by.get("dividends", [None])[0]
    div_frame = divs.data.copy() if divs is not None else None
    applied = [bool(o.apply_all_suspected_splits or s in o.confirmed_splits) for s in found["security"]]
    eps_adj = [False] * len(found)
    for k in np.flatnonzero(np.asarray(applied, dtype=bool)):
        sec = str(found["security"].to_numpy()[k])
        date = pd.Timestamp(found["date"].to_numpy()[k])
        ratio = float(found["ratio"].to_numpy(dtype=float)[k])
        prices = apply_split(prices, sec, date, ratio)
        if eps is not None and sec in eps.columns:
            jump = shows_same_jump(eps[sec], date, ratio)
            if jump is not None:
                eps = apply_split(eps, sec, jump, ratio)
                eps_adj[k] = True
        if div_frame is not None:
            ds = div_frame[div_frame["security"] == sec].set_index("ex_date")["amount"].sort_index()
            djump = shows_same_jump(ds, date, ratio, window_months=12)
            if djump is not None:
                m = (div_frame["security"] == sec) & (div_frame["ex_date"] < djump)
                div_frame.loc[m, "amount"] = div_frame.loc[m, "amount"] / ratio
                notes.append(f"{sec}: dividends before {djump:%Y-%m-%d} divided by {ratio:g} (the dividend series shows the split's jump)")
        notes.append(f"{sec}: split of ratio {ratio:g} at {date:%Y-%m-%d} applied (prices before it divided by {ratio:g}); "
                     + ("EPS before the jump divided likewise" if eps_adj[k]
                        else "EPS left as stamped (it shows no matching jump, so it was taken as already adjusted)"))
    splits = found.assign(applied=applied, eps_adjusted=eps_adj)[["security", "date", "ratio", "applied", "eps_adjusted"]] if len(found) else \
        pd.DataFrame({"security": pd.Series([], dtype="str"), "date": pd.Series([], dtype="datetime64[ns]"),
                      "ratio": pd.Series([], dtype=float), "applied": pd.Series([], dtype=bool), "eps_adjusted": pd.Series([], dtype=bool)})
    for sec in sorted(o.confirmed_splits - set(found["security"])):
        notes.append(f"confirmed split for {sec!r} ignored: no suspected split was found for it")

    dividends = _dividends(div_frame, divs, secs, prices, cal, notes, align_rows, o)
    sectors = _sectors(by.get("sectors", [None])[0], secs, notes, align_rows)
    holdings = _holdings(by.get("holdings", [None])[0], secs, notes)
    benchmark = None
    bf = by.get("benchmark", [None])[0]
    if bf is not None:
        ba = align_to_months(bf.data.assign(security=""), cal, staleness_days=o.staleness_days, frequency=bf.report.frequency)
        _note_align(bf, ba.superseded, ba.n_stale, ba.outside, align_rows)
        benchmark = ba.values[""].rename("benchmark")
        miss = int(benchmark.isna().sum())
        if miss:
            notes.append(f"{bf.name}: {miss} of {len(cal)} calendar months have no benchmark value")
    mcap = None
    mf = by.get("market_cap", [None])[0]
    if mf is not None:
        ma = align_to_months(mf.data, cal, staleness_days=o.staleness_days, frequency=mf.report.frequency)
        _note_align(mf, ma.superseded, ma.n_stale, ma.outside, align_rows)
        _note_unknown(mf, set(mf.data["security"].unique()) - set(secs), "market-cap rows", notes, align_rows, len_of=mf.data)
        mcap = ma.values.reindex(columns=secs)
    signals = []
    for sf in by.get("signal", []):
        sa = align_to_months(sf.data, cal, staleness_days=o.staleness_days, frequency=sf.report.frequency)
        _note_align(sf, sa.superseded, sa.n_stale, sa.outside, align_rows)
        _note_unknown(sf, set(sf.data["security"].unique()) - set(secs), "signal rows", notes, align_rows, len_of=sf.data)
        nm = sf.options.signal_name or os.path.splitext(os.path.basename(sf.name))[0]
        signals.append(UserSignal(nm, sa.values.reindex(columns=secs), sf.options.higher_is_cheaper))

    table = security_table(prices, pa.stale, eps, splits, o, pf.report, ef is not None)
    report = IntakeReport(
        files=tuple(f.report for f in files),
        securities=table,
        suspected_splits=splits.reset_index(drop=True),
        panel_notes=tuple(notes),
        alignment=pd.DataFrame(align_rows, columns=["file", "reason", "count"]).astype({"count": "int64"}),
        holdings_total=float(holdings.sum()) if holdings is not None else None,
    )
    sources = tuple(
        dict(name=f.name, kind=f.kind, sha256=f.sha256, size=f.size, rows=f.report.n_rows, securities=f.report.n_securities)
        for f in files
    )
    by_availability = ef is not None and ef.report.availability_column is not None
    return Panel(prices=prices, eps=eps, dividends=dividends, sectors=sectors, holdings=holdings, benchmark=benchmark,
                 market_cap=mcap, signals=tuple(signals), report=report, sources=sources,
                 eps_dated_by_availability=bool(by_availability))


def _note_align(f: ParsedFile, superseded: int, stale: int, outside: int, rows: list[tuple[str, str, int]]) -> None:
    if superseded:
        rows.append((f.name, Reason.SUPERSEDED_IN_MONTH.value, superseded))
    if stale:
        rows.append((f.name, Reason.STALE.value, stale))
    if outside:
        rows.append((f.name, Reason.OUTSIDE_HISTORY.value, outside))


def _note_unknown(f: ParsedFile, unknown: set[str], what: str, notes: list[str], rows: list[tuple[str, str, int]], *, len_of: pd.DataFrame) -> None:
    if not unknown:
        return
    k = int(len_of["security"].isin(unknown).sum())
    rows.append((f.name, Reason.UNKNOWN_SECURITY.value, k))
    notes.append(f"{f.name}: {what} for {len(unknown)} securities not in the price file were dropped ({k} rows: {_names(sorted(unknown))})")


def _dividends(frame: pd.DataFrame | None, f: ParsedFile | None, secs: pd.Index, prices: pd.DataFrame, cal: pd.DatetimeIndex,
               notes: list[str], rows: list[tuple[str, str, int]], o: PanelOptions) -> pd.DataFrame | None:
    if frame is None or f is None:
        return None
    unknown = set(frame["security"].unique()) - set(secs)
    _note_unknown(f, unknown, "dividends", notes, rows, len_of=frame)
    d = frame[frame["security"].isin(secs)].copy()
    me = month_end_index(d["ex_date"])
    valid = prices.notna()
    first = valid.idxmax().where(valid.any())
    last = valid[::-1].idxmax().where(valid.any())
    lo = first.reindex(d["security"]).to_numpy()
    hi = last.reindex(d["security"]).to_numpy()
    out_cal = ~np.asarray(me.isin(cal))
    out_own = (np.asarray(me) < lo) | (np.asarray(me) > hi)
    k = int((out_cal | out_own).sum())
    if k:
        who = sorted(set(d["security"].to_numpy()[out_cal | out_own]))
        rows.append((f.name, Reason.OUTSIDE_HISTORY.value, k))
        notes.append(f"{f.name}: {k} dividend events dated outside their security's price history were kept but cannot "
                     f"enter returns ({int(out_cal.sum())} outside the calendar; securities: {_names(who)})")
    # A dividend that would enter returns silently wrong: in a month without a price, or a large share of the price.
    inside = ~(out_cal | out_own)
    px = prices.stack().rename("price")
    keys = pd.MultiIndex.from_arrays([pd.DatetimeIndex(me), d["security"].to_numpy()])
    month_price = px.reindex(keys).to_numpy(dtype=float)
    amount = d["amount"].to_numpy(dtype=float)
    no_price = inside & ~np.isfinite(month_price)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(np.isfinite(month_price) & (month_price > 0), amount / month_price, np.nan)
    too_big = inside & np.isfinite(share) & (share > o.dividend_plausible_share)
    for mask, reason, what in ((no_price, Reason.DIVIDEND_WITHOUT_PRICE, "in a month without a price"),
                               (too_big, Reason.DIVIDEND_IMPLAUSIBLE,
                                f"above {100 * o.dividend_plausible_share:g} % of the month's price")):
        n_bad = int(mask.sum())
        if not n_bad:
            continue
        who = sorted(set(d["security"].to_numpy()[mask]))
        rows.append((f.name, reason.value, n_bad))
        if o.keep_suspect_dividends:
            notes.append(f"{f.name}: {n_bad} dividend events {what} were kept in the returns as you asked "
                         f"(securities: {_names(who)})")
        else:
            notes.append(f"{f.name}: {n_bad} dividend events {what} were set aside (they would enter returns "
                         f"unchecked); keep them with the keep-suspect-dividends choice after checking "
                         f"(securities: {_names(who)})")
    if not o.keep_suspect_dividends:
        d = d[~(no_price | too_big)]
    return d.sort_values(["security", "ex_date"], kind="stable").reset_index(drop=True)


def _sectors(f: ParsedFile | None, secs: pd.Index, notes: list[str], rows: list[tuple[str, str, int]]) -> pd.Series | None:
    if f is None:
        return None
    d = f.data
    _note_unknown(f, set(d["security"].unique()) - set(secs), "sector rows", notes, rows, len_of=d)
    s = d[d["security"].isin(secs)].set_index("security")["sector"].astype("str")
    s.index.name = "security"
    missing = sorted(set(secs) - set(s.index))
    if missing:
        notes.append(f"{f.name}: {len(missing)} securities of the price file have no sector ({_names(missing)})")
    return s.sort_index()


def _holdings(f: ParsedFile | None, secs: pd.Index, notes: list[str]) -> pd.Series | None:
    if f is None:
        return None
    d = f.data
    w = d.set_index("security")["weight"].astype(float)
    w.index.name = "security"
    unknown = sorted(set(w.index) - set(secs))
    if unknown:
        notes.append(f"{f.name}: {len(unknown)} holdings are not in the price file (kept, but they cannot be screened: {_names(unknown)})")
    total = float(w.sum())
    if abs(total - 1.0) > 0.005:
        notes.append(f"{f.name}: holdings weights sum to {total:.4g}, not 1 (100%)")
    return w.sort_index()


def load_files(paths: Sequence[str | os.PathLike[str]], options: Mapping[str, ReadOptions] | None = None,
               panel_options: PanelOptions = PanelOptions()) -> Panel:
    """Read every path (options keyed by file name or path) and build the panel.

    Raises
    ------
    IntakeError
        From any file, or from :func:`build_panel`.
    """
    opts = dict(options or {})
    parsed = []
    for p in paths:
        key = os.fspath(p)
        o = opts.get(key) or opts.get(os.path.basename(key)) or ReadOptions()
        parsed.append(read_table(p, options=o))
    return build_panel(parsed, panel_options)

