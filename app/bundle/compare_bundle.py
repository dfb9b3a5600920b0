"""The committee bundle of a comparison of signals: report, charts, tables, README and a ZIP.

It formats a :class:`valuesift.core.compare.CompareResult`; nothing is recomputed.  The report is a short
landscape PDF (reportlab, fixed document id and dates so the same comparison gives the same bytes).
"""

from __future__ import annotations

import shutil
import zipfile
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

import pandas as pd
from reportlab import rl_config
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4, landscape
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import PageBreak, Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

from valuesift.app.bundle.charts import plotly_js_path, write_html
from valuesift.app.bundle.stability_text import compare_sentences
from valuesift.app.bundle.tables import FIXED_ZIP_TIME, write_csv
from valuesift.app.caution import CAUTION
from valuesift.app.figures.compare import compare_ic_figure, correlation_heatmap_figure, joint_fm_figure, signal_words
from valuesift.core.compare import CompareResult

__all__ = ["CompareBundle", "compare_tables", "write_compare_files", "write_compare_bundle"]


@dataclass(frozen=True)
class CompareBundle:
    folder: Path
    zip: Path
    files: tuple[str, ...]


def compare_tables(cmp: CompareResult) -> dict[str, pd.DataFrame]:
    """``compare``, ``signal_correlation`` (square, names as header and index) and ``joint_fm``."""
    corr = cmp.correlation.copy()
    corr.index.name = "signal"
    return {"compare": cmp.table.copy(), "signal_correlation": corr.reset_index(),
            "joint_fm": cmp.joint_fm.copy()}


def write_compare_files(cmp: CompareResult, out: Path) -> list[Path]:
    """``DIR/compare.csv``, ``DIR/signal_correlation.csv``, ``DIR/joint_fm.csv``."""
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for key, frame in compare_tables(cmp).items():
        p = out / f"{key}.csv"
        write_csv(frame, p)
        paths.append(p)
    return paths


def _pct(v: float) -> str:
    return "n/a" if pd.isna(v) else f"{100 * v:.1f}%"


def _num(v: float, d: int = 2) -> str:
    return "n/a" if pd.isna(v) else f"{v:.{d}f}"


def _pdf(cmp: CompareResult, path: Path, title: str) -> None:
    rl_config.invariant = 1
    base = ParagraphStyle("b", fontName="Helvetica", fontSize=9.5, leading=12.5)
    h1 = ParagraphStyle("h1", parent=base, fontName="Helvetica-Bold", fontSize=16, leading=20, spaceAfter=6)
    h2 = ParagraphStyle("h2", parent=base, fontName="Helvetica-Bold", fontSize=11, leading=14, spaceBefore=8)
    small = ParagraphStyle("s", parent=base, fontSize=7.5, leading=9.5)
    story = [Paragraph(escape(title), h1),
             Paragraph(escape("Signals compared: " + ", ".join(signal_words(s) for s in cmp.signals)
                              + ". Same universe, dates and settings; each signal keeps its own dates."), base)]
    for h in cmp.config.horizons:
        story.append(Paragraph(f"{int(h)} months", h2))
        for s in compare_sentences(cmp, int(h)):
            story.append(Paragraph(escape(s), base))
        t = cmp.table[cmp.table["horizon"] == int(h)]
        rows = [["signal", "mean IC", "IC t", "spread", "spread t", "Sharpe", "worst drawdown", "turnover", "names",
                 "dates", "verdict"]]
        for _, r in t.iterrows():
            rows.append([signal_words(r["signal"]), _num(r["mean_ic"], 3), _num(r["ic_t"]), _pct(r["spread"]),
                         _num(r["spread_t"]), _num(r["sharpe"]), _pct(r["max_drawdown"]), _pct(r["turnover"]),
                         _num(r["mean_breadth"], 0), str(int(r["n_dates"])),
                         "too short to judge" if bool(r["too_short"]) else str(r["evidence"]).replace("_", " ")])
        tab = Table(rows, repeatRows=1)
        tab.setStyle(TableStyle([("FONT", (0, 0), (-1, -1), "Helvetica", 7.8),
                                 ("FONT", (0, 0), (-1, 0), "Helvetica-Bold", 7.8),
                                 ("LINEBELOW", (0, 0), (-1, 0), 0.6, colors.HexColor("#26313d")),
                                 ("ROWBACKGROUNDS", (0, 1), (-1, -1), [colors.white, colors.HexColor("#f1eee8")])]))
        story += [Spacer(1, 3 * mm), tab]
    story += [PageBreak(), Paragraph("How alike are the signals", h2)]
    c = cmp.correlation
    rows = [[""] + [signal_words(s) for s in c.columns]] + [
        [signal_words(i)] + [_num(v) for v in c.loc[i].to_numpy(dtype=float)] for i in c.index]
    story.append(Table(rows, style=TableStyle([("FONT", (0, 0), (-1, -1), "Helvetica", 8.5)])))
    story += [Spacer(1, 4 * mm)] + [Paragraph(escape(n), small) for n in cmp.notes]
    story += [Spacer(1, 4 * mm), Paragraph(escape(CAUTION), small)]
    doc = SimpleDocTemplate(str(path), pagesize=landscape(A4), leftMargin=14 * mm, rightMargin=14 * mm,
                            topMargin=14 * mm, bottomMargin=14 * mm, title=title, author="ValueSift",
                            creator="ValueSift", subject="Comparison of signals")
    doc.build(story)


def write_compare_bundle(cmp: CompareResult, out: str | Path, *, name: str = "comparison",
                         title: str | None = None) -> CompareBundle:
    """Write ``DIR/comparison_bundle/`` (report PDF, interactive charts, tables, README) and its ZIP."""
    out = Path(out)
    folder = out / "comparison_bundle"
    (folder / "charts").mkdir(parents=True, exist_ok=True)
    (folder / "tables").mkdir(parents=True, exist_ok=True)
    files: list[str] = []
    for p in write_compare_files(cmp, folder / "tables"):
        files.append(f"tables/{p.name}")
    h = max(int(x) for x in cmp.config.horizons if x <= 12) if any(x <= 12 for x in cmp.config.horizons) \
        else int(min(cmp.config.horizons))
    figs = {"signal_correlation": correlation_heatmap_figure(cmp), f"mean_ic_{h}m": compare_ic_figure(cmp, h),
            f"joint_fm_{h}m": joint_fm_figure(cmp, h)}
    for key, fig in figs.items():
        write_html(fig, folder / "charts" / f"{key}.html", title=key.replace("_", " "))
        files.append(f"charts/{key}.html")
    shutil.copyfile(plotly_js_path(), folder / "charts" / "plotly.min.js")
    files.append("charts/plotly.min.js")
    _pdf(cmp, folder / "comparison_report.pdf", title or f"Comparison of signals: {name}")
    files.append("comparison_report.pdf")
    readme = ["Comparison of signals (ValueSift)", "", "comparison_report.pdf  the comparison in sentences and tables",
              "tables/compare.csv  per signal and horizon: mean IC and its headline t, spread and t, Sharpe ratio, "
              "worst drawdown and turnover of the cheapest quantile held for the horizon, names, dates",
              "tables/signal_correlation.csv  mean rank correlation between the signals",
              "tables/joint_fm.csv  slope on each signal in one regression with the others", "",
              *cmp.notes, "", CAUTION]
    (folder / "README.txt").write_text("\n".join(readme) + "\n", encoding="utf-8")
    files.append("README.txt")
    zpath = out / f"{name}_comparison.zip"
    with zipfile.ZipFile(zpath, "w", compression=zipfile.ZIP_DEFLATED) as z:
        for f in sorted(files):
            info = zipfile.ZipInfo(f"{name}_comparison/{f}", date_time=FIXED_ZIP_TIME)
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, (folder / f).read_bytes())
    return CompareBundle(folder, zpath, tuple(files))
