"""Saved snippets, the pages: save from a calculator, list and search, open,
re-run, edit, delete to the bin and back, share by link and QR, export, import.

Views parse the form, call ``webapp.store``, render. Forms work without
JavaScript; htmx adds live search on top. Every form carries the session's
CSRF token (checked in ``before_request``); a write form that needs a
passcode takes it in the same form, so nothing typed is lost to a lock.
"""

from __future__ import annotations

import io
import json
import sqlite3

import segno
from flask import (
    Blueprint,
    Response,
    abort,
    flash,
    make_response,
    redirect,
    render_template,
    request,
    url_for,
)

from calc import InputError
from webapp.auth.csrf import protect
from webapp.auth.gate import form_gate
from webapp.calculators import BY_KIND, CALCULATIONS, kind_name
from webapp.common import jsontext
from webapp.common.db import STORAGE_MESSAGE, get_db, is_storage_failure
from webapp.snippets import api, exchange, rules, store
from webapp.snippets.rerun import rerun as work_out_again

bp = Blueprint("snippets", __name__)


@bp.before_request
def limit_upload():
    # Before the CSRF check reads the form: an import file may be as large as an export gives.
    if request.endpoint == "snippets.import_page":
        request.max_content_length = exchange.MAX_IMPORT_BYTES


protect(bp)

NAME_COOKIE = "inkfilm_name"
DISK_TROUBLE = STORAGE_MESSAGE[0].upper() + STORAGE_MESSAGE[1:] + ". What you typed is still in the form."


def _storage_trouble(exc: Exception) -> bool:
    """A write the disk refused (full, read-only): the form is shown again, not an error page."""
    return isinstance(exc, sqlite3.DatabaseError | OSError) and is_storage_failure(exc)


def _shown_text(meta: dict) -> dict:
    """What was typed, safe to put back on a page (a lone surrogate cannot be sent)."""
    return {
        name: jsontext.SURROGATE.sub("\ufffd", value) if isinstance(value, str) else value
        for name, value in meta.items()
    }


def _form_meta() -> dict:
    return {name: request.form.get(name, "") for name in rules.META_FIELDS}


# --- list and search --------------------------------------------------------------------------


@bp.get("/snippets")
def index():
    q = request.args.get("q", "").strip()[:200]
    press = request.args.get("press", "").strip()[:100]
    kind = request.args.get("kind", "").strip()[:40]
    snippets, total = store.search(get_db(), q, press=press, kind=kind, limit=100)
    context = {
        "snippets": snippets,
        "total": total,
        "q": q,
        "press": press,
        "kind": kind,
        "presses": store.presses(get_db()),
        "kinds": sorted(CALCULATIONS),
    }
    if request.headers.get("HX-Request") and request.headers.get("HX-Target") == "snippet-results":
        response = make_response(render_template("snippets/_list.html", **context))
    else:
        response = make_response(render_template("snippets/list.html", **context))
    response.headers["Vary"] = "HX-Request, HX-Target"
    return response


# --- save -------------------------------------------------------------------------------------


def _new_form(kind, inputs, meta, *, errors=None, status=200):
    """The save form for ``inputs``, with today's results (or why there are none)."""
    results, problem = None, None
    try:
        rules.check_kind(kind, CALCULATIONS)
        results = rules.compute(kind, inputs, CALCULATIONS)
    except InputError as exc:
        problem = exc
    return (
        render_template(
            "snippets/new.html",
            kind=kind,
            inputs=_displayable(inputs),
            inputs_json=json.dumps(_displayable(inputs), ensure_ascii=False),
            results=results,
            problem=problem,
            meta=_shown_text(meta),
            errors=errors or {},
            limits=rules.LIMITS,
            presses=store.presses(get_db()),
        ),
        status if problem is None else 400,
    )


def _inputs_from_form():
    # What they hold is checked with the rest (``rules.compute``): a lone surrogate is named there.
    try:
        return json.loads(request.form.get("inputs", ""))
    except (ValueError, RecursionError):
        return None


def _displayable(value):
    """``value`` with any lone surrogate (``\\ud800``) replaced, so that the page can be sent."""
    text = json.dumps(value, ensure_ascii=False)
    return json.loads(jsontext.SURROGATE.sub("\ufffd", text)) if jsontext.has_lone_surrogate(text) else value


def _default_title(kind: str, inputs) -> str:
    if not isinstance(inputs, dict):
        return kind_name(str(kind))
    # The input a person would name the calculation by, where there is one.
    spec = BY_KIND.get(kind)
    key = spec.main_input if spec else None
    first = inputs.get(key) if key and isinstance(inputs.get(key), str) else None
    label = kind_name(str(kind))
    return f"{label}: {first}"[: rules.LIMITS["title"]] if first is not None else label


@bp.post("/snippets/new")
def new():
    kind = request.form.get("kind", "")
    inputs = _inputs_from_form()
    meta = {
        "title": _default_title(kind, inputs),
        "saved_by": request.cookies.get(NAME_COOKIE, "")[: rules.LIMITS["saved_by"]],
    }
    return _new_form(kind, inputs, meta)


@bp.post("/snippets")
def create():
    kind = request.form.get("kind", "")
    inputs = _inputs_from_form()
    meta = _form_meta()
    message, status = form_gate("write")
    if message:
        return _new_form(kind, inputs, meta, errors={"passcode": message}, status=status)
    try:
        snippet = store.create(get_db(), kind, inputs, meta, CALCULATIONS)
    except InputError as exc:
        return _new_form(kind, inputs, meta, errors={exc.field or "form": exc.message}, status=400)
    except (sqlite3.DatabaseError, OSError) as exc:
        if not _storage_trouble(exc):
            raise
        return _new_form(kind, inputs, meta, errors={"form": DISK_TROUBLE}, status=503)
    flash("Saved. Anyone on the shop network can find it under Saved.")
    response = redirect(url_for("snippets.show", snippet_id=snippet["id"]), code=303)
    if snippet["saved_by"]:
        response.set_cookie(NAME_COOKIE, snippet["saved_by"], max_age=400 * 24 * 3600, httponly=True, samesite="Strict")
    return response


# --- one snippet ----------------------------------------------------------------------------------


def _load(snippet_id: int, *, deleted: bool = False) -> dict:
    try:
        return store.get(get_db(), snippet_id, deleted=deleted)
    except store.NotFound:
        abort(404)


@bp.get("/s/<int:snippet_id>")
def short_link(snippet_id: int):
    _load(snippet_id)
    return redirect(url_for("snippets.show", snippet_id=snippet_id))


@bp.get("/snippets/<int:snippet_id>")
def show(snippet_id: int):
    snippet = _load(snippet_id)
    rerun = work_out_again(snippet, CALCULATIONS) if request.args.get("rerun") else None
    return render_template(
        "snippets/view.html",
        snippet=snippet,
        rerun=rerun,
        share_url=url_for("snippets.short_link", snippet_id=snippet_id, _external=True),
    )


@bp.get("/snippets/<int:snippet_id>/qr.svg")
def qr(snippet_id: int):
    _load(snippet_id)
    url = url_for("snippets.short_link", snippet_id=snippet_id, _external=True)
    out = io.BytesIO()
    segno.make(url, error="m").save(out, kind="svg", scale=6, border=2, xmldecl=False, title=url)
    response = Response(out.getvalue(), mimetype="image/svg+xml")
    response.headers["Cache-Control"] = "no-cache"
    return response


@bp.post("/snippets/<int:snippet_id>/keep")
def keep_today(snippet_id: int):
    """Replace the saved results with today's (after a re-run showed a difference)."""
    snippet = _load(snippet_id)
    message, status = form_gate("write")
    if message:
        flash(message)
        return redirect(url_for("snippets.show", snippet_id=snippet_id, rerun=1), code=303)
    rerun = work_out_again(snippet, CALCULATIONS)
    if rerun.error is not None:
        flash("Today's core cannot work these inputs out; the saved results stay.")
        return redirect(url_for("snippets.show", snippet_id=snippet_id, rerun=1), code=303)
    try:
        store.update(get_db(), snippet_id, request.form.get("version", ""), {}, results=rerun.results)
    except (store.Conflict, InputError):
        flash("Changed by someone else meanwhile — here is the newer one. Nothing was overwritten.")
        return redirect(url_for("snippets.show", snippet_id=snippet_id, rerun=1), code=303)
    flash("Today's results are saved with this snippet.")
    return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)


# --- edit ----------------------------------------------------------------------------------------


def _edit_form(snippet, meta, *, version, errors=None, newer=None, status=200):
    return (
        render_template(
            "snippets/edit.html",
            snippet=snippet,
            meta=_shown_text(meta),
            version=version,
            errors=errors or {},
            newer=newer,
            limits=rules.LIMITS,
            presses=store.presses(get_db()),
        ),
        status,
    )


@bp.get("/snippets/<int:snippet_id>/edit")
def edit(snippet_id: int):
    snippet = _load(snippet_id)
    meta = {name: snippet[name] for name in rules.META_FIELDS}
    meta["tags"] = ", ".join(snippet["tags"])
    return _edit_form(snippet, meta, version=snippet["version"])


@bp.post("/snippets/<int:snippet_id>/edit")
def update(snippet_id: int):
    meta = _form_meta()
    try:
        snippet = store.get(get_db(), snippet_id)
    except store.NotFound:
        # Deleted while this person was editing: keep their words on screen, say where it went.
        try:
            snippet = store.get(get_db(), snippet_id, deleted=True)
        except store.NotFound:
            abort(404)
        message = "Deleted by someone else meanwhile: it is in the bin. Restore it from the bin, then save again."
        return _edit_form(snippet, meta, version=request.form.get("version", ""), errors={"form": message}, status=409)
    version = request.form.get("version", "")
    message, status = form_gate("write")
    if message:
        return _edit_form(snippet, meta, version=version, errors={"passcode": message}, status=status)
    try:
        store.update(get_db(), snippet_id, version, meta)
    except store.Conflict as exc:
        # Keep what this person typed on screen beside the newer snippet; they choose.
        return _edit_form(
            exc.current,
            meta,
            version=exc.current["version"],
            errors={"form": exc.message},
            newer=exc.current,
            status=409,
        )
    except InputError as exc:
        return _edit_form(snippet, meta, version=version, errors={exc.field or "form": exc.message}, status=400)
    except (sqlite3.DatabaseError, OSError) as exc:
        if not _storage_trouble(exc):
            raise
        return _edit_form(snippet, meta, version=version, errors={"form": DISK_TROUBLE}, status=503)
    flash("Changes saved.")
    return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)


# --- delete, bin, restore -----------------------------------------------------------------------------


@bp.post("/snippets/<int:snippet_id>/delete")
def delete(snippet_id: int):
    snippet = _load(snippet_id)
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/view.html", snippet=snippet, rerun=None, delete_error=message), status
    try:
        store.delete(get_db(), snippet_id, request.form.get("version") or None)
    except store.Conflict:
        flash("Changed by someone else meanwhile — here is the newer one. Nothing was deleted.")
        return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)
    except InputError as exc:
        flash(exc.message)
        return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)
    flash(f"“{snippet['title']}” is in the bin for {store.BIN_DAYS} days.", "deleted")
    flash(str(snippet_id), "undo")
    return redirect(url_for("snippets.index"), code=303)


@bp.route("/snippets/bin", methods=["GET", "POST"])
def bin_page():
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/bin.html", snippets=None, gate_error=message), status
    if request.method == "POST":
        return redirect(url_for("snippets.bin_page"), code=303)
    snippets = store.in_bin(get_db())
    return render_template("snippets/bin.html", snippets=snippets, purge_date=store.purge_date, days=store.BIN_DAYS)


@bp.post("/snippets/<int:snippet_id>/restore")
def restore(snippet_id: int):
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/bin.html", snippets=None, gate_error=message), status
    try:
        snippet = store.restore(get_db(), snippet_id)
    except store.NotFound:
        flash("That snippet is not in the bin any more.")
        return redirect(url_for("snippets.index"), code=303)
    flash(f"“{snippet['title']}” is back.")
    return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)


# --- export and import ------------------------------------------------------------------------------------


@bp.get("/snippets/export.json")
def export_json():
    # The same file as the API's export, streamed.
    return api.export_json()


@bp.get("/snippets/export.csv")
def export_csv():
    # The same file as the API's export.
    return api.export_csv()


@bp.route("/snippets/import", methods=["GET", "POST"])
def import_page():
    if request.method == "GET":
        return render_template("snippets/import.html", errors={})
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/import.html", errors={"passcode": message}), status
    upload = request.files.get("file")
    if upload is None or not upload.filename:
        return render_template("snippets/import.html", errors={"file": "Choose an export file first."}), 400
    try:
        counts = exchange.import_stream(get_db(), upload.stream)
    except InputError as exc:
        where = f"{exc.field}: " if exc.field else ""
        error = f"Nothing was imported. {where}{exc.message}."
        return render_template("snippets/import.html", errors={"file": error}), 400
    except ValueError as exc:
        error = f"Nothing was imported. This file is not JSON ({exc}); choose a file that inkfilm exported as JSON."
        return render_template("snippets/import.html", errors={"file": error}), 400
    flash(f"Imported {counts['added']} snippets; {counts['already_here']} were here already.")
    return redirect(url_for("snippets.index"), code=303)
