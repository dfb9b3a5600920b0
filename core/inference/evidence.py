"""The verdict category of a headline t-statistic: the one place the words of the evidence come from.

Codes (the app words them): ``"too_short"`` (fewer than ten independent periods: no verdict),
``"not_available"`` (no t-statistic), ``"strong"`` / ``"strong_reverse"`` (|t| >= 3),
``"moderate"`` / ``"moderate_reverse"`` (2 <= |t| < 3), ``"no_evidence"`` (|t| < 2: no evidence
either way at this sample size; not evidence of no relation).  "Reverse" means the dear names
out-earned the cheap ones.

References
----------
Harvey, C. R., Liu, Y. & Zhu, H. (2016). ... and the cross-section of expected returns.
Rev. Financ. Stud. 29(1), 5-68 (a t-hurdle of about 3 once many signals have been tried).
"""

from __future__ import annotations

import math

__all__ = ["EVIDENCE_CODES", "STRONG_T", "MODERATE_T", "evidence_category"]

EVIDENCE_CODES: tuple[str, ...] = (
    "too_short", "not_available", "strong", "moderate", "no_evidence", "moderate_reverse", "strong_reverse",
)
#: |t| from which the evidence is called strong (Harvey, Liu & Zhu 2016).
STRONG_T = 3.0
#: |t| from which the evidence is called moderate (the usual two-sided 5 % level, 1.96, rounded up).
MODERATE_T = 2.0


def evidence_category(t: float, too_short: bool) -> str:
    """The verdict code of a headline t-statistic (see the module notes).

    Examples
    --------
    >>> evidence_category(3.4, False), evidence_category(-2.5, False), evidence_category(25.0, True)
    ('strong', 'moderate_reverse', 'too_short')
    """
    if too_short:
        return "too_short"
    if t is None or not math.isfinite(t):
        return "not_available"
    a = abs(t)
    if a >= STRONG_T:
        return "strong" if t > 0 else "strong_reverse"
    if a >= MODERATE_T:
        return "moderate" if t > 0 else "moderate_reverse"
    return "no_evidence"
