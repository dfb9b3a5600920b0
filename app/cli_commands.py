"""Subcommand definitions for the ``valuesift`` command line (kept apart from the entry point)."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

#: File name endings read as data by ``check``; anything else (a README, say) is skipped with a note.
DATA_SUFFIXES = frozenset({".csv", ".tsv", ".tab", ".txt", ".dat", ".xlsx", ".xlsm", ".parquet", ".pq"})

__all__ = ["DATA_SUFFIXES", "add_serve", "add_study", "add_check", "add_demo", "read_options_from_args"]


# -- shared intake options ----------------------------------------------------
def _add_intake_options(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("reading files (every choice overrides auto-detection)")
    g.add_argument("--exclude", action="append", default=[], metavar="COLUMN",
                   help="column to leave out of every file (e.g. a market index among the securities); repeatable")
    g.add_argument("--date-order", choices=["auto", "dmy", "mdy", "ymd"], default="auto",
                   help="day/month order for dates such as 03/04/2020 (default: decide from the data)")
    g.add_argument("--decimal", choices=["auto", "point", "comma"], default="auto",
                   help="decimal separator (default: decide from the data)")
    g.add_argument("--layout", choices=["auto", "wide", "long"], default="auto",
                   help="wide: dates down, one column per security; long: date, security, value columns")
    g.add_argument("--header-row", type=int, default=None, metavar="N",
                   help="1-based row that holds the column names (default: detected)")
    g.add_argument("--id-cleanup", choices=["none", "upper", "first_token", "regex"], default="none",
                   help="clean up security identifiers")
    g.add_argument("--id-regex", default=None, metavar="PATTERN",
                   help="with --id-cleanup regex: the identifier is the first group of this pattern")
    g.add_argument("--duplicates", choices=["last", "first", "error"], default="last",
                   help="rule for a repeated date/security (default: the last one wins)")
    g.add_argument("--staleness-days", type=int, default=10, metavar="DAYS",
                   help="daily input: a month-end value older than this is missing and flagged")
    g.add_argument("--apply-splits", action="store_true",
                   help="apply every suspected unadjusted split the report lists (after you checked them)")
    g.add_argument("--confirm-split", action="append", default=[], metavar="SECURITY",
                   help="apply the suspected split of this security only; repeatable")


def read_options_from_args(args: argparse.Namespace, kind: str | None = None, **extra: Any) -> Any:
    from valuesift.core.intake import ReadOptions

    return ReadOptions(
        kind=kind,  # type: ignore[arg-type]
        layout=args.layout,
        header_row=args.header_row,
        date_order=args.date_order,
        decimal=args.decimal,
        id_cleanup=args.id_cleanup,
        id_regex=args.id_regex,
        exclude_columns=tuple(args.exclude),
        duplicate_rule=args.duplicates,
        **extra,
    )


def panel_options_from_args(args: argparse.Namespace) -> Any:
    from valuesift.core.intake import PanelOptions

    return PanelOptions(
        staleness_days=args.staleness_days,
        confirmed_splits=frozenset(args.confirm_split),
        apply_all_suspected_splits=args.apply_splits,
    )


# -- check ----------------------------------------------------------------------
def add_check(sub: Any) -> None:
    p = sub.add_parser("check", help="read files and print the intake report",
                       description="Read price, earnings, dividend, sector, holdings and benchmark files and "
                                   "print what was read, what was dropped and why. Exits 2 when a file "
                                   "cannot be read.")
    p.add_argument("files", nargs="+", metavar="FILE")
    p.add_argument("--kind", action="append", default=[], metavar="FILE=KIND",
                   help="say what a file holds when its name does not (kinds: prices, earnings, dividends, "
                        "sectors, holdings, benchmark, market_cap, signal)")
    _add_intake_options(p)
    p.set_defaults(func=run_check)


def _kind_overrides(pairs: list[str]) -> dict[str, str]:
    from valuesift.core.errors import ConfigError

    out: dict[str, str] = {}
    for pair in pairs:
        if "=" not in pair:
            raise ConfigError(f"--kind {pair!r} is not of the form FILE=KIND.", hint="Example: --kind eps.csv=earnings")
        f, k = pair.rsplit("=", 1)
        out[Path(f).name] = k
    return out


def run_check(args: argparse.Namespace) -> int:
    from valuesift.core.errors import IntakeError
    from valuesift.core.intake import build_panel, read_table

    kinds = _kind_overrides(args.kind)
    parsed = []
    failures: list[str] = []
    for f in args.files:
        path = Path(f)
        if path.is_dir():
            continue
        if path.suffix.lower() not in DATA_SUFFIXES and path.name not in kinds:
            print(f"skipped {path.name}: not a data file by its name (use --kind {path.name}=KIND to read it)",
                  file=sys.stderr)
            continue
        try:
            opts = read_options_from_args(args, kinds.get(path.name))
            parsed.append(read_table(path, name=path.name, options=opts))
        except IntakeError as err:
            failures.append(str(err))
    if parsed and any(pf.kind == "prices" for pf in parsed):
        try:
            panel = build_panel(parsed, panel_options_from_args(args))
        except IntakeError as err:
            failures.append(str(err))
        else:
            assert panel.report is not None
            print(panel.report.to_text())
    else:
        for pf in parsed:
            print(pf.report.to_text())
            print()
        if parsed:
            print("No price file among the inputs: files were read one by one; a study needs one price file.")
    for msg in failures:
        print(f"ERROR {msg}", file=sys.stderr)
    return 2 if failures else 0


# -- demo -------------------------------------------------------------------------
def add_demo(sub: Any) -> None:
    p = sub.add_parser("demo", help="write the invented demo universe files",
                       description="Write the invented demo market (about 120 fictional companies, 15 years of "
                                   "month-ends, with deliberate real-world mess) to a folder.")
    p.add_argument("--out", required=True, metavar="DIR")
    p.add_argument("--seed", type=int, default=None, help="random seed (default: the one behind sample_data/)")
    p.set_defaults(func=run_demo)


def run_demo(args: argparse.Namespace) -> int:
    from valuesift.core.demo import write_demo

    kwargs = {} if args.seed is None else {"seed": args.seed}
    paths = write_demo(args.out, **kwargs)
    for path in paths:
        print(path)
    return 0


# -- serve ------------------------------------------------------------------------
def add_serve(sub: Any) -> None:
    p = sub.add_parser("serve", help="start the dashboard on this computer",
                       description="Start the dashboard. It listens on 127.0.0.1 only unless --host is given.")
    p.add_argument("--demo", action="store_true", help="open with the invented demo universe loaded")
    p.add_argument("--port", type=int, default=8750)
    p.add_argument("--host", default="127.0.0.1",
                   help="address to listen on; anything but loopback needs --allow-remote and prints a token")
    p.add_argument("--allow-remote", action="store_true", help="permit a non-loopback --host (token required)")
    p.add_argument("--token", default=None, help=argparse.SUPPRESS)   # refused: the process list would show it
    p.add_argument("--token-file", default=None, metavar="FILE",
                   help="file (private to you) whose first line is the access token for a non-loopback bind; "
                        "or set the VALUESIFT_TOKEN environment variable (default: a token is generated)")
    p.add_argument("--public-name", action="append", default=[], metavar="NAME",
                   help="with --allow-remote: a host name other computers use to reach the "
                        "dashboard; repeatable (the Host header of every request must be one of the names)")
    p.add_argument("--workspace", default=None, metavar="DIR",
                   help="folder for uploaded datasets (default: ~/.valuesift/workspace)")
    p.add_argument("--max-upload-mb", type=float, default=200.0, metavar="MB",
                   help="largest upload the server accepts, in megabytes (default 200)")
    p.add_argument("--dev", action="store_true", help="developer mode: Dash debug tools and hot reload")
    p.set_defaults(func=run_serve)


def run_serve(args: argparse.Namespace) -> int:
    from valuesift.app.server import read_token, serve
    from valuesift.core.errors import ConfigError

    if args.token is not None:
        raise ConfigError("A token given on the command line can be read by every user of this computer "
                          "(the process list shows it).",
                          hint="Put it in the VALUESIFT_TOKEN environment variable or in a private file given with "
                               "--token-file, or leave it out to have one generated.")
    names = [n.strip().lower() for n in args.public_name]
    return serve(
        host=args.host,
        port=args.port,
        demo=args.demo,
        workspace=args.workspace,
        dev=args.dev,
        allow_remote=args.allow_remote,
        token=read_token(args.token_file),
        max_upload_mb=args.max_upload_mb,
        public_names=names,
    )


# -- study ------------------------------------------------------------------------
def add_study(sub: Any) -> None:
    from valuesift.app.cli_study import add_study_arguments, run_study_command

    p = sub.add_parser("study", help="run a study headless and write its results",
                       description="Run the same study as the dashboard and write summary.json and tables/.")
    add_study_arguments(p)
    _add_intake_options(p)
    p.set_defaults(func=run_study_command)
