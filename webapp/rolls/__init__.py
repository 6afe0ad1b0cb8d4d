"""The anilox roll register: every roll the shop owns, how each is wearing, which fit a job.

- ``rules``: what a roll, a measurement and a cleaning may hold;
- ``store``: reads and writes on the SQLite file (versions, corrections kept);
- ``register``: each roll with its wear picture (``calc.wear``) and the fit for a job (``calc.fit``);
- ``chart``: the wear chart as inline SVG;
- ``shown``: volumes on the pages in the user's units, and the links into the calculators;
- ``exchange``: CSV export and import;
- ``pages`` and ``api``: the pages and ``/api/v1/rolls`` (a child of ``/api/v1``);
- ``demo``: the invented shop's rolls for ``inkfilm serve --demo``.
"""

from __future__ import annotations

from webapp.rolls import api  # noqa: F401 (api nests itself under /api/v1 on import)


def init_app(app) -> None:
    from webapp.rolls import pages, register, rules, shown

    app.register_blueprint(pages.bp)
    shown.init_app(app)
    app.add_template_global(register.FLAG_NAMES, "flag_names")
    app.add_template_global(register.location_text, "location")
    app.add_template_global(rules.STATUS_NAMES, "statuses")
    app.add_template_global(_flag_badges_json, "flag_badges_json")


def _flag_badges_json(roll: dict) -> str:
    """A roll's flags from its JSON, in words (the fit page lists rolls as the API answers them)."""
    from webapp.rolls.register import FLAG_NAMES

    return ", ".join(FLAG_NAMES[code] for code in roll["wear"]["flags"]) or "fine"
