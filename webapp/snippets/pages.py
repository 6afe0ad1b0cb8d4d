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
import uuid
from datetime import UTC, datetime, timedelta

from flask import (
    Blueprint,
    Response,
    abort,
    current_app,
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
from webapp.common.formatting import shown
from webapp.common.preference import current_system
from webapp.snippets import api, exchange, merge, rules, store
from webapp.snippets.exchange import headline
from webapp.snippets.reopen import calculator_link
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


def _who() -> str:
    """Who is making a change: the name typed in the form, else the one this device remembers."""
    typed = request.form.get("changed_by")
    name = typed if typed is not None else request.cookies.get(NAME_COOKIE, "")
    return " ".join(str(name).split())[: rules.LIMITS["saved_by"]]


def _see(endpoint: str, **values):
    """Redirect after a POST (303), so that a refresh never sends the form again; an htmx
    request is told to go there itself (``HX-Redirect``), so the address bar shows the page too."""
    url = url_for(endpoint, **values)
    if request.headers.get("HX-Request"):
        response = make_response("", 200)
        response.headers["HX-Redirect"] = url
        return response
    return redirect(url, code=303)


def _remember_name(response, name: str):
    if name:
        response.set_cookie(NAME_COOKIE, name, max_age=400 * 24 * 3600, httponly=True, samesite="Strict")
    return response


# --- list and search --------------------------------------------------------------------------


PAGE_SIZE = 100
SORTS = {"newest": "Newest change", "oldest": "Oldest change", "title": "Title", "job": "Job"}


def _day_bound(name: str, *, next_day: bool = False) -> tuple[str, str, str | None]:
    """A ``YYYY-MM-DD`` filter (a day in the shop's zone) as the text kept, the UTC stamp
    of that day's start (or the next day's), and a message when it is no date."""
    text = request.args.get(name, "").strip()[:10]
    if not text:
        return "", "", None
    try:
        day_start = datetime.strptime(text, "%Y-%m-%d")
    except ValueError:
        return text, "", "must be a date (YYYY-MM-DD)"
    if not api.FIRST_DAY <= day_start.date() <= api.LAST_DAY:
        return text, "", f"must be a date from {api.FIRST_DAY} to {api.LAST_DAY}"
    if next_day:
        day_start += timedelta(days=1)
    zone = current_app.extensions.get("inkfilm_zone")
    local = day_start.replace(tzinfo=zone) if zone is not None else day_start.astimezone()
    return text, store.now_text(local.astimezone(UTC)), None


@bp.get("/snippets")
def index():
    q = request.args.get("q", "").strip()[:200]
    press = request.args.get("press", "").strip()[:100]
    kind = request.args.get("kind", "").strip()[:40]
    station = request.args.get("station", "").strip()[:40]
    sort = request.args.get("sort", "newest")
    sort = sort if sort in SORTS else "newest"
    since, since_stamp, since_error = _day_bound("from")
    until, until_stamp, until_error = _day_bound("to", next_day=True)
    raw_page = request.args.get("page", "1")
    page = int(raw_page) if raw_page.isascii() and raw_page.isdecimal() and 0 < len(raw_page) < 7 else 1
    page = max(page, 1)
    filters = dict(press=press, kind=kind, station=station, changed_from=since_stamp, changed_before=until_stamp)
    snippets, total = store.search(get_db(), q, **filters, order=sort, limit=PAGE_SIZE, offset=(page - 1) * PAGE_SIZE)
    pages = max(1, -(-total // PAGE_SIZE))
    if page > pages:  # past the end (the list got shorter): the last page
        page = pages
        snippets, _ = store.search(get_db(), q, **filters, order=sort, limit=PAGE_SIZE, offset=(page - 1) * PAGE_SIZE)
    asked = {"q": q, "press": press, "kind": kind, "station": station, "from": since, "to": until, "sort": sort}
    context = {
        "snippets": snippets,
        "total": total,
        "q": q,
        "press": press,
        "kind": kind,
        "station": station,
        "since": since,
        "until": until,
        "sort": sort,
        "sorts": SORTS,
        "errors": {k: v for k, v in (("from", since_error), ("to", until_error)) if v},
        "filtered": bool(q or press or kind or station or since or until),
        "page": page,
        "pages": pages,
        "first": (page - 1) * PAGE_SIZE + 1,
        "page_link": lambda number: url_for(
            "snippets.index", **{k: v for k, v in asked.items() if v and v != "newest"}, page=number
        ),
        "headline": headline,
        "presses": store.presses(get_db()),
        "stations": store.stations(get_db()),
        "kinds": sorted(CALCULATIONS),
    }
    if request.headers.get("HX-Request") and request.headers.get("HX-Target") == "snippet-results":
        response = make_response(render_template("snippets/_list.html", **context))
    else:
        response = make_response(render_template("snippets/list.html", **context))
    response.headers["Vary"] = "HX-Request, HX-Target"
    return response


# --- save -------------------------------------------------------------------------------------


def _client_id() -> str:
    """The id this save is kept once under: the one the page made (``client_id``), else a new one."""
    try:
        return rules.check_client_id(request.form.get("client_id")) or str(uuid.uuid4())
    except InputError:
        return str(uuid.uuid4())


def _new_form(kind, inputs, meta, *, errors=None, status=200, client_id=None, duplicate=None):
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
            back_link=_back_link(kind, _displayable(inputs)),
            results=results,
            problem=problem,
            meta=_shown_text(meta),
            errors=errors or {},
            limits=rules.LIMITS,
            presses=store.presses(get_db()),
            client_id=client_id or _client_id(),
            duplicate=duplicate,
        ),
        status if problem is None else 400,
    )


def _back_link(kind, inputs) -> str:
    """The calculator page with these inputs (or, for one whose form a link cannot fill, its page)."""
    spec = BY_KIND.get(kind) if isinstance(kind, str) else None
    return calculator_link(kind, inputs) or (spec.path if spec and spec.path else "/")


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


@bp.app_template_global("snippet_title")
def _default_title(kind: str, inputs) -> str:
    if not isinstance(inputs, dict):
        return kind_name(str(kind))
    # The input a person would name the calculation by, where there is one.
    spec = BY_KIND.get(kind)
    key = spec.main_input if spec else None
    first = inputs.get(key) if key and isinstance(inputs.get(key), str) else None
    label = kind_name(str(kind))
    # The unit as the app shows it (in², not in2).
    return f"{label}: {shown(key, first)}"[: rules.LIMITS["title"]] if first is not None else label


@bp.post("/snippets/new")
def new():
    kind = request.form.get("kind", "")
    inputs = _inputs_from_form()
    meta = {
        "title": _default_title(kind, inputs),
        "saved_by": request.cookies.get(NAME_COOKIE, "")[: rules.LIMITS["saved_by"]],
    }
    # A save opened from the phone's outbox brings what was kept with it.
    meta |= {name: value for name, value in _form_meta().items() if value}
    return _new_form(kind, inputs, meta)


@bp.post("/snippets")
def create():
    kind = request.form.get("kind", "")
    inputs = _inputs_from_form()
    meta = _form_meta()
    client_id = _client_id()
    message, status = form_gate("write")
    if message:
        return _new_form(kind, inputs, meta, errors={"passcode": message}, status=status, client_id=client_id)
    if request.form.get("duplicate_ok") != "1" and not store.saved_under(get_db(), client_id):
        same = store.same_as(get_db(), kind, inputs, meta)
        if same is not None:
            return _new_form(kind, inputs, meta, duplicate=same, status=409, client_id=client_id)
    try:
        snippet, created = store.create_once(get_db(), client_id, kind, inputs, meta, CALCULATIONS)
    except store.IdTaken as exc:
        # This form was saved before with other words (back, changed, saved again): a new id saves a second one.
        message = (
            f"This form was saved already as “{exc.current['title']}” (under Saved). "
            "Press Save again to keep this as another snippet."
        )
        return _new_form(kind, inputs, meta, errors={"form": message}, status=409, client_id=str(uuid.uuid4()))
    except InputError as exc:
        return _new_form(kind, inputs, meta, errors={exc.field or "form": exc.message}, status=400, client_id=client_id)
    except (sqlite3.DatabaseError, OSError) as exc:
        if not _storage_trouble(exc):
            raise
        return _new_form(kind, inputs, meta, errors={"form": DISK_TROUBLE}, status=503, client_id=client_id)
    flash(
        "Saved. Anyone on the shop network can find it under Saved."
        if created
        else "This was saved already: here it is."
    )
    response = redirect(url_for("snippets.show", snippet_id=snippet["id"]), code=303)
    if snippet["saved_by"]:
        response.set_cookie(NAME_COOKIE, snippet["saved_by"], max_age=400 * 24 * 3600, httponly=True, samesite="Strict")
    return response


# --- one job ---------------------------------------------------------------------------------------


@bp.get("/jobs/<path:job_number>")
def job(job_number: str):
    """Every snippet of one job number in one printable page: each station's anilox, film, ink."""
    snippets = store.by_job(get_db(), job_number)
    page = render_template(
        "snippets/job.html",
        job_number=" ".join(job_number.split())[:100],
        snippets=[(s, _in_calculator_order(s["kind"], s["inputs"])) for s in snippets],
        presses=sorted({s["press"] for s in snippets if s["press"]}),
    )
    return page, 200 if snippets else 404


# --- one snippet ----------------------------------------------------------------------------------


def _load(snippet_id: int, *, deleted: bool = False) -> dict:
    try:
        return store.get(get_db(), snippet_id, deleted=deleted)
    except store.NotFound:
        abort(404)


def _not_here(snippet_id: int):
    """The app's own page for a link to a snippet that is not in the list: in the bin
    (until when), or gone for good — 404 either way."""
    try:
        snippet = store.get(get_db(), snippet_id, deleted=True)
    except store.NotFound:
        snippet = None
    page = render_template(
        "snippets/not_here.html",
        snippet=snippet,
        snippet_id=snippet_id,
        purge_at=store.purge_at(snippet) if snippet else None,
        days=store.BIN_DAYS,
    )
    return page, 404


def _in_calculator_order(kind: str, inputs):
    """A snippet's inputs in the order its calculator asks for them (required, then optional;
    a list's items likewise), anything else after them as saved."""
    spec = BY_KIND.get(kind)
    if spec is None or not isinstance(inputs, dict):
        return inputs
    return _ordered(inputs, [*spec.required, *spec.optional], spec.nested)


def _ordered(data: dict, names, nested) -> dict:
    ordered = {name: data[name] for name in names if name in data}
    ordered.update({name: value for name, value in data.items() if name not in ordered})
    for name, (required, optional) in nested.items():
        items = ordered.get(name)
        if isinstance(items, list):
            ordered[name] = [
                _ordered(item, [*required, *optional], {}) if isinstance(item, dict) else item for item in items
            ]
    return ordered


@bp.get("/s/<int:snippet_id>")
def short_link(snippet_id: int):
    try:
        store.get(get_db(), snippet_id)
    except store.NotFound:
        return _not_here(snippet_id)
    return redirect(url_for("snippets.show", snippet_id=snippet_id))


def _view(snippet, *, rerun=None, status=200, **extra):
    return (
        render_template(
            "snippets/view.html",
            snippet=snippet,
            inputs=_in_calculator_order(snippet["kind"], snippet["inputs"]),
            rerun=rerun,
            share_url=url_for("snippets.short_link", snippet_id=snippet["id"], _external=True),
            your_name=request.cookies.get(NAME_COOKIE, "")[: rules.LIMITS["saved_by"]],
            system=current_system(),
            calculator_link=calculator_link(snippet["kind"], snippet["inputs"]),
            **extra,
        ),
        status,
    )


@bp.get("/snippets/<int:snippet_id>")
def show(snippet_id: int):
    try:
        snippet = store.get(get_db(), snippet_id)
    except store.NotFound:
        return _not_here(snippet_id)
    rerun = work_out_again(snippet, CALCULATIONS) if request.args.get("rerun") else None
    return _view(snippet, rerun=rerun)


@bp.get("/snippets/<int:snippet_id>/qr.svg")
def qr(snippet_id: int):
    _load(snippet_id)
    url = url_for("snippets.short_link", snippet_id=snippet_id, _external=True)
    out = io.BytesIO()
    import segno  # only when a QR code is drawn: not at every start

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
        store.update(get_db(), snippet_id, request.form.get("version", ""), {}, results=rerun.results, by=_who())
    except (store.Conflict, InputError):
        flash("Changed by someone else meanwhile — here is the newer one. Nothing was overwritten.")
        return redirect(url_for("snippets.show", snippet_id=snippet_id, rerun=1), code=303)
    flash("Today's results are saved with this snippet.")
    return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)


# --- edit ----------------------------------------------------------------------------------------

# The fields a person edits, in the form's order; a merge goes over these.
EDITED = ("title", "job_number", "station", "press", "notes", "tags", "saved_by")
CHOICES = (merge.MINE, merge.THEIRS)


def _edit_form(snippet, meta, *, version, errors=None, merged=None, status=200):
    return (
        render_template(
            "snippets/edit.html",
            snippet=snippet,
            meta=_shown_text(meta),
            version=version,
            errors=errors or {},
            merged=merged,
            changed_by=_shown_text({"by": request.form.get("changed_by", _who())})["by"],
            limits=rules.LIMITS,
            presses=store.presses(get_db()),
        ),
        status,
    )


def _as_form(values: dict) -> dict:
    """Checked values as the form's fields show them (tags as one line)."""
    shown = dict(values)
    if isinstance(shown.get("tags"), list):
        shown["tags"] = ", ".join(shown["tags"])
    return shown


@bp.get("/snippets/<int:snippet_id>/edit")
def edit(snippet_id: int):
    try:
        snippet = store.get(get_db(), snippet_id)
    except store.NotFound:
        return _not_here(snippet_id)
    meta = _as_form({name: snippet[name] for name in rules.META_FIELDS})
    return _edit_form(snippet, meta, version=snippet["version"])


def _merge_against(snippet_id: int, base_version, mine: dict):
    """``mine`` (made from ``base_version``) merged with the newest version: ``(newest, merge)``."""
    newest = store.get(get_db(), snippet_id)
    try:
        base = store.version_of(get_db(), snippet_id, base_version)
    except (store.NotFound, InputError):
        # A version not kept (or none sent): every field either side holds differently is asked about.
        base = {name: None for name in EDITED}
    return newest, merge.three_way(base, newest, mine, EDITED)


def _conflict_page(snippet_id: int, base_version, mine: dict, form_meta: dict, errors=None):
    """The merge, shown field by field: what they changed, what I changed, and a choice
    where both changed one field differently."""
    newest, result = _merge_against(snippet_id, base_version, mine)
    shown = _as_form({f.name: f.merged for f in result.fields if f.name not in result.conflicts})
    for name in result.conflicts:
        shown[name] = form_meta.get(name, "")  # my words, kept for "mine"
    try:
        base = store.version_of(get_db(), snippet_id, base_version)
    except (store.NotFound, InputError):
        base = None
    return _edit_form(
        newest,
        shown,
        version=newest["version"],
        errors=errors or {},
        merged={"merge": result, "base": base, "base_version": base_version, "newest": newest},
        status=409,
    )


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
        mine = rules.check_meta(meta, partial=True)
    except InputError as exc:
        return _edit_form(snippet, meta, version=version, errors={exc.field or "form": exc.message}, status=400)
    # After a conflict: each field both changed comes with a choice, "mine" or "theirs".
    pending = [name for name in request.form.getlist("conflict") if name in EDITED]
    choices = {name: request.form.get(f"choose-{name}") for name in pending}
    unchosen = [name for name, choice in choices.items() if choice not in CHOICES]
    if unchosen:
        errors = {f"choose-{name}": "Choose which one to keep." for name in unchosen}
        errors["form"] = "Choose, for each field you both changed, which one to keep."
        return _conflict_page(snippet_id, request.form.get("base_version", ""), mine, meta, errors)
    if any(choice == merge.THEIRS for choice in choices.values()):
        try:
            at_version = store.version_of(get_db(), snippet_id, version)
        except (store.NotFound, InputError):
            at_version = snippet
        for name, choice in choices.items():
            if choice == merge.THEIRS:
                mine[name] = at_version[name]
    by = _who()
    merged_note = None
    try:
        for _attempt in range(3):
            try:
                saved = store.update(get_db(), snippet_id, version, mine, by=by)
                break
            except store.Conflict as exc:
                newest, result = _merge_against(snippet_id, version, mine)
                if result.conflicts:
                    return _conflict_page(snippet_id, version, mine, meta)
                # Only one side touched each field: both sets of changes are kept, nothing asked.
                theirs = [f.name for f in result.changed_by_them if f.outcome == merge.THEIRS]
                if theirs:
                    names = ", ".join(field_label(name) for name in theirs)
                    who = newest["changed_by"] or "someone else"
                    merged_note = f"{who} changed {names} meanwhile; their changes are kept beside yours."
                mine, version = result.result(), exc.current["version"]
        else:  # pragma: no cover - three changes by others within one save
            return _conflict_page(snippet_id, version, mine, meta)
    except InputError as exc:
        return _edit_form(snippet, meta, version=version, errors={exc.field or "form": exc.message}, status=400)
    except (sqlite3.DatabaseError, OSError) as exc:
        if not _storage_trouble(exc):
            raise
        return _edit_form(snippet, meta, version=version, errors={"form": DISK_TROUBLE}, status=503)
    flash(f"Changes saved (version {saved['version']}).")
    if merged_note:
        flash(merged_note)
    return _remember_name(_see("snippets.show", snippet_id=snippet_id), by)


def field_label(name: str) -> str:
    return FIELD_LABELS.get(name, name)


FIELD_LABELS = {
    "title": "the title",
    "job_number": "the job number",
    "press": "the press",
    "station": "the station",
    "notes": "the notes",
    "tags": "the tags",
    "saved_by": "saved by",
    "inputs": "the inputs",
    "results": "the results",
}


# --- history ---------------------------------------------------------------------------------------


def _changes(newer: dict, older: dict | None) -> list[str]:
    """The fields that differ between two kept versions, in the form's order."""
    if older is None:
        return []
    return [name for name in (*EDITED, "inputs", "results") if newer.get(name) != older.get(name)]


@bp.get("/snippets/<int:snippet_id>/history")
def history(snippet_id: int):
    try:
        versions = store.history(get_db(), snippet_id)
    except store.NotFound:
        return _not_here(snippet_id)
    snippet = store._snippet_any(get_db(), snippet_id)
    changes = [_changes(v, versions[i + 1] if i + 1 < len(versions) else None) for i, v in enumerate(versions)]
    return render_template(
        "snippets/history.html",
        snippet=snippet,
        versions=list(zip(versions, changes, strict=True)),
        labels=FIELD_LABELS,
    )


@bp.get("/snippets/<int:snippet_id>/versions/<int:number>")
def version(snippet_id: int, number: int):
    try:
        kept = store.version_of(get_db(), snippet_id, number)
        snippet = store._snippet_any(get_db(), snippet_id)
    except (store.NotFound, InputError):
        abort(404)
    return render_template(
        "snippets/version.html",
        snippet=snippet,
        kept=kept,
        inputs=_in_calculator_order(snippet["kind"], kept["inputs"]),
        errors={},
    )


@bp.post("/snippets/<int:snippet_id>/versions/<int:number>/restore")
def restore_version(snippet_id: int, number: int):
    try:
        kept = store.version_of(get_db(), snippet_id, number)
        snippet = store._snippet_any(get_db(), snippet_id)
    except (store.NotFound, InputError):
        abort(404)
    message, status = form_gate("supervise")
    if message:
        page = render_template(
            "snippets/version.html",
            snippet=snippet,
            kept=kept,
            inputs=_in_calculator_order(snippet["kind"], kept["inputs"]),
            errors={"passcode": message},
        )
        return page, status
    if snippet["deleted_at"]:
        flash("This snippet is in the bin: take it back out first, then bring back an earlier version.")
        return _see("snippets.history", snippet_id=snippet_id)
    try:
        store.restore_version(get_db(), snippet_id, number, request.form.get("version", ""), by=_who())
    except (store.Conflict, InputError):
        flash("Changed by someone else meanwhile — here is the newer history. Nothing was brought back.")
        return _see("snippets.history", snippet_id=snippet_id)
    flash(f"Version {number} is back, as the newest version; the one it replaced is kept in the history.")
    return _see("snippets.show", snippet_id=snippet_id)


# --- delete, bin, restore -----------------------------------------------------------------------------


@bp.post("/snippets/<int:snippet_id>/delete")
def delete(snippet_id: int):
    snippet = _load(snippet_id)
    message, status = form_gate("supervise")
    if message:
        return _view(snippet, status=status, delete_error=message)
    by = _who()
    try:
        store.delete(get_db(), snippet_id, request.form.get("version") or None, by=by)
    except store.Conflict:
        flash("Changed by someone else meanwhile — here is the newer one. Nothing was deleted.")
        return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)
    except InputError as exc:
        flash(exc.message)
        return redirect(url_for("snippets.show", snippet_id=snippet_id), code=303)
    flash(f"“{snippet['title']}” is in the bin for {store.BIN_DAYS} days.", "deleted")
    flash(str(snippet_id), "undo")
    return _remember_name(_see("snippets.index"), by)


@bp.route("/snippets/bin", methods=["GET", "POST"])
def bin_page():
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/bin.html", snippets=None, gate_error=message), status
    if request.method == "POST":
        return redirect(url_for("snippets.bin_page"), code=303)
    snippets = store.in_bin(get_db())
    return render_template("snippets/bin.html", snippets=snippets, purge_at=store.purge_at, days=store.BIN_DAYS)


@bp.post("/snippets/<int:snippet_id>/restore")
def restore(snippet_id: int):
    message, status = form_gate("supervise")
    if message:
        return render_template("snippets/bin.html", snippets=None, gate_error=message), status
    try:
        snippet = store.restore(get_db(), snippet_id, by=_who())
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
        counts = exchange.import_any(get_db(), upload.stream, upload.filename or "")
    except InputError as exc:
        where = f"{exc.field}: " if exc.field else ""
        error = f"Nothing was imported. {where}{exc.message}."
        return render_template("snippets/import.html", errors={"file": error}), 400
    except ValueError as exc:
        error = (
            f"Nothing was imported. This file is not JSON ({exc}); choose a file that inkfilm exported (JSON or CSV)."
        )
        return render_template("snippets/import.html", errors={"file": error}), 400
    flash(f"Imported {counts['added']} snippets; {counts['already_here']} were here already.")
    return redirect(url_for("snippets.index"), code=303)
