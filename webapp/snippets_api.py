"""The snippets API, ``/api/v1/snippets``: saved calculations as JSON.

Same error shape as the rest of ``/api/v1`` (``{"error": {"field", "message"}}``)
and the same passcode rules as the pages (see ``webapp.auth``): reading is
open; a write sends the passcode in ``X-Inkfilm-Passcode``, or relies on an
unlocked session cookie and then carries ``X-CSRF-Token``. Writes send JSON
(``Content-Type: application/json``), which a page on another site cannot.
"""

from __future__ import annotations

from flask import Blueprint, Response, jsonify, request, url_for

from calc import InputError
from webapp import auth, store
from webapp.api import CALCULATIONS, check_fields, error_response, request_body
from webapp.db import get_db

bp = Blueprint("snippets_api", __name__, url_prefix="/api/v1/snippets")

MAX_BODY = 64 * 1024
MAX_IMPORT_BODY = 8 * 1024 * 1024
CREATE_OPTIONAL = {"job_number", "press", "station", "notes", "tags", "saved_by"}
UPDATE_FIELDS = {"title", *CREATE_OPTIONAL}


class Refused(Exception):
    def __init__(self, field: str | None, message: str, status: int, retry_after: float | None = None):
        super().__init__(message)
        self.field, self.message, self.status, self.retry_after = field, message, status, retry_after


@bp.errorhandler(InputError)
def input_error(exc: InputError):
    return error_response(exc.field, exc.message, 400)


@bp.errorhandler(store.NotFound)
def not_found(exc: store.NotFound):
    return error_response("id", f"there is no snippet {exc.args[0]} here", 404)


@bp.errorhandler(store.Conflict)
def conflict(exc: store.Conflict):
    response = jsonify(error={"field": "version", "message": exc.message}, current=exc.current)
    response.status_code = 409
    return response


@bp.errorhandler(Refused)
def refused(exc: Refused):
    response = error_response(exc.field, exc.message, exc.status)
    if exc.retry_after is not None:
        response.headers["Retry-After"] = str(max(1, round(exc.retry_after)))
    return response


@bp.before_request
def limit_body():
    large = request.endpoint == "snippets_api.import_snippets"
    request.max_content_length = MAX_IMPORT_BODY if large else MAX_BODY


WHAT = {"write": "saving and editing", "supervise": "deleting, the bin and import"}


def require(action: str) -> None:
    """Refuse the request unless the sender may do ``action`` ("write" or "supervise")."""
    if request.method in ("POST", "PUT", "PATCH") and not request.is_json:
        raise Refused(None, "send the body as JSON (Content-Type: application/json)", 415)
    if auth.allowed(action, "reader"):
        return  # no passcode guards this: a passcode sent anyway is not checked
    sent = request.headers.get(auth.PASSCODE_HEADER)
    if sent is not None:
        try:
            role = auth.role_for_passcode(sent)
        except auth.Locked as exc:
            raise Refused(auth.PASSCODE_HEADER, exc.message, 429, exc.seconds) from None
        if role is None:
            raise Refused(auth.PASSCODE_HEADER, "that passcode is not right", 403)
    else:
        role = auth.session_role()
        writing = request.method not in ("GET", "HEAD")
        if role != "reader" and writing and not auth.csrf_ok(request.headers.get(auth.CSRF_HEADER)):
            # An unlocked browser: the cookie alone could be a forged request's.
            raise Refused(auth.CSRF_HEADER, "a write from an unlocked browser needs this session's CSRF token", 403)
    if not auth.allowed(action, role):
        needs = "supervisor" if auth.needed(action) == "supervisor" else "shop"
        status = 401 if sent is None else 403
        raise Refused(
            auth.PASSCODE_HEADER, f"{WHAT[action]} needs the {needs} passcode (send it in this header)", status
        )


def _whole_number(name: str, default: int, low: int, high: int) -> int:
    raw = request.args.get(name)
    if raw is None or raw == "":
        return default
    if not raw.isdigit() or not low <= int(raw) <= high:
        raise InputError(name, f"must be a whole number from {low} to {high}")
    return int(raw)


@bp.get("")
def list_snippets():
    limit = _whole_number("limit", 50, 1, 500)
    offset = _whole_number("offset", 0, 0, 10**9)
    snippets, total = store.search(
        get_db(),
        request.args.get("q", ""),
        press=request.args.get("press", ""),
        kind=request.args.get("kind", ""),
        limit=limit,
        offset=offset,
    )
    return jsonify(snippets=snippets, total=total, limit=limit, offset=offset)


@bp.post("")
def create_snippet():
    require("write")
    body = check_fields(request_body(), {"kind", "inputs", "title"}, CREATE_OPTIONAL)
    kind, inputs = body.pop("kind"), body.pop("inputs")
    snippet = store.create(get_db(), kind, inputs, body, CALCULATIONS)
    response = jsonify(snippet)
    response.status_code = 201
    response.headers["Location"] = url_for("snippets_api.read_snippet", snippet_id=snippet["id"])
    return response


@bp.get("/<int:snippet_id>")
def read_snippet(snippet_id: int):
    return jsonify(store.get(get_db(), snippet_id))


@bp.get("/<int:snippet_id>/rerun")
def rerun_snippet(snippet_id: int):
    snippet = store.get(get_db(), snippet_id)
    rerun = store.rerun(snippet, CALCULATIONS)
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
    body = check_fields(request_body(), {"version"}, UPDATE_FIELDS | {"rerun"})
    version = body.pop("version")
    results = None
    if not isinstance(body.get("rerun", False), bool):
        raise InputError("rerun", "must be true (keep today's results) or false")
    if body.pop("rerun", False):
        rerun = store.rerun(store.get(get_db(), snippet_id), CALCULATIONS)
        if rerun.error is not None:
            raise rerun.error
        results = rerun.results
    return jsonify(store.update(get_db(), snippet_id, version, body, results=results))


@bp.delete("/<int:snippet_id>")
def delete_snippet(snippet_id: int):
    require("supervise")
    snippet = store.delete(get_db(), snippet_id, request.args.get("version"))
    return jsonify(deleted=snippet, gone_for_good_after=store.purge_date(snippet))


@bp.post("/<int:snippet_id>/restore")
def restore_snippet(snippet_id: int):
    require("supervise")
    return jsonify(store.restore(get_db(), snippet_id))


@bp.get("/bin")
def bin_list():
    require("supervise")
    return jsonify(snippets=store.in_bin(get_db()), days=store.BIN_DAYS)


@bp.get("/export")
def export_json():
    response = jsonify(store.export_all(get_db()))
    response.headers["Content-Disposition"] = 'attachment; filename="inkfilm-snippets.json"'
    return response


@bp.get("/export.csv")
def export_csv():
    return Response(
        store.export_csv(get_db()),
        mimetype="text/csv",
        headers={"Content-Disposition": 'attachment; filename="inkfilm-snippets.csv"'},
    )


@bp.post("/import")
def import_snippets():
    require("supervise")
    return jsonify(store.import_all(get_db(), request_body_any()))


def request_body_any():
    """The JSON body, object or list (an import file is either)."""
    body = request.get_json(silent=True)
    if body is None:
        raise InputError(None, "the request body must be an inkfilm JSON export")
    return body
