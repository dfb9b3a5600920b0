"""Reading and panel-building choices (frozen, validated in one place)."""

from __future__ import annotations

import codecs
import re
from dataclasses import dataclass
from typing import get_args

from valuesift.core.choices import DateOrder, DecimalStyle, DuplicateRule, EarningsForm, FileKind, IdCleanup, Layout
from valuesift.core.errors import ConfigError

__all__ = ["ReadOptions", "PanelOptions", "READ_CHOICES", "choice_words"]

#: Each reading choice in words, with its command-line flag: the one home of the names the Data page's
#: "Change how this file is read" controls carry, the command-line options use and every error and note
#: of intake names (a message never names a field of :class:`ReadOptions`).
READ_CHOICES: dict[str, tuple[str, str | None]] = {
    "kind": ("File holds", None),
    "layout": ("Layout", "--layout"),
    "header_row": ("Header row", "--header-row"),
    "date_column": ("Date column", "--date-column"),
    "security_column": ("Security column", "--security-column"),
    "value_column": ("Value column", "--value-column"),
    "date_order": ("Date order", "--date-order"),
    "decimal": ("Decimal style", "--decimal"),
    "delimiter": ("Delimiter", None),
    "encoding": ("Text encoding", None),
    "sheet": ("Worksheet", None),
    "id_cleanup": ("Identifier clean-up", "--id-cleanup"),
    "id_regex": ("Identifier pattern", "--id-regex"),
    "exclude_columns": ("Columns to leave out", "--exclude"),
    "earnings_form": ("Earnings read as", "--earnings-form"),
    "earnings_date_column": ("Date each figure became public", "--earnings-date-column"),
    "duplicate_rule": ("Repeated date and security", "--duplicates"),
    "signal_name": ("Signal name", "--signal-name"),
}


def choice_words(name: str) -> str:
    """A reading choice as a person finds it: ``"'Date column' (--date-column)"``."""
    label, flag = READ_CHOICES[name]
    return f"'{label}'" + (f" ({flag})" if flag else "")


def _check_choice(setting: str, value: object, alias: object) -> None:
    allowed = get_args(alias)
    if value not in allowed:
        raise ConfigError(
            f"{choice_words(setting)} {value!r} is not allowed.",
            hint=f"Use one of: {', '.join(map(repr, allowed))}.",
        )


@dataclass(frozen=True)
class ReadOptions:
    """One file's reading choices; every field set here overrides auto-detection.

    Parameters
    ----------
    kind : {"prices", "earnings", ...} or None
        What the file holds; ``None`` guesses it from the file name and header.
    layout : {"auto", "wide", "long"}
        Wide: dates down, one column per security.  Long: date, security, value columns.
    header_row : int or None
        1-based row of the header (rows above it are skipped); ``None`` detects it.
    date_column, security_column, value_column : str or None
        Column names to use instead of the detected ones.
    date_order : {"auto", "dmy", "mdy", "ymd"}
        Order of slash dates.  ``auto`` decides from the data when any day is above 12,
        otherwise assumes day-first and says so in the report.
    decimal : {"auto", "point", "comma"}
    delimiter, encoding : str or None
    sheet : str, int or None
        Worksheet of an xlsx file (name, or 0-based position); ``None``: first sheet with data.
    id_cleanup : {"none", "upper", "first_token", "regex"}
    id_regex : str or None
        With ``id_cleanup="regex"``: the first capture group (or the whole match) is the id.
    exclude_columns : tuple of str
        Columns that are not securities (for example a market index level).
    earnings_form : {"auto", "eps", "pe"}
    earnings_date_column : str or None
        Long-layout earnings: the column holding the date each figure became public
        (announcement, report, release or availability date).  ``None`` detects such a
        column by its name.  When one is used, each EPS counts from the first month-end
        on or after its own date and the study applies no fixed reporting lag.
    duplicate_rule : {"last", "first", "error"}
    signal_name : str or None
    higher_is_cheaper : bool
    max_bytes : int
        Files above this size are refused (an xlsx may unpack to at most 4x this size).
    """

    kind: FileKind | None = None
    layout: Layout = "auto"
    header_row: int | None = None
    date_column: str | None = None
    security_column: str | None = None
    value_column: str | None = None
    date_order: DateOrder = "auto"
    decimal: DecimalStyle = "auto"
    delimiter: str | None = None
    encoding: str | None = None
    sheet: str | int | None = None
    id_cleanup: IdCleanup = "none"
    id_regex: str | None = None
    exclude_columns: tuple[str, ...] = ()
    earnings_form: EarningsForm = "auto"
    earnings_date_column: str | None = None
    duplicate_rule: DuplicateRule = "last"
    signal_name: str | None = None
    higher_is_cheaper: bool = True
    max_bytes: int = 200 * 1024 * 1024

    def __post_init__(self) -> None:
        if self.kind is not None:
            _check_choice("kind", self.kind, FileKind)
        _check_choice("layout", self.layout, Layout)
        _check_choice("date_order", self.date_order, DateOrder)
        _check_choice("decimal", self.decimal, DecimalStyle)
        _check_choice("id_cleanup", self.id_cleanup, IdCleanup)
        _check_choice("earnings_form", self.earnings_form, EarningsForm)
        _check_choice("duplicate_rule", self.duplicate_rule, DuplicateRule)
        if self.header_row is not None and (not isinstance(self.header_row, int) or self.header_row < 1):
            raise ConfigError(f"{choice_words('header_row')} {self.header_row!r} is not allowed.",
                              hint="Give a row number counted from 1.")
        if self.delimiter is not None and len(self.delimiter) != 1:
            raise ConfigError(f"{choice_words('delimiter')} {self.delimiter!r} is not allowed.", hint="Give one character.")
        if self.encoding is not None:
            try:
                codecs.lookup(self.encoding)
            except LookupError as err:
                raise ConfigError(f"{choice_words('encoding')} {self.encoding!r} is not a known encoding.", hint="Try 'utf-8' or 'cp1252'.") from err
        if self.id_cleanup == "regex":
            if not self.id_regex:
                raise ConfigError(f"{choice_words('id_cleanup')} by pattern needs an {choice_words('id_regex')}.",
                                  hint="Give a regular expression.")
            try:
                re.compile(self.id_regex)
            except re.error as err:
                raise ConfigError(f"{choice_words('id_regex')} {self.id_regex!r} is not a valid regular expression.",
                                  hint=str(err)) from err
            _check_regex_cost(self.id_regex)
        if isinstance(self.exclude_columns, str):
            raise ConfigError(f"{choice_words('exclude_columns')} must be a list of column names, not one string.",
                              hint="Separate the names with commas; each is one column to leave out.")
        if not isinstance(self.max_bytes, int) or self.max_bytes <= 0:
            raise ConfigError(f"The largest file size {self.max_bytes!r} is not allowed.", hint="Give a positive byte count.")


#: the longest identifier pattern accepted (it is run on every identifier of a file)
MAX_ID_REGEX_CHARS = 200


def _nested_repeat(pattern: str) -> bool:
    """True when a repeated group (``(...)*``, ``(...)+``, ``(...){2,}``) holds a repeat itself.

    A plain scan of the pattern text (escapes and character classes skipped), so that no
    private part of the standard library's parser is needed.
    """
    stack: list[bool] = [False]  # per open group: does it hold a repeat?
    i, n = 0, len(pattern)

    def quantifier_at(k: int) -> int:
        """Length of a variable repeat (``*``, ``+``, ``{m,}``, ``{m,n}`` with n > m) at ``k``, else 0."""
        if k < n and pattern[k] in "*+":
            return 1
        if k < n and pattern[k] == "{":
            close = pattern.find("}", k)
            body = pattern[k + 1:close] if close > 0 else ""
            parts = body.split(",")
            if close > 0 and len(parts) == 2 and parts[0].strip().isdigit() and (
                    parts[1].strip() == "" or parts[1].strip().isdigit()):
                lo, hi = int(parts[0]), parts[1].strip()
                if hi == "" or int(hi) > max(lo, 1):  # a variable count; a fixed {m} cannot backtrack
                    return close - k + 1
        return 0

    while i < n:
        ch = pattern[i]
        if ch == "\\":
            i += 2
            if quantifier_at(i):
                stack[-1] = True
            continue
        if ch == "[":
            j = i + 1
            if j < n and pattern[j] == "^":
                j += 1
            if j < n and pattern[j] == "]":
                j += 1
            while j < n and pattern[j] != "]":
                j += 2 if pattern[j] == "\\" else 1
            i = j + 1
            if quantifier_at(i):
                stack[-1] = True
            continue
        if ch == "(":
            stack.append(False)
            i += 1
            continue
        if ch == ")" and len(stack) > 1:
            inner = stack.pop()
            i += 1
            q = quantifier_at(i)
            if q and inner:
                return True
            if q or inner:
                stack[-1] = True
            continue
        i += 1
        if quantifier_at(i):
            stack[-1] = True
    return False


def _check_regex_cost(pattern: str) -> None:
    """Refuse an identifier pattern that could take exponential time (a repeat inside a repeat, such as ``(a+)+``).

    Python's regular expressions backtrack; a nested quantifier lets one cell
    keep the server busy for minutes.  Identifiers are at most ``MAX_CELL_CHARS``
    long, so a pattern without nested repeats stays polynomial in that bound.
    """
    if len(pattern) > MAX_ID_REGEX_CHARS:
        raise ConfigError(f"{choice_words('id_regex')} is {len(pattern)} characters long, above the limit of {MAX_ID_REGEX_CHARS}.",
                          hint="An identifier pattern is usually short, such as ([A-Z]{2}[0-9]+).")
    if _nested_repeat(pattern):
        raise ConfigError(f"{choice_words('id_regex')} {pattern!r} repeats a group that itself repeats, which can take "
                          "minutes on one long identifier.",
                          hint="Remove the inner or the outer repeat, for example write ([A-Z]+) instead of ([A-Z]+)+.")


@dataclass(frozen=True)
class PanelOptions:
    """Choices for aligning parsed files into one month-end panel.

    Parameters
    ----------
    staleness_days : int
        Daily or irregular input: the month's value is its last valid observation,
        but if that is more than this many days before the month-end the value is
        missing and flagged ``stale``.  Monthly input (one observation a month,
        stamped on any day) is taken as that month's value.
    split_threshold : float
        A one-period move with ``|log ratio| >= log(1 / (1 - split_threshold))``
        that matches a near-integer ratio and does not revert is a suspected split.
    confirmed_splits : frozenset of str
        Securities whose suspected split the user confirmed (adjustment applied).
    apply_all_suspected_splits : bool
    extreme_pe : float
        ``|P/E|`` above this is flagged ``extreme_pe``.
    flat_run_months : int
        A run of at least this many identical consecutive month-end prices is flagged ``stale``.
    dividend_plausible_share : float
        A dividend above this share of its month's price is implausible for a regular payment
        (common practice, no source: regular quarterly dividends are a few per cent of the price;
        larger ones are usually special payments, unadjusted splits or typing slips).
    keep_suspect_dividends : bool
        Keep dividends in a month without a price, or above the plausible share, in the returns
        (default: they are set aside, counted and flagged).
    """

    staleness_days: int = 10
    split_threshold: float = 0.4
    confirmed_splits: frozenset[str] = frozenset()
    apply_all_suspected_splits: bool = False
    extreme_pe: float = 200.0
    flat_run_months: int = 6
    dividend_plausible_share: float = 0.10
    keep_suspect_dividends: bool = False

    def __post_init__(self) -> None:
        if not isinstance(self.staleness_days, int) or self.staleness_days < 0:
            raise ConfigError(f"The staleness limit (--staleness-days) {self.staleness_days!r} is not allowed.", hint="Give 0 or more days.")
        if not (0.0 < float(self.split_threshold) < 1.0):
            raise ConfigError(f"The split threshold {self.split_threshold!r} is not allowed.", hint="Give a share between 0 and 1, e.g. 0.4.")
        if not float(self.extreme_pe) > 0:
            raise ConfigError(f"The extreme P/E limit {self.extreme_pe!r} is not allowed.", hint="Give a positive number, e.g. 200.")
        if not isinstance(self.flat_run_months, int) or self.flat_run_months < 2:
            raise ConfigError(f"The flat-price run length {self.flat_run_months!r} is not allowed.", hint="Give 2 or more.")
        if isinstance(self.confirmed_splits, str):
            raise ConfigError("The confirmed splits (--confirm-split) must be a set of security codes, not one string.",
                              hint=f"Write confirmed_splits=frozenset({{{self.confirmed_splits!r}}}).")
        object.__setattr__(self, "confirmed_splits", frozenset(self.confirmed_splits))
