"""Detection of encoding, delimiter, header row and column roles."""

from __future__ import annotations

import codecs

import csv
import re
from typing import Iterable, Sequence

import pandas as pd

from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake.options import choice_words

__all__ = [
    "decode",
    "utf8_head",
    "utf8_head_of",
    "sniff_delimiter",
    "find_header",
    "split_sample",
    "sample_records",
    "record_spans",
    "is_value",
    "MAX_CELL_CHARS",
    "norm_name",
    "DATE_WORDS",
    "SECURITY_WORDS",
    "looks_like_index",
]

_BOMS = (
    (b"\xef\xbb\xbf", "utf-8-sig", "UTF-8 with BOM"),
    (b"\xff\xfe\x00\x00", "utf-32", "UTF-32 with BOM"),
    (b"\x00\x00\xfe\xff", "utf-32", "UTF-32 with BOM"),
    (b"\xff\xfe", "utf-16", "UTF-16 with BOM"),
    (b"\xfe\xff", "utf-16", "UTF-16 with BOM"),
)
_DELIMS = (",", ";", "\t", "|")
DATE_WORDS = frozenset(
    {"date", "dates", "period", "periodend", "asof", "asofdate", "month", "monthend", "exdate", "exdividenddate",
     "day", "time", "timestamp", "valuedate", "pricedate", "reportdate", "dt"}
)
SECURITY_WORDS = frozenset(
    {"security", "securityid", "code", "id", "ticker", "symbol", "isin", "instrument", "stock", "company",
     "asset", "name", "secid", "identifier", "securitycode", "stockcode", "holding"}
)
#: the longest cell intake reads (header or data); a longer one is refused with its row and column
MAX_CELL_CHARS = 10_000
#: a quoted record of the sample may span at most this many physical lines (a stray quote in a
#: preamble line would otherwise swallow the header)
_MAX_RECORD_LINES = 20
_INDEX_RE = re.compile(r"(?i)(\bindex\b|\bcomposite\b|all[\s_-]?share|\bbenchmark\b|\baverage\b|\bmarket\b|\btotal\b|\bidx\b)")


def norm_name(name: str) -> str:
    """Lower-case a header and drop everything but letters and digits (``"Ex-Date"`` -> ``"exdate"``)."""
    return re.sub(r"[^a-z0-9]", "", str(name).lower())


def looks_like_index(header: str) -> bool:
    """True when a column header reads like an index, composite or benchmark rather than a security."""
    return bool(_INDEX_RE.search(str(header)))


def decode(raw: bytes, name: str, encoding: str | None = None) -> tuple[str, str]:
    """Decode file bytes to text.

    Returns the text and a label of the encoding used.  Tries a byte-order mark,
    then UTF-8, then cp1252.  Binary content raises :class:`IntakeError`.
    """
    if encoding is not None:
        try:
            return raw.decode(encoding), encoding
        except (UnicodeDecodeError, LookupError) as err:
            raise IntakeError(name, Reason.BAD_ENCODING, f"the file is not valid {encoding} text.",
                              hint="Leave the encoding setting empty to detect it, or pick the one the file was saved in.") from err
    for bom, codec, label in _BOMS:
        if raw.startswith(bom):
            try:
                return raw.decode(codec), label
            except UnicodeDecodeError as err:
                raise IntakeError(name, Reason.BAD_ENCODING, f"the file starts with a {label} mark but is not valid {label} text.",
                                  hint="Save the file again as UTF-8.") from err
    head = raw[:4096]
    if len(head) >= 4 and head.count(b"\x00") > len(head) // 4:
        even, odd = head[0::2].count(b"\x00"), head[1::2].count(b"\x00")
        codec = "utf-16-le" if odd > even else "utf-16-be"
        try:
            text = raw.decode(codec)
        except UnicodeDecodeError:
            text = ""
        if text and _printable_share(text[:2000]) > 0.95:
            return text, f"{codec.upper()} without BOM"
    if b"\x00" in raw:
        raise IntakeError(name, Reason.UNREADABLE, "the file holds binary data (NUL bytes), not text.",
                          hint="Export the data as CSV, XLSX or Parquet.")
    try:
        text = raw.decode("utf-8")
        label = "UTF-8"
    except UnicodeDecodeError:
        try:
            text = raw.decode("cp1252")
            label = "cp1252"
        except UnicodeDecodeError as err:
            raise IntakeError(name, Reason.BAD_ENCODING, "the file is neither UTF-8 nor cp1252 text.",
                              hint="Save it again as UTF-8, or set the encoding it uses.") from err
    if _printable_share(text[:20000]) < 0.9:
        raise IntakeError(name, Reason.UNREADABLE, "the file does not look like text (too many control characters).",
                          hint="Export the data as CSV, XLSX or Parquet.")
    return text, label


#: files of at least this many bytes may have only their first part decoded (see :func:`utf8_head`)
HEAD_FROM_BYTES = 8 << 20
#: about how many bytes :func:`utf8_head` decodes (whole lines)
HEAD_BYTES = 4 << 20


def utf8_head(raw: bytes) -> str | None:
    """The first whole lines (about :data:`HEAD_BYTES`) of a large file that :func:`decode` reads as UTF-8
    without a mark, decoded; None for any other file (smaller, a mark, NUL bytes, not all UTF-8, control
    characters at the start, or no line feed in that part).

    The whole file is checked as UTF-8 in pieces, so the answer is the one :func:`decode` gives, but the text
    of the whole file is never held: a reader that takes the body from the bytes themselves needs only the
    head (delimiter, header) as text.

    Examples
    --------
    >>> utf8_head(b"date,A\n2020-01-31,1\n") is None   # small files are decoded whole
    True
    """
    step = 4 << 20
    return utf8_head_of(len(raw), raw[:HEAD_BYTES], (raw[k:k + step] for k in range(0, len(raw), step)))


def utf8_head_of(size: int, first: bytes, pieces: Iterable[bytes]) -> str | None:
    """:func:`utf8_head` of a file of ``size`` bytes given as its first :data:`HEAD_BYTES` (``first``) and
    all its bytes in consecutive ``pieces`` (read from a file one piece at a time, say)."""
    if size < HEAD_FROM_BYTES or any(first.startswith(bom) for bom, _, _ in _BOMS):
        return None
    check = codecs.getincrementaldecoder("utf-8")()
    try:
        for piece in pieces:
            if b"\x00" in piece:
                return None
            check.decode(piece, final=False)
        check.decode(b"", final=True)
    except UnicodeDecodeError:
        return None
    cut = first.rfind(b"\n")
    if cut < 0:
        return None
    head = first[:cut + 1].decode("utf-8")
    return head if _printable_share(head[:20000]) >= 0.9 else None


def _printable_share(text: str) -> float:
    if not text:
        return 1.0
    bad = sum(1 for ch in text if (ord(ch) < 32 and ch not in "\r\n\t") or 0xD800 <= ord(ch) <= 0xDFFF or ch == "\ufffd")
    return 1.0 - bad / len(text)


def record_spans(text: str, max_records: int = 80) -> list[tuple[int, int, int]]:
    """Where the first records of a delimited text lie, each as ``(start, end, line)`` (see
    :func:`sample_records`): they depend only on line feeds and quotes, not on the delimiter, so one
    pass serves every candidate delimiter."""
    out: list[tuple[int, int, int]] = []
    pos, line, n = 0, 0, len(text)
    while len(out) < max_records and pos < n:
        start, first_line = pos, line
        quotes, lines = 0, 0
        first_end = -1
        while True:
            nl = text.find("\n", pos)
            stop = n if nl < 0 else nl + 1
            quotes += text.count('"', pos, stop)
            pos, line, lines = stop, line + (0 if nl < 0 else 1), lines + 1
            if first_end < 0:
                first_end = stop
            if quotes % 2 == 0 or nl < 0:
                break
            if lines >= _MAX_RECORD_LINES:
                pos, line = first_end, first_line + 1
                break
        out.append((start, pos, first_line))
    return out


def _split(text: str, start: int, end: int, delimiter: str) -> list[str]:
    rec = text[start:end]
    body = rec[:-1] if rec.endswith("\n") else rec
    if body.endswith("\r"):
        body = body[:-1]
    try:
        return next(csv.reader([body], delimiter=delimiter), [])
    except csv.Error:
        return [body]


def sample_records(text: str, delimiter: str, max_records: int = 80,
                   spans: Sequence[tuple[int, int, int]] | None = None) -> list[tuple[list[str], int, int, int]]:
    """The first records of a delimited text, each as ``(cells, start, end, line)``.

    ``start`` and ``end`` are character offsets (``end`` just after the record's
    line feed) and ``line`` the 0-based physical line (counted in line feeds)
    where the record starts.  Records are split at line feeds outside quotes
    only: a carriage return, U+2028 or a line feed inside a quoted cell is data
    (RFC 4180, section 2.6), so it cannot move the header onto a data row.
    A record whose quotes do not close within a few lines is read as its first
    line alone (a stray quote in a preamble).  ``spans`` are the records'
    places from :func:`record_spans` when already known (its first
    ``max_records`` are used).
    """
    where = record_spans(text, max_records) if spans is None else spans[:max_records]
    return [(_split(text, start, end, delimiter), start, end, line) for start, end, line in where]


def split_sample(text: str, delimiter: str, max_lines: int = 80) -> list[list[str]]:
    """The cells of the first ``max_lines`` records (see :func:`sample_records`)."""
    return [r[0] for r in sample_records(text, delimiter, max_lines)]


def sniff_delimiter(text: str, spans: Sequence[tuple[int, int, int]] | None = None) -> str:
    """Pick the delimiter that splits the sample lines into the most consistent widths.

    Notes
    -----
    For each candidate (``,``, ``;``, tab, ``|``) the sample lines are split with
    the csv module (so quoted fields are respected); the score is the number of
    lines sharing the most common width (ignoring single-field lines), then that
    width.  Ties go to the earlier candidate.  A candidate that does not occur
    in the sample splits no line and is passed over; the records' places are
    found once for all candidates (``spans`` from :func:`record_spans`, when
    the caller has them).
    """
    where = record_spans(text, 60) if spans is None else spans[:60]
    end = where[-1][1] if where else 0
    best: tuple[int, int, int] = (0, 0, 0)
    choice = ","
    for rank, d in enumerate(_DELIMS):
        if text.find(d, 0, end) < 0:  # every record would be one cell (or none): no width to count
            continue
        widths = [len(r) for r in (_split(text, a, b, d) for a, b, _ in where) if len(r) > 1]
        if not widths:
            continue
        mode = pd.Series(widths).mode()
        w = int(mode.max())
        score = (widths.count(w), w, -rank)
        if score > best:
            best, choice = score, d
    return choice


def _width(row: Sequence[str]) -> int:
    w = len(row)
    while w and not str(row[w - 1]).strip():
        w -= 1
    return w


_VALUE_LEAD = frozenset("-+($€£")
_VALUE_BODY = frozenset(".,/:%-")
_VALUE_TAIL = frozenset(")%")


def is_value(cell: str) -> bool:
    """Whether a cell reads as a number or a date (``-3.5``, ``(1,200)``, ``12%``, ``2020/01/31``).

    Notes
    -----
    The cell (stripped) must be: sign or currency characters, then digits,
    separators and whitespace, then closing characters, with at least one
    digit -- the language of ``[-+($€£]*[\\d.,\\s/:%-]+[)%]*``, decided in one
    pass instead of by a backtracking regular expression (whose overlapping
    quantifiers took quadratic time on a long run of dashes).  Shrinking the
    leading or trailing run only moves characters into the middle, so the
    longest leading and trailing runs decide.
    """
    c = cell.strip()
    n = len(c)
    i = 0
    while i < n and c[i] in _VALUE_LEAD:
        i += 1
    j = n
    while j > i and c[j - 1] in _VALUE_TAIL:
        j -= 1
    has_digit = False
    for ch in c[i:j]:
        if ch.isdecimal():          # the regex's \\d: any Unicode decimal digit
            has_digit = True
        elif ch not in _VALUE_BODY and not ch.isspace():
            return False
    return has_digit


def find_header(rows: Sequence[Sequence[str]], name: str) -> int:
    """0-based index of the header row among sample rows (skipping preamble lines).

    Notes
    -----
    The header is the first row at least as wide as the most common width of
    the sample rows (ignoring trailing empty cells and one-cell lines) with at
    least two non-empty cells, of which at least one is not a number or date.  A file whose widest rows are all numbers has
    no header (:class:`IntakeError`, reason ``no_header``).
    """
    widths = [_width(r) for r in rows]
    if not widths or max(widths) == 0:
        raise IntakeError(name, Reason.EMPTY_FILE, "the file has no content.", hint="Check that the right file was chosen.")
    wmax = max(widths)
    wide = [w for w in widths if w >= 2]
    need = int(pd.Series(wide).mode().max()) if wide else 1
    for i, r in enumerate(rows):
        cells = [str(c).strip() for c in r]
        nonempty = [c for c in cells if c]
        if widths[i] >= need and len(nonempty) >= min(2, wmax) and any(not is_value(c) for c in nonempty):
            return i
    # tolerate headers narrower than the data by one blank leading cell (index column without a name)
    for i, r in enumerate(rows):
        nonempty = [str(c).strip() for c in r if str(c).strip()]
        if widths[i] >= need - 1 and len(nonempty) >= 2 and all(not is_value(c) for c in nonempty):
            return i
    raise IntakeError(name, Reason.NO_HEADER, "no header row found: the widest rows hold only numbers or dates.",
                      row=1, hint=f"Add a header row (a date column name and one name per column), or set {choice_words('header_row')}.")
