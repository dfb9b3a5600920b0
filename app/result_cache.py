"""The study-result cache on disk: every entry signed with a per-workspace secret, unsigned entries refused.

A cached result is a pickle (a study result is a dataclass of many pandas
objects); a pickle runs code when it is loaded, so a file planted in the
cache folder must never be loaded.  Each entry is written as
``VSC1 || HMAC-SHA256(secret, key || 0 || payload) || payload`` and read
only when the tag matches (compared in constant time).  The secret is 32
random bytes in ``<workspace>/cache.key``, created with owner-only
permissions; a key file that others can read or write, or that belongs to
another user, is replaced (which invalidates every entry signed with it).

Writes are atomic (temporary file, fsync, rename); the folder keeps at most
``threshold`` entries (the oldest go first).
"""

from __future__ import annotations

import hashlib
import hmac
import logging
import os
import pickle
import re
import secrets
import stat
from pathlib import Path
from typing import Any

from valuesift.app.workspace import atomic_write_bytes

__all__ = ["SignedCache", "load_secret"]

log = logging.getLogger("valuesift.app")

_MAGIC = b"VSC1"
_TAG = 32
_SUFFIX = ".vsc"
_KEY_RE = re.compile(r"[A-Za-z0-9_-]{1,80}")


def load_secret(path: Path) -> bytes:
    """The 32-byte secret in ``path``, created (mode 0600) when missing, unsafe or damaged."""
    try:
        st = os.stat(path, follow_symlinks=False)
        safe = (stat.S_ISREG(st.st_mode) and not st.st_mode & 0o077
                and (not hasattr(os, "getuid") or st.st_uid == os.getuid()))
        if safe:
            data = path.read_bytes()
            if len(data) == 32:
                return data
        log.warning("cache key %s was not private to this user; a new one was made (cached results are recomputed)", path)
        path.unlink()
    except FileNotFoundError:
        pass
    secret = secrets.token_bytes(32)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    with os.fdopen(fd, "wb") as fh:
        fh.write(secret)
        fh.flush()
        os.fsync(fh.fileno())
    return secret


class SignedCache:
    """A small folder of signed pickles keyed by study key (thread-safe through atomic files)."""

    def __init__(self, folder: Path, secret: bytes, *, threshold: int = 16) -> None:
        self.folder = Path(folder)
        self.folder.mkdir(parents=True, exist_ok=True)
        self._secret = secret
        self.threshold = threshold
        self.refused = 0
        self._remove_foreign()

    def _remove_foreign(self) -> None:
        """Delete files of the old unsigned cache format (and anything else that is not an entry)."""
        for p in self.folder.iterdir():
            if p.is_file() and not p.name.endswith(_SUFFIX) and not p.name.startswith(".tmp-"):
                try:
                    p.unlink()
                except OSError:
                    pass

    def _path(self, key: str) -> Path:
        if not _KEY_RE.fullmatch(key):
            raise KeyError(key)
        return self.folder / f"{key}{_SUFFIX}"

    def _tag(self, key: str, payload: bytes) -> bytes:
        return hmac.new(self._secret, key.encode() + b"\x00" + payload, hashlib.sha256).digest()

    def get(self, key: str) -> Any:
        """The cached object, or None (missing, unsigned, tampered or unreadable: a cache miss)."""
        try:
            blob = self._path(key).read_bytes()
        except (OSError, KeyError):
            return None
        if len(blob) < len(_MAGIC) + _TAG or not blob.startswith(_MAGIC):
            self.refused += 1
            log.warning("cache entry %s is not signed; it was ignored", key)
            return None
        tag, payload = blob[len(_MAGIC):len(_MAGIC) + _TAG], blob[len(_MAGIC) + _TAG:]
        if not hmac.compare_digest(tag, self._tag(key, payload)):
            self.refused += 1
            log.warning("cache entry %s has a wrong signature; it was ignored", key)
            return None
        try:
            return pickle.loads(payload)  # noqa: S301 - signed by this workspace's secret, checked above
        except Exception:
            log.debug("cache entry %s could not be loaded", key, exc_info=True)
            return None

    def set(self, key: str, value: Any) -> None:
        payload = pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL)
        atomic_write_bytes(self._path(key), _MAGIC + self._tag(key, payload) + payload)
        self._prune()

    def clear(self) -> None:
        for p in self.folder.glob(f"*{_SUFFIX}"):
            p.unlink(missing_ok=True)

    def _prune(self) -> None:
        entries = []
        for p in self.folder.glob(f"*{_SUFFIX}"):
            if p.name.startswith(".tmp-"):
                continue
            try:
                entries.append((p.stat().st_mtime, p))
            except OSError:
                continue
        for _, p in sorted(entries)[:max(0, len(entries) - self.threshold)]:
            p.unlink(missing_ok=True)
