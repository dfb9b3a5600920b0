"""Invented company names and security codes for the demo market.

Names are two invented syllables plus a sector word ("Torvell Mining");
codes are the first three letters of the name in capitals plus two digits
("TOR14"), a shape no exchange uses for its tickers.
"""

from __future__ import annotations

import numpy as np

__all__ = ["invent_names"]

_FIRST = (
    "tor", "mar", "ka", "lis", "dro", "van", "mel", "bra", "quen", "fen",
    "dar", "lu", "mir", "cas", "gor", "ves", "pel", "hal", "bel", "ostr",
    "tev", "kor", "sal", "nim", "rav", "zel", "orm", "pim", "wen", "jor",
)
_SECOND = (
    "vell", "ren", "tis", "dane", "ost", "ark", "ule", "ima", "ondo", "eth",
    "ix", "arra", "omb", "enn", "uvo", "isk", "alde", "orn", "ew", "ago",
)
_SECTOR_WORDS = {
    "Banks": ("Bank", "Savings", "Credit"),
    "Energy": ("Energy", "Fuels", "Drilling"),
    "Health Care": ("Health", "Medical", "Clinics"),
    "Industrials": ("Works", "Engineering", "Machines"),
    "Materials": ("Mining", "Chemicals", "Metals"),
    "Property": ("Estates", "Land", "Property"),
    "Retail": ("Stores", "Markets", "Retail"),
    "Technology": ("Systems", "Software", "Digital"),
    "Utilities": ("Power", "Water", "Grid"),
}


def invent_names(sectors: tuple[str, ...], rng: np.random.Generator) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Return (names, codes), one each per entry of ``sectors``, all distinct.

    Parameters
    ----------
    sectors : tuple of str
        The sector of each company (picks the sector word of the name).
    rng : numpy.random.Generator
        The stream that decides the syllables and digits.

    Returns
    -------
    names, codes : tuple of str
        Invented names such as "Torvell Mining" and codes such as "TOR14".
    """
    names: list[str] = []
    codes: list[str] = []
    stems: set[str] = set()
    used_codes: set[str] = set()
    for sector in sectors:
        while True:
            stem = (_FIRST[rng.integers(len(_FIRST))] + _SECOND[rng.integers(len(_SECOND))]).capitalize()
            if stem not in stems:
                break
        stems.add(stem)
        words = _SECTOR_WORDS[sector]
        names.append(f"{stem} {words[rng.integers(len(words))]}")
        while True:
            code = f"{stem[:3].upper()}{int(rng.integers(10, 100)):02d}"
            if code not in used_codes:
                break
        used_codes.add(code)
        codes.append(code)
    return tuple(names), tuple(codes)
