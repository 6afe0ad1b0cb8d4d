"""The outbox: saves made on a phone while the server was out of reach.

The waiting saves live on the phone (IndexedDB, kept by ``static/js/outbox.js``
through the vendored idb-keyval); each is the request body of
``POST /api/v1/snippets`` with a ``client_id`` made on the phone, so it is
stored once however often it is sent, and a newer build sends what an older
one kept. The server side is two small routes:

- ``/outbox``: the page that lists what waits and why (part of the app shell,
  cached by the service worker, so it opens with the server out of reach);
- ``/outbox/token``: the session's CSRF token, fetched fresh before sending
  (an unlocked browser's API writes carry it; a page from the cache may hold
  an older one). Never cached.
"""

from __future__ import annotations

from flask import Blueprint, jsonify, render_template

from webapp.auth.csrf import csrf_token

bp = Blueprint("outbox", __name__)


@bp.get("/outbox")
def page():
    return render_template("outbox/outbox.html")


@bp.get("/outbox/token")
def token():
    response = jsonify(csrf_token=csrf_token())
    response.headers["Cache-Control"] = "no-store"
    return response


def init_app(app) -> None:
    app.register_blueprint(bp)
