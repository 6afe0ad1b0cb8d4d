"""Who may write: the shop and supervisor passcodes, the session, CSRF tokens.

Anyone on the shop network may read. If a shop passcode is set, saving and
editing need it; if a supervisor passcode is set, deleting, the bin and
import need it (the supervisor passcode also opens everything the shop one
does). With neither set the floor writes freely and the settings page says so.

- ``passcodes``: hashing, roles, the unlocked session, slowing down guessing;
- ``csrf``: one token per session, checked on every form post app-wide;
- ``gate``: the one place that decides whether a form or API request may act;
- ``views``: the settings page (unlock, lock).
"""

from __future__ import annotations

from webapp.auth import csrf, passcodes, views


def init_app(app) -> None:
    passcodes.init_app(app)
    csrf.init_app(app)
    app.register_blueprint(views.bp)
