"""``valuesift study``: the dashboard's study, headless.

Writes ``DIR/summary.json`` and ``DIR/tables/ic_by_date.csv`` (see README for every field).
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path
from typing import Any

__all__ = ["add_input_file_arguments", "add_study_arguments", "run_study_command", "config_from_args", "load_study_panel"]

_FILE_ARGS = (
    ("prices", "prices"),
    ("earnings", "earnings"),
    ("dividends", "dividends"),
    ("sectors", "sectors"),
    ("holdings", "holdings"),
    ("benchmark", "benchmark"),
    ("market_cap", "market_cap"),
    ("signal", "signal"),
)


def _int_list(text: str) -> tuple[int, ...]:
    try:
        vals = tuple(int(t) for t in text.replace(" ", "").split(",") if t)
    except ValueError as err:
        raise argparse.ArgumentTypeError(f"{text!r} is not a comma-separated list of whole months, e.g. 1,3,12") from err
    if not vals:
        raise argparse.ArgumentTypeError("give at least one horizon, e.g. 1,3,12")
    return vals


def _pair(text: str) -> tuple[float, float]:
    try:
        lo, hi = (float(t) for t in text.split(","))
    except ValueError as err:
        raise argparse.ArgumentTypeError(f"{text!r} is not two percentiles such as 1,99") from err
    return lo, hi


def add_input_file_arguments(p: argparse.ArgumentParser, *, signal_help: str) -> None:
    """The input-file options shared by ``study`` and ``sweep``."""
    f = p.add_argument_group("input files (any layout and format intake reads)")
    f.add_argument("--prices", required=True, metavar="FILE", help="month-end or daily prices (required)")
    f.add_argument("--earnings", metavar="FILE", help="trailing-twelve-month EPS (or P/E) series")
    f.add_argument("--dividends", metavar="FILE", help="dividend events: security, ex-date, amount")
    f.add_argument("--sectors", metavar="FILE", help="security to sector map")
    f.add_argument("--holdings", metavar="FILE", help="holdings with weights")
    f.add_argument("--benchmark", metavar="FILE", help="benchmark level series")
    f.add_argument("--market-cap", metavar="FILE", help="market capitalisation series (Fama-MacBeth control)")
    f.add_argument("--signal", metavar="FILE", help=signal_help)
    f.add_argument("--signal-name", default=None, help="name of your signal (default: the file name)")
    f.add_argument("--lower-is-cheaper", action="store_true",
                   help="your signal is a ratio like P/E where LOWER values mean cheaper")


def add_study_arguments(p: argparse.ArgumentParser) -> None:
    add_input_file_arguments(p, signal_help="your own signal series; it becomes the studied signal")

    s = p.add_argument_group("study settings")
    s.add_argument("--name", default="study", help="study name (used in output file names)")
    s.add_argument("--signal-kind", default=None,
                   help="earnings_yield, dividend_yield, composite, or your signal's name "
                        "(default: your --signal, else earnings_yield)")
    s.add_argument("--composite-of", default=None, metavar="A,B",
                   help="signals averaged (as z-scores) by the composite, e.g. earnings_yield,dividend_yield")
    s.add_argument("--horizons", type=_int_list, default=(1, 3, 6, 12, 24, 36), metavar="1,3,12")
    s.add_argument("--quantiles", type=int, default=5, metavar="N")
    s.add_argument("--min-breadth", type=int, default=10, metavar="N",
                   help="dates with fewer usable names are reported and get no IC")
    s.add_argument("--universe", choices=["all", "sectors", "holdings"], default="all")
    s.add_argument("--sector", action="append", default=[], metavar="NAME",
                   help="with --universe sectors: a sector to keep; repeatable")
    s.add_argument("--min-history", type=int, default=0, metavar="MONTHS")
    s.add_argument("--reporting-lag", type=int, default=0, metavar="MONTHS",
                   help="delay EPS stamps by this many months (e.g. 3 for fiscal-period-end stamps)")
    s.add_argument("--outliers", choices=["winsorise", "clip_robust_z", "none"], default="winsorise")
    s.add_argument("--winsorise", type=_pair, default=(1.0, 99.0), metavar="LO,HI")
    s.add_argument("--zscore", choices=["mean_std", "median_mad"], default="mean_std")
    s.add_argument("--sector-neutral", action="store_true")
    s.add_argument("--dividends-uninvested", action="store_true",
                   help="add dividends uninvested instead of reinvesting them at the ex-date month-end")
    s.add_argument("--excess", choices=["none", "universe", "benchmark"], default="none")
    s.add_argument("--delisting-return", type=float, default=0.0, metavar="R",
                   help="return assumed at delisting, after the last valid price (e.g. -0.3)")
    s.add_argument("--holding", type=int, default=1, metavar="MONTHS", help="backtest holding period")
    s.add_argument("--cost-bps", type=float, default=0.0, metavar="BPS", help="transaction cost per unit traded")
    s.add_argument("--risk-free", type=float, default=0.0, metavar="RATE", help="annual risk-free rate for Sharpe")
    s.add_argument("--out", required=True, metavar="DIR")
    s.add_argument("--title", default=None, help="title on the cover of the bundle's report.pdf")
    s.add_argument("--note", default=None, help="a note printed on the cover of report.pdf")
    s.add_argument("--sweep", default=None, metavar="DIR",
                   help="a finished `valuesift sweep` output folder to include in the bundle "
                        "(heat map, comparison table with multiple-testing adjustment)")
    s.add_argument("--no-bundle", action="store_true",
                   help="write only summary.json and tables/ic_by_date.csv, not the committee bundle")
    s.add_argument("--quiet", action="store_true", help="no progress lines")


def load_study_panel(args: argparse.Namespace) -> tuple[Any, list[dict[str, Any]]]:
    """Read every input file named on the command line and build the panel."""
    from valuesift.app.cli_commands import panel_options_from_args, read_options_from_args
    from valuesift.core.intake import build_panel, read_table

    parsed = []
    for attr, kind in _FILE_ARGS:
        path = getattr(args, attr, None)
        if not path:
            continue
        extra: dict[str, Any] = {}
        if kind == "signal":
            extra = {"signal_name": args.signal_name or Path(path).stem,
                     "higher_is_cheaper": not args.lower_is_cheaper}
        # Columns to exclude apply to the series files only (they name securities there).
        opts = read_options_from_args(args, kind, **extra)
        parsed.append(read_table(Path(path), name=Path(path).name, options=opts))
    panel = build_panel(parsed, panel_options_from_args(args))
    inputs = [
        {"name": pf.name, "kind": pf.kind, "size": pf.size, "sha256": pf.sha256}
        for pf in parsed
    ]
    return panel, inputs


def config_from_args(args: argparse.Namespace, panel: Any) -> Any:
    from valuesift.core.config import StudyConfig

    signal = args.signal_kind
    if signal is None:
        signal = panel.signals[0].name if (args.signal and panel.signals) else "earnings_yield"
    kwargs: dict[str, Any] = dict(
        signal=signal,
        horizons=tuple(args.horizons),
        n_quantiles=args.quantiles,
        min_breadth=args.min_breadth,
        universe=args.universe,
        universe_sectors=tuple(args.sector),
        min_history_months=args.min_history,
        reporting_lag_months=args.reporting_lag,
        outlier_rule=args.outliers,
        winsor_percentiles=tuple(args.winsorise),
        zscore_method=args.zscore,
        sector_neutral=args.sector_neutral,
        dividend_treatment="uninvested" if args.dividends_uninvested else "reinvest",
        excess_over=args.excess,
        delisting_return=args.delisting_return,
        holding_months=args.holding,
        transaction_cost_bps=args.cost_bps,
        risk_free_annual=args.risk_free,
    )
    if args.composite_of:
        kwargs["composite_of"] = tuple(t.strip() for t in args.composite_of.split(",") if t.strip())
    return StudyConfig(**kwargs)


def _progress_printer(quiet: bool) -> Any:
    start = time.perf_counter()

    def show(stage: str, fraction: float) -> None:
        if quiet:
            return
        width = 24
        done = int(round(max(0.0, min(1.0, fraction)) * width))
        bar = "#" * done + "." * (width - done)
        print(f"\r[{bar}] {fraction:4.0%} {stage:<34} {time.perf_counter() - start:5.1f}s",
              end="", file=sys.stderr, flush=True)
        if fraction >= 1.0:
            print(file=sys.stderr)

    return show


def run_study_command(args: argparse.Namespace) -> int:
    from valuesift.core.reporting.summary import ic_by_date_frame, summary_dict
    from valuesift.core.study import run_study

    show = _progress_printer(args.quiet)
    show("reading files", 0.0)
    panel, inputs = load_study_panel(args)
    config = config_from_args(args, panel)
    result = run_study(panel, config, progress=lambda stage, frac: show(stage, 0.05 + 0.9 * frac))
    out = Path(args.out)
    tables = out / "tables"
    tables.mkdir(parents=True, exist_ok=True)
    summary = summary_dict(result)
    summary["study_name"] = args.name
    summary["inputs"] = inputs
    ic_by_date_frame(result).to_csv(tables / "ic_by_date.csv", index=False, lineterminator="\n")
    from valuesift.app.bundle.tables import result_tables, write_csv  # every table, with or without the bundle

    for key, frame in result_tables(result, panel).items():
        if key != "ic_by_date":
            write_csv(frame, tables / f"{key}.csv")
    (out / "summary.json").write_text(json.dumps(summary, indent=2, sort_keys=True, allow_nan=False) + "\n",
                                      encoding="utf-8")
    show("done", 1.0)
    _print_headline(summary)
    print(f"Wrote {out / 'summary.json'} and the tables in {tables}")
    for w in summary.get("warnings", []):
        print(f"Warning: {w['message']}", file=sys.stderr)
    if not getattr(args, "no_bundle", False):
        from valuesift.app.bundle import write_bundle

        sweep = None
        if getattr(args, "sweep", None):
            from valuesift.core.sweep import load_sweep

            sweep = load_sweep(args.sweep)
        paths = write_bundle(result, panel, inputs, out, study_name=args.name, title=getattr(args, "title", None),
                             note=getattr(args, "note", None), progress=show, sweep=sweep)
        print(f"Wrote the committee bundle to {out} ({len(paths.files)} files, report of {paths.pages} pages) "
              f"and {paths.zip}")
        if paths.note:
            print(paths.note, file=sys.stderr)
    return 0


def _print_headline(summary: dict[str, Any]) -> None:
    from valuesift.app.cli import CAUTION

    rows = summary.get("horizons", {})
    print(f"{'horizon':>8} {'mean IC':>8} {'HAC t':>7} {'dates':>6} {'spread':>8} {'spread t':>8}")
    for key in sorted(rows, key=lambda k: int(k)):
        r = rows[key]

        def fmt(v: Any, spec: str) -> str:
            return format(v, spec) if isinstance(v, (int, float)) else "n/a"

        print(f"{key + 'm':>8} {fmt(r.get('mean_ic'), '8.4f')} {fmt(r.get('ic_t'), '7.2f')} "
              f"{fmt(r.get('n_dates'), '6d')} {fmt(r.get('spread'), '8.4f')} {fmt(r.get('spread_t'), '8.2f')}")
    print(CAUTION)
