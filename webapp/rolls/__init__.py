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

import os

from webapp.rolls import api  # noqa: F401 (api nests itself under /api/v1 on import)

# The shop's own wear thresholds from the environment (common practice when unset):
# shares as 0.85 or 85 %, the audit interval in days.
WEAR_ENVIRONMENT = {
    "replace_at": "INKFILM_WEAR_REPLACE_AT",
    "clean_plugging": "INKFILM_WEAR_CLEAN_PLUGGING",
    "clean_below": "INKFILM_WEAR_CLEAN_BELOW",
    "off_spec": "INKFILM_WEAR_OFF_SPEC",
    "audit_days": "INKFILM_WEAR_AUDIT_DAYS",
}


def wear_from_environment(environ=os.environ) -> dict:
    """``ROLL_WEAR`` settings from ``INKFILM_WEAR_*``; a bad value stops start-up naming the variable."""
    settings = {}
    for name, variable in WEAR_ENVIRONMENT.items():
        text = environ.get(variable, "").strip()
        if not text:
            continue
        try:
            value = float(text.removesuffix("%").strip())
        except ValueError:
            raise SystemExit(f"inkfilm: {variable}={text!r} is not a number") from None
        if name == "audit_days":
            if not 1 <= value <= 3650 or value != int(value):
                raise SystemExit(f"inkfilm: {variable} must be a whole number of days from 1 to 3650")
            settings[name] = int(value)
            continue
        if text.endswith("%"):
            value /= 100
        if not 0 < value < 1:
            raise SystemExit(f"inkfilm: {variable} must be a share between 0 and 1 (or 0 % and 100 %)")
        settings[name] = value
    return settings


def init_app(app) -> None:
    from webapp.rolls import pages, register, rules, shown

    if "ROLL_WEAR" not in app.config:
        app.config["ROLL_WEAR"] = wear_from_environment()
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
