"""The snippets API, ``/api/v1/snippets``: saved calculations as JSON.

Same error shape as the rest of ``/api/v1`` (``{"error": {"field", "message"}}``)
and the same passcode rules as the pages (``webapp.auth.gate``): reading is
open; a write sends the passcode in ``X-Inkfilm-Passcode``, or relies on an
unlocked session cookie and then carries ``X-CSRF-Token``. Writes send JSON
(``Content-Type: application/json``), which a page on another site cannot.

A create may carry ``client_id``, a UUID the sender made for this save (a
phone's outbox does): sent again, it is answered 200 with the snippet saved the
first time instead of saving a second; the same id with other contents is a 409
naming ``client_id``.
"""

from __future__ import annotations

import re
from datetime import UTC, date, datetime, timedelta

from flask import Blueprint, Response, current_app, jsonify, request, url_for

from calc import InputError
from webapp.auth.gate import api_gate as require
from webapp.calculators import CALCULATIONS
from webapp.common.db import database_path, get_db
from webapp.common.jsonapi import api, check_fields, error_response, request_body
from webapp.snippets import exchange, rules, store
from webapp.snippets.rerun import rerun as work_out_again

bp = Blueprint("snippets_api", __name__, url_prefix="/snippets")

MAX_QUERY = 200
META_OPTIONAL = {"job_number", "press", "station", "notes", "tags", "saved_by"}
CREATE_OPTIONAL = {*META_OPTIONAL, "client_id"}
UPDATE_FIELDS = {"title", *META_OPTIONAL}
# Who makes a change (shown as "changed by", "deleted by"): a body field of an update,
# the ``by`` query parameter of a delete or a restore. Not stored as a field of its own.
CHANGED_BY = "changed_by"
BY_QUERY = "by"


def _by(raw, field: str) -> str:
    """A name as the page's "your name" takes it; the message names ``field``."""
    if raw is None:
        return ""
    if not isinstance(raw, str):
        raise InputError(field, "must be a name (text)")
    try:
        return store.check_by(raw)
    except InputError as exc:
        raise InputError(field, exc.message) from None


@bp.errorhandler(store.NotFound)
def not_found(exc: store.NotFound):
    return error_response("id", f"there is no snippet {exc.args[0]} here", 404)


@bp.errorhandler(store.IdTaken)
def id_taken(exc: store.IdTaken):
    response = jsonify(error={"field": "client_id", "message": exc.message}, current=exc.current)
    response.status_code = 409
    return response


@bp.errorhandler(store.Conflict)
def conflict(exc: store.Conflict):
    response = jsonify(error={"field": "version", "message": exc.message}, current=exc.current)
    response.status_code = 409
    return response


@bp.before_request
def limit_body():
    # The parent ``api`` allows small bodies; an import file may be larger.
    if request.endpoint == "api.snippets_api.import_snippets":
        request.max_content_length = exchange.MAX_IMPORT_BYTES


# The list's query parameters, the same filters as the Saved page: name → what it takes. The
# checks of ``list_query`` and the OpenAPI description (``webapp.common.openapi``) follow it.
#   text: at most ``max`` characters; choice: one of ``choices`` (empty: any); day: YYYY-MM-DD in
#   the shop's time zone; time: a UTC stamp; integer: ASCII digits from ``min`` to ``max``.
LIST_QUERY = {
    "q": {
        "kind": "text",
        "max": MAX_QUERY,
        "description": "words to look for in the title, job number, notes"
        " and tags, each whole or as the start of a word",
    },
    "press": {"kind": "text", "max": rules.LIMITS["press"], "description": "only this press"},
    "station": {"kind": "text", "max": rules.LIMITS["station"], "description": "only this station"},
    "kind": {"kind": "choice", "choices": tuple(sorted(CALCULATIONS)), "description": "only this kind"},
    "from": {"kind": "day", "description": "last changed on or after this day (the shop's time zone)"},
    "to": {"kind": "day", "description": "last changed on or before this day (the shop's time zone)"},
    "changed_from": {"kind": "time", "description": "last changed at or after this UTC time"},
    "changed_before": {"kind": "time", "description": "last changed before this UTC time"},
    "order": {
        "kind": "choice",
        "choices": tuple(store.ORDERS),
        "default": "newest",
        "description": "newest or oldest change first, by title (A to Z) or by job number",
    },
    "limit": {"kind": "integer", "min": 1, "max": 500, "default": 50, "description": "at most this many"},
    "offset": {"kind": "integer", "min": 0, "max": 10**9, "default": 0, "description": "skip this many"},
    "page": {
        "kind": "integer",
        "min": 1,
        "max": 10**7,
        "description": "the page of `limit` snippets to give (1 is the first); instead of `offset`",
    },
}
_DAY = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
# Days a shop may ask for (the UTC bound of any day in any zone is a real time).
FIRST_DAY, LAST_DAY = date(1900, 1, 1), date(9998, 12, 31)


def _day_start(day: date) -> str:
    """The UTC stamp of the start of ``day`` in the shop's time zone (as the Saved page reads it)."""
    start = datetime(day.year, day.month, day.day)
    zone = current_app.extensions.get("inkfilm_zone")
    local = start.replace(tzinfo=zone) if zone is not None else start.astimezone()
    return store.now_text(local.astimezone(UTC))


def _one(name: str, raw: str):
    spec = LIST_QUERY[name]
    kind = spec["kind"]
    if kind == "text":
        value = raw.strip()
        if len(value) > spec["max"]:
            raise InputError(name, f"may be at most {spec['max']} characters (this is {len(value)})")
        return value
    if kind == "choice":
        value = raw.strip() or spec.get("default", "")
        if value and value not in spec["choices"]:
            raise InputError(name, f"must be one of: {', '.join(spec['choices'])}")
        return value
    if kind == "day":
        value = raw.strip()
        if not value:
            return None
        try:
            if not _DAY.fullmatch(value):
                raise ValueError(value)
            day = date.fromisoformat(value)
        except ValueError:
            raise InputError(name, "must be a day such as 2024-05-01 (YYYY-MM-DD)") from None
        if not FIRST_DAY <= day <= LAST_DAY:
            raise InputError(name, f"must be a day from {FIRST_DAY} to {LAST_DAY}")
        return day
    if kind == "time":
        return store.check_stamp(raw.strip(), name)
    if raw == "":
        return spec.get("default")
    # ASCII digits only: "²".isdigit() is true, but int("²") fails.
    if not re.fullmatch(r"[0-9]{1,12}", raw) or not spec["min"] <= int(raw) <= spec["max"]:
        raise InputError(name, f"must be a whole number from {spec['min']} to {spec['max']}")
    return int(raw)


def list_query(args) -> dict:
    """The list's query parameters checked (see ``LIST_QUERY``): the arguments of ``store.search``.

    A parameter the list does not know, one given twice or a bad value is an ``InputError``
    naming it.
    """
    given: dict = {}
    for name in args:
        if name not in LIST_QUERY:
            raise InputError(name, f"is not a parameter of this list (it takes {', '.join(LIST_QUERY)})")
        values = args.getlist(name)
        if len(values) > 1:
            raise InputError(name, "is given more than once")
        given[name] = _one(name, values[0])
    found = {name: given.get(name, _one(name, "")) for name in LIST_QUERY}
    if found["from"] and found["to"] and found["to"] < found["from"]:
        raise InputError("to", "must be on or after the day in `from`")
    if found["page"] is not None and "offset" in given:
        raise InputError("page", "give `page` or `offset`, not both")
    limit = found["limit"]
    offset = (found["page"] - 1) * limit if found["page"] is not None else found["offset"]
    bounds = {}
    if found["from"]:
        bounds["changed_from"] = max(_day_start(found["from"]), found["changed_from"] or "")
    elif found["changed_from"]:
        bounds["changed_from"] = found["changed_from"]
    if found["to"]:
        end = _day_start(found["to"] + timedelta(days=1))
        bounds["changed_before"] = min(end, found["changed_before"]) if found["changed_before"] else end
    elif found["changed_before"]:
        bounds["changed_before"] = found["changed_before"]
    return {
        "q": found["q"],
        "press": found["press"],
        "station": found["station"],
        "kind": found["kind"],
        "order": found["order"],
        "limit": limit,
        "offset": offset,
        **bounds,
    }


@bp.get("")
def list_snippets():
    asked = list_query(request.args)
    snippets, total = store.search(get_db(), **asked)
    limit, offset = asked["limit"], asked["offset"]
    return jsonify(
        snippets=snippets,
        total=total,
        limit=limit,
        offset=offset,
        page=offset // limit + 1,
        pages=max(1, -(-total // limit)),
        order=asked["order"],
    )


@bp.post("")
def create_snippet():
    require("write")
    body = check_fields(request_body(), {"kind", "inputs", "title"}, CREATE_OPTIONAL)
    kind, inputs, client_id = body.pop("kind"), body.pop("inputs"), body.pop("client_id", None)
    snippet, created = store.create_once(get_db(), client_id, kind, inputs, body, CALCULATIONS)
    response = jsonify(snippet)
    response.status_code = 201 if created else 200  # 200: saved before under this client_id
    response.headers["Location"] = url_for("api.snippets_api.read_snippet", snippet_id=snippet["id"])
    return response


@bp.get("/<int:snippet_id>")
def read_snippet(snippet_id: int):
    return jsonify(store.get(get_db(), snippet_id))


@bp.get("/<int:snippet_id>/rerun")
def rerun_snippet(snippet_id: int):
    snippet = store.get(get_db(), snippet_id)
    rerun = work_out_again(snippet, CALCULATIONS)
    answer = {
        "same": rerun.same,
        "saved": snippet["results"],
        "today": rerun.results,
        "changes": [{"where": c.where, "saved": c.saved, "today": c.today} for c in rerun.changes],
    }
    if rerun.error is not None:
        answer["error"] = {"field": rerun.error.field, "message": rerun.error.message}
    return jsonify(answer)


@bp.route("/<int:snippet_id>", methods=["PUT", "PATCH"])
def update_snippet(snippet_id: int):
    require("write")
    body = check_fields(request_body(), {"version"}, UPDATE_FIELDS | {"rerun", CHANGED_BY})
    version = body.pop("version")
    by = _by(body.pop(CHANGED_BY, None), CHANGED_BY)
    results = None
    if not isinstance(body.get("rerun", False), bool):
        raise InputError("rerun", "must be true (keep today's results) or false")
    if body.pop("rerun", False):
        rerun = work_out_again(store.get(get_db(), snippet_id), CALCULATIONS)
        if rerun.error is not None:
            raise rerun.error
        results = rerun.results
    return jsonify(store.update(get_db(), snippet_id, version, body, results=results, by=by))


@bp.delete("/<int:snippet_id>")
def delete_snippet(snippet_id: int):
    require("supervise")
    by = _by(request.args.get(BY_QUERY), BY_QUERY)
    snippet = store.delete(get_db(), snippet_id, request.args.get("version"), by=by)
    return jsonify(deleted=snippet, gone_for_good_after=store.purge_date(snippet))


@bp.post("/<int:snippet_id>/restore")
def restore_snippet(snippet_id: int):
    require("supervise")
    return jsonify(store.restore(get_db(), snippet_id, by=_by(request.args.get(BY_QUERY), BY_QUERY)))


@bp.get("/bin")
def bin_list():
    require("supervise")
    return jsonify(snippets=store.in_bin(get_db()), days=store.BIN_DAYS)


@bp.get("/export")
def export_json():
    # Streamed from a snapshot of its own; Flask-Compress compresses the stream on the wire.
    return Response(
        exchange.export_stream(database_path()),
        mimetype="application/json",
        headers={"Content-Disposition": 'attachment; filename="inkfilm-snippets.json"'},
    )


@bp.get("/export.csv")
def export_csv():
    return Response(
        exchange.export_csv_stream(database_path(), current_app.extensions.get("inkfilm_zone")),
        mimetype="text/csv",
        headers={"Content-Disposition": 'attachment; filename="inkfilm-snippets.csv"'},
    )


@bp.post("/import")
def import_snippets():
    require("supervise")
    if request.mimetype == "text/csv":
        return jsonify(exchange.import_csv_stream(get_db(), request.stream))
    if not request.is_json:
        raise InputError(
            None,
            "the request body must be an inkfilm export: JSON (Content-Type: application/json)"
            " or CSV (Content-Type: text/csv)",
        )
    try:
        return jsonify(exchange.import_stream(get_db(), request.stream))
    except exchange.NotJSON as exc:
        raise InputError(None, f"the request body must be an inkfilm JSON export ({exc})") from None


# Nested once, at import: under ``/api/v1``, with its error shape and body limit.
api.register_blueprint(bp)
