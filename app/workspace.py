"""The server-side workspace: uploaded files, their tidy data and a catalogue.

Layout of the folder (every path derives from a content hash, never from an
uploaded file name)::

    catalogue.sqlite3        datasets and settings (sqlite3, standard library)
    raw/<sha256>.bin         the bytes as uploaded (so a file can be re-read with new options)
    data/<dataset id>.parquet  the ParsedFile's tidy data
    cache/                   memoised study results (flask-caching filesystem backend)

A dataset id is the first 20 hex digits of ``sha256(raw sha256 + options)``
(plus the owning browser session, when there is one), so the same bytes read
with the same options are the same dataset.  Every file is written
atomically: a temporary file in the same folder, ``fsync``, then
``os.replace``; a catalogue change is one sqlite transaction written after
its files, so a crash at any point leaves either the old or the new state.
Temporary files left by a crash are removed when a Workspace is opened.

Owners: each dashboard browser session owns the datasets it uploads (the
``owner`` column holds its session id); it sees its own datasets and the
shared ones (owner ``''``: the demo, and anything added without an owner,
such as from the command line).  ``owner=None`` in a query means "no
filtering" (the command line and tests).

Shared datasets are read-only to browser sessions: a session cannot delete
one, and reading one again with other choices gives the session its own copy
(the shared one stays as it was for everyone).

A rejected upload -- above the size limit, or a file that cannot be read --
is not kept: nothing in the folder changes, and the user sees why.  Reading
a kept dataset again with choices that fail leaves the dataset as it was.
When the disk is full (or the folder cannot be written) nothing half-written
is left and the message says so.  Raw or data files that no catalogue row
names (left by a process killed between writing the file and its row) are
removed when a Workspace is opened, once they are a minute old.
"""

from __future__ import annotations

import dataclasses
import errno
import hashlib
import io
import json
import os
import shutil
import sqlite3
import tempfile
import threading
import time
from contextlib import closing
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Callable, Iterator

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute  # noqa: F401  (pa.compute.take)
import pyarrow.parquet as pq

from valuesift.core.errors import IntakeError, Reason, ValueSiftError
from valuesift.core.intake import ParsedFile, ReadOptions, read_table
from valuesift.core.intake.report import FileReport
from valuesift.app.paths import user_data_dir

__all__ = ["user_data_dir", "nothing_usable", "DatasetRecord", "Workspace", "SharedDatasetError", "options_to_dict", "options_from_dict",
           "report_to_dict", "report_from_dict", "atomic_write_bytes", "ORPHAN_AGE_S", "UNDO_S"]

#: a raw or data file no catalogue row names is removed at open once it is this old (seconds)
ORPHAN_AGE_S = 60.0
#: a dataset removed in the dashboard can be brought back for this long (seconds); then it is deleted for good
UNDO_S = 600.0


class SharedDatasetError(ValueSiftError):
    """A browser session tried to change a dataset shared by every session (the demo, command-line files)."""

_SCHEMA = """
CREATE TABLE IF NOT EXISTS datasets (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL,
    kind TEXT,
    sha256 TEXT NOT NULL,
    size INTEGER NOT NULL,
    uploaded_at TEXT NOT NULL,
    options_json TEXT NOT NULL,
    report_json TEXT,
    status TEXT NOT NULL,
    error TEXT,
    demo INTEGER NOT NULL DEFAULT 0,
    owner TEXT NOT NULL DEFAULT '',
    removed_at REAL
);
CREATE TABLE IF NOT EXISTS settings (key TEXT PRIMARY KEY, value TEXT NOT NULL);
"""


# -- serialisation ---------------------------------------------------------------
def nothing_usable(pf: ParsedFile) -> str:
    """Why a file that was read gave no usable value, in one sentence with its commonest reason and an example."""
    from valuesift.app.words import reason_words

    rep = pf.report
    why = ""
    top = rep.by_reason.sort_values("count", ascending=False) if len(rep.by_reason) else rep.by_reason
    if len(top):
        # What could not be read says more than what was dropped because of it (a row without its date).
        bad = top[top["category"] == "unparseable"]
        top = bad if len(bad) else top[top["category"] != "blank"]
    if len(top):
        reason = top.iloc[0]["reason"]
        ex = rep.examples[rep.examples["reason"] == reason].head(1)
        example = (f" (for example row {int(ex.iloc[0]['row'])}, column {ex.iloc[0]['column']!r}: "
                   f"{str(ex.iloc[0]['value'])[:24]!r})") if len(ex) else ""
        why = f": {int(top.iloc[0]['count']):,} cells were {reason_words(reason)}{example}"
    return (f"With these reading choices nothing in {rep.name} could be used{why}. Nothing was changed: the file "
            "keeps its earlier reading. Choose differently (the date order, say), or use 'Go back to the detected "
            "reading'.")


def options_to_dict(options: ReadOptions) -> dict[str, Any]:
    """ReadOptions as a JSON-ready dict (tuples become lists)."""
    d = dataclasses.asdict(options)
    d["exclude_columns"] = list(options.exclude_columns)
    return d


def options_from_dict(d: dict[str, Any]) -> ReadOptions:
    """Inverse of :func:`options_to_dict` (unknown keys are ignored)."""
    names = {f.name for f in dataclasses.fields(ReadOptions)}
    kw = {k: v for k, v in d.items() if k in names}
    if "exclude_columns" in kw:
        kw["exclude_columns"] = tuple(kw["exclude_columns"] or ())
    return ReadOptions(**kw)


def _enc(v: Any) -> Any:
    if isinstance(v, pd.DataFrame):
        frame = v.astype(object).where(pd.notna(v), None)
        return {"__frame__": [str(c) for c in v.columns],
                "rows": [[_enc(x) for x in row] for row in frame.itertuples(index=False, name=None)]}
    if isinstance(v, pd.Timestamp):
        return {"__ts__": v.isoformat()}
    if isinstance(v, tuple):
        return {"__tuple__": [_enc(x) for x in v]}
    if hasattr(v, "item") and not isinstance(v, (str, bytes)):
        try:
            return v.item()
        except (ValueError, AttributeError):
            return str(v)
    if isinstance(v, float) and v != v:
        return None
    if v is None or isinstance(v, (str, int, float, bool)):
        return v
    if isinstance(v, (list,)):
        return [_enc(x) for x in v]
    return getattr(v, "value", str(v))


def _dec(v: Any) -> Any:
    if isinstance(v, dict):
        if "__frame__" in v:
            return pd.DataFrame([[_dec(x) for x in r] for r in v["rows"]], columns=v["__frame__"])
        if "__ts__" in v:
            return pd.Timestamp(v["__ts__"])
        if "__tuple__" in v:
            return tuple(_dec(x) for x in v["__tuple__"])
    if isinstance(v, list):
        return [_dec(x) for x in v]
    return v


def report_to_dict(report: FileReport) -> dict[str, Any]:
    """A FileReport as JSON-ready data (frames, timestamps and tuples tagged)."""
    return {f.name: _enc(getattr(report, f.name)) for f in dataclasses.fields(report)}


def report_from_dict(d: dict[str, Any]) -> FileReport:
    """Inverse of :func:`report_to_dict`; raises TypeError/KeyError when the shape changed."""
    names = {f.name for f in dataclasses.fields(FileReport)}
    return FileReport(**{k: _dec(v) for k, v in d.items() if k in names})


def atomic_write_bytes(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` via a temporary file in the same folder, fsync, os.replace."""
    _atomic(path, lambda fh: fh.write(data))


def _digest(raw: bytes | Path) -> tuple[str, int]:
    """SHA-256 (hex) and size of bytes, or of a file's bytes read in 1 MB pieces."""
    if isinstance(raw, (bytes, bytearray, memoryview)):
        return hashlib.sha256(raw).hexdigest(), len(raw)
    with open(raw, "rb") as fh:
        return hashlib.file_digest(fh, "sha256").hexdigest(), os.fstat(fh.fileno()).st_size


def _copy_into(raw: bytes | Path, fh: Any) -> None:
    if isinstance(raw, (bytes, bytearray, memoryview)):
        fh.write(raw)
        return
    with open(raw, "rb") as src:
        shutil.copyfileobj(src, fh, 1 << 20)


#: rows per row group when a table with categorical columns is written (each slice's text made once)
_SLICE_ROWS = 1 << 18


def write_tidy_parquet(frame: pd.DataFrame, fh: Any) -> None:
    """Write a tidy table as Parquet; categorical columns are stored as the plain values they hold (text, dates).

    The file has the schema and pandas metadata ``frame.to_parquet(fh, index=False)`` writes for the same
    table with text columns (read back, the same table, text columns included), but it is written one row
    group of about 260,000 rows at a time, each categorical slice's values taken in Arrow from its
    categories, so the whole text (or date) column never exists in memory (measured: writing a 6.1-million-row
    table peaked 15 MB above the table, against 496 MB for ``to_parquet`` of the text table).
    """
    cats = {c: frame[c].dtype.categories.dtype for c in frame.columns if isinstance(frame[c].dtype, pd.CategoricalDtype)}
    if not cats:
        frame.to_parquet(fh, index=False)
        return
    schema = pa.Schema.from_pandas(frame.iloc[:0].astype(cats), preserve_index=False)
    values = {c: pa.array(np.asarray(frame[c].cat.categories), type=schema.field(c).type) for c in cats}
    # dictionary pages for the ids and the dates (few distinct values); the values plain: a dictionary of
    # distinct numbers is built and dropped again, and costs more memory than the whole slice
    coded = [c for c in frame.columns if c in cats or pd.api.types.is_datetime64_any_dtype(frame[c].dtype)]
    with pq.ParquetWriter(fh, schema, use_dictionary=coded) as writer:
        for start in range(0, max(len(frame), 1), _SLICE_ROWS):
            arrays = []
            for c in frame.columns:
                part = frame[c].iloc[start:start + _SLICE_ROWS]
                if c in cats:
                    codes = part.cat.codes.to_numpy()
                    arrays.append(pa.compute.take(values[c], pa.array(codes, mask=codes < 0)))
                else:
                    arrays.append(pa.array(part, type=schema.field(c).type, from_pandas=True))
            writer.write_table(pa.Table.from_arrays(arrays, schema=schema))
            del arrays


def warm_intake() -> None:
    """Read and write one small invented wide file (about 2 MB, the readers' fast path) and keep nothing.

    The first file a process reads sets up, once, what every later read reuses (the readers' code paths,
    the Arrow memory pool and its threads, the Parquet writer): about 100 MB of resident memory measured
    on the first large upload.  The dashboard does this at start, so that an upload's own memory is what
    it measures, the first one included.
    """
    rng = np.random.default_rng(0)
    n_rows, n_cols = 1_500, 160
    prices = np.round(50 * np.exp(np.cumsum(rng.normal(0, 0.01, size=(n_rows, n_cols)), axis=0)), 3)
    dates = np.datetime_as_string(np.datetime64("2000-01-03") + np.arange(n_rows), unit="D")
    lines = ["date," + ",".join(f"W{j:04d}" for j in range(n_cols))]
    lines += [d + "," + ",".join(map(str, row)) for d, row in zip(dates, prices.tolist())]
    pf = read_table("\n".join(lines).encode(), name="warm-up prices.csv", options=ReadOptions(kind="prices"),
                    lean=True)
    write_tidy_parquet(pf.data, io.BytesIO())


def _atomic(path: Path, write: Callable[[Any], object]) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".tmp-{os.getpid()}-", suffix=path.suffix)
    try:
        with os.fdopen(fd, "wb") as fh:
            write(fh)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def _writer_alive(name: str) -> bool:
    """Whether the process named in a ``.tmp-<pid>-...`` file name is running (not this one)."""
    try:
        pid = int(name.split("-")[1])
    except (IndexError, ValueError):
        return False
    if pid == os.getpid():
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


# -- records ---------------------------------------------------------------------------
@dataclass(frozen=True)
class DatasetRecord:
    """One catalogue row: an uploaded file read with one set of options."""

    id: str
    name: str
    kind: str | None
    sha256: str
    size: int
    uploaded_at: str
    options: ReadOptions
    report: dict[str, Any] | None
    status: str            # "ok" or "failed"
    error: str | None
    demo: bool = False
    owner: str = ""        # the browser session that uploaded it; "" is shared

    @property
    def ok(self) -> bool:
        return self.status == "ok"


def _dataset_id(sha: str, options: ReadOptions, owner: str = "") -> str:
    blob = sha + json.dumps(options_to_dict(options), sort_keys=True, default=str)
    if owner:
        blob += "\x00owner:" + owner
    return hashlib.sha256(blob.encode()).hexdigest()[:20]


class Workspace:
    """A folder of datasets with a sqlite catalogue (thread-safe for the server's threads)."""

    def __init__(self, root: str | os.PathLike[str]) -> None:
        self.root = Path(root).expanduser().resolve()
        for sub in ("raw", "data", "cache"):
            (self.root / sub).mkdir(parents=True, exist_ok=True)
        self._lock = threading.RLock()
        with self._connect() as con:
            con.executescript(_SCHEMA)
            cols = {r[1] for r in con.execute("PRAGMA table_info(datasets)").fetchall()}
            if "owner" not in cols:  # a workspace made before owners existed: its rows are shared
                con.execute("ALTER TABLE datasets ADD COLUMN owner TEXT NOT NULL DEFAULT ''")
            if "removed_at" not in cols:  # made before removal could be undone: nothing is removed
                con.execute("ALTER TABLE datasets ADD COLUMN removed_at REAL")
        self.purged_removed = self.purge_removed()
        self.removed_temp_files = self._remove_temp_files()
        self.removed_orphans = self._remove_orphans()

    def _remove_temp_files(self) -> int:
        """Delete ``.tmp-<pid>-*`` files whose writing process is gone (left by a crash; never datasets)."""
        n = 0
        for sub in ("raw", "data", "cache"):
            for p in (self.root / sub).glob(".tmp-*"):
                if _writer_alive(p.name):
                    continue          # another process (a server, a command) is writing it now
                try:
                    p.unlink()
                    n += 1
                except OSError:
                    pass
        return n

    def _remove_orphans(self) -> int:
        """Delete raw and data files that no catalogue row names (older than :data:`ORPHAN_AGE_S`)."""
        with self._connect() as con:
            shas = {r[0] for r in con.execute("SELECT sha256 FROM datasets").fetchall()}
            ids = {r[0] for r in con.execute("SELECT id FROM datasets").fetchall()}
        now, n = time.time(), 0
        for sub, known, suffix in (("raw", shas, ".bin"), ("data", ids, ".parquet")):
            for p in (self.root / sub).glob(f"*{suffix}"):
                if p.name.startswith(".tmp-") or p.name[:-len(suffix)] in known:
                    continue
                try:
                    if now - p.stat().st_mtime < ORPHAN_AGE_S:
                        continue          # perhaps another process is between the file and its row
                    p.unlink()
                    n += 1
                except OSError:
                    pass
        return n

    # -- plumbing --------------------------------------------------------------------
    @property
    def cache_dir(self) -> Path:
        return self.root / "cache"

    def _connect(self) -> Any:
        con = sqlite3.connect(self.root / "catalogue.sqlite3", timeout=30)
        con.row_factory = sqlite3.Row
        return _Tx(con)

    def _raw_path(self, sha: str) -> Path:
        return self.root / "raw" / f"{sha}.bin"

    def _data_path(self, dataset_id: str) -> Path:
        return self.root / "data" / f"{dataset_id}.parquet"

    # -- writing -----------------------------------------------------------------------
    def add_upload(self, name: str, raw: bytes | Path, options: ReadOptions | None = None, *,
                   demo: bool = False, owner: str = "", digest: tuple[str, int] | None = None) -> DatasetRecord:
        """Read the file and, when it reads, keep a copy and catalogue the dataset.

        ``raw`` is the file's bytes, or the path of a file holding them (the
        dashboard's upload route gives the file it wrote the upload to): then
        the bytes are let go once the cells are split, and the kept copy is
        streamed from the file, so the upload is never held twice in memory.
        The file at the path is left where it is.  ``digest``: :meth:`digest` of
        ``raw`` when the caller has it already (a large upload is not read twice
        for its hash).

        A file above ``options.max_bytes``, a file that cannot be read and a
        file that cannot be stored (a full disk) leave the folder unchanged:
        the returned record has status ``"failed"`` and its error says why; it
        is not catalogued.
        """
        options = options or ReadOptions()
        sha, size = digest or self.digest(raw)
        if size > options.max_bytes:
            err = IntakeError(name, Reason.TOO_LARGE,
                              f"the file has {size:,} bytes, above the limit of {options.max_bytes:,}.",
                              hint="Split the file, or start the server with a larger --max-upload-mb.")
            return self._failed(name, sha, size, options, str(err), demo, owner)
        try:
            # the security column as categories: the same table, each id held once (stored as plain text)
            pf = read_table(raw, name=name, options=options, lean=True)
        except (IntakeError, ValueSiftError) as err:
            return self._failed(name, sha, size, options, str(err), demo, owner)
        if len(pf.data) == 0:      # read, but nothing usable: a failure, never an empty "read" file
            return self._failed(name, sha, size, options, nothing_usable(pf), demo, owner)
        wrote_raw = False
        try:
            with self._lock:
                if not self._raw_path(sha).exists():
                    _atomic(self._raw_path(sha), lambda fh: _copy_into(raw, fh))
                    wrote_raw = True
            return self._store(name, sha, size, options, pf, demo=demo, owner=owner)
        except (OSError, sqlite3.Error) as err:
            if wrote_raw:
                self._drop_raw_if_unused(sha)
            return self._failed(name, sha, size, options, self._disk_message(name, err), demo, owner)

    @staticmethod
    def digest(raw: bytes | Path) -> tuple[str, int]:
        """SHA-256 (hex) and size of an upload's bytes, or of the file holding them (read in pieces)."""
        return _digest(raw)

    def find_upload(self, raw: bytes | Path, *, owner: str = "", digest: tuple[str, int] | None = None) -> DatasetRecord | None:
        """The dataset already read from exactly these bytes (same SHA-256) that ``owner`` can see, or None.

        ``raw`` and ``digest`` as for :meth:`add_upload`.  An identical upload is recognised by this and reused with its
        reading choices (exclusions, date order ...), instead of being catalogued a second time with the
        detected ones.  The owner's own copy is preferred, then a shared one; among several, the latest.
        """
        sha, _ = digest or self.digest(raw)
        with self._connect() as con:
            rows = con.execute("SELECT * FROM datasets WHERE sha256 = ? AND status = 'ok' AND owner IN (?, '') "
                               "AND removed_at IS NULL "
                               "ORDER BY (owner = ?) DESC, uploaded_at DESC", (sha, owner, owner)).fetchall()
        return self._record(rows[0]) if rows else None

    def _disk_message(self, name: str, err: BaseException) -> str:
        full = isinstance(err, OSError) and err.errno in (errno.ENOSPC, errno.EDQUOT)
        what = "has no space left" if full else "cannot be written"
        return (f"{name} was read but could not be stored: the workspace folder {self.root} {what}. "
                "Nothing was kept. Free some disk space (or choose another workspace folder), then drop the file again.")

    def _failed(self, name: str, sha: str, size: int, options: ReadOptions, error: str, demo: bool,
                owner: str) -> DatasetRecord:
        now = datetime.now(timezone.utc).isoformat(timespec="seconds")
        return DatasetRecord(_dataset_id(sha, options, owner), name, options.kind, sha, size, now, options, None,
                             "failed", error, demo, owner)

    def _drop_raw_if_unused(self, sha: str) -> None:
        with self._lock, self._connect() as con:
            used = con.execute("SELECT COUNT(*) FROM datasets WHERE sha256 = ?", (sha,)).fetchone()[0]
        if not used:
            self._raw_path(sha).unlink(missing_ok=True)

    def reread(self, dataset_id: str, options: ReadOptions, *, owner: str | None = None) -> DatasetRecord:
        """Read a kept upload again with other options (no new upload).

        On success the old entry is replaced -- except a shared dataset read
        again by a browser session (``owner``), which stays as it is while the
        session gets its own copy.  When the new choices fail, nothing changes
        and the returned record (not catalogued) carries the error.
        """
        old = self.get(dataset_id, owner=owner)
        new_owner = old.owner if owner is None or old.owner == owner else owner
        kept = self._raw_path(old.sha256)
        if not kept.is_file():
            return self._failed(old.name, old.sha256, old.size, options,
                                f"The kept copy of {old.name} is missing from the workspace, so it cannot be read "
                                "again. Upload the file again.", old.demo, new_owner)
        try:
            pf = read_table(kept, name=old.name, options=options, lean=True)
        except (IntakeError, ValueSiftError) as err:
            return self._failed(old.name, old.sha256, old.size, options, str(err), old.demo, new_owner)
        if len(pf.data) == 0:      # read, but nothing usable: a failure, never an empty "read" file
            return self._failed(old.name, old.sha256, old.size, options, nothing_usable(pf), old.demo, new_owner)
        try:
            rec = self._store(old.name, old.sha256, old.size, options, pf, demo=old.demo, owner=new_owner)
        except (OSError, sqlite3.Error) as err:
            return self._failed(old.name, old.sha256, old.size, options, self._disk_message(old.name, err),
                                old.demo, new_owner)
        if rec.id != old.id and new_owner == old.owner:
            self.delete(old.id, keep_raw=True)
        return rec

    def _store(self, name: str, sha: str, size: int, options: ReadOptions, pf: ParsedFile, *, demo: bool,
               owner: str = "") -> DatasetRecord:
        did = _dataset_id(sha, options, owner)
        now = datetime.now(timezone.utc).isoformat(timespec="seconds")
        report = report_to_dict(pf.report)
        # written straight to the file (no Parquet copy of the whole table in memory first)
        _atomic(self._data_path(did), lambda fh: write_tidy_parquet(pf.data, fh))
        try:
            with self._lock, self._connect() as con:
                con.execute(
                    "INSERT OR REPLACE INTO datasets (id, name, kind, sha256, size, uploaded_at, options_json, "
                    "report_json, status, error, demo, owner) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)",
                    (did, name, pf.kind, sha, size, now, json.dumps(options_to_dict(options)),
                     json.dumps(report), "ok", None, int(demo), owner),
                )
        except sqlite3.Error:
            self._data_path(did).unlink(missing_ok=True)
            raise
        return self.get(did)

    def remove(self, dataset_id: str, *, owner: str | None = None, now: float | None = None) -> DatasetRecord:
        """Take a dataset out of the workspace so that :meth:`restore` can bring it back for :data:`UNDO_S`.

        Its files stay until then; it is no longer listed, read or found as an identical upload.  Same
        owner rules as :meth:`delete`.  Datasets removed longer ago are deleted for good on the way.
        """
        now = time.time() if now is None else now
        with self._lock:
            rec = self.get(dataset_id, owner=owner)
            if owner is not None and rec.owner != owner:
                raise SharedDatasetError(f"{rec.name} is shared by every browser of this dashboard, so it cannot be "
                                         "removed here.", hint="Untick it to leave it out of your studies.")
            with self._connect() as con:
                con.execute("UPDATE datasets SET removed_at = ? WHERE id = ?", (now, dataset_id))
            self.purge_removed(now=now)
        return rec

    def restore(self, dataset_id: str, *, owner: str | None = None) -> DatasetRecord:
        """Bring back a dataset taken out by :meth:`remove`; KeyError when it is gone for good (or not the owner's)."""
        with self._lock:
            with self._connect() as con:
                row = con.execute("SELECT owner FROM datasets WHERE id = ? AND removed_at IS NOT NULL",
                                  (str(dataset_id),)).fetchone()
                if row is None or (owner is not None and row["owner"] != owner):
                    raise KeyError(dataset_id)
                con.execute("UPDATE datasets SET removed_at = NULL WHERE id = ?", (str(dataset_id),))
            return self.get(dataset_id, owner=owner)

    def purge_removed(self, *, older_than: float = UNDO_S, now: float | None = None) -> int:
        """Delete for good the datasets removed more than ``older_than`` seconds ago; how many."""
        now = time.time() if now is None else now
        with self._lock:
            with self._connect() as con:
                ids = [r[0] for r in con.execute("SELECT id FROM datasets WHERE removed_at IS NOT NULL AND "
                                                 "removed_at <= ?", (now - older_than,)).fetchall()]
            for did in ids:
                self._delete_row(did)
        return len(ids)

    def delete(self, dataset_id: str, *, keep_raw: bool = False, owner: str | None = None) -> None:
        """Remove a dataset (and its raw bytes when no other dataset uses them).

        With ``owner`` (a browser session): only that owner's own dataset;
        KeyError for one it cannot see, :class:`SharedDatasetError` for a shared one.
        """
        with self._lock:
            rec = self.get(dataset_id, owner=owner)
            if owner is not None and rec.owner != owner:
                raise SharedDatasetError(f"{rec.name} is shared by every browser of this dashboard, so it cannot be "
                                         "deleted here.", hint="Untick it to leave it out of your studies.")
            self._delete_row(dataset_id, keep_raw=keep_raw)

    def _delete_row(self, dataset_id: str, *, keep_raw: bool = False) -> None:
        with self._lock:
            with self._connect() as con:
                row = con.execute("SELECT sha256 FROM datasets WHERE id = ?", (dataset_id,)).fetchone()
                if row is None:
                    return
                con.execute("DELETE FROM datasets WHERE id = ?", (dataset_id,))
                others = con.execute("SELECT COUNT(*) FROM datasets WHERE sha256 = ?", (row[0],)).fetchone()[0]
            self._data_path(dataset_id).unlink(missing_ok=True)
            if not keep_raw and others == 0:
                self._raw_path(row[0]).unlink(missing_ok=True)

    # -- reading -----------------------------------------------------------------------
    def _record(self, row: Any) -> DatasetRecord:
        return DatasetRecord(
            id=row["id"], name=row["name"], kind=row["kind"], sha256=row["sha256"], size=int(row["size"]),
            uploaded_at=row["uploaded_at"], options=options_from_dict(json.loads(row["options_json"])),
            report=None if row["report_json"] is None else json.loads(row["report_json"]),
            status=row["status"], error=row["error"], demo=bool(row["demo"]), owner=row["owner"],
        )

    def get(self, dataset_id: str, *, owner: str | None = None) -> DatasetRecord:
        """One dataset; with ``owner``, KeyError unless it is that owner's or shared."""
        with self._connect() as con:
            row = con.execute("SELECT * FROM datasets WHERE id = ? AND removed_at IS NULL",
                              (str(dataset_id),)).fetchone()
        if row is None or (owner is not None and row["owner"] not in ("", owner)):
            raise KeyError(dataset_id)
        return self._record(row)

    def records(self, owner: str | None = None) -> list[DatasetRecord]:
        """All datasets (with ``owner``: that owner's and the shared ones), newest first."""
        with self._connect() as con:
            if owner is None:
                rows = con.execute("SELECT * FROM datasets WHERE removed_at IS NULL "
                                   "ORDER BY uploaded_at DESC, rowid DESC").fetchall()
            else:
                rows = con.execute("SELECT * FROM datasets WHERE owner IN ('', ?) AND removed_at IS NULL "
                                   "ORDER BY uploaded_at DESC, rowid DESC", (owner,)).fetchall()
        return [self._record(r) for r in rows]

    def __iter__(self) -> Iterator[DatasetRecord]:
        return iter(self.records())

    def parsed_file(self, dataset_id: str) -> ParsedFile:
        """The ParsedFile of a dataset, rebuilt from its Parquet data and stored report.

        A damaged or missing data file is rebuilt from the kept upload; when
        that fails too, the dataset is marked failed with a message saying so
        and :class:`IntakeError` is raised.
        """
        rec = self.get(dataset_id)
        if not rec.ok:
            raise KeyError(dataset_id)
        try:
            data = pd.read_parquet(self._data_path(rec.id))
        except Exception as err:  # torn or damaged file (OSError, ArrowInvalid, ...)
            return self._rebuild(rec, err)
        try:
            report = report_from_dict(rec.report or {})
        except (TypeError, KeyError, ValueError):
            # The report's shape changed since it was stored: read the kept bytes again.
            return read_table(self._raw_path(rec.sha256).read_bytes(), name=rec.name, options=rec.options)
        return ParsedFile(rec.name, rec.kind, data, report, rec.options, rec.sha256, rec.size)  # type: ignore[arg-type]

    def _rebuild(self, rec: DatasetRecord, cause: BaseException) -> ParsedFile:
        try:
            raw = self._raw_path(rec.sha256).read_bytes()
            if hashlib.sha256(raw).hexdigest() != rec.sha256:
                raise OSError("the kept upload does not match its hash")
            pf = read_table(raw, name=rec.name, options=rec.options)
        except (OSError, ValueSiftError) as err:
            msg = (f"The workspace's stored copy of {rec.name} is damaged and the kept upload could not be read "
                   "again. Delete it on the Data page and upload the file again.")
            with self._lock, self._connect() as con:
                con.execute("UPDATE datasets SET status = 'failed', error = ? WHERE id = ?", (msg, rec.id))
            raise IntakeError(rec.name, Reason.UNREADABLE, "the workspace's stored copy of the file is damaged.",
                              hint="Delete it on the Data page and upload the file again.") from err
        try:
            atomic_write_bytes(self._data_path(rec.id), pf.data.to_parquet(index=False))
        except OSError:
            pass  # the rebuilt data serves this request; the next one tries again
        return pf

    # -- settings --------------------------------------------------------------------------
    def get_setting(self, key: str, default: Any = None) -> Any:
        with self._connect() as con:
            row = con.execute("SELECT value FROM settings WHERE key = ?", (key,)).fetchone()
        return default if row is None else json.loads(row["value"])

    def set_setting(self, key: str, value: Any) -> None:
        """Store a setting (nothing is written when the value is unchanged)."""
        if self.get_setting(key, _MISSING) == value:
            return
        with self._lock, self._connect() as con:
            con.execute("INSERT OR REPLACE INTO settings (key, value) VALUES (?, ?)", (key, json.dumps(value)))


_MISSING = object()


class _Tx:
    """Context manager: commit on success, roll back on error, always close."""

    def __init__(self, con: sqlite3.Connection) -> None:
        self.con = con

    def __enter__(self) -> sqlite3.Connection:
        return self.con

    def __exit__(self, exc_type: object, *_: object) -> None:
        with closing(self.con):
            if exc_type is None:
                self.con.commit()
            else:
                self.con.rollback()
