"""Readers: bytes of a CSV/TSV/semicolon, XLSX or Parquet file -> a grid of columns.

A :class:`Grid` holds the header names, one pandas Series per column (text for
delimited files, typed for Parquet) and the 1-based file row of every data row.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import os
import zipfile
from dataclasses import dataclass, field
from typing import Any, Iterator, Sequence

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake.options import ReadOptions, choice_words
from valuesift.core.intake.sniff import (HEAD_BYTES, HEAD_FROM_BYTES, MAX_CELL_CHARS, decode, find_header, is_value,
                                         record_spans, sample_records, sniff_delimiter, utf8_head,
                                         utf8_head_of)

__all__ = ["Grid", "read_grid", "read_text_file", "detect_format", "XLSX_EXPANSION_LIMIT", "FAST_PATH_MIN_CHARS", "MAX_COLUMNS",
           "MAX_CELL_CHARS", "MAX_ROWS", "MAX_CELLS", "PARQUET_EXPANSION_LIMIT"]

#: an xlsx may unpack to at most this multiple of ``ReadOptions.max_bytes``
XLSX_EXPANSION_LIMIT = 4
#: files with more columns than this are refused before any cell is read (a wide file of that size
#: is better given in the long layout: date, security, value)
MAX_COLUMNS = 20_000
#: files with more data rows than this are refused (a Parquet file before anything is decoded)
MAX_ROWS = 10_000_000
#: files with more cells (rows x columns) than this are refused (a Parquet file before anything is decoded)
MAX_CELLS = 40_000_000
#: a Parquet file may decode to at most this multiple of ``ReadOptions.max_bytes`` (footer sizes, then
#: the bytes actually decoded, row group by row group)
PARQUET_EXPANSION_LIMIT = 4
#: delimited bodies at least this long go through pyarrow's reader (when row numbering stays exact)
FAST_PATH_MIN_CHARS = 1_000_000
_XLSX_EXT = (".xlsx", ".xlsm", ".xls", ".xlsb", ".ods")
_PARQUET_EXT = (".parquet", ".pq", ".parq")


@dataclass(frozen=True)
class Grid:
    """A file's cells below its header."""

    header: list[str]
    columns: list[pd.Series]
    rows: np.ndarray  # int64, 1-based file (or sheet) row of each data row
    format: str
    encoding: str | None
    delimiter: str | None
    header_row: int
    sheet: str | None = None
    extra_cells: int = 0  # non-empty cells beyond the header's width (dropped)
    extra_examples: tuple[tuple[int, str], ...] = ()
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def n_rows(self) -> int:
        return int(len(self.rows))


def detect_format(raw: bytes, name: str) -> str:
    """``"xlsx"``, ``"parquet"`` or ``"csv"`` from the content's magic bytes, then the file name."""
    low = name.lower()
    if raw.startswith(b"PK\x03\x04") or raw.startswith(b"\xd0\xcf\x11\xe0"):
        return "xlsx"
    if raw.startswith(b"PAR1"):
        return "parquet"
    if low.endswith(_XLSX_EXT):
        raise IntakeError(name, Reason.UNSUPPORTED_FORMAT, "the file is named as a spreadsheet but is not one (not a zip archive).",
                          hint="Open it in the spreadsheet program and save it again as .xlsx, or export CSV.")
    if low.endswith(_PARQUET_EXT):
        raise IntakeError(name, Reason.UNSUPPORTED_FORMAT, "the file is named as Parquet but does not start with the Parquet mark.",
                          hint="Write the file again with a Parquet writer, or export CSV.")
    return "csv"


def read_grid(raw: bytes, name: str, options: ReadOptions) -> Grid:
    """Read ``raw`` into a :class:`Grid` (raises :class:`IntakeError` only)."""
    if len(raw) == 0 or not raw.strip():
        raise IntakeError(name, Reason.EMPTY_FILE, "the file is empty.", hint="Check that the right file was chosen.")
    fmt = detect_format(raw, name)
    if fmt == "xlsx":
        return _read_xlsx(raw, name, options)
    if fmt == "parquet":
        return _read_parquet(raw, name, options)
    return _read_text(raw, name, options)


# -- delimited text -------------------------------------------------------------
def _text_of(raw: bytes, name: str, options: ReadOptions) -> tuple[str, str, int | None]:
    """The file's text, the encoding's label, and how many bytes of ``raw`` precede the text's first
    character when the text is ``raw`` decoded as UTF-8 from there on (else None: the text's bytes differ)."""
    text, enc = decode(raw, name, options.encoding)
    lead: int | None = {"UTF-8": 0, "UTF-8 with BOM": 3}.get(enc) if options.encoding is None else None
    if text.startswith("\ufeff"):
        text = text[1:]
        lead = None if lead is None else lead + 3
    if "\n" not in text and "\r" in text:  # old-style line ends (CR only)
        text = text.replace("\r", "\n")
        lead = None
    return text, enc, lead


def _read_text(raw: bytes, name: str, options: ReadOptions) -> Grid:
    head = utf8_head(raw) if options.encoding is None else None
    if head is not None:  # a large UTF-8 file: its head as text, the body read by pyarrow from the bytes
        grid = _read_text_from(head, "UTF-8", 0, raw, name, options, whole=False)
        if grid is not None:
            return grid
    text, enc, lead = _text_of(raw, name, options)
    grid = _read_text_from(text, enc, lead, raw, name, options, whole=True)
    assert grid is not None
    return grid


def _read_text_from(text: str, enc: str, lead: int | None, raw: "bytes | _FileBytes", name: str, options: ReadOptions,
                    *, whole: bool) -> Grid | None:
    """The grid from the file's text (``whole``) or from the text of its first lines (not ``whole``: None
    when those lines do not hold the delimiter sample, the header record or enough body to read it from the
    bytes, so the caller decodes the whole file and gets exactly the grid it would have got)."""
    if not text.strip():
        if not whole:
            return None
        raise IntakeError(name, Reason.EMPTY_FILE, "the file holds only blank lines.", hint="Check that the right file was chosen.")
    spans = record_spans(text, 80)  # the records' places, the same for every delimiter
    delim = options.delimiter or sniff_delimiter(text, spans)
    sample = sample_records(text, delim, 80, spans)
    if not whole and (len(sample) < 80 or sample[-1][2] >= len(text)):
        return None  # the sample would reach past the head: decided on the whole text instead
    _check_cells([r[0] for r in sample], name, [r[3] + 1 for r in sample])
    if options.header_row is not None:
        h_line = options.header_row - 1
        lines_total = (text.count("\n") if whole else raw.count(b"\n")) + 1
        if h_line >= lines_total:
            raise IntakeError(name, Reason.BAD_OPTION, f"{choice_words('header_row')} {options.header_row} is beyond the end of the file ({lines_total} lines).",
                              hint="Give the row number of the header as the file shows it.")
        offset = _line_offset(text, h_line)
        if offset < 0:
            if not whole:
                return None
            raise IntakeError(name, Reason.NO_HEADER, "the header row is past the end of the file.", hint=f"Check {choice_words('header_row')}.")
        header, _, end, _ = sample_records(text[offset:], delim, 1)[0]
        end += offset
        if not whole and end >= len(text):
            return None
    else:
        h = find_header([r[0] for r in sample], name)
        header, _, end, h_line = sample[h]
    header = [c.strip() for c in header]
    while header and not header[-1]:
        header.pop()
    if len(header) < 1:
        raise IntakeError(name, Reason.NO_HEADER, "the header row is empty.", row=h_line + 1, hint=f"Set {choice_words('header_row')} to the row with column names.")
    _check_width(len(header), name, h_line + 1)
    grid = None
    if whole and len(text) - end >= FAST_PATH_MIN_CHARS:
        if lead is not None:  # UTF-8: pyarrow reads the body where it lies in the file's bytes
            start = lead + (end if text.isascii() else len(text[:end].encode("utf-8")))
            del text
            grid = _fast_bytes(raw, start, header, delim, h_line + 1)
            if grid is None:
                text = _text_of(raw, name, options)[0]
        else:
            grid = _fast_text(text[end:], header, delim, h_line + 1)
    elif not whole:
        start = len(text[:end].encode("utf-8"))
        if len(raw) - start < 4 * FAST_PATH_MIN_CHARS:  # (a character is at most 4 bytes)
            return None
        del text
        grid = _fast_bytes(raw, start, header, delim, h_line + 1)
        if grid is None:  # the careful reader needs the whole text
            return None
    if grid is None:
        grid = _python_text(text[end:], header, delim, h_line + 1, name)
    cols, rows, extra, ex = grid
    _check_columns(header, cols, rows, name)
    return Grid(header, cols, rows, "csv", enc, delim, h_line + 1, None, extra, ex, _header_notes(header, h_line + 1))


def _header_notes(header: Sequence[str], row: int) -> tuple[str, ...]:
    """A warning when the row read as the header holds mostly numbers (a preamble or a split line may have moved it)."""
    cells = [c for c in header[1:] if c.strip()]
    if len(cells) >= 2 and sum(is_value(c) for c in cells) * 2 > len(cells):
        return (f"warning: the header (row {row}) holds mostly numbers, so it may be a data row; check the "
                "security names below and set the header row if they are wrong",)
    return ()


def _too_long(name: str, length: int, row: int | None, column: str | None) -> IntakeError:
    return IntakeError(name, Reason.TOO_LARGE, f"a cell holds {length:,} characters, above the limit of {MAX_CELL_CHARS:,}.",
                       row=row, column=column,
                       hint="A price, earnings or identifier cell is never that long: check that the right file was "
                            "chosen and that its quotes are balanced, or shorten the cell.")


def _check_cells(rows: Sequence[Sequence[str]], name: str, rownums: Sequence[int]) -> None:
    """Refuse any cell of the sample longer than :data:`MAX_CELL_CHARS` (before any pattern looks at it)."""
    for r, num in zip(rows, rownums):
        for j, c in enumerate(r):
            if len(c) > MAX_CELL_CHARS:
                raise _too_long(name, len(c), num, f"column {j + 1}")


def _check_columns(header: Sequence[str], cols: Sequence[pd.Series], rows: np.ndarray, name: str) -> None:
    """Refuse a grid with a header or text cell longer than :data:`MAX_CELL_CHARS`, or too many rows or cells."""
    for j, h in enumerate(header):
        if len(h) > MAX_CELL_CHARS:
            raise _too_long(name, len(h), None, f"column {j + 1}")
    _check_size(len(rows), len(header), name)
    if _longest_arrow_text(cols) <= MAX_CELL_CHARS:  # every text cell measured at once; the loop finds the place
        return
    for j, s in enumerate(cols):
        if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype) or not len(s):
            continue
        lengths = s.str.len().to_numpy(dtype=float, na_value=0.0)
        k = int(np.argmax(lengths))
        if lengths[k] > MAX_CELL_CHARS:
            raise _too_long(name, int(lengths[k]), int(rows[k]) if k < len(rows) else None, header[j] if j < len(header) else None)


def _longest_arrow_text(cols: Sequence[pd.Series]) -> int:
    """The longest text cell of Arrow-backed columns, to compare with :data:`MAX_CELL_CHARS`: its characters
    once some cell of a block has more bytes than that (else its bytes, which are never fewer than its
    characters); ``MAX_CELL_CHARS + 1`` when any text column is not Arrow-backed."""
    import pyarrow.compute as pc

    longest = 0
    block: list[Any] = []
    cells = 0

    def measure() -> int:
        # the lengths of a block of about 130,000 cells at a time (one Arrow pass per block, not per column of a
        # wide file, and never the lengths of every cell at once)
        # (bytes first: a cell holds at most as many characters as bytes, and counting bytes reads only the
        # offsets; the characters are counted only when some cell has more bytes than the limit)
        joined = pa.chunked_array(block, pa.large_string())
        m = int(pc.max(pc.binary_length(joined)).as_py() or 0)
        if m <= MAX_CELL_CHARS:
            return m
        return int(pc.max(pc.utf8_length(joined)).as_py() or 0)

    for s in cols:
        if isinstance(s.dtype, np.dtype) and s.dtype.kind in "fiuM":  # numbers and dates hold no text
            continue
        if not len(s) or not isinstance(s.dtype, pd.StringDtype):
            if len(s) and not (pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype)):
                return MAX_CELL_CHARS + 1   # text that is not Arrow-backed
            continue
        arr = getattr(s.array, "_pa_array", None)
        if arr is None:
            return MAX_CELL_CHARS + 1
        block.extend(ch if ch.type == pa.large_string() else ch.cast(pa.large_string()) for ch in arr.chunks)
        cells += len(s)
        if cells >= 1 << 17:
            longest = max(longest, measure())
            block, cells = [], 0
    if block:
        longest = max(longest, measure())
    return longest


def _check_size(n_rows: int, n_cols: int, name: str) -> None:
    if n_rows > MAX_ROWS:
        raise IntakeError(name, Reason.TOO_LARGE, f"the file has {n_rows:,} data rows, above the limit of {MAX_ROWS:,}.",
                          hint="Split the file by date range, or give month-end rows only.")
    if n_rows * max(n_cols, 1) > MAX_CELLS:
        raise IntakeError(name, Reason.TOO_LARGE, f"the file has {n_rows:,} rows of {n_cols:,} columns, above the limit of "
                          f"{MAX_CELLS:,} cells.", hint="Split the file by date range or by securities.")


def _check_width(width: int, name: str, row: int) -> None:
    if width > MAX_COLUMNS:
        raise IntakeError(name, Reason.TOO_LARGE, f"the header has {width:,} columns, above the limit of {MAX_COLUMNS:,}.",
                          row=row, hint="Give such a file in the long layout (columns date, security, value), "
                                        "or split it into several files.")


def _line_offset(text: str, h: int) -> int:
    """Character offset where physical line ``h`` (0-based) starts, or -1."""
    pos = 0
    for _ in range(h):
        nl = text.find("\n", pos)
        if nl < 0:
            return -1
        pos = nl + 1
    return pos if pos <= len(text) else -1


_Cells = tuple[list[pd.Series], np.ndarray, int, tuple[tuple[int, str], ...]]


def _fast_text(body: str, header: list[str], delim: str, header_row: int) -> _Cells | None:
    """pyarrow's multithreaded reader; None when the simple row numbering would not hold."""
    data = body.rstrip("\r\n")
    if "\n\n" in data or "\n\r\n" in data:
        return None
    encoded = (data + "\n").encode("utf-8")
    del data
    return _arrow_cells(io.BytesIO(encoded), encoded.count(b"\n"), header, delim, header_row)


def _fast_bytes(raw: "bytes | _FileBytes", start: int, header: list[str], delim: str, header_row: int) -> _Cells | None:
    """:func:`_fast_text` of the body that starts at byte ``start`` of a UTF-8 file, read from ``raw`` itself
    (the bytes, or the file on disk).

    The same bytes reach pyarrow (the body without its trailing line ends, then one line feed) with
    no decoded, trimmed or re-encoded copy of the body.
    """
    stop = _data_end(raw, start)
    if raw.find(b"\n\n", start, stop) >= 0 or raw.find(b"\n\r\n", start, stop) >= 0:
        return None
    body = raw.stream(start, stop) if isinstance(raw, _FileBytes) else _Joined((memoryview(raw)[start:stop], b"\n"))
    return _arrow_cells(body, raw.count(b"\n", start, stop) + 1, header, delim, header_row)


def read_text_file(path: str, name: str, options: ReadOptions) -> Grid | None:
    """The grid of a large delimited UTF-8 file read from disk, its bytes never all in memory at once; None
    when the file is not one (smaller than :data:`~valuesift.core.intake.sniff.HEAD_FROM_BYTES`, another
    format or encoding, or a body pyarrow's reader cannot number exactly): the caller then reads its bytes
    with :func:`read_grid`, which gives the same grid for any file this gives one for."""
    if options.encoding is not None:
        return None
    with _FileBytes(path) as fb:
        if len(fb) < HEAD_FROM_BYTES:
            return None
        first = fb[0:HEAD_BYTES]
        if not first.strip() or detect_format(first, name) != "csv":
            return None
        head = utf8_head_of(len(fb), first, fb.pieces(0, len(fb)))
        if head is None:
            return None
        return _read_text_from(head, "UTF-8", 0, fb, name, options, whole=False)


class _FileBytes:
    """A file's bytes on disk, read in pieces when asked: the operations the delimited reader uses on a large
    file's bytes (length, slices, counting and finding short byte strings, the body as a stream)."""

    _STEP = 4 << 20

    def __init__(self, path: str) -> None:
        self._fh = open(path, "rb")
        self._fd = self._fh.fileno()
        self.size = os.fstat(self._fd).st_size

    def __enter__(self) -> "_FileBytes":
        return self

    def __exit__(self, *exc: object) -> None:
        self._fh.close()

    def __len__(self) -> int:
        return self.size

    def __getitem__(self, key: slice) -> bytes:
        start, stop, _ = key.indices(self.size)
        return os.pread(self._fd, max(0, stop - start), start)

    def pieces(self, start: int, stop: int, overlap: int = 0) -> Iterator[bytes]:
        """Bytes ``start .. stop`` in consecutive pieces, each also holding the ``overlap`` bytes after it."""
        for k in range(start, stop, self._STEP):
            yield self[k:min(stop, k + self._STEP + overlap)]

    def count(self, sub: bytes, start: int = 0, stop: int | None = None) -> int:
        assert len(sub) == 1  # one byte: no occurrence spans two pieces
        return sum(p.count(sub) for p in self.pieces(start, self.size if stop is None else stop))

    def find(self, sub: bytes, start: int = 0, stop: int | None = None) -> int:
        stop = self.size if stop is None else stop
        for k, p in zip(range(start, stop, self._STEP), self.pieces(start, stop, len(sub) - 1)):
            at = p.find(sub)
            if at >= 0:
                return k + at
        return -1

    def stream(self, start: int, stop: int) -> io.RawIOBase:
        """Bytes ``start .. stop`` and then one line feed, as a stream read piece by piece."""
        return _FileBody(self, start, stop)


class _FileBody(io.RawIOBase):
    def __init__(self, src: _FileBytes, start: int, stop: int) -> None:
        super().__init__()
        self._src, self._pos, self._stop, self._tail = src, start, stop, True

    def readable(self) -> bool:
        return True

    def read(self, size: int | None = -1) -> bytes:  # type: ignore[override]
        if self._pos >= self._stop:
            if self._tail:
                self._tail = False
                return b"\n"
            return b""
        end = self._stop if size is None or size < 0 else min(self._stop, self._pos + size)
        out = self._src[self._pos:end]
        self._pos = end
        return out


def _data_end(raw: "bytes | _FileBytes", start: int) -> int:
    """Offset just after the last byte of ``raw[start:]`` that is not a carriage return or line feed."""
    end = len(raw)
    while end > start:
        lo = max(start, end - 4096)
        kept = raw[lo:end].rstrip(b"\r\n")
        if kept:
            return lo + len(kept)
        end = lo
    return start


class _Joined(io.RawIOBase):
    """A read-only stream over byte buffers one after the other, handing out views (no copies)."""

    def __init__(self, parts: Sequence[bytes | memoryview]) -> None:
        super().__init__()
        self._parts = [memoryview(p) for p in parts]
        self._k = 0
        self._pos = 0

    def readable(self) -> bool:
        return True

    def read(self, size: int | None = -1) -> memoryview | bytes:  # type: ignore[override]
        while self._k < len(self._parts) and self._pos >= len(self._parts[self._k]):
            self._k, self._pos = self._k + 1, 0
        if self._k >= len(self._parts):
            return b""
        part = self._parts[self._k]
        end = len(part) if size is None or size < 0 else min(len(part), self._pos + size)
        out = part[self._pos:end]
        self._pos = end
        return out


def _block_size(n_columns: int) -> int:
    """Bytes per block of pyarrow's text reader: 4 MB, more for wide files (4 KB per column, up to 16 MB).

    One thread and small blocks keep the reader's own buffers small beside the table it builds (measured:
    a 41 MB file peaked about 40 MB lower than with 16 MB blocks on two threads, in the same time); a file
    of thousands of columns needs larger blocks, as every block costs a piece per column (the 3,000-column
    benchmark file read in 1.2 s with 4 MB blocks, 0.9 s with 16 MB)."""
    return min(16 << 20, max(4 << 20, 4096 * n_columns))


def _arrow_cells(source: Any, n_lines: int, header: list[str], delim: str, header_row: int) -> _Cells | None:
    names = [f"c{i}" for i in range(len(header))]
    try:
        table = pacsv.read_csv(
            source,
            read_options=pacsv.ReadOptions(column_names=names, use_threads=False, block_size=_block_size(len(names))),
            parse_options=pacsv.ParseOptions(delimiter=delim, newlines_in_values=True),
            convert_options=pacsv.ConvertOptions(column_types={c: pa.large_string() for c in names},
                                                 strings_can_be_null=False, quoted_strings_can_be_null=False),
        )
    except (pa.ArrowInvalid, pa.ArrowException):
        return None
    pa.default_memory_pool().release_unused()  # the reader's own block buffers, kept by the pool otherwise
    if table.num_rows != n_lines:  # a quoted value spans lines: row numbers would drift
        return None
    # the same "str" Series as ``to_pandas().astype("str")``, built straight on the Arrow data (a tenth of the cost
    # per column; a wide file has thousands of columns)
    text = pd.StringDtype("pyarrow", na_value=np.nan)
    cols = [pd.Series(pd.arrays.ArrowStringArray(table.column(i), dtype=text)) for i in range(len(names))]
    rows = np.arange(table.num_rows, dtype=np.int64) + header_row + 1
    return cols, rows, 0, ()



def _python_text(body: str, header: list[str], delim: str, header_row: int, name: str) -> tuple[list[pd.Series], np.ndarray, int, tuple[tuple[int, str], ...]]:
    width = len(header)
    reader = csv.reader(io.StringIO(body, newline=""), delimiter=delim)
    out: list[list[str]] = []
    rownums: list[int] = []
    extra = 0
    examples: list[tuple[int, str]] = []
    try:
        prev_line = 0
        for rec in reader:
            start = prev_line + 1
            prev_line = reader.line_num
            if not rec or (len(rec) == 1 and not rec[0].strip()):
                continue
            if len(rec) > width:
                tail = [c for c in rec[width:] if c.strip()]
                if tail:
                    extra += len(tail)
                    if len(examples) < 5:
                        examples.append((header_row + start, tail[0]))
                rec = rec[:width]
            elif len(rec) < width:
                rec = rec + [""] * (width - len(rec))
            out.append(rec)
            rownums.append(header_row + start)
    except csv.Error as err:
        raise IntakeError(name, Reason.UNREADABLE, f"the text could not be split into fields ({err}).",
                          row=header_row + reader.line_num, hint="Check the quoting near that row, or export the file again.") from err
    if out:
        arr = np.array(out, dtype=object)
        cols = [pd.Series(arr[:, j], dtype="str") for j in range(width)]
    else:
        cols = [pd.Series([], dtype="str") for _ in range(width)]
    return cols, np.asarray(rownums, dtype=np.int64), extra, tuple(examples)


# -- spreadsheets ---------------------------------------------------------------
def _cell_text(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, float):
        if v != v:
            return ""
        return repr(v)
    if isinstance(v, _dt.datetime):
        return v.isoformat(sep=" ")
    if isinstance(v, _dt.date):
        return v.isoformat()
    if isinstance(v, _dt.time):
        return v.isoformat()
    if isinstance(v, _dt.timedelta):
        return repr(v.total_seconds() / 86400.0)
    return str(v)


def _check_zip(raw: bytes, name: str, options: ReadOptions) -> None:
    if not raw.startswith(b"PK\x03\x04"):
        return
    try:
        with zipfile.ZipFile(io.BytesIO(raw)) as zf:
            total = sum(max(info.file_size, 0) for info in zf.infolist())
    except (zipfile.BadZipFile, ValueError, OSError, EOFError) as err:
        raise IntakeError(name, Reason.UNREADABLE, "the spreadsheet is a damaged zip archive.",
                          hint="Open it in the spreadsheet program and save it again.") from err
    limit = XLSX_EXPANSION_LIMIT * options.max_bytes
    if total > limit:
        raise IntakeError(name, Reason.TOO_LARGE, f"the spreadsheet unpacks to {total:,} bytes, above the limit of {limit:,}.",
                          hint="Export the sheet you need as CSV, or, if the file is genuine, raise the size limit (--max-upload-mb when you serve the dashboard).")


def _sheet_rows(raw: bytes, name: str, options: ReadOptions) -> tuple[list[list[Any]], str, list[str]]:
    errors: list[str] = []
    try:  # the fast reader first; an import or read failure falls back to openpyxl below
        import python_calamine

        wb = python_calamine.CalamineWorkbook.from_filelike(io.BytesIO(raw))
        names = list(wb.sheet_names)
        target = _pick_sheet(names, options, name)
        if target is None:
            for n in names:
                rows = wb.get_sheet_by_name(n).to_python(skip_empty_area=False)
                if any(any(c not in (None, "") for c in r) for r in rows):
                    return rows, n, names
            raise IntakeError(name, Reason.NO_DATA, "every sheet of the workbook is empty.", hint="Check that the right file was chosen.")
        return wb.get_sheet_by_name(target).to_python(skip_empty_area=False), target, names
    except IntakeError:
        raise
    except Exception as err:  # fall back to openpyxl
        errors.append(f"{type(err).__name__}: {err}")
    try:  # openpyxl only as the fallback reader: 0.17 s of start-up otherwise (python -X importtime)
        import openpyxl

        wb2 = openpyxl.load_workbook(io.BytesIO(raw), read_only=True, data_only=True)
        names = list(wb2.sheetnames)
        target = _pick_sheet(names, options, name) or names[0]
        rows2 = [list(r) for r in wb2[target].iter_rows(values_only=True)]
        return rows2, target, names
    except IntakeError:
        raise
    except Exception as err:
        raise IntakeError(name, Reason.UNREADABLE, "the spreadsheet could not be read.",
                          hint="Save it again as .xlsx, or export the sheet as CSV.") from err


def _pick_sheet(names: Sequence[str], options: ReadOptions, name: str) -> str | None:
    if options.sheet is None:
        return None
    if isinstance(options.sheet, int):
        if 0 <= options.sheet < len(names):
            return names[options.sheet]
    elif options.sheet in names:
        return options.sheet
    raise IntakeError(name, Reason.BAD_OPTION, f"sheet {options.sheet!r} does not exist.",
                      hint=f"Sheets in the workbook: {', '.join(map(repr, names))} (positions count from 0).")


def _read_xlsx(raw: bytes, name: str, options: ReadOptions) -> Grid:
    _check_zip(raw, name, options)
    rows_any, sheet, names = _sheet_rows(raw, name, options)
    rows = [[_cell_text(c) for c in r] for r in rows_any]
    if not rows or not any(any(c.strip() for c in r) for r in rows):
        raise IntakeError(name, Reason.EMPTY_FILE, f"sheet {sheet!r} is empty.", hint="Choose the sheet with the data (sheet setting).")
    if options.header_row is not None:
        h = options.header_row - 1
        if h >= len(rows):
            raise IntakeError(name, Reason.BAD_OPTION, f"{choice_words('header_row')} {options.header_row} is beyond the last row ({len(rows)}).",
                              hint="Give the row number of the header as the sheet shows it.")
    else:
        _check_cells(rows[:80], name, range(1, 81))
        h = find_header(rows[:80], name)
    header = [c.strip() for c in rows[h]]
    while header and not header[-1]:
        header.pop()
    width = len(header)
    _check_width(width, name, h + 1)
    body: list[list[str]] = []
    rownums: list[int] = []
    extra = 0
    examples: list[tuple[int, str]] = []
    for i in range(h + 1, len(rows)):
        r = rows[i]
        if not any(c.strip() for c in r):
            continue
        tail = [c for c in r[width:] if c.strip()]
        if tail:
            extra += len(tail)
            if len(examples) < 5:
                examples.append((i + 1, tail[0]))
        r = (r + [""] * width)[:width]
        body.append(r)
        rownums.append(i + 1)
    arr = np.array(body, dtype=object).reshape(len(body), width)
    cols = [pd.Series(arr[:, j], dtype="str") for j in range(width)]
    notes = (f"sheet {sheet!r} used (workbook sheets: {', '.join(map(repr, names))})",) if len(names) > 1 else ()
    notes += _header_notes(header, h + 1)
    _check_columns(header, cols, np.asarray(rownums, dtype=np.int64), name)
    return Grid(header, cols, np.asarray(rownums, dtype=np.int64), "xlsx", None, None, h + 1, sheet, extra, tuple(examples), notes)


# -- parquet ----------------------------------------------------------------------
def _read_parquet(raw: bytes, name: str, options: ReadOptions) -> Grid:
    """Check the footer against the limits, then decode row group by row group within a memory budget.

    A Parquet file states its row count, columns and (uncompressed) sizes in its
    footer; dictionary and run-length encoding let a file of a few hundred
    kilobytes declare tens of millions of rows, so nothing is decoded before
    those numbers pass :data:`MAX_ROWS`, :data:`MAX_CELLS`, :data:`MAX_COLUMNS`
    and :data:`PARQUET_EXPANSION_LIMIT` times ``options.max_bytes``.
    """
    budget = PARQUET_EXPANSION_LIMIT * options.max_bytes
    try:
        pf = pq.ParquetFile(pa.BufferReader(raw))
        meta = pf.metadata
        n_rows, n_cols = int(meta.num_rows), int(meta.num_columns)
        declared = sum(int(meta.row_group(i).total_byte_size) for i in range(meta.num_row_groups))
    except Exception as err:
        raise IntakeError(name, Reason.UNREADABLE, "the Parquet file could not be read (its footer is damaged).",
                          hint="Write it again with a Parquet writer, or export CSV.") from err
    _check_width(n_cols, name, 1)
    _check_size(n_rows, n_cols, name)
    if declared > budget:
        raise IntakeError(name, Reason.TOO_LARGE, f"the Parquet file declares {declared:,} bytes of data once decoded, above "
                          f"the limit of {budget:,} ({PARQUET_EXPANSION_LIMIT} times the upload limit).",
                          hint="Split the file, or export CSV.")
    try:
        parts, used = [], 0
        for i in range(meta.num_row_groups):
            part = pf.read_row_group(i)
            used += int(part.nbytes)
            if used > budget:
                raise IntakeError(name, Reason.TOO_LARGE, f"the Parquet file decodes to more than {budget:,} bytes, above "
                                  f"{PARQUET_EXPANSION_LIMIT} times the upload limit.", hint="Split the file, or export CSV.")
            parts.append(part)
        table = pa.concat_tables(parts) if parts else pf.schema_arrow.empty_table()
        del parts
        # date32 columns come as datetime64 (not Python date objects, which would be turned into
        # text and parsed again: most of the time of a large long-layout file).  Each Arrow column is
        # let go as soon as it is converted (self_destruct), and the freed memory is handed back
        # instead of staying in Arrow's pool through the rest of the read
        frame = table.to_pandas(date_as_object=False, self_destruct=True)
        del table
        pa.default_memory_pool().release_unused()
    except IntakeError:
        raise
    except Exception as err:
        raise IntakeError(name, Reason.UNREADABLE, "the Parquet file could not be read.",
                          hint="Write it again with a Parquet writer, or export CSV.") from err
    _check_width(frame.shape[1], name, 1)
    if not isinstance(frame.index, pd.RangeIndex):
        frame = frame.reset_index()
    elif not frame.index.equals(pd.RangeIndex(len(frame))):
        frame = frame.reset_index(drop=True)
    header = [str(c).strip() for c in frame.columns.tolist()]
    cols = []
    # items() hands out each column over the frame's 0-based RangeIndex (what iloc + reset_index gave,
    # at a tenth of the cost per column: the wide L file has 3,001 of them); the columns are numbered
    # first, so that items() does not look each name up in a text index
    frame.columns = pd.RangeIndex(len(header))
    as_text: dict[Any, bool] = {}  # per dtype, not per column (a wide file's 3,001 columns share one or two)
    for _, s in frame.items():
        try:
            text = as_text[s.dtype]
        except (KeyError, TypeError):
            text = not (pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype)) \
                or pd.api.types.is_bool_dtype(s.dtype)
            try:
                as_text[s.dtype] = text
            except TypeError:  # (an unhashable dtype: decided per column)
                pass
        if text:
            s = s.astype("str").fillna("")
        cols.append(s)
    rows = np.arange(len(frame), dtype=np.int64) + 2
    _check_columns(header, cols, rows, name)
    return Grid(header, cols, rows, "parquet", None, None, 1)
