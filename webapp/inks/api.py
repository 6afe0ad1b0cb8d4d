"""The inks API, ``/api/v1/inks`` and ``/api/v1/ink-sets``: the shop's inks, ink sets, their readings and curves.

Same error shape and passcode rules as snippets (``webapp.auth.gate``):
reading is open; adding and changing an ink, a set or a reading is ``write``
(the shop passcode); deleting and importing is ``supervise``. A change sends
the ``version`` it was made against; a stale one gets 409 with the current
ink, set or reading. Every set's answer carries its fit (``calc.density``):
D∞, m, their standard errors, the residual spread and the count, or in plain
words why the readings give no curve yet.
"""

from __future__ import annotations

from flask import Blueprint, Response, jsonify, request, url_for

from calc import InputError
from webapp.auth.gate import api_gate as require
from webapp.calculators import density as density_api
from webapp.common.db import get_db
from webapp.common.jsonapi import api, check_fields, error_response, request_body
from webapp.inks import curves, exchange, rules, store

inks_bp = Blueprint("inks_api", __name__, url_prefix="/inks")
sets_bp = Blueprint("ink_sets_api", __name__, url_prefix="/ink-sets")

MAX_IMPORT_BODY = 8 * 1024 * 1024
INK_UPDATE = {**rules.INK_REQUIRED, **rules.INK_OPTIONAL}
SET_UPDATE = {**rules.SET_REQUIRED, **rules.SET_OPTIONAL}
READING_UPDATE = {**rules.READING_REQUIRED, **rules.READING_OPTIONAL}
VOLUME_FOR_FIELDS = {"target_density": "number", "transfer": "share"}
DENSITY_FROM_OPTIONAL = {"anilox_volume": "quantity", "transfer": "share", "film": "quantity"}
IMPORT_FIELDS = {"csv": "text"}


def _current_json(exc: store.Conflict) -> dict:
    conn = get_db()
    if exc.what == "ink":
        return curves.ink_json(exc.current)
    if exc.what == "ink set":
        ink = store.get_ink(conn, exc.current["ink"])
        return curves.set_json(exc.current, ink, store.readings(conn, [exc.current["id"]])[exc.current["id"]])
    return curves.reading_json(exc.current)


def _handlers(bp: Blueprint) -> None:
    @bp.errorhandler(store.NotFound)
    def not_found(exc: store.NotFound):
        return error_response("id", exc.message, 404)

    @bp.errorhandler(store.Conflict)
    def conflict(exc: store.Conflict):
        response = jsonify(error={"field": "version", "message": exc.message}, current=_current_json(exc))
        response.status_code = 409
        return response

    @bp.errorhandler(store.InUse)
    def in_use(exc: store.InUse):
        return error_response("id", exc.message, 409)

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

    @bp.before_request
    def limit_body():
        if request.endpoint and request.endpoint.rsplit(".", 1)[-1] in ("import_inks", "import_readings"):
            request.max_content_length = MAX_IMPORT_BODY


_handlers(inks_bp)
_handlers(sets_bp)


def _created(answer: dict, location: str):
    response = jsonify(answer)
    response.status_code = 201
    response.headers["Location"] = location
    return response


def _csv(text: str, name: str) -> Response:
    return Response(
        text, mimetype="text/csv", headers={"Content-Disposition": f'attachment; filename="inkfilm-{name}.csv"'}
    )


def _import(table: str):
    require("supervise")
    body = check_fields(request_body(), set(IMPORT_FIELDS))
    if not isinstance(body["csv"], str):
        raise InputError("csv", "must be the CSV file's text")
    return jsonify(exchange.import_csv(get_db(), table, body["csv"]))


# --- inks ----------------------------------------------------------------------------------------


@inks_bp.get("")
def list_inks():
    inks = [curves.ink_json(ink) for ink in store.all_inks(get_db())]
    return jsonify(inks=inks, total=len(inks))


@inks_bp.post("")
def create_ink():
    require("write")
    body = check_fields(request_body(), set(rules.INK_REQUIRED), set(rules.INK_OPTIONAL))
    ink = store.create_ink(get_db(), body)
    return _created(curves.ink_json(ink), url_for("api.inks_api.read_ink", ink=ink["id"]))


@inks_bp.get("/<int:ink>")
def read_ink(ink: int):
    return jsonify(curves.ink_json(store.get_ink(get_db(), ink)))


@inks_bp.route("/<int:ink>", methods=["PUT", "PATCH"])
def update_ink(ink: int):
    require("write")
    body = check_fields(request_body(), {"version"}, set(INK_UPDATE))
    version = body.pop("version")
    return jsonify(curves.ink_json(store.update_ink(get_db(), ink, version, body)))


@inks_bp.delete("/<int:ink>")
def delete_ink(ink: int):
    """Delete an ink no set uses (``version`` in the query)."""
    require("supervise")
    return jsonify(deleted=curves.ink_json(store.delete_ink(get_db(), ink, request.args.get("version"))))


@inks_bp.get("/export.csv")
def export_inks():
    return _csv(exchange.export_csv(get_db(), "inks"), "inks")


@inks_bp.post("/import")
def import_inks():
    """``{"csv": "<the file's text>"}``: every row is checked first; all rows or none."""
    return _import("inks")


# --- ink sets ------------------------------------------------------------------------------------


def _set_answer(ink_set: dict) -> dict:
    conn = get_db()
    ink = store.get_ink(conn, ink_set["ink"])
    return curves.set_json(ink_set, ink, store.readings(conn, [ink_set["id"]])[ink_set["id"]])


@sets_bp.get("")
def list_sets():
    conn = get_db()
    inks = {ink["id"]: ink for ink in store.all_inks(conn)}
    rows = store.readings(conn)
    sets = [
        curves.set_json(item, inks[item["ink"]], rows.get(item["id"], []), with_readings=False)
        for item in store.all_sets(conn)
    ]
    return jsonify(ink_sets=sets, total=len(sets))


@sets_bp.post("")
def create_set():
    require("write")
    body = check_fields(request_body(), set(rules.SET_REQUIRED), set(rules.SET_OPTIONAL))
    ink_set = store.create_set(get_db(), body)
    return _created(_set_answer(ink_set), url_for("api.ink_sets_api.read_set", ink_set=ink_set["id"]))


@sets_bp.get("/<int:ink_set>")
def read_set(ink_set: int):
    return jsonify(_set_answer(store.get_set(get_db(), ink_set)))


@sets_bp.route("/<int:ink_set>", methods=["PUT", "PATCH"])
def update_set(ink_set: int):
    require("write")
    body = check_fields(request_body(), {"version"}, set(SET_UPDATE))
    version = body.pop("version")
    return jsonify(_set_answer(store.update_set(get_db(), ink_set, version, body)))


@sets_bp.delete("/<int:ink_set>")
def delete_set(ink_set: int):
    """Delete the set with its readings (``version`` in the query)."""
    require("supervise")
    deleted = store.delete_set(get_db(), ink_set, request.args.get("version"))
    return jsonify(deleted={"id": deleted["id"], "name": deleted["name"]})


@sets_bp.get("/<int:ink_set>/readings")
def list_readings(ink_set: int):
    conn = get_db()
    store.get_set(conn, ink_set)
    return jsonify(readings=[curves.reading_json(row) for row in store.readings(conn, [ink_set])[ink_set]])


@sets_bp.post("/<int:ink_set>/readings")
def add_reading(ink_set: int):
    require("write")
    body = check_fields(request_body(), set(rules.READING_REQUIRED), set(rules.READING_OPTIONAL))
    reading = store.add_reading(get_db(), ink_set, body)
    location = url_for("api.ink_sets_api.read_reading", ink_set=ink_set, reading=reading["id"])
    return _created(curves.reading_json(reading), location)


@sets_bp.get("/<int:ink_set>/readings/<int:reading>")
def read_reading(ink_set: int, reading: int):
    return jsonify(curves.reading_json(store.get_reading(get_db(), ink_set, reading)))


@sets_bp.route("/<int:ink_set>/readings/<int:reading>", methods=["PUT", "PATCH"])
def update_reading(ink_set: int, reading: int):
    require("write")
    body = check_fields(request_body(), {"version"}, set(READING_UPDATE))
    version = body.pop("version")
    return jsonify(curves.reading_json(store.update_reading(get_db(), ink_set, reading, version, body)))


@sets_bp.delete("/<int:ink_set>/readings/<int:reading>")
def delete_reading(ink_set: int, reading: int):
    require("supervise")
    deleted = store.delete_reading(get_db(), ink_set, reading, request.args.get("version"))
    return jsonify(deleted=curves.reading_json(deleted))


def _with_readings(ink_set: int, body: dict) -> dict:
    """``body`` with the set's readings, for the density answers (which fit them)."""
    conn = get_db()
    store.get_set(conn, ink_set)
    return {**body, "readings": curves.fit_readings(store.readings(conn, [ink_set])[ink_set])}


@sets_bp.post("/<int:ink_set>/volume-for")
def volume_for(ink_set: int):
    """The film and anilox volume a target density needs on this set's curve."""
    body = check_fields(request_body(), set(VOLUME_FOR_FIELDS))
    return jsonify(density_api.compute_volume_for(_with_readings(ink_set, body)))


@sets_bp.post("/<int:ink_set>/density-from")
def density_from(ink_set: int):
    """The density expected from an anilox volume and transfer share (or a film) on this set's curve."""
    body = check_fields(request_body(), set(), set(DENSITY_FROM_OPTIONAL))
    return jsonify(density_api.compute_density_from(_with_readings(ink_set, body)))


@sets_bp.get("/<int:ink_set>/rolls")
def on_rolls(ink_set: int):
    """What each register roll in use or spare gives with this set, on its latest measured volume."""
    from webapp.rolls import store as roll_store

    conn = get_db()
    store.get_set(conn, ink_set)
    target, transfer = _number_arg("target_density", 1.40), _number_arg("transfer", 0.25)
    curve, reason = curves.fit_of(store.readings(conn, [ink_set])[ink_set])
    if curve is None:
        raise InputError("readings", reason)
    answer = curves.on_rolls(curve, target, transfer, roll_store.all_rolls(conn), roll_store.logs(conn))
    return jsonify({"target_density": target, "transfer": transfer, **curves.on_rolls_json(answer)})


def _number_arg(name: str, default: float) -> float:
    text = request.args.get(name, "").strip()
    if not text:
        return default
    try:
        return float(text[:30])
    except ValueError:
        raise InputError(name, "must be a number") from None


@sets_bp.get("/export/readings.csv")
def export_readings():
    return _csv(exchange.export_csv(get_db(), "readings"), "ink-readings")


@sets_bp.post("/import/readings")
def import_readings():
    """``{"csv": "<the file's text>"}``: every row is checked first; all rows or none."""
    return _import("readings")


api.register_blueprint(inks_bp)
api.register_blueprint(sets_bp)
