"""``valuesift sweep``: many studies from one grid file, on a Dask cluster, with multiple-testing discipline.

Writes into ``DIR``: ``comparison.csv``, ``comparison.parquet``, ``sweep.json``,
``heatmap.html`` (and ``heatmap.png`` when a Chromium is available) and
``cache/`` (finished points, reused by a re-run with the same grid and inputs).

Without ``--scheduler`` a local Dask cluster on 127.0.0.1 is started, one
single-threaded worker per core; ``--scheduler tcp://HOST:8786`` uses an
existing cluster instead (its workers need ValueSift installed).
"""

from __future__ import annotations

import argparse
import logging
import os
import sys
import time
from contextlib import ExitStack
from pathlib import Path
from typing import Any

from valuesift.app.caution import CAUTION
from valuesift.core.errors import ConfigError
from valuesift.app.cli_options import add_input_file_arguments, add_intake_options, load_study_panel

__all__ = ["add_sweep", "run_sweep_command"]


def add_sweep(sub: Any) -> None:
    """The ``sweep`` subcommand (its study settings come from the grid file, see docs/sweep_example.toml)."""
    p = sub.add_parser("sweep", help="run many studies from a grid file and compare them",
                       description="Cross the settings listed in a grid file (TOML), run every study on a Dask "
                                   "cluster and write one comparison table with multiple-testing adjustment.")
    p.add_argument("--grid", required=True, metavar="GRID.toml", help="grid file (see docs/sweep_example.toml)")
    p.add_argument("--out", required=True, metavar="DIR", help="output folder (a re-run reuses its finished points)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="address of an existing Dask scheduler, e.g. tcp://10.0.0.5:8786 (default: a local cluster)")
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help="local cluster: number of worker processes (default: one per core)")
    p.add_argument("--in-process", action="store_true",
                   help="local cluster: worker threads in this process instead of worker processes")
    p.add_argument("--holdout-from", default=None, metavar="YYYY-MM",
                   help="judge out of sample: pick the best configuration on the dates before this month and report "
                        "it (and its rank) on the dates from this month on; writes holdout.csv")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    add_input_file_arguments(p, signal_help="your own signal series (use its name in the grid)")
    add_intake_options(p)
    p.set_defaults(func=run_sweep_command)


def _bar(quiet: bool) -> Any:
    start = time.perf_counter()

    def show(done: int, total: int, point_id: str, status: str) -> None:
        if quiet:
            return
        width = 30
        frac = done / total if total else 1.0
        filled = int(round(frac * width))
        print(f"\r[{'#' * filled}{'.' * (width - filled)}] {done}/{total} points  last {point_id} {status:<7} "
              f"{time.perf_counter() - start:6.1f}s", end="", file=sys.stderr, flush=True)
        if done >= total:
            print(file=sys.stderr)

    return show


def _client(args: argparse.Namespace, stack: ExitStack) -> Any:
    try:
        # the cluster only when a sweep runs: 0.52 s of start-up (python -X importtime, after valuesift.app.cli)
        from distributed import Client, LocalCluster
    except ImportError as err:
        raise ConfigError("The sweep needs the Dask packages 'dask' and 'distributed'.",
                          hint="Install them with: pip install 'valuesift[cluster]'.") from err
    if args.scheduler:
        try:
            return stack.enter_context(Client(args.scheduler, timeout="20s"))
        except (OSError, TimeoutError) as err:
            raise ConfigError(f"No Dask scheduler answered at --scheduler {args.scheduler!r} ({err}).",
                              hint="Check the address (tcp://HOST:PORT) and that the scheduler is running.") from err
    n = args.workers or max(1, os.cpu_count() or 1)
    if n < 1:
        raise ConfigError(f"--workers {n} is not allowed.", hint="Give 1 or more.")
    if args.in_process:
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=False, dashboard_address=None,
                               silence_logs=logging.WARNING)
    else:
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=None, silence_logs=logging.WARNING)
    stack.enter_context(cluster)
    return stack.enter_context(Client(cluster))


def run_sweep_command(args: argparse.Namespace) -> int:
    # plotly loads only when a sweep runs: 0.15 s of start-up (python -X importtime, after valuesift.app.cli)
    from valuesift.app.figures.sweep import sweep_heatmap_figure, write_heatmap

    # imported here, not at the top: the sweep engine pulls in scipy.stats and Dask (about 1.4 s), which
    # `valuesift --help` and every other command do not need
    from valuesift.core.sweep import read_grid, run_sweep, save_sweep

    grid = read_grid(args.grid)
    out = Path(args.out)
    if not args.quiet:
        print(f"{grid.name}: {len(grid.points)} configurations x {len(grid.horizons)} horizon(s) "
              f"= {grid.n_tests} tests", file=sys.stderr)
    panel, _inputs = load_study_panel(args)
    with ExitStack() as stack:
        client = _client(args, stack)
        result = run_sweep(panel, grid, client=client, cache_dir=out / "cache", progress=_bar(args.quiet),
                           holdout=args.holdout_from)
    paths = save_sweep(result, out)
    from valuesift.core.sweep.selection import deflated_best, holdout_report, holdout_sentence

    if result.holdout:
        rep = holdout_report(result.table, result.dimensions, top=len(result.table))
        rep.to_csv(out / "holdout.csv", index=False, lineterminator="\n")
        paths.append(out / "holdout.csv")
        print(holdout_sentence(rep, result.holdout, len(rep)))
    d = deflated_best(result.table)
    if d["n_trials"]:
        print(f"Best long-short Sharpe ratio {d['sharpe']:.2f} (configuration {d['point_id']}, {d['horizon']} months"
              f"{', before ' + result.holdout if result.holdout else ''}): probabilistic Sharpe ratio {d['psr']:.2f}, "
              f"deflated for {d['n_trials']} distinct trials {d['dsr']:.2f} (Bailey and Lopez de Prado 2012, 2014).")
    html_png, note = write_heatmap(sweep_heatmap_figure(result), out)
    paths += html_png
    print(result.statement)
    print(f"Computed {result.computed} configuration(s), reused {result.reused} from {out / 'cache'}.")
    if note:
        print(note)
    for p in paths:
        print(f"Wrote {p}")
    print(CAUTION)
    return 0
