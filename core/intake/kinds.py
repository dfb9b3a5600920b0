"""Guessing what a file holds from its name and header."""

from __future__ import annotations

import re
from typing import Sequence

from valuesift.core.choices import FileKind
from valuesift.core.intake.sniff import norm_name

__all__ = ["guess_kind", "infer_earnings_form", "VALUE_WORDS"]

_NAME_RULES: tuple[tuple[str, FileKind], ...] = (
    (r"bench", "benchmark"),
    (r"div", "dividends"),
    (r"sector|industr", "sectors"),
    (r"holding|portfolio|weights|fund", "holdings"),
    (r"market[\s_-]?cap|mcap|mktcap|capitali", "market_cap"),
    (r"earn|eps|(^|[^a-z])p[\s_/-]?e([^a-z]|$)|price[\s_-]?earn", "earnings"),
    (r"signal|score|factor", "signal"),
    (r"price|close|px", "prices"),
)

#: header words (normalised) that name the value column, per kind, best first
VALUE_WORDS: dict[str, tuple[str, ...]] = {
    "prices": ("adjclose", "close", "price", "px", "last", "value"),
    "earnings": ("epsttm", "eps", "peratio", "pe", "earnings", "value"),
    "dividends": ("amount", "dividend", "dps", "div", "value"),
    "market_cap": ("marketcap", "mcap", "cap", "value"),
    "signal": ("signal", "score", "value"),
    "benchmark": ("level", "totalreturn", "value", "close", "price", "index"),
    "holdings": ("weight", "wt", "pct", "percent", "allocation", "share"),
    "sectors": ("sector", "industry", "group", "classification"),
}


def guess_kind(name: str, header: Sequence[str] = ()) -> FileKind | None:
    """Guess a file's kind from its header, then its name; ``None`` when nothing fits.

    Examples
    --------
    >>> guess_kind("maren_prices.csv")
    'prices'
    >>> guess_kind("export.csv", ["code", "sector"])
    'sectors'
    """
    cols = {norm_name(h) for h in header}
    if cols & {"sector", "industry", "sectorname"}:
        return "sectors"
    if cols & {"weight", "weights", "portfolioweight"}:
        return "holdings"
    if cols & {"exdate", "exdividenddate", "dps", "dividend"} or (cols & {"amount"} and len(cols) <= 4):
        return "dividends"
    if cols & {"eps", "epsttm", "pe", "peratio", "earnings"}:
        return "earnings"
    if cols & {"marketcap", "mcap"}:
        return "market_cap"
    stem = re.sub(r"\.[A-Za-z0-9]+$", "", name.replace("\\", "/").rsplit("/", 1)[-1]).lower()
    for pat, kind in _NAME_RULES:
        if re.search(pat, stem):
            return kind
    if cols & {"level"} and len(cols) == 2:
        return "benchmark"
    if cols & {"price", "close", "adjclose"}:
        return "prices"
    return None


def infer_earnings_form(text: str) -> str | None:
    """``"pe"`` or ``"eps"`` when ``text`` (a header or file name) says so, else None."""
    t = text.lower()
    if re.search(r"(^|[^a-z])(p[\s_/-]?e|pe[\s_-]?ratio|price[\s_-]?(to[\s_-]?)?earnings?)([^a-z]|$)", t):
        return "pe"
    if re.search(r"eps|earnings[\s_-]?per[\s_-]?share|earnings", t):
        return "eps"
    return None
