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

A rejected upload (above the size limit) is not kept: nothing in the folder
changes.  A file that is within the limit but cannot be read is kept with its
error, so it can be read again with other options.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import os
import sqlite3
import tempfile
import threading
from contextlib import closing
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Callable, Iterator

import pandas as pd

from valuesift.core.errors import IntakeError, Reason, ValueSiftError
from valuesift.core.intake import ParsedFile, ReadOptions, read_table
from valuesift.core.intake.report import FileReport

__all__ = ["DatasetRecord", "Workspace", "options_to_dict", "options_from_dict", "report_to_dict",
           "report_from_dict", "atomic_write_bytes"]

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
    owner TEXT NOT NULL DEFAULT ''
);
CREATE TABLE IF NOT EXISTS settings (key TEXT PRIMARY KEY, value TEXT NOT NULL);
"""


# -- serialisation ---------------------------------------------------------------
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
        self.removed_temp_files = self._remove_temp_files()

    def _remove_temp_files(self) -> int:
        """Delete ``.tmp-<pid>-*`` files whose writing process is gone (left by a crash; never datasets)."""
        n = 0
        for sub in ("raw", "data"):
            for p in (self.root / sub).glob(".tmp-*"):
                if _writer_alive(p.name):
                    continue          # another process (a server, a command) is writing it now
                try:
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
    def add_upload(self, name: str, raw: bytes, options: ReadOptions | None = None, *,
                   demo: bool = False, owner: str = "") -> DatasetRecord:
        """Keep the bytes, read them and catalogue the outcome (a failed read is kept with its error).

        An upload above ``options.max_bytes`` is rejected without touching the
        folder: the returned record has status ``"failed"`` and is not catalogued.
        """
        options = options or ReadOptions()
        sha = hashlib.sha256(raw).hexdigest()
        if len(raw) > options.max_bytes:
            err = IntakeError(name, Reason.TOO_LARGE,
                              f"the file has {len(raw):,} bytes, above the limit of {options.max_bytes:,}.",
                              hint="Split the file, or start the server with a larger --max-upload-mb.")
            now = datetime.now(timezone.utc).isoformat(timespec="seconds")
            return DatasetRecord(_dataset_id(sha, options, owner), name, options.kind, sha, len(raw), now,
                                 options, None, "failed", str(err), demo, owner)
        with self._lock:
            if not self._raw_path(sha).exists():
                atomic_write_bytes(self._raw_path(sha), raw)
        return self._read_and_store(name, sha, len(raw), options, demo=demo, owner=owner)

    def reread(self, dataset_id: str, options: ReadOptions) -> DatasetRecord:
        """Read a kept upload again with other options (no new upload); the old entry is replaced."""
        old = self.get(dataset_id)
        rec = self._read_and_store(old.name, old.sha256, old.size, options, demo=old.demo, owner=old.owner)
        if rec.id != old.id:
            self.delete(old.id, keep_raw=True)
        return rec

    def _read_and_store(self, name: str, sha: str, size: int, options: ReadOptions, *, demo: bool,
                        owner: str = "") -> DatasetRecord:
        did = _dataset_id(sha, options, owner)
        raw = self._raw_path(sha).read_bytes()
        now = datetime.now(timezone.utc).isoformat(timespec="seconds")
        kind: str | None = options.kind
        report: dict[str, Any] | None = None
        error: str | None = None
        try:
            pf = read_table(raw, name=name, options=options)
        except (IntakeError, ValueSiftError) as err:
            status, error = "failed", str(err)
        else:
            status, kind, report = "ok", pf.kind, report_to_dict(pf.report)
            buf = pf.data.to_parquet(index=False)
            atomic_write_bytes(self._data_path(did), buf)
        with self._lock, self._connect() as con:
            con.execute(
                "INSERT OR REPLACE INTO datasets (id, name, kind, sha256, size, uploaded_at, options_json, "
                "report_json, status, error, demo, owner) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)",
                (did, name, kind, sha, size, now, json.dumps(options_to_dict(options)),
                 None if report is None else json.dumps(report), status, error, int(demo), owner),
            )
        return self.get(did)

    def delete(self, dataset_id: str, *, keep_raw: bool = False, owner: str | None = None) -> None:
        """Remove a dataset (and its raw bytes when no other dataset uses them).

        With ``owner``, only a dataset that owner can see (KeyError otherwise).
        """
        with self._lock:
            rec = self.get(dataset_id, owner=owner)
            with self._connect() as con:
                con.execute("DELETE FROM datasets WHERE id = ?", (dataset_id,))
                others = con.execute("SELECT COUNT(*) FROM datasets WHERE sha256 = ?", (rec.sha256,)).fetchone()[0]
            self._data_path(dataset_id).unlink(missing_ok=True)
            if not keep_raw and others == 0:
                self._raw_path(rec.sha256).unlink(missing_ok=True)

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
            row = con.execute("SELECT * FROM datasets WHERE id = ?", (str(dataset_id),)).fetchone()
        if row is None or (owner is not None and row["owner"] not in ("", owner)):
            raise KeyError(dataset_id)
        return self._record(row)

    def records(self, owner: str | None = None) -> list[DatasetRecord]:
        """All datasets (with ``owner``: that owner's and the shared ones), newest first."""
        with self._connect() as con:
            if owner is None:
                rows = con.execute("SELECT * FROM datasets ORDER BY uploaded_at DESC, rowid DESC").fetchall()
            else:
                rows = con.execute("SELECT * FROM datasets WHERE owner IN ('', ?) "
                                   "ORDER BY uploaded_at DESC, rowid DESC", (owner,)).fetchall()
        return [self._record(r) for r in rows]

    def __iter__(self) -> Iterator[DatasetRecord]:
        return iter(self.records())

    def parsed_file(self, dataset_id: str) -> ParsedFile:
        """The ParsedFile of a dataset, rebuilt from its Parquet data and stored report."""
        rec = self.get(dataset_id)
        if not rec.ok:
            raise KeyError(dataset_id)
        data = pd.read_parquet(self._data_path(rec.id))
        try:
            report = report_from_dict(rec.report or {})
        except (TypeError, KeyError, ValueError):
            # The report's shape changed since it was stored: read the kept bytes again.
            return read_table(self._raw_path(rec.sha256).read_bytes(), name=rec.name, options=rec.options)
        return ParsedFile(rec.name, rec.kind, data, report, rec.options, rec.sha256, rec.size)  # type: ignore[arg-type]

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
