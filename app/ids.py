"""Security identifiers in page addresses.

An identifier made only of letters, digits, ``-`` and ``_`` is used as it is
(``/company/TOR14``); any other is written ``~`` + base64url of its UTF-8
bytes without padding, so slashes, dots, spaces or markup never reach the
path.  ``~`` never occurs in the plain form, so the two cannot collide.
"""

from __future__ import annotations

import base64
import binascii
import re

__all__ = ["encode_id", "decode_id", "company_path"]

_PLAIN = re.compile(r"[A-Za-z0-9_-]{1,64}")


def encode_id(security: str) -> str:
    """A path-safe form of ``security``."""
    s = str(security)
    if _PLAIN.fullmatch(s):
        return s
    return "~" + base64.urlsafe_b64encode(s.encode("utf-8")).decode("ascii").rstrip("=")


def decode_id(code: str) -> str | None:
    """Inverse of :func:`encode_id`; None when ``code`` is not a valid encoding."""
    c = str(code or "")
    if c.startswith("~"):
        body = c[1:]
        if not re.fullmatch(r"[A-Za-z0-9_-]+", body):
            return None
        try:
            out = base64.urlsafe_b64decode(body + "=" * (-len(body) % 4)).decode("utf-8")
        except (binascii.Error, UnicodeDecodeError, ValueError):
            return None
        return out if out and encode_id(out) == c else None
    return c if _PLAIN.fullmatch(c) else None


def company_path(security: str) -> str:
    return "/company/" + encode_id(security)
