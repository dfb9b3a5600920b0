"""Options shared by the command-line subcommands: reading files, the input files, and the study settings.

The leaf of the command-line tree: ``cli`` imports ``cli_commands``, ``cli_study`` and
``cli_sweep``, which all import this module (and ``caution``), never one another.

The study-setting options are generated from the settings table
(:data:`valuesift.core.settings.SETTINGS`): every row with a ``flag`` becomes an option whose
help is the row's help sentence with its allowed values and default in words.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from valuesift.core.intake import PanelOptions, ReadOptions

from valuesift.core.config import StudyConfig
from valuesift.core.settings import SETTINGS, Setting, describe_value

__all__ = [
    "add_intake_options",
    "read_options_from_args",
    "panel_options_from_args",
    "add_input_file_arguments",
    "load_study_panel",
    "add_setting_options",
    "config_from_args",
    "FLAG_ALIASES",
    "DEST_PREFIX",
]

#: Prefix of the parsed study settings (``args.setting_n_quantiles``), apart from the input-file options.
DEST_PREFIX = "setting_"

#: Flags kept from earlier versions (same setting, other spelling).
FLAG_ALIASES: dict[str, tuple[str, ...]] = {"winsor_percentiles": ("--winsorise",)}

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


# -- reading files --------------------------------------------------------------
def add_intake_options(p: argparse.ArgumentParser) -> None:
    """The options that override how files are read (shared by check, study and sweep)."""
    g = p.add_argument_group("reading files (every choice overrides auto-detection)")
    g.add_argument("--exclude", action="append", default=[], metavar="COLUMN",
                   help="column to leave out of every file (e.g. a market index among the securities); repeatable")
    g.add_argument("--date-column", default=None, metavar="COLUMN",
                   help="the column that holds the dates, in every file read (default: detected)")
    g.add_argument("--security-column", default=None, metavar="COLUMN",
                   help="long layout: the column that holds the security identifiers (default: detected)")
    g.add_argument("--value-column", default=None, metavar="COLUMN",
                   help="long layout: the column that holds the values (default: detected)")
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
    g.add_argument("--keep-suspect-dividends", action="store_true",
                   help="keep dividends that fall in a month without a price or exceed 10 %% of the month's price "
                        "(default: they are set aside and listed in the report)")
    g.add_argument("--earnings-form", choices=["auto", "eps", "pe"], default="auto",
                   help="whether the earnings file holds EPS or P/E ratios (default: decide from the header or "
                        "file name, else EPS)")
    g.add_argument("--earnings-date-column", default=None, metavar="COLUMN",
                   help="long earnings file: the column with the date each figure became public (announcement, "
                        "report or release date); each EPS is then used from the first month-end on or after it, "
                        "with no fixed reporting lag (default: such a column is detected by its name)")


def read_options_from_args(args: argparse.Namespace, kind: str | None = None, **extra: Any) -> ReadOptions:
    """The reading choices of the command line as :class:`ReadOptions`."""
    # intake (and with it pandas) is imported when a command reads files, not to build the parser:
    # measured with `python -X importtime -m valuesift.app.cli --help`, pandas alone is about 0.5 s of start-up
    from valuesift.core.intake import ReadOptions

    return ReadOptions(
        kind=kind,  # type: ignore[arg-type]
        layout=args.layout,
        header_row=args.header_row,
        date_column=getattr(args, "date_column", None),
        security_column=getattr(args, "security_column", None),
        value_column=getattr(args, "value_column", None),
        date_order=args.date_order,
        decimal=args.decimal,
        id_cleanup=args.id_cleanup,
        id_regex=args.id_regex,
        exclude_columns=tuple(args.exclude),
        duplicate_rule=args.duplicates,
        earnings_date_column=getattr(args, "earnings_date_column", None) if kind == "earnings" else None,
        earnings_form=getattr(args, "earnings_form", "auto") if kind == "earnings" else "auto",
        **extra,
    )


def panel_options_from_args(args: argparse.Namespace) -> PanelOptions:
    """The panel-building choices of the command line as :class:`PanelOptions`."""
    from valuesift.core.intake import PanelOptions  # pandas only when files are read (--help start-up, above)

    return PanelOptions(
        staleness_days=args.staleness_days,
        confirmed_splits=frozenset(args.confirm_split),
        apply_all_suspected_splits=args.apply_splits,
        keep_suspect_dividends=bool(getattr(args, "keep_suspect_dividends", False)),
    )


# -- input files ----------------------------------------------------------------
def add_input_file_arguments(p: argparse.ArgumentParser, *, signal_help: str) -> None:
    """The input-file options of study and sweep."""
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


def load_study_panel(args: argparse.Namespace) -> tuple[Any, list[dict[str, Any]]]:
    """Read every input file named on the command line and build the panel."""
    from valuesift.core.intake import build_panel, read_table  # pandas only when files are read (--help start-up)

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
    inputs = [{"name": pf.name, "kind": pf.kind, "size": pf.size, "sha256": pf.sha256} for pf in parsed]
    return panel, inputs


# -- study settings, from the settings table --------------------------------------
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


def _names(text: str) -> tuple[str, ...]:
    return tuple(t.strip() for t in text.split(",") if t.strip())


def _help(s: Setting, default_words: str | None = None) -> str:
    if s.kind == "choice":
        allowed = "; ".join(f"{c} = {w}" for c, w in s.choices)
    elif s.kind in ("int", "float", "int_list", "percentile_pair"):
        allowed = s.rule()
    else:
        allowed = ""
    shown = default_words if default_words is not None else describe_value(s, s.default)
    text = f"{s.help} {'Allowed: ' + allowed + '. ' if allowed else ''}Default: {shown or 'none'}."
    return text.replace("%", "%%")


def add_setting_options(group: Any) -> None:
    """One option per study setting that names a flag in the settings table (default None: the table's default)."""
    for s in SETTINGS:
        if s.flag is None:
            continue
        flags = [s.flag, *FLAG_ALIASES.get(s.name, ())]
        kw: dict[str, Any] = {"dest": DEST_PREFIX + s.name, "default": None}
        if s.name == "signal":
            group.add_argument(*flags, **kw, metavar="NAME",
                               help=_help(s, "your --signal file's signal if given, else earnings yield")
                               + " Built-in names: earnings_yield, dividend_yield, composite.")
            continue
        if s.kind == "bool":
            kw["action"] = argparse.BooleanOptionalAction
        elif s.kind == "choice":
            kw.update(choices=list(s.codes))
        elif s.kind == "int":
            kw.update(type=int, metavar="N")
        elif s.kind == "float":
            kw.update(type=float, metavar="X")
        elif s.kind == "int_list":
            kw.update(type=_int_list, metavar="1,3,12")
        elif s.kind == "percentile_pair":
            kw.update(type=_pair, metavar="LO,HI")
        elif s.kind == "name_list" and s.name == "universe_sectors":
            kw.update(action="append", metavar="NAME")
        elif s.kind == "name_list":
            kw.update(type=_names, metavar="A,B")
        group.add_argument(*flags, **kw, help=_help(s) + (" Repeatable." if kw.get("action") == "append" else ""))
    if any(s.name == "dividend_treatment" and s.flag for s in SETTINGS):
        group.add_argument("--dividends-uninvested", dest=DEST_PREFIX + "dividend_treatment", action="store_const",
                           const="uninvested", help="the same as --dividends-as uninvested (kept from earlier versions)")


def config_from_args(args: argparse.Namespace, panel: Any) -> StudyConfig:
    """The study settings given on the command line; every setting not given keeps the table's default."""
    kwargs: dict[str, Any] = {}
    for s in SETTINGS:
        v = getattr(args, DEST_PREFIX + s.name, None)
        if v is None:
            continue
        kwargs[s.name] = tuple(v) if isinstance(v, list) else v
    if "signal" not in kwargs:
        kwargs["signal"] = panel.signals[0].name if (getattr(args, "signal", None) and panel.signals) else "earnings_yield"
    return StudyConfig(**kwargs)
