"""Subcommand definitions for the ``valuesift`` command line (kept apart from the entry point)."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

from valuesift.core.errors import ConfigError, IntakeError
from valuesift.app.cli_options import add_intake_options, panel_options_from_args, read_options_from_args
from valuesift.app.paths import user_data_dir

#: File name endings read as data by ``check``; anything else (a README, say) is skipped with a note.
DATA_SUFFIXES = frozenset({".csv", ".tsv", ".tab", ".txt", ".dat", ".xlsx", ".xlsm", ".parquet", ".pq"})

__all__ = ["DATA_SUFFIXES", "add_serve", "add_check", "add_demo"]


# -- check ----------------------------------------------------------------------
def add_check(sub: Any) -> None:
    p = sub.add_parser("check", help="read files and print the intake report",
                       description="Read price, earnings, dividend, sector, holdings and benchmark files and "
                                   "print what was read, what was dropped and why. Exits 2 when a file "
                                   "cannot be read.")
    p.add_argument("files", nargs="+", metavar="FILE", help="files to read (a folder is skipped; see --kind)")
    p.add_argument("--kind", action="append", default=[], metavar="FILE=KIND",
                   help="say what a file holds when its name does not (kinds: prices, earnings, dividends, "
                        "sectors, holdings, benchmark, market_cap, signal)")
    add_intake_options(p)
    p.set_defaults(func=run_check)


def _kind_overrides(pairs: list[str]) -> dict[str, str]:
    out: dict[str, str] = {}
    for pair in pairs:
        if "=" not in pair:
            raise ConfigError(f"--kind {pair!r} is not of the form FILE=KIND.", hint="Example: --kind eps.csv=earnings")
        f, k = pair.rsplit("=", 1)
        out[Path(f).name] = k
    return out


def run_check(args: argparse.Namespace) -> int:
    # intake and the report words (pandas) load when `check` runs, not with the parser:
    # `python -X importtime -m valuesift.app.cli --help` measured pandas at about 0.5 s of start-up
    from valuesift.core.intake import build_panel, read_table
    from valuesift.app.words import intake_report_text

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
            # The files that were read still get their report: the panel's failure is listed below.
            failures.append(str(err))
            for pf in parsed:
                print(pf.report.to_text())
                print()
        else:
            assert panel.report is not None
            print(intake_report_text(panel.report))
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
    p.add_argument("--out", required=True, metavar="DIR", help="folder to write the demo files to")
    p.add_argument("--seed", type=int, default=None, help="random seed (default: the one behind sample_data/)")
    p.set_defaults(func=run_demo)


def run_demo(args: argparse.Namespace) -> int:
    # the demo writer imports scipy.stats (its README's check figures): measured 1.3 s of every command's start-up
    from valuesift.core.demo import write_demo

    kwargs = {} if args.seed is None else {"seed": args.seed}
    paths = write_demo(args.out, **kwargs)
    for path in paths:
        print(path)
    return 0


# -- serve ------------------------------------------------------------------------
def _default_workspace() -> str:
    return str(user_data_dir() / "workspace")


def add_serve(sub: Any) -> None:
    p = sub.add_parser("serve", help="start the dashboard on this computer",
                       description="Start the dashboard. It listens on 127.0.0.1 only unless --host is given.")
    p.add_argument("--demo", action="store_true", help="open with the invented demo universe loaded")
    p.add_argument("--port", type=int, default=8750, help="port to listen on (default 8750)")
    p.add_argument("--host", default="127.0.0.1",
                   help="address to listen on; anything but loopback needs --allow-remote and prints a token")
    p.add_argument("--allow-remote", action="store_true", help="permit a non-loopback --host (token required)")
    p.add_argument("--token", default=None, metavar="TOKEN",
                   help="not accepted: a token on the command line is visible to every user of this computer in "
                        "the process list; use --token-file or the VALUESIFT_TOKEN environment variable")
    p.add_argument("--token-file", default=None, metavar="FILE",
                   help="file (private to you) whose first line is the access token for a non-loopback bind; "
                        "or set the VALUESIFT_TOKEN environment variable (default: a token is generated)")
    p.add_argument("--public-name", action="append", default=[], metavar="NAME",
                   help="with --allow-remote: a host name other computers use to reach the "
                        "dashboard; repeatable (the Host header of every request must be one of the names)")
    p.add_argument("--workspace", default=None, metavar="DIR",
                   help="folder that keeps uploaded files, reading choices, results and sweeps across restarts "
                        f"(default: {_default_workspace()})")
    p.add_argument("--max-upload-mb", type=float, default=200.0, metavar="MB",
                   help="largest upload the server accepts, in megabytes (default 200)")
    p.add_argument("--dev", action="store_true", help="developer mode: Dash debug tools and hot reload")
    p.set_defaults(func=run_serve)


def run_serve(args: argparse.Namespace) -> int:
    # Dash and the pages load only for `serve`: 0.78 s more start-up for every other command
    # (python -X importtime, cumulative after valuesift.app.cli).
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
