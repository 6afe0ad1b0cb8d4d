"""The outbox: saves made on a phone while the server was out of reach.

How it works (``static/js/outbox.js``, comments kept here so the phone's first
load stays small):

- A save form (``form[data-outbox]``: "Save this…" under a result, and the save
  form of ``/snippets/new``) gets a ``client_id`` made on the phone
  (``crypto.randomUUID``) when pressed. The script asks ``/healthz`` first: if
  the server answers, the form is sent the usual way with that id; if not, the
  save is kept in IndexedDB (database ``inkfilm-outbox``, store ``saves``,
  through the vendored idb-keyval) and a note beside the button says so. The
  next press of "Save this…" is another save, as online.
- A kept item is ``{id, body, made, reason, opened}``; ``body`` is the request
  body of ``POST /api/v1/snippets`` (kind, inputs, title, … and client_id).
  Any build sends it as it is, and the server keeps it once however often it
  comes (``store.create_once``), so an outbox made with an older build is sent
  by a newer one. Keep the store names and this shape across builds.
- Sent on every page load, on the ``online`` event, when a calculation gets
  through (at most every 30 s) and from "Send now": first a fresh CSRF token
  from ``/outbox/token``, then one POST per item, oldest first. 200/201
  removes it; a refusal (401/403 passcode, 400 bad input, 5xx) keeps it with
  the reason shown; no answer stops the round and keeps the rest. No passcode
  is ever stored on the phone.
- "Open" posts the item to ``/snippets/new`` (the save form, filled in, with
  the same client_id and the passcode field where one is needed) and marks it
  ``opened``: when sent again it is then removed on 200, or on a 409 naming
  ``client_id`` (saved from that form with changed words). "Discard" asks
  first. The nav link "waiting to be saved (N)" turns red while a save is
  refused.
- A new build: its service worker takes over at once (``skipWaiting``,
  ``clients.claim``, its cache renamed); a page drawn by the old one shows
  "A new version of inkfilm is here" with a reload button.

The server side is two small routes:

- ``/outbox``: the page that lists what waits and why (kept by the service
  worker once opened; until then, with the server out of reach, the offline
  page shows the same list);
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
