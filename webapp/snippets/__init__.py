"""Saved snippets: any calculation saved with its inputs and answer, found again, re-run, shared.

- ``rules``: what a snippet may hold (checks and limits);
- ``store``: reads and writes on the SQLite file (versions, the bin);
- ``rerun``: working a snippet out again with today's core;
- ``exchange``: JSON export and import, CSV;
- ``pages`` and ``api``: the pages and ``/api/v1/snippets`` (a child of ``/api/v1``);
- ``demo``: the invented shop of ``inkfilm serve --demo``.
"""

from __future__ import annotations

from webapp.snippets import api, pages  # noqa: F401 (api nests itself under /api/v1 on import)


def init_app(app) -> None:
    app.register_blueprint(pages.bp)
