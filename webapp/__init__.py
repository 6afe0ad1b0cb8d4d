"""inkfilm's web side: the Flask app factory.

``create_app`` builds the app and registers one blueprint per feature; it
opens nothing at import time. waitress serves it (see ``webapp.cli``).
"""

from __future__ import annotations

import os
from pathlib import Path

from flask import Flask, jsonify, request
from werkzeug.exceptions import HTTPException

ROOT = Path(__file__).resolve().parent.parent


def create_app(test_config: dict | None = None) -> Flask:
    app = Flask(
        __name__,
        static_folder=str(ROOT / "static"),
        static_url_path="/static",
    )
    app.config.from_mapping(
        DATA_DIR=os.environ.get("INKFILM_DATA_DIR", str(Path.cwd() / "inkfilm-data")),
        # The JSON API takes bodies up to 64 KB (see webapp.api); this is the
        # app-wide ceiling, for uploads such as an import file.
        MAX_CONTENT_LENGTH=8 * 1024 * 1024,
    )
    if test_config:
        app.config.update(test_config)
    Path(app.config["DATA_DIR"]).mkdir(parents=True, exist_ok=True)

    from webapp import api, auth, db, https, pages, snippets, snippets_api

    app.register_blueprint(api.bp)
    # The pages (converters, film chain, estimate), security headers, compression.
    pages.init_app(app)
    # Saved snippets: the SQLite file (migrated here), passcodes and sessions, pages and API.
    db.init_app(app)
    auth.init_app(app)
    app.register_blueprint(snippets_api.bp)
    app.register_blueprint(snippets.bp)
    # HTTPS: the phone set-up page, Secure cookies, the plain port behind Caddy.
    https.init_app(app)

    @app.errorhandler(HTTPException)
    def http_error(exc: HTTPException):
        if request.path.startswith("/api/"):
            return api.error_response(None, _plain_http_message(exc), exc.code or 400)
        return exc

    @app.errorhandler(Exception)
    def unexpected_error(exc: Exception):
        # Log the cause for the maintainers; show the user no traceback.
        app.logger.exception("unexpected error on %s %s", request.method, request.path)
        if request.path.startswith("/api/"):
            return api.error_response(None, "something went wrong on the server; nothing was changed", 500)
        return "Something went wrong on the server; nothing was changed.", 500

    @app.get("/healthz")
    def healthz():
        return jsonify(status="ok")

    return app


def _plain_http_message(exc: HTTPException) -> str:
    messages = {
        404: "there is no such address in the inkfilm API",
        405: f"this address does not take {request.method} requests",
        413: "the request body is too large",
    }
    return messages.get(exc.code, exc.description or exc.name)
