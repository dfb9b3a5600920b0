"""Reading one file: bytes or a path in, a :class:`ParsedFile` out (or an IntakeError)."""

from __future__ import annotations

import hashlib
import os
import time
from dataclasses import dataclass

import pandas as pd

from valuesift.core.choices import FileKind
from valuesift.core.collector import collector_paused
from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake.options import ReadOptions
from valuesift.core.intake.readers import read_grid, read_text_file
from valuesift.core.intake.report import FileReport
from valuesift.core.intake.tidy import tidy_grid

__all__ = ["ParsedFile", "read_table", "INTAKE_TIME_BUDGET_S"]

#: seconds one file's intake may take; checked between the stages (reading the cells, tidying them),
#: so a file that would keep the server busy for longer is refused with a message instead
INTAKE_TIME_BUDGET_S = 120.0


@dataclass(frozen=True)
class ParsedFile:
    """One file after intake.

    ``data`` is tidy, at the file's own frequency: ``date, security, value``
    (prices, earnings, market_cap, signal); ``date, value`` (benchmark);
    ``security, ex_date, amount`` (dividends); ``security, sector`` (sectors);
    ``security, weight`` (holdings).
    """

    name: str
    kind: FileKind
    data: pd.DataFrame
    report: FileReport
    options: ReadOptions
    sha256: str
    size: int


#: what to do about a file above the size limit
_RAISE_LIMIT = ("If the file is genuine, raise the size limit (--max-upload-mb when you serve the dashboard; "
                "max_bytes of the reading choices in Python).")


def _checked_path(source: str | os.PathLike[str], name: str | None, options: ReadOptions) -> tuple[str, str, int]:
    """The path, the file's label and its size, once it exists and is within the size limit."""
    path = os.fspath(source)
    label = name or os.path.basename(path)
    try:
        size = os.path.getsize(path)
    except OSError as err:
        raise IntakeError(label, Reason.UNREADABLE, "the file cannot be opened (missing or not accessible).",
                          hint="Check the path.") from err
    if size > options.max_bytes:
        raise IntakeError(label, Reason.TOO_LARGE, f"the file has {size:,} bytes, above the limit of {options.max_bytes:,}.",
                          hint=_RAISE_LIMIT)
    return path, label, size


def _file_digest(path: str, label: str) -> tuple[str, int]:
    try:
        with open(path, "rb") as fh:
            return hashlib.file_digest(fh, "sha256").hexdigest(), os.fstat(fh.fileno()).st_size
    except OSError as err:
        raise IntakeError(label, Reason.UNREADABLE, "the file cannot be read.", hint="Check the path and permissions.") from err


def _load(source: str | os.PathLike[str] | bytes, name: str | None, options: ReadOptions) -> tuple[bytes, str]:
    if isinstance(source, (bytes, bytearray, memoryview)):
        if not name:
            raise IntakeError("(unnamed file)", Reason.BAD_OPTION, "a file given as bytes needs a name.",
                              hint="Pass name='the file name as the user knows it'.")
        raw = bytes(source)
        if len(raw) > options.max_bytes:
            raise IntakeError(name, Reason.TOO_LARGE, f"the file has {len(raw):,} bytes, above the limit of {options.max_bytes:,}.",
                              hint=_RAISE_LIMIT)
        return raw, name
    path, label, size = _checked_path(source, name, options)
    try:
        with open(path, "rb") as fh:
            # the size read first (no buffer of the whole limit); a file that grew since is read on, up to the limit
            raw = fh.read(min(size, options.max_bytes) + 1)
            if len(raw) > size:
                raw += fh.read(options.max_bytes + 1 - len(raw))
    except OSError as err:
        raise IntakeError(label, Reason.UNREADABLE, "the file cannot be read.", hint="Check the path and permissions.") from err
    if len(raw) > options.max_bytes:
        raise IntakeError(label, Reason.TOO_LARGE, f"the file is above the limit of {options.max_bytes:,} bytes.",
                          hint=_RAISE_LIMIT)
    return raw, label


def _check_time(deadline: float, name: str, stage: str) -> None:
    if time.monotonic() > deadline:
        raise IntakeError(name, Reason.TOO_SLOW, f"reading the file took longer than {INTAKE_TIME_BUDGET_S:.0f} seconds "
                          f"({stage}), so it was stopped to keep the dashboard responsive.",
                          hint="Split the file into smaller ones, or save it as Parquet.")


def read_table(source: str | os.PathLike[str] | bytes, *, name: str | None = None,
               options: ReadOptions = ReadOptions(), lean: bool = False) -> ParsedFile:
    """Read one file into a tidy table with a full account of its cells.

    Parameters
    ----------
    source : str, path-like or bytes
        The file's path, or its bytes.  Given a path, a large delimited UTF-8
        file is read from disk in pieces (its bytes never all in memory at
        once) and any other file's bytes are let go once its cells are split.
    name : str, optional
        The file name as the user knows it (used in every message); required for bytes.
    options : ReadOptions
        Reading choices; every set field overrides detection.
    lean : bool
        Less memory, for a caller that stores the table (the dashboard): the
        security column is a categorical of the same text (each id held once),
        and a wide file's text is let go as its numbers are made (see
        :func:`~valuesift.core.intake.tidy.tidy_grid`).  The report is the
        same, and the table once its categorical columns are read as plain
        values.

    Returns
    -------
    ParsedFile

    Raises
    ------
    IntakeError
        For any file that cannot be used (the only exception type that escapes).

    Notes
    -----
    Detection order: format (magic bytes, then extension), encoding (BOM,
    UTF-8, cp1252), delimiter, header row (first full-width row with text),
    date column, layout (a column of text codes means long), decimal style,
    date order.  See :class:`~core.intake.report.FileReport` for the accounting
    identity.

    References
    ----------
    RFC 4180 (CSV); ECMA-376 (Office Open XML); Apache Parquet format.

    Examples
    --------
    >>> pf = read_table(b"date,TOR14\\n2019-01-31,10\\n2019-02-28,n.a.\\n", name="prices.csv")
    >>> pf.kind, pf.report.cells_parsed, pf.report.cells_blank
    ('prices', 3, 1)
    """
    with collector_paused():  # (a wide file makes a Series per column: see core.collector)
        return _read_table(source, name, options, lean)


def _read_table(source: str | os.PathLike[str] | bytes, name: str | None, options: ReadOptions, lean: bool) -> ParsedFile:
    label = name or ("(unnamed file)" if isinstance(source, (bytes, bytearray, memoryview)) else os.path.basename(os.fspath(source)))
    deadline = time.monotonic() + INTAKE_TIME_BUDGET_S
    try:
        grid = None
        if not isinstance(source, (bytes, bytearray, memoryview)):
            # a large delimited file is read from disk in pieces (its bytes never all in memory); None otherwise
            path, label, _ = _checked_path(source, name, options)
            grid = read_text_file(path, label, options)
            if grid is not None:
                sha, size = _file_digest(path, label)
        if grid is None:
            raw, label = _load(source, name, options)
            sha, size = hashlib.sha256(raw).hexdigest(), len(raw)
            grid = read_grid(raw, label, options)
            del raw  # the bytes read from a path are freed here (bytes passed in stay with the caller)
        _check_time(deadline, label, "splitting it into cells")
        kind, data, report = tidy_grid(grid, label, options, release_cells=True, lean=lean)
        del grid
        _check_time(deadline, label, "reading its dates and numbers")
    except IntakeError:
        raise
    except MemoryError as err:
        raise IntakeError(label, Reason.TOO_LARGE, "the file is too large to read in memory.", hint="Split it, or use Parquet.") from err
    except Exception as err:
        raise IntakeError(label, Reason.UNREADABLE, f"the file could not be read ({type(err).__name__}).",
                          hint="Check the format settings (delimiter, header row, sheet), or export the file again.") from err
    return ParsedFile(label, kind, data, report, options, sha, size)
