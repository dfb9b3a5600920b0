"""``valuesift compare``: two to eight signals side by side, headless.

Writes ``DIR/compare.csv``, ``DIR/signal_correlation.csv``, ``DIR/joint_fm.csv`` and (unless ``--no-bundle``)
the committee bundle of the comparison.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

from valuesift.app.caution import CAUTION
from valuesift.app.cli_options import (
    add_input_file_arguments,
    add_intake_options,
    add_setting_options,
    config_from_args,
    load_study_panel,
)
from valuesift.core.errors import ConfigError

__all__ = ["add_compare", "run_compare_command"]


def _signals(text: str) -> tuple[str, ...]:
    vals = tuple(t.strip() for t in text.split(",") if t.strip())
    if not vals:
        raise argparse.ArgumentTypeError("name the signals, e.g. earnings_yield,dividend_yield,composite")
    return vals


def add_compare(sub: Any) -> None:
    """The ``compare`` subcommand."""
    p = sub.add_parser("compare", help="compare two to eight signals on the same universe and settings",
                       description="Study each signal exactly as `valuesift study` would, with the same settings, and "
                                   "write them side by side with their rank correlation and a joint regression.",
                       epilog=CAUTION)
    p.add_argument("--signals", required=True, type=_signals, metavar="A,B,...",
                   help="two to eight signals: earnings_yield, dividend_yield, composite or your --signal file's name")
    add_input_file_arguments(p, signal_help="your own signal series; name it in --signals by --signal-name")
    s = p.add_argument_group("study settings (shared by every signal; from the settings table)")
    add_setting_options(s)
    o = p.add_argument_group("output")
    o.add_argument("--name", default="comparison", help="name of the comparison (used in file names)")
    o.add_argument("--out", required=True, metavar="DIR", help="folder for the three CSV files and the bundle")
    o.add_argument("--title", default=None, help="title of the comparison report")
    o.add_argument("--no-bundle", action="store_true", help="write only the three CSV files")
    o.add_argument("--quiet", action="store_true", help="no progress lines")
    add_intake_options(p)
    p.set_defaults(func=run_compare_command)


def run_compare_command(args: argparse.Namespace) -> int:
    from valuesift.app.bundle.compare_bundle import write_compare_bundle, write_compare_files
    from valuesift.app.bundle.stability_text import compare_sentences
    from valuesift.core.compare import run_compare

    if getattr(args, "setting_signal", None):
        raise ConfigError("--signal-kind does not apply to a comparison.", hint="Name the signals with --signals.")
    panel, _inputs = load_study_panel(args)
    config = config_from_args(args, panel)

    def show(stage: str, frac: float) -> None:
        if not args.quiet:
            print(f"\r[{frac:4.0%}] {stage:<44}", end="" if frac < 1 else "\n", file=sys.stderr, flush=True)

    cmp = run_compare(panel, args.signals, config, progress=show)
    out = Path(args.out)
    for p in write_compare_files(cmp, out):
        print(f"Wrote {p}")
    h = max([x for x in cmp.config.horizons if x <= 12] or [min(cmp.config.horizons)])
    for s in compare_sentences(cmp, h):
        print(s)
    for n in cmp.notes:
        print(f"Note: {n}")
    if not args.no_bundle:
        b = write_compare_bundle(cmp, out, name=args.name, title=args.title)
        print(f"Wrote the comparison bundle to {b.folder} ({len(b.files)} files) and {b.zip}")
    print(CAUTION)
    return 0
