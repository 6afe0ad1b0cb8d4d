"""inkfilm's web side: the Flask app factory.

``create_app`` builds the app and registers one package per feature; it
opens nothing at import time. waitress serves it (see ``webapp.cli``).

- ``common/``: plumbing every feature shares (database, the ``/api/v1``
  parent blueprint, forms, htmx, formatting, assets, security headers);
- ``auth/``: passcodes, CSRF and the one gate for writes;
- ``calculators/``: every calculation (registry, API, pages);
- ``shell/``: unit preference, offline page, service worker;
- ``snippets/``: saved calculations (pages, API, store, export and import);
- ``rolls/``: the anilox roll register (pages, API, store, wear, CSV);
- ``inks/``: the shop's inks and ink sets with their density curves (pages, API, store, CSV).
"""

from __future__ import annotations

import os
import sqlite3
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from flask import Flask


def create_app(test_config: dict | None = None) -> Flask:
    # Flask is imported here, not with the package: ``inkfilm serve``'s supervisor
    # (``webapp.cli``, ``webapp.watchdog``) never builds an app and starts faster without it.
    from flask import Flask, Response, jsonify, request
    from werkzeug.exceptions import HTTPException

    from webapp.common.routing import LazyRule

    app = Flask(__name__)
    app.url_rule_class = LazyRule  # address builders made when first used (start-up time)
    app.config.from_mapping(
        DATA_DIR=os.environ.get("INKFILM_DATA_DIR", str(Path.cwd() / "inkfilm-data")),
        # The JSON API takes bodies up to 64 KB (webapp.common.jsonapi); this is the
        # app-wide ceiling, for uploads such as an import file.
        MAX_CONTENT_LENGTH=8 * 1024 * 1024,
        # The shop's currency symbol beside every cost (``inkfilm serve --currency``); none by default.
        CURRENCY="",
        # The shop's time zone for every time shown (``Europe/Berlin``); empty: the server's own.
        TIME_ZONE=os.environ.get("INKFILM_TIME_ZONE", ""),
    )
    if test_config:
        app.config.update(test_config)
    Path(app.config["DATA_DIR"]).mkdir(parents=True, exist_ok=True)

    from webapp import auth, calculators, https, inks, outbox, rolls, shell, snippets
    from webapp.common import assets, db, formatting, jsonapi, openapi, security  # noqa: F401 (openapi: its route)

    # Plumbing every page shares.
    security.init_app(app)
    assets.init_app(app)
    formatting.init_app(app)
    # The SQLite file (migrated here), passcodes, sessions and CSRF.
    db.init_app(app)
    auth.init_app(app)
    # Features: the calculators, the app shell, saved snippets.
    calculators.init_app(app)
    shell.init_app(app)
    snippets.init_app(app)
    outbox.init_app(app)  # saves that waited on a phone: its page and token
    rolls.init_app(app)
    inks.init_app(app)
    # HTTPS: the phone set-up page, Secure cookies, the plain port behind Caddy.
    https.init_app(app)
    # The JSON API last: every feature has nested its child under it by now.
    app.register_blueprint(jsonapi.api)

    @app.errorhandler(HTTPException)
    def http_error(exc: HTTPException):
        if request.path.startswith("/api/"):
            return jsonapi.error_response(None, _plain_http_message(exc), exc.code or 400)
        return exc

    @app.errorhandler(sqlite3.DatabaseError)
    @app.errorhandler(OSError)
    def storage_error(exc: Exception):
        # A full disk or a read-only data folder: say so (503), not "something went wrong".
        if not db.is_storage_failure(exc):
            return unexpected_error(exc)
        app.logger.error("cannot write the data on %s %s: %s", request.method, request.path, exc)
        if request.path.startswith("/api/"):
            return jsonapi.error_response(None, db.STORAGE_MESSAGE, 503)
        message = db.STORAGE_MESSAGE[0].upper() + db.STORAGE_MESSAGE[1:] + ". Try again once it has room."
        return Response(message, status=503, mimetype="text/plain")

    @app.errorhandler(Exception)
    def unexpected_error(exc: Exception):
        # Log the cause for the maintainers; show the user no traceback.
        app.logger.exception("unexpected error on %s %s", request.method, request.path)
        if request.path.startswith("/api/"):
            return jsonapi.error_response(None, "something went wrong on the server; nothing was changed", 500)
        return "Something went wrong on the server; nothing was changed.", 500

    @app.get("/healthz")
    def healthz():
        return jsonify(status="ok")

    return app


def _plain_http_message(exc) -> str:
    from flask import request

    messages = {
        404: "there is no such address in the inkfilm API",
        405: f"this address does not take {request.method} requests",
        413: "the request body is too large",
    }
    return messages.get(exc.code, exc.description or exc.name)
