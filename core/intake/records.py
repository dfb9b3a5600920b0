"""Record kinds: sector maps (security, sector) and holdings (security, weight)."""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake import numbers as nb
from valuesift.core.intake._common import DUP, NOSEC, Ctx, clean_ids, decide_decimal, find_column, number_profile, tally_values, value_column
from valuesift.core.intake.numbers import parse_numbers
from valuesift.core.intake.options import choice_words
from valuesift.core.intake.sniff import SECURITY_WORDS, norm_name

__all__ = ["tidy_records"]


def tidy_records(ctx: Ctx, kind: str, avail: list[int]) -> tuple[pd.DataFrame, dict[str, Any]]:
    """Tidy a sector map or a holdings list; returns the table and report fields."""
    o, g = ctx.options, ctx.grid
    if o.security_column:
        s = find_column(ctx, o.security_column, "security_column")
    else:
        kw = [j for j in avail if norm_name(ctx.header[j]) in SECURITY_WORDS]
        s = kw[0] if kw else avail[0]
    rest = [j for j in avail if j != s]
    if not rest:
        raise IntakeError(ctx.name, Reason.NO_VALUE_COLUMN, f"the {kind} file needs a second column next to the security codes.",
                          row=g.header_row, hint="Check the delimiter and the header row.")
    if kind == "holdings":
        numeric = [j for j in rest if number_profile(ctx.col(j))[0] < 0.5]
        v = value_column(ctx, kind, rest, numeric)
    else:
        text = [j for j in rest if number_profile(ctx.col(j))[0] >= 0.5]
        v = value_column(ctx, kind, rest, text)
    unused = [j for j in avail if j not in (s, v)]
    for j in unused:
        ctx.whole_column(j, Reason.UNUSED_COLUMN)
    if unused:
        ctx.notes.append(f"columns not used: {', '.join(repr(ctx.header[j]) for j in unused)}")
    raw_ids = ctx.text(s)
    ids, misses = clean_ids(raw_ids, o)
    if misses:
        ctx.notes.append(f"{misses} identifiers did not match the identifier pattern and were kept as written")
    sec_blank = (ids == "").to_numpy(dtype=bool)
    rows = g.rows
    ctx.tally.add_parsed(int((~sec_blank).sum()))
    ctx.tally.add(Reason.BLANK, sec_blank, ctx.locator(s))
    value_form: str | None = None
    decimal = "point"
    if kind == "holdings":
        decimal, dec_reason = decide_decimal(ctx, [v])
        ctx.notes.append(f"decimal {decimal}: {dec_reason}")
        num = parse_numbers(ctx.col(v).reset_index(drop=True), decimal)  # type: ignore[arg-type]
        final, vals = num.status.copy(), num.values
        if num.percent.any():
            value_form = "fraction"
            ctx.notes.append("weights carried % signs and were read as fractions (3.25% -> 0.0325)")
    else:
        txt = ctx.text(v)
        final = np.where(txt == "", nb.BLANK, nb.PARSED).astype(np.int8)
        final[txt.str.lower().isin(nb.MISSING_MARKERS).to_numpy(dtype=bool)] = nb.MISSING
        final[(txt == "").to_numpy(dtype=bool)] = nb.BLANK
        vals = txt.to_numpy(dtype=object)
    ok = final == nb.PARSED
    final[ok & sec_blank] = NOSEC
    valid = np.flatnonzero(final == nb.PARSED)
    frame = pd.DataFrame({"security": pd.Series(ids.to_numpy()[valid], dtype="str"), "v": vals[valid]})
    dup = frame.duplicated(["security"], keep="first" if o.duplicate_rule == "first" else "last").to_numpy()
    if dup.any():
        if o.duplicate_rule == "error":
            k = int(np.flatnonzero(frame.duplicated(["security"], keep="first").to_numpy())[0])
            raise IntakeError(ctx.name, Reason.DUPLICATE_ENTRY, f"security {frame['security'].iloc[k]!r} appears more than once.",
                              row=int(rows[valid[k]]), column=ctx.header[v], hint=f"Remove the duplicate, or set {choice_words('duplicate_rule')} to the last one wins.")
        final[valid[dup]] = DUP
        ctx.notes.append(f"{int(dup.sum())} repeated securities resolved ({o.duplicate_rule} wins)")
        frame = frame[~dup]
    tally_values(ctx, final, [v], ctx.col(v).reset_index(drop=True))
    if kind == "holdings":
        w = frame["v"].astype(float)
        total = float(w.sum())
        if value_form is None and len(w) and abs(total - 100.0) <= 0.5:
            w = w / 100.0
            value_form = "fraction"
            ctx.notes.append(f"weights sum to {total:g}: read as percentages and divided by 100")
        out = pd.DataFrame({"security": frame["security"].to_numpy(), "weight": w.to_numpy(dtype=float)})
    else:
        out = pd.DataFrame({"security": frame["security"].to_numpy(), "sector": pd.Series(frame["v"].to_numpy(), dtype="str").str.strip().to_numpy()})
        out = out.astype({"sector": "str"})
    out = out.astype({"security": "str"}).sort_values("security", kind="stable").reset_index(drop=True)
    extra: dict[str, Any] = dict(
        layout="records", date_column=None, date_order=None, date_order_reason=None,
        decimal=decimal if kind == "holdings" else None,
        n_securities=int(out["security"].nunique()), first_date=None, last_date=None, frequency=None,
        security_column=ctx.header[s], value_column=ctx.header[v], value_form=value_form,
    )
    return out, extra
