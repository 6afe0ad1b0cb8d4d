"""The shop's inks and ink sets: which inks the shop keeps, and each ink's strength curve on a substrate.

- ``rules``: what an ink, an ink set and a density reading may hold (and the cautions of solvent and UV inks);
- ``store``: reads and writes on the SQLite file (versions, conflicts);
- ``curves``: each set's Tollenaar–Ernst fit (``calc.density``), the API's JSON, and what the register's
  rolls give with a set (read only);
- ``exchange``: CSV export and import of inks and of readings;
- ``pages`` and ``api``: the pages and ``/api/v1/inks``, ``/api/v1/ink-sets`` (children of ``/api/v1``);
- ``demo``: the invented shop's inks and sets for ``inkfilm serve --demo``.
"""

from __future__ import annotations

from webapp.inks import api  # noqa: F401 (api nests itself under /api/v1 on import)


def init_app(app) -> None:
    from webapp.inks import pages, rules

    app.register_blueprint(pages.bp)
    app.add_template_global(rules.TYPE_NAMES, "ink_type_names")
    app.add_template_global(rules.CAUTIONS, "ink_cautions")
    app.add_template_global(_shop_inks, "shop_inks")


def _shop_inks() -> list[dict]:
    """The shop's inks, for the pick list in the film chain (``templates/inks/_pick.html``)."""
    from webapp.common.db import get_db
    from webapp.inks import store

    return store.all_inks(get_db())
