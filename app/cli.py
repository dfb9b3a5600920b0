"""The ``valuesift`` command line.

Subcommands
-----------
serve   start the dashboard on 127.0.0.1 (``--demo`` loads the invented demo universe)
study   run a study headless and write summary.json and tables/
check   read files and print the intake report (exit 2 when a file cannot be read)
demo    write the invented demo universe files to a folder
sweep   run a grid of studies (on a Dask cluster) with multiple-testing adjustment
compare two to eight signals side by side (compare.csv, signal_correlation.csv, joint_fm.csv, bundle)

Every user-facing failure is a :class:`core.errors.ValueSiftError`; it is
printed as one plain message (no traceback) and the command exits non-zero.
"""

from __future__ import annotations

import argparse
import logging
import sys
from collections.abc import Sequence

from valuesift.app import cli_commands as cmd
from valuesift.app.caution import CAUTION
from valuesift.app.cli_compare import add_compare
from valuesift.app.cli_study import add_study
from valuesift.app.cli_sweep import add_sweep
from valuesift.core.errors import ValueSiftError

__all__ = ["main", "build_parser", "CAUTION"]

log = logging.getLogger("valuesift")


def build_parser() -> argparse.ArgumentParser:
    """The parser of every subcommand."""

    parser = argparse.ArgumentParser(
        prog="valuesift",
        description="Test whether a valuation signal has been rewarded in your universe.",
        epilog=CAUTION,
    )
    parser.add_argument("--verbose", "-v", action="store_true", help="log details (and causes of errors)")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    cmd.add_serve(sub)
    add_study(sub)
    cmd.add_check(sub)
    cmd.add_demo(sub)
    add_sweep(sub)
    add_compare(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    logging.basicConfig(
        level=logging.DEBUG if args.verbose else logging.WARNING,
        format="%(levelname)s %(name)s: %(message)s",
    )
    try:
        return int(args.func(args) or 0)
    except ValueSiftError as err:
        log.debug("error detail", exc_info=True)
        print(f"valuesift {args.command}: {err}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("valuesift: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
