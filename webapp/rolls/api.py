"""The roll register API, ``/api/v1/rolls``: rolls, their logs, their wear, and which fit a job.

Same error shape and passcode rules as the rest of ``/api/v1``
(``webapp.auth.gate``): reading is open; logging a measurement or a cleaning
is ``write`` (the shop passcode); adding, changing or retiring a roll and
correcting or removing a log entry is ``supervise`` (the supervisor passcode).
A change sends the ``version`` it was made against; a stale one gets 409 with
the current roll or entry.
"""

from __future__ import annotations

from flask import Blueprint, Response, jsonify, request, url_for

from calc import InputError
from webapp.auth.gate import api_gate as require
from webapp.common.db import get_db
from webapp.common.jsonapi import api, check_fields, error_response, request_body
from webapp.rolls import exchange, register, rules, store

bp = Blueprint("rolls_api", __name__, url_prefix="/rolls")

MAX_IMPORT_BODY = 8 * 1024 * 1024
ROLL_UPDATE_OPTIONAL = {**rules.ROLL_REQUIRED, **rules.ROLL_OPTIONAL}
CORRECTION_FIELDS = {"version": "integer", "reason": "text"}


@bp.errorhandler(store.NotFound)
def not_found(exc: store.NotFound):
    return error_response("id", exc.message, 404)


@bp.errorhandler(store.Conflict)
def conflict(exc: store.Conflict):
    current = exc.current
    if exc.what == "roll":
        current = register.roll_json(current, store.logs(get_db(), [current["id"]])[current["id"]])
    else:
        current = register.ENTRY_JSON[exc.what](current)
    response = jsonify(error={"field": "version", "message": exc.message}, current=current)
    response.status_code = 409
    return response


@bp.before_request
def limit_body():
    if request.endpoint == "api.rolls_api.import_file":
        request.max_content_length = MAX_IMPORT_BODY


def _roll_answer(roll: dict, status: int = 200):
    conn = get_db()
    response = jsonify(register.roll_json(roll, store.logs(conn, [roll["id"]])[roll["id"]]))
    response.status_code = status
    return response


@bp.get("")
def list_rolls():
    conn = get_db()
    status = request.args.get("status", "")
    if status:
        status = rules.parse_status(status)
    low = register.check_screen_filter(request.args.get("screen_min"), "screen_min")
    high = register.check_screen_filter(request.args.get("screen_max"), "screen_max")
    rows = register.overview(
        store.all_rolls(conn),
        store.logs(conn),
        press=request.args.get("press", "")[:60],
        status=status,
        screen_low=low,
        screen_high=high,
    )
    return jsonify(rolls=[register.roll_json(roll, {}, wear) for roll, wear in rows], total=len(rows))


@bp.post("")
def create_roll():
    require("supervise")
    body = check_fields(request_body(), set(rules.ROLL_REQUIRED), set(rules.ROLL_OPTIONAL))
    roll = store.create_roll(get_db(), body)
    response = _roll_answer(roll, 201)
    response.headers["Location"] = url_for("api.rolls_api.read_roll", roll=roll["id"])
    return response


@bp.get("/fitting")
def fitting():
    conn = get_db()
    work = request.args.get("work")
    if not work:
        raise InputError("work", "is required: process, line, solid, white or coating")
    answer = register.fitting(store.all_rolls(conn), store.logs(conn), request.args.get("plate_screen"), work)
    return jsonify(answer)


@bp.get("/<int:roll>")
def read_roll(roll: int):
    return _roll_answer(store.get_roll(get_db(), roll))


@bp.route("/<int:roll>", methods=["PUT", "PATCH"])
def update_roll(roll: int):
    require("supervise")
    body = check_fields(request_body(), {"version"}, set(ROLL_UPDATE_OPTIONAL))
    version = body.pop("version")
    return _roll_answer(store.update_roll(get_db(), roll, version, body))


@bp.delete("/<int:roll>")
def retire_roll(roll: int):
    """Retire the roll: it stays in the register with its logs (``version`` in the query)."""
    require("supervise")
    return _roll_answer(store.retire_roll(get_db(), roll, request.args.get("version")))


# --- log entries ----------------------------------------------------------------------------

KINDS = {"measurements": "measurement", "cleanings": "cleaning"}
FIELDS = {
    "measurement": (rules.MEASUREMENT_REQUIRED, rules.MEASUREMENT_OPTIONAL),
    "cleaning": (rules.CLEANING_REQUIRED, rules.CLEANING_OPTIONAL),
}


@bp.get("/<int:roll>/<any(measurements, cleanings):kinds>")
def list_entries(roll: int, kinds: str):
    conn = get_db()
    store.get_roll(conn, roll)
    kind = KINDS[kinds]
    entries = store.logs(conn, [roll])[roll][kind]
    return jsonify({kinds: [register.ENTRY_JSON[kind](entry) for entry in entries]})


@bp.post("/<int:roll>/<any(measurements, cleanings):kinds>")
def add_entry(roll: int, kinds: str):
    require("write")
    kind = KINDS[kinds]
    required, optional = FIELDS[kind]
    body = check_fields(request_body(), set(required), set(optional))
    entry = store.add_entry(get_db(), kind, roll, body)
    response = jsonify(register.ENTRY_JSON[kind](entry))
    response.status_code = 201
    response.headers["Location"] = url_for("api.rolls_api.read_entry", roll=roll, kinds=kinds, entry=entry["id"])
    return response


@bp.get("/<int:roll>/<any(measurements, cleanings):kinds>/<int:entry>")
def read_entry(roll: int, kinds: str, entry: int):
    kind = KINDS[kinds]
    conn = get_db()
    answer = register.ENTRY_JSON[kind](store.get_entry(conn, kind, roll, entry))
    answer["changes"] = store.entry_changes(conn, kind, entry)
    return jsonify(answer)


@bp.route("/<int:roll>/<any(measurements, cleanings):kinds>/<int:entry>", methods=["PUT", "PATCH"])
def correct_entry(roll: int, kinds: str, entry: int):
    require("supervise")
    kind = KINDS[kinds]
    required, optional = FIELDS[kind]
    body = check_fields(request_body(), {"version"}, {*required, *optional, "reason"})
    version, reason = body.pop("version"), body.pop("reason", "")
    corrected = store.correct_entry(get_db(), kind, roll, entry, version, body, reason=reason)
    return jsonify(register.ENTRY_JSON[kind](corrected))


@bp.delete("/<int:roll>/<any(measurements, cleanings):kinds>/<int:entry>")
def remove_entry(roll: int, kinds: str, entry: int):
    require("supervise")
    kind = KINDS[kinds]
    removed = store.remove_entry(
        get_db(), kind, roll, entry, request.args.get("version"), reason=request.args.get("reason", "")
    )
    return jsonify(removed=register.ENTRY_JSON[kind](removed))


# --- CSV export and import ------------------------------------------------------------------


@bp.get("/export/<any(rolls, measurements, cleanings):table>.csv")
def export_csv(table: str):
    return Response(
        exchange.export_csv(get_db(), table),
        mimetype="text/csv",
        headers={"Content-Disposition": f'attachment; filename="inkfilm-{table}.csv"'},
    )


@bp.post("/import/<any(rolls, measurements, cleanings):table>")
def import_file(table: str):
    """``{"csv": "<the file's text>"}``: every row is checked first; all rows or none."""
    require("supervise")
    body = check_fields(request_body(), {"csv"})
    if not isinstance(body["csv"], str):
        raise InputError("csv", "must be the CSV file's text")
    return jsonify(exchange.import_csv(get_db(), table, body["csv"]))


@bp.errorhandler(exchange.ImportRefused)
def import_refused(exc: exchange.ImportRefused):
    first = exc.errors[0]
    response = jsonify(
        error={"field": f"row {first['row']}: {first['field']}", "message": first["message"]},
        errors=exc.errors,
        imported=0,
    )
    response.status_code = 400
    return response


api.register_blueprint(bp)
