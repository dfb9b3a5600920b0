"""File intake: read analysts' exports, account for every cell, build the month-end panel.

Public API::

    ReadOptions, PanelOptions          reading / aligning choices
    guess_kind(name, header)           what a file holds
    read_table(source, name=, options=) -> ParsedFile
    build_panel(files, options)        -> Panel (with Panel.report an IntakeReport)
    load_files(paths, options, panel_options) -> Panel
    FileReport, IntakeReport           the accounts
"""

from __future__ import annotations

from valuesift.core.intake.build import build_panel, load_files
from valuesift.core.intake.files import ParsedFile, read_table
from valuesift.core.intake.kinds import guess_kind
from valuesift.core.intake.options import PanelOptions, ReadOptions
from valuesift.core.intake.report import FileReport, IntakeReport

__all__ = [
    "ReadOptions",
    "PanelOptions",
    "ParsedFile",
    "FileReport",
    "IntakeReport",
    "guess_kind",
    "read_table",
    "build_panel",
    "load_files",
]
