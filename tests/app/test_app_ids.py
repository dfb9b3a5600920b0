"""Identifiers in page addresses: path-safe and reversible."""

from __future__ import annotations

import re

from hypothesis import given, strategies as st

from valuesift.app.ids import company_path, decode_id, encode_id


def test_plain_codes_stay_readable() -> None:
    assert encode_id("TOR14") == "TOR14"
    assert company_path("TOR14") == "/company/TOR14"


def test_awkward_codes_are_encoded() -> None:
    for s in ["A/B", "..", "<script>", "x y", "Ünï", "~A1", "a.b"]:
        code = encode_id(s)
        assert code.startswith("~")
        assert re.fullmatch(r"~[A-Za-z0-9_-]*", code)
        assert decode_id(code) == s


def test_garbage_does_not_decode() -> None:
    assert decode_id("a/b") is None
    assert decode_id("") is None
    assert decode_id("~%%%") is None


@given(st.text(min_size=1, max_size=40))
def test_round_trip_and_path_safety(s: str) -> None:
    code = encode_id(s)
    assert re.fullmatch(r"~?[A-Za-z0-9_-]+", code)
    assert decode_id(code) == s
