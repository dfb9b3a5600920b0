"""Build the committee bundle: one folder (report, charts, tables, manifest) and its ZIP.

One function, :func:`write_bundle`, serves both the dashboard's Export page
and ``valuesift study ... --out DIR``.  It only formats the
:class:`core.study.StudyResult` it is given; nothing is recomputed.
"""

from __future__ import annotations

import hashlib
import json
import platform
import re
import shutil
import zipfile
from dataclasses import dataclass, replace
from datetime import datetime, timezone
from importlib.metadata import PackageNotFoundError, version
from pathlib import Path
from typing import Any, Callable, Iterable, Sequence

import pandas as pd

import valuesift.core as valuesift_core
from valuesift.app.settings import shown_horizon
from valuesift.app.words import settings_frame
from valuesift.app.bundle import charts as bc
from valuesift.app.bundle import tables as bt
from valuesift.app.bundle.content import report_input
from valuesift.app.bundle.compare_bundle import compare_tables
from valuesift.app.bundle.stability_text import compare_sentences
from valuesift.app.bundle.text import sweep_reading
from valuesift.app.bundle.pdf import build_pdf
from valuesift.app.bundle.slides import build_slides
from valuesift.app.caution import CAUTION
from valuesift.core.errors import ConfigError
from valuesift.core.result import StudyResult
from valuesift.core.reporting.summary import summary_dict

__all__ = ["BundlePaths", "write_bundle", "bundle_name", "default_horizon", "INCLUDE_CHOICES", "merge_inputs", "creation_time", "settings_hash", "source_line"]

Progress = Callable[[str, float], None]

#: Every chart and table key :func:`write_bundle` accepts in ``include``.
INCLUDE_CHOICES: tuple[str, ...] = tuple(f"chart:{k}" for k in bc.CHART_KEYS) + tuple(f"table:{k}" for k in bt.TABLE_KEYS)


@dataclass(frozen=True)
class BundlePaths:
    """Where the bundle went.

    Attributes
    ----------
    folder : Path
        The unzipped bundle.
    zip : Path
        The ZIP of the same files.
    files : tuple of str
        Relative paths of every file in the bundle (as listed in the manifest, plus manifest.json).
    images_rendered : bool
        False when no browser could render the PNG/SVG images.
    note : str or None
        Why images are missing (the hint shown to the user), else None.
    pages : int
        Pages of report.pdf.
    """

    folder: Path
    zip: Path
    files: tuple[str, ...]
    images_rendered: bool
    note: str | None
    pages: int


_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")


def creation_time(environ: dict[str, str] | None = None) -> datetime:
    """Now (UTC), or the time in ``SOURCE_DATE_EPOCH`` when it is set (reproducible builds' convention)."""
    import os

    env = os.environ if environ is None else environ
    raw = str(env.get("SOURCE_DATE_EPOCH", "")).strip()
    if raw:
        try:
            return datetime.fromtimestamp(int(raw), tz=timezone.utc)
        except (ValueError, OverflowError, OSError) as err:
            raise ConfigError(f"SOURCE_DATE_EPOCH is {raw!r}, not a whole number of seconds since 1970.",
                              hint="Unset it, or set it to a value such as 1700000000.") from err
    return datetime.now(timezone.utc)


def settings_hash(result: StudyResult) -> str:
    """The first 12 hex digits of the SHA-256 of the study's configuration (JSON, keys sorted)."""
    blob = json.dumps(result.config.to_dict(), sort_keys=True, default=str, allow_nan=False)
    return hashlib.sha256(blob.encode("utf-8")).hexdigest()[:12]


def source_line(result: StudyResult, inputs: Sequence[dict[str, Any]]) -> str:
    """The source line of every slide and image: tool, input files, data period, as-of date, settings hash."""
    dates = result.signal_z.index
    names = ", ".join(str(i.get("name")) for i in inputs) or "no input files recorded"
    asof = str(result.screen.attrs.get("date") or dates[-1].date().isoformat())
    return (f"Source: ValueSift {_tool_version()} on {names}; month-ends {dates[0]:%b %Y} to {dates[-1]:%b %Y}, "
            f"as of {asof}; settings {settings_hash(result)}.")


def _safe(text: str) -> str:
    s = _UNSAFE.sub("-", str(text)).strip("-._")
    return s or "study"


def bundle_name(study_name: str, result: StudyResult) -> str:
    """``<study>_<signal>_<universe>_<as-of date>`` in safe characters (letters, digits, ``.-_``)."""
    asof = str(result.screen.attrs.get("date") or result.signal_z.index[-1].date().isoformat())
    return "_".join(_safe(p)[:60] for p in (study_name, result.signal_name, result.config.universe, asof))


def default_horizon(result: StudyResult) -> int:
    """The horizon the per-horizon charts are drawn at: 12 months if studied, else the first (as the Study page)."""
    return shown_horizon(result.config.horizons)


def merge_inputs(inputs: Sequence[dict[str, Any]] | None, panel: Any) -> list[dict[str, Any]]:
    """Input files with name, kind, size, SHA-256, rows and securities (the panel's sources fill gaps)."""
    sources = [dict(s) for s in (getattr(panel, "sources", ()) or ())]
    base = [dict(i) for i in inputs] if inputs else sources
    out = []
    for item in base:
        match = next((s for s in sources if s.get("name") == item.get("name")
                      and s.get("sha256") == item.get("sha256")), {})
        merged = {k: item.get(k, match.get(k)) for k in ("name", "kind", "size", "sha256", "rows", "securities")}
        out.append({k: (int(v) if k in ("size", "rows", "securities") and v is not None else v) for k, v in merged.items()})
    return out


def _split_include(include: Iterable[str] | None) -> tuple[list[str], list[str]]:
    if include is None:
        return list(bc.CHART_KEYS), list(bt.TABLE_KEYS)
    chosen = list(include)
    bad = [c for c in chosen if c not in INCLUDE_CHOICES]
    if bad:
        raise ConfigError(f"The bundle cannot include {', '.join(repr(b) for b in bad)}.",
                          hint="Allowed: " + ", ".join(INCLUDE_CHOICES) + ".")
    charts = [k for k in bc.CHART_KEYS if f"chart:{k}" in chosen]
    tables = [k for k in bt.TABLE_KEYS if f"table:{k}" in chosen]
    return charts, tables


def _sha(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def _versions() -> dict[str, str]:
    out = {"python": platform.python_version()}
    for pkg in ("pandas", "numpy", "scipy", "statsmodels", "plotly", "choreographer", "reportlab", "openpyxl"):
        try:
            out[pkg] = version(pkg)
        except PackageNotFoundError:
            out[pkg] = "not installed"
    return out


def write_bundle(result: StudyResult, panel: Any, inputs: Sequence[dict[str, Any]] | None, out_dir: str | Path, *,
                 study_name: str, title: str | None = None, note: str | None = None,
                 include: Iterable[str] | None = None, progress: Progress | None = None,
                 horizon: int | None = None, created: datetime | None = None,
                 zip_path: str | Path | None = None, sweep: Any | None = None,
                 comparison: Any | None = None) -> BundlePaths:
    """Write the committee bundle of a study to ``out_dir`` and a ZIP of it.

    Parameters
    ----------
    result : StudyResult
        The study (formatted, never recomputed).
    panel : Panel
        The panel the study ran on (intake report, sources, coverage chart).
    inputs : list of dict, optional
        Input files as the caller knows them (``name, kind, size, sha256``); ``panel.sources`` fills
        rows and security counts (and everything when None).
    out_dir : path
        Folder for the unzipped bundle (created; other files in it are left alone).
    study_name : str
        Name on the cover and in the ZIP's file name.
    title, note : str, optional
        Cover title (default: a question about the signal) and a note printed on the cover.
    include : iterable of str, optional
        ``"chart:<key>"`` and ``"table:<key>"`` items (see :data:`INCLUDE_CHOICES`); default all.
    progress : callable(stage, fraction), optional
    horizon : int, optional
        Horizon of the per-horizon charts (default :func:`default_horizon`).
    created : datetime, optional
        Creation time (UTC) written to the manifest and the cover (default now).
    zip_path : path, optional
        Where the ZIP goes (default ``out_dir / (bundle_name + ".zip")``).
    sweep : core.sweep.SweepResult, optional
        A finished sweep to include: its heat map (chart, page in the report) and its comparison
        table with the multiple-testing columns.
    comparison : core.compare.CompareResult, optional
        A comparison of signals to include: its bar chart and correlation heat map (charts, pages in the
        report and slides with their reading) and its three tables (``comparison``, ``signal_correlation``,
        ``joint_fm``, the same as ``valuesift compare`` writes).

    Returns
    -------
    BundlePaths

    Raises
    ------
    ConfigError
        An unknown ``include`` item or a horizon the study does not have.

    Notes
    -----
    The same result, panel, inputs, options and ``created`` give byte-identical files where the
    renderers allow it (tables, summary.json, HTML, README, manifest, PDF with reportlab's
    invariant mode); only the creation time differs between two builds at different times.
    """
    def tick(stage: str, frac: float) -> None:
        if progress is not None:
            progress(stage, frac)

    charts, tables = _split_include(include)
    h = int(horizon) if horizon is not None else default_horizon(result)
    if h not in result.config.horizons:
        raise ConfigError(f"The bundle's chart horizon {h} is not a horizon of this study.",
                          hint="Allowed: " + ", ".join(str(x) for x in result.config.horizons) + ".")
    when = (created or creation_time()).astimezone(timezone.utc).replace(microsecond=0)
    folder = Path(out_dir)
    for sub in ("charts", "tables"):
        (folder / sub).mkdir(parents=True, exist_ok=True)
    written: list[str] = []
    name = bundle_name(study_name, result)
    files_in = merge_inputs(inputs, panel)

    tick("starting the browser and drawing the charts", 0.02)
    specs = [c for c in bc.CHARTS if c.key in charts]
    extra_specs = [bc.SWEEP_SPEC] if sweep is not None else []
    if comparison is not None:
        ch = h if h in comparison.config.horizons else int(comparison.config.horizons[0])
        extra_specs += list(bc.COMPARE_SPECS)
    source = source_line(result, files_in)
    # The browser starts first; each figure goes to it as soon as it is drawn.
    job = bc.start_render(None, progress=lambda s, f: tick(s, 0.1 + 0.7 * f), stamp=source,
                          total=len(specs) + len(extra_specs))
    figs: dict[str, Any] = {}
    try:
        for c in specs:
            figs[c.key] = bc.figure_for(c, result, h, panel)
            job.add(c.key, figs[c.key])
        if sweep is not None:
            figs[bc.SWEEP_KEY] = bc.sweep_figure(sweep)
            job.add(bc.SWEEP_KEY, figs[bc.SWEEP_KEY])
        if comparison is not None:
            for key, fig in bc.compare_figures(comparison, ch).items():
                figs[key] = fig
                job.add(key, fig)
    finally:
        job.close()
    tick("writing the tables", 0.05)
    if specs:
        shutil.copyfile(bc.plotly_js_path(), folder / "charts" / "plotly.min.js")
        written.append("charts/plotly.min.js")
    for c in specs:
        bc.write_html(figs[c.key], folder / "charts" / f"{c.key}.html", title=c.title)
        written.append(f"charts/{c.key}.html")
    if extra_specs and not specs:
        shutil.copyfile(bc.plotly_js_path(), folder / "charts" / "plotly.min.js")
        written.append("charts/plotly.min.js")
    for c in extra_specs:
        bc.write_html(figs[c.key], folder / "charts" / f"{c.key}.html", title=c.title)
        written.append(f"charts/{c.key}.html")

    all_tables = bt.result_tables(result, panel)
    chosen = {k: all_tables[k] for k in tables}
    if sweep is not None:
        chosen[bt.SWEEP_TABLE] = sweep.table.reset_index(drop=True)
    if comparison is not None:
        ct = compare_tables(comparison)
        chosen.update({"comparison": ct["compare"], "signal_correlation": ct["signal_correlation"],
                       "joint_fm": ct["joint_fm"]})
    for k, df in chosen.items():
        bt.write_csv(df, folder / "tables" / f"{k}.csv", raw=(k == "ic_by_date"))
        written.append(f"tables/{k}.csv")
    asof = str(result.screen.attrs.get("date") or "")
    if chosen:
        (folder / "tables" / "tables.xlsx").write_bytes(bt.xlsx_bytes(chosen, stamp=asof or "2000-01-01",
                                                                           settings=settings_frame(result.config)))
        written.append("tables/tables.xlsx")
    summary = summary_dict(result)
    summary["study_name"] = study_name
    summary["inputs"] = [{k: f[k] for k in ("name", "kind", "size", "sha256")} for f in files_in]
    (folder / "summary.json").write_text(json.dumps(summary, indent=2, sort_keys=True, allow_nan=False) + "\n",
                                         encoding="utf-8", newline="\n")
    written.append("summary.json")

    outcome = job.wait()
    for c in [*specs, *extra_specs]:
        if c.key in outcome.png:
            (folder / "charts" / f"{c.key}.png").write_bytes(outcome.png[c.key])
            (folder / "charts" / f"{c.key}.svg").write_bytes(outcome.svg[c.key])
            written += [f"charts/{c.key}.png", f"charts/{c.key}.svg"]
    tick("laying out the report", 0.84)
    data = report_input(result, panel, files_in, study_name=study_name, title=title, note=note, horizon=h,
                        chart_keys=[c.key for c in specs], images=outcome.jpeg or outcome.png,
                        images_note=outcome.note,
                        created=when)
    images = outcome.jpeg or outcome.png
    if sweep is not None:
        data = replace(data, charts=[*data.charts, (bc.SWEEP_KEY, bc.SWEEP_TITLE, images.get(bc.SWEEP_KEY),
                                                    sweep_reading(sweep))])
    if comparison is not None:
        reading = list(compare_sentences(comparison, ch))
        data = replace(data, charts=[*data.charts, *[(c.key, c.title, images.get(c.key), reading)
                                                     for c in bc.COMPARE_SPECS]])
    pages = build_pdf(data, folder / "report.pdf", created=when)
    written.append("report.pdf")
    tick("writing the slides", 0.9)
    build_slides(data, folder / "slides.pptx", source=source, created=when)
    written.append("slides.pptx")

    tick("writing the manifest", 0.94)
    readme = _readme(written, chosen, outcome.note, name)
    (folder / "README.txt").write_text(readme, encoding="utf-8", newline="\n")
    written.append("README.txt")
    manifest = {
        "tool": "ValueSift",
        "tool_version": _tool_version(),
        "created_utc": when.isoformat().replace("+00:00", "Z"),
        "study_name": study_name,
        "title": data.title,
        "note": note,
        "as_of": asof,
        "bundle": {"name": name, "chart_horizon": h,
                   "charts": [c.key for c in specs] + [c.key for c in extra_specs],
                   "tables": list(chosen),
                   "images_rendered": bool(outcome.png), "images_note": outcome.note},
        "configuration": result.config.to_dict(),
        "inputs": files_in,
        "software": _versions(),
        "files": [{"path": p, "bytes": (folder / p).stat().st_size, "sha256": _sha(folder / p)}
                  for p in sorted(written)],
    }
    (folder / "manifest.json").write_text(json.dumps(manifest, indent=2, sort_keys=True, allow_nan=False) + "\n",
                                          encoding="utf-8", newline="\n")
    written.append("manifest.json")

    tick("packing the ZIP", 0.97)
    zpath = Path(zip_path) if zip_path is not None else folder / f"{name}.zip"
    _zip(folder, sorted(written), zpath, name)
    tick("done", 1.0)
    return BundlePaths(folder=folder, zip=zpath, files=tuple(sorted(written)), images_rendered=bool(outcome.png),
                       note=outcome.note, pages=pages)


def _tool_version() -> str:
    return str(valuesift_core.__version__)


_PACKED = (".png", ".jpg", ".jpeg", ".pptx", ".xlsx", ".zip")


def _zip(folder: Path, files: Sequence[str], path: Path, root: str) -> None:
    """A ZIP with one top folder ``root``, fixed entry times and sorted entries (reproducible)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(path.suffix + ".part")
    with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED, compresslevel=6) as z:
        for rel in files:
            zi = zipfile.ZipInfo(f"{root}/{rel}", date_time=bt.FIXED_ZIP_TIME)
            # images, slides and workbooks are compressed already: stored as they are (deflating them again
            # costs time and saves almost nothing)
            zi.compress_type = zipfile.ZIP_STORED if rel.endswith(_PACKED) else zipfile.ZIP_DEFLATED
            zi.external_attr = 0o644 << 16
            z.writestr(zi, (folder / rel).read_bytes())
    tmp.replace(path)


_FILE_TEXT = {
    "report.pdf": "the committee report: cover with the configuration and input files, summary, one page per "
                  "chart with its reading, the screen, and the data-quality appendix",
    "slides.pptx": "the committee slides (16:9): title, summary, one slide per chart with its reading as text and "
                   "speaker notes, the cheapest and dearest names as tables; caution and source line on every slide",
    "summary.json": "the headline figures per horizon (the same fields as `valuesift study` writes)",
    "manifest.json": "tool and software versions, creation time, configuration, input files and a SHA-256 of "
                     "every other file",
    "README.txt": "this file",
    "charts/plotly.min.js": "the plotly.js library, shared by every interactive chart (works with no network)",
    "tables/tables.xlsx": "the study's settings in words (first sheet), then every table below as one sheet each",
}


def _readme(files: Sequence[str], tables: dict[str, pd.DataFrame], note: str | None, name: str) -> str:
    titles = {c.key: c.title for c in (*bc.CHARTS, bc.SWEEP_SPEC, *bc.COMPARE_SPECS)}
    lines = [f"ValueSift committee bundle {name}", "", "What each file is:", ""]
    for rel in sorted(set(files) | {"manifest.json", "README.txt"}):
        stem = Path(rel).stem
        if rel in _FILE_TEXT:
            text = _FILE_TEXT[rel]
        elif rel.startswith("charts/"):
            kind = {".png": "image for a 16:9 slide (2560 x 1440 pixels)", ".svg": "scalable vector image",
                    ".html": "interactive chart; open it in a web browser"}[Path(rel).suffix]
            text = f"{titles.get(stem, stem)}: {kind}"
        elif rel.startswith("tables/"):
            text = f"{bt.TABLES.get(stem) or bt.TABLES_OPTIONAL.get(stem, stem)} (CSV)"
        else:
            text = ""
        lines.append(f"  {rel}\n      {text}")
    lines += ["", "Numbers: returns and spreads are decimal fractions (0.01 = 1 %); ICs are Spearman rank "
              "correlations; t-statistics use Hansen-Hodrick standard errors above one month and Newey-West at one month, "
              "with the lags stated in the tables; horizons with fewer than ten independent periods get no verdict.",
              "Text cells of the tables that could start a spreadsheet formula carry a leading apostrophe."]
    if note:
        lines += ["", "Images: " + note]
    lines += ["", "Caution: " + CAUTION, ""]
    return "\n".join(lines)
