"""The project's error types.

Every error a user can provoke is a :class:`ValueSiftError`.  The dashboard
and the command line show ``str(err)`` (a friendly, specific message) and log
the chained cause; no raw traceback reaches the user.
"""

from __future__ import annotations

from enum import Enum

__all__ = [
    "ValueSiftError",
    "IntakeError",
    "ConfigError",
    "InsufficientDataError",
    "Reason",
]


class Reason(str, Enum):
    """Reason codes for cells or files that intake could not use.

    The codes are stable identifiers (tests and the dashboard key on them);
    the wording shown to users lives with the messages.
    """

    # file-level
    EMPTY_FILE = "empty_file"
    NO_HEADER = "no_header"
    UNREADABLE = "unreadable"
    BAD_ENCODING = "bad_encoding"
    UNSUPPORTED_FORMAT = "unsupported_format"
    TOO_LARGE = "too_large"
    NO_DATE_COLUMN = "no_date_column"
    NO_VALUE_COLUMN = "no_value_column"
    AMBIGUOUS_DATES = "ambiguous_dates"
    AMBIGUOUS_LAYOUT = "ambiguous_layout"
    DUPLICATE_COLUMNS = "duplicate_columns"
    NO_DATA = "no_data"
    # cell-level
    BLANK = "blank"
    MISSING_MARKER = "missing_marker"
    UNPARSEABLE_NUMBER = "unparseable_number"
    UNPARSEABLE_DATE = "unparseable_date"
    NON_FINITE = "non_finite"
    NON_POSITIVE_PRICE = "non_positive_price"
    DUPLICATE_ENTRY = "duplicate_entry"
    EXCLUDED_COLUMN = "excluded_column"
    STALE = "stale"
    OUTSIDE_HISTORY = "outside_history"
    UNKNOWN_SECURITY = "unknown_security"
    SUPERSEDED_IN_MONTH = "superseded_in_month"
    # added by intake (additive)
    OUT_OF_RANGE = "out_of_range"
    NEGATIVE_AMOUNT = "negative_amount"
    ROW_WITHOUT_DATE = "row_without_date"
    ROW_WITHOUT_SECURITY = "row_without_security"
    UNUSED_COLUMN = "unused_column"
    EXTRA_FIELD = "extra_field"
    COLUMN_NOT_FOUND = "column_not_found"
    TOO_SLOW = "too_slow"
    UNKNOWN_KIND = "unknown_kind"
    PRICE_FILE_COUNT = "price_file_count"
    BAD_OPTION = "bad_option"
    DUPLICATE_KIND = "duplicate_kind"
    # dividends that cannot safely enter returns (set aside unless the user keeps them)
    DIVIDEND_WITHOUT_PRICE = "dividend_without_price"
    DIVIDEND_IMPLAUSIBLE = "dividend_implausible"


class ValueSiftError(Exception):
    """Base class: a problem the user can fix, with a message that says how."""

    def __init__(self, message: str, *, hint: str | None = None) -> None:
        self.message = message
        self.hint = hint
        super().__init__(message if not hint else f"{message} {hint}")


class IntakeError(ValueSiftError):
    """A file could not be read or used.

    Carries the file name (as the user knows it), the 1-based row and the
    column where the problem sits (when there is one), a :class:`Reason` code
    and a hint saying what to change.
    """

    def __init__(
        self,
        file: str,
        reason: Reason,
        message: str,
        *,
        row: int | None = None,
        column: str | None = None,
        hint: str | None = None,
    ) -> None:
        self.file = file
        self.reason = reason
        self.row = row
        self.column = column
        where = []
        if row is not None:
            where.append(f"row {row}")
        if column is not None:
            where.append(f"column {column!r}")
        loc = f" ({', '.join(where)})" if where else ""
        super().__init__(f"{file}{loc}: {message}", hint=hint)


class ConfigError(ValueSiftError):
    """A setting is invalid or does not fit the data.

    Attributes
    ----------
    setting : str or None
        Name of the (first) setting at fault, when there is one; the dashboard uses it
        to point at the control to change.
    failures : tuple of dict
        Every failed check, each with ``setting``, ``value``, ``rule`` and ``hint``
        (validation collects them all before raising).
    """

    def __init__(
        self,
        message: str,
        *,
        hint: str | None = None,
        setting: str | None = None,
        failures: tuple[dict[str, object], ...] = (),
    ) -> None:
        self.failures = tuple(failures)
        self.setting = setting if setting is not None else (str(failures[0]["setting"]) if failures else None)
        super().__init__(message, hint=hint)


class InsufficientDataError(ValueSiftError):
    """The data cannot support the requested computation.

    States what was required and what was found.
    """

    def __init__(self, what: str, required: object, found: object, *, hint: str | None = None) -> None:
        self.what = what
        self.required = required
        self.found = found
        super().__init__(f"Not enough data for {what}: needs {required}, found {found}.", hint=hint)
