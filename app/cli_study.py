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

from valuesift.app.caution import CAUTION
from valuesift.app.cli_options import (
    add_input_file_arguments,
    add_intake_options,
    add_setting_options,
    config_from_args,
    load_study_panel,
)

__all__ = ["add_study", "add_input_file_arguments", "add_study_arguments", "run_study_command", "config_from_args",
           "load_study_panel"]


def add_study_arguments(p: argparse.ArgumentParser) -> None:
    """The options of ``valuesift study``: input files, the study settings (from the settings table), output."""
    add_input_file_arguments(p, signal_help="your own signal series; it becomes the studied signal")
    s = p.add_argument_group("study settings (every one from the settings table; the default applies when left out)")
    add_setting_options(s)
    o = p.add_argument_group("output")
    o.add_argument("--name", default="study", help="study name (used in output file names)")
    o.add_argument("--out", required=True, metavar="DIR", help="folder for summary.json, tables/ and the bundle")
    o.add_argument("--title", default=None, help="title on the cover of the bundle's report.pdf")
    o.add_argument("--note", default=None, help="a note printed on the cover of report.pdf")
    o.add_argument("--sweep", default=None, metavar="DIR",
                   help="a finished `valuesift sweep` output folder to include in the bundle "
                        "(heat map, comparison table with multiple-testing adjustment)")
    o.add_argument("--no-bundle", action="store_true",
                   help="write only summary.json and tables/ic_by_date.csv, not the committee bundle")
    o.add_argument("--quiet", action="store_true", help="no progress lines")


def add_study(sub: Any) -> None:
    """The ``study`` subcommand."""
    p = sub.add_parser("study", help="run a study headless and write its results",
                       description="Run the same study as the dashboard and write summary.json and tables/.",
                       epilog=CAUTION)
    add_study_arguments(p)
    add_intake_options(p)
    p.set_defaults(func=run_study_command)


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
    """Run the study the options describe and write its results (and the bundle unless --no-bundle)."""
    # the engine (pandas, numpy kernels) loads when a study runs, not with the parser:
    # `python -X importtime -m valuesift.app.cli --help` measured it at about 0.6 s of start-up
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
        # The bundle (PDF, images) is imported only when one is written: 0.33 s more start-up for every
        # command otherwise (python -X importtime, cumulative after valuesift.app.cli).
        from valuesift.app.bundle import write_bundle

        sweep = None
        if getattr(args, "sweep", None):
            from valuesift.core.sweep import load_sweep  # with --sweep only (the sweep package loads Dask helpers)

            sweep = load_sweep(args.sweep)
        paths = write_bundle(result, panel, inputs, out, study_name=args.name, title=getattr(args, "title", None),
                             note=getattr(args, "note", None), progress=show, sweep=sweep)
        print(f"Wrote the committee bundle to {out} ({len(paths.files)} files, report of {paths.pages} pages) "
              f"and {paths.zip}")
        if paths.note:
            print(paths.note, file=sys.stderr)
    return 0


def _print_headline(summary: dict[str, Any]) -> None:
    rows = summary.get("horizons", {})
    print(f"{'horizon':>8} {'mean IC':>8} {'HAC t':>7} {'dates':>6} {'spread':>8} {'spread t':>8}")
    for key in sorted(rows, key=lambda k: int(k)):
        r = rows[key]

        def fmt(v: Any, spec: str) -> str:
            return format(v, spec) if isinstance(v, (int, float)) else "n/a"

        print(f"{key + 'm':>8} {fmt(r.get('mean_ic'), '8.4f')} {fmt(r.get('ic_t'), '7.2f')} "
              f"{fmt(r.get('n_dates'), '6d')} {fmt(r.get('spread'), '8.4f')} {fmt(r.get('spread_t'), '8.2f')}")
    print(CAUTION)
