"""ValueSift dashboard (Dash) and command line.

Layout of the dashboard
-----------------------
server.py        ``create_app`` (factory) and ``serve`` (waitress, loopback, token off loopback)
shell.py         header with navigation from ``dash.page_registry``, page container, footer caution
pages/           one module per page: data, study, screen, company (Dash pages pattern)
figures/         pure figure functions on one plotly template (``figures/theme.py``)
components/      layout pieces (intake report cards, small tables)
services.py      server-side state: workspace, panels, memoised studies, study jobs
workspace.py     uploads, Parquet datasets and the sqlite catalogue
jobs_ui.py       a study job on a page: start, progress, cancel, error
screen_table.py  the screen's filter/sort/page and formula-safe CSV/XLSX export
settings.py      study settings (browser JSON) -> StudyConfig
ids.py           security identifiers in page addresses
caution.py       the research-use caution (shared with the command line)
"""
