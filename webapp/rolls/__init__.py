"""The anilox roll register: every roll the shop owns, how each is wearing, which fit a job.

- ``rules``: what a roll, a measurement and a cleaning may hold;
- ``store``: reads and writes on the SQLite file (versions, corrections kept);
- ``register``: each roll with its wear picture (``calc.wear``) and the fit for a job (``calc.fit``);
- ``chart``: the wear chart as inline SVG;
- ``exchange``: CSV export and import;
- ``pages`` and ``api``: the pages and ``/api/v1/rolls`` (a child of ``/api/v1``);
- ``demo``: the invented shop's rolls for ``inkfilm serve --demo``.
"""

from __future__ import annotations

from webapp.rolls import api  # noqa: F401 (api nests itself under /api/v1 on import)


def init_app(app) -> None:
    from webapp.rolls import pages

    app.register_blueprint(pages.bp)
