"""The ``/api/v1`` parent blueprint: what every JSON endpoint shares.

Each feature's API is a child of ``api`` (Flask's nested blueprints), so the
body limit, the error handlers and the error shape are written once:
``{"error": {"field", "message"}}`` for every 4xx. Requests give quantities
as strings ``"<number> <unit>"`` and shares as plain numbers from 0 to 1;
answers give quantities as ``{"value", "unit"}``. Every write (POST, PUT,
PATCH) is sent as JSON, else 415. ``GET /api/v1/openapi.json`` describes it all
(``webapp.common.openapi``).
"""

from __future__ import annotations

from collections.abc import Collection

from flask import Blueprint, jsonify, request

from calc import InputError
from calc.units import magnitude_in, unit_label
from webapp.common import jsontext
from webapp.common.errors import WebError

api = Blueprint("api", __name__, url_prefix="/api/v1")

# Calculation bodies are small; a child may raise this for one endpoint (an import).
MAX_BODY = 64 * 1024


def error_response(field: str | None, message: str, status: int = 400):
    response = jsonify(error={"field": field, "message": message})
    response.status_code = status
    return response


@api.errorhandler(InputError)
def input_error(exc: InputError):
    return error_response(exc.field, exc.message, 400)


@api.errorhandler(WebError)
def web_error(exc: WebError):
    response = error_response(exc.field, exc.message, exc.status)
    if exc.retry_after is not None:
        response.headers["Retry-After"] = str(max(1, round(exc.retry_after)))
    return response


WRITING = frozenset({"POST", "PUT", "PATCH"})
NOT_JSON = "send the body as JSON (Content-Type: application/json)"
# Endpoints that also take a CSV body (text/csv is no type a page of another site may send
# without the browser asking first, as it may text/plain or a form).
CSV_BODIES = frozenset({"api.snippets_api.import_snippets"})


def sends_json() -> bool:
    """The write's body is JSON (application/json or application/…+json), or CSV where taken."""
    return request.is_json or (request.mimetype == "text/csv" and request.endpoint in CSV_BODIES)


@api.before_request
def json_only():
    """A write must say it is JSON: a text/plain or form post (which any web page may send to
    another site without asking first) never reaches a calculation or a snippet."""
    if request.method in WRITING and not sends_json():
        raise WebError(None, NOT_JSON, 415)


@api.before_request
def limit_body():
    # Flask reads this per request; a child's own before_request may raise it.
    request.max_content_length = MAX_BODY


def quantity_json(quantity, unit: str | None = None) -> dict:
    """``{"value": <full precision>, "unit": <spelling>}`` in ``unit`` (as spelt)."""
    if unit is not None:
        return {"value": float(magnitude_in(quantity, unit)), "unit": unit}
    return {"value": float(quantity.magnitude), "unit": unit_label(quantity)}


def check_fields(body, required: Collection[str], optional: Collection[str] = frozenset(), prefix: str = "") -> dict:
    """``body`` checked for missing and unknown fields; optional ``null`` fields count as absent."""
    where = f"{prefix}." if prefix else ""
    if not isinstance(body, dict):
        raise InputError(prefix or None, "must be a JSON object")
    for name in body:
        if name not in required and name not in optional:
            raise InputError(f"{where}{name}", "is not a field of this request")
    for name in sorted(required):
        if body.get(name) is None:
            raise InputError(f"{where}{name}", "is required")
    return {name: value for name, value in body.items() if value is not None}


def request_body() -> dict:
    """The request's JSON body, which must be an object (not nested too deeply, no lone surrogates)."""
    try:
        body = request.get_json(force=True, silent=True)
    except RecursionError:
        raise InputError(None, f"the request body is nested too deeply: at most {jsontext.MAX_DEPTH} levels") from None
    if not isinstance(body, dict):
        raise InputError(None, "the request body must be a JSON object")
    jsontext.check_body(body)
    return body
