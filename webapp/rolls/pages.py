"""The roll register's pages (a supervisor on a tablet): overview, a roll with its chart and logs,
forms to add a roll, a measurement and a cleaning, to correct a logged one, and "which of our rolls fit this job?".

Views read the form into the fields the store checks, call the store or
``webapp.rolls.register``, render. Every write form carries the CSRF token
and passes ``form_gate`` (measurements and cleanings: ``write``; rolls and
correcting or removing a logged entry: ``supervise``); a refused or wrong form comes back with the typed words kept
and the message beside the field.
"""

from __future__ import annotations

from datetime import date

from flask import Blueprint, Response, abort, flash, redirect, render_template, request, url_for

from calc import InputError
from calc.fit import WORK_KINDS
from calc.practice import WORK_NAMES
from webapp.auth.csrf import protect
from webapp.auth.gate import form_gate
from webapp.common.db import get_db
from webapp.common.forms import choose, parse_number
from webapp.common.htmx import respond
from webapp.rolls import chart, exchange, register, rules, shown, store

bp = Blueprint("rolls", __name__)
protect(bp)

VOLUME_UNITS = ("BCM/in2", "cm3/m2")
SCREEN_UNITS = ("lpi", "lpcm")
ROLL_DEFAULTS = {
    "roll_id": "",
    "screen": "",
    "screen_unit": "lpi",
    "angle": "60",
    "nominal_volume": "",
    "volume_unit": "BCM/in2",
    "certificate_volume": "",
    "engraved_on": "",
    "press": "",
    "location": "",
    "status": "spare",
    "notes": "",
}
# The fields of a log entry's form, and the prefix of their ids and error keys.
ENTRY_FORMS = {
    "measurement": {"measured_on": "", "volume": "", "volume_unit": "BCM/in2", "condition": "", "method": "", "by": ""},
    "cleaning": {"cleaned_on": "", "method": "", "by": "", "notes": ""},
}
PREFIX = {"measurement": "m-", "cleaning": "c-"}


def _load(roll: int) -> dict:
    try:
        return store.get_roll(get_db(), roll)
    except store.NotFound:
        abort(404)


def _form(defaults: dict) -> dict:
    values = dict(defaults)
    values.update({key: request.form.get(key, "") for key in defaults if key in request.form})
    return values


def _quantity(form: dict, name: str, unit_field: str, units, *, required: bool = True):
    number = parse_number(form[name], name, required=required)
    if number is None:
        return None
    return f"{number!r} {choose(form[unit_field], units, unit_field)}"


# --- overview -------------------------------------------------------------------------------


@bp.get("/rolls")
def index():
    conn = get_db()
    filters = {
        "press": request.args.get("press", "")[:60],
        "status": request.args.get("status", ""),
        "screen_min": request.args.get("screen_min", "")[:20],
        "screen_max": request.args.get("screen_max", "")[:20],
    }
    errors = {}
    try:
        status = rules.parse_status(filters["status"]) if filters["status"] else ""
        low = register.check_screen_filter(filters["screen_min"], "screen_min")
        high = register.check_screen_filter(filters["screen_max"], "screen_max")
    except InputError as exc:
        errors[exc.field] = exc.message
        status, low, high = "", None, None
    rows = register.overview(
        store.all_rolls(conn),
        store.logs(conn),
        press=filters["press"],
        status=status,
        screen_low=low,
        screen_high=high,
        unit=shown.volume_unit(),
    )
    counts = {code: sum(1 for _, wear in rows if code in wear.codes) for code in register.FLAG_NAMES}
    return respond(
        "rolls/index.html",
        "rolls/_list.html",
        rows=rows,
        filters=filters,
        errors=errors,
        counts=counts,
        presses=store.presses(conn),
        statuses=rules.STATUS_NAMES,
    )


# --- one roll --------------------------------------------------------------------------------


def _roll_page(roll: dict, *, measurement=None, cleaning=None, errors=None, status=200):
    conn = get_db()
    log = store.logs(conn, [roll["id"]])[roll["id"]]
    today = date.today()
    unit = shown.volume_unit()
    wear = register.picture(roll, log, today, unit)
    drawing = chart.wear_chart(wear, [c["cleaned_on"] for c in log["cleaning"]], today, unit)
    return (
        render_template(
            "rolls/roll.html",
            roll=roll,
            log=log,
            wear=wear,
            chart=drawing,
            measurement=measurement
            or {
                "measured_on": today.isoformat(),
                "volume": "",
                "volume_unit": unit,
                "condition": "as_found",
                "method": "",
                "by": "",
            },
            cleaning=cleaning or {"cleaned_on": today.isoformat(), "method": "", "by": "", "notes": ""},
            errors=errors or {},
            methods=rules.CLEANING_METHODS,
            today=today.isoformat(),
        ),
        status,
    )


@bp.get("/rolls/<int:roll>")
def show(roll: int):
    return _roll_page(_load(roll))


def _entry_body(kind: str, form: dict) -> dict:
    """A log entry's form as the fields the store checks (a measurement's volume with its unit)."""
    if kind == "cleaning":
        return dict(form)
    return {
        "measured_on": form["measured_on"],
        "volume": _quantity(form, "volume", "volume_unit", VOLUME_UNITS),
        "condition": form["condition"],
        "method": form["method"],
        "by": form["by"],
    }


@bp.post("/rolls/<int:roll>/measurements")
def add_measurement(roll: int):
    current = _load(roll)
    form = _form(ENTRY_FORMS["measurement"])
    message, status = form_gate("write")
    if message:
        return _roll_page(current, measurement=form, errors={"m-passcode": message}, status=status)
    try:
        store.add_entry(get_db(), "measurement", roll, _entry_body("measurement", form))
    except InputError as exc:
        return _roll_page(current, measurement=form, errors={f"m-{exc.field}": exc.message}, status=400)
    flash("Measurement logged.")
    return redirect(url_for("rolls.show", roll=roll) + "#wear", code=303)


@bp.post("/rolls/<int:roll>/cleanings")
def add_cleaning(roll: int):
    current = _load(roll)
    form = _form(ENTRY_FORMS["cleaning"])
    message, status = form_gate("write")
    if message:
        return _roll_page(current, cleaning=form, errors={"c-passcode": message}, status=status)
    try:
        store.add_entry(get_db(), "cleaning", roll, _entry_body("cleaning", form))
    except InputError as exc:
        return _roll_page(current, cleaning=form, errors={f"c-{exc.field}": exc.message}, status=400)
    flash("Cleaning logged. Measure the roll again to see how far it recovered.")
    return redirect(url_for("rolls.show", roll=roll) + "#wear", code=303)


def _entry_fields(kind: str, entry: dict) -> dict:
    """A stored log entry as its correct form shows it (volume in the preferred unit), with its version."""
    if kind == "measurement":
        fields = {
            "measured_on": entry["measured_on"],
            "volume": shown.form_volume(entry["volume_bcm"]),
            "volume_unit": shown.volume_unit(),
            "condition": entry["condition"],
            "method": entry["method"],
            "by": entry["measured_by"],
        }
    else:
        fields = {"cleaned_on": entry["cleaned_on"], "method": entry["method"], "by": entry["cleaned_by"]}
        fields["notes"] = entry["notes"]
    return {**fields, "version": str(entry["version"]), "reason": ""}


def _entry_form(kind, roll, entry, form, *, errors=None, newer=None, status=200):
    return (
        render_template(
            "rolls/correct.html",
            kind=kind,
            p=PREFIX[kind],
            roll=roll,
            entry=entry,
            form=form,
            errors=errors or {},
            newer=newer,
            methods=rules.CLEANING_METHODS,
            today=date.today().isoformat(),
        ),
        status,
    )


@bp.route("/rolls/<int:roll>/<any(measurement, cleaning):kind>/<int:entry>/correct", methods=["GET", "POST"])
def correct_entry(roll: int, kind: str, entry: int):
    current = _load(roll)
    try:
        stored = store.get_entry(get_db(), kind, roll, entry)
    except store.NotFound:
        abort(404)
    if request.method == "GET":
        return _entry_form(kind, current, stored, _entry_fields(kind, stored))
    p = PREFIX[kind]
    form = _form({**ENTRY_FORMS[kind], "version": "", "reason": ""})
    message, status = form_gate("supervise")
    if message:
        return _entry_form(kind, current, stored, form, errors={f"{p}passcode": message}, status=status)
    try:
        store.correct_entry(
            get_db(), kind, roll, entry, form["version"], _entry_body(kind, form), reason=form["reason"]
        )
    except store.NotFound:
        flash(f"That {kind} was removed meanwhile; nothing was corrected.")
        return redirect(url_for("rolls.show", roll=roll) + "#logs", code=303)
    except store.Conflict as exc:
        form["version"] = str(exc.current["version"])
        errors = {"form": exc.message}
        return _entry_form(kind, current, exc.current, form, errors=errors, newer=exc.current, status=409)
    except InputError as exc:
        errors = {f"{p}{exc.field}" if exc.field else "form": exc.message}
        return _entry_form(kind, current, stored, form, errors=errors, status=400)
    flash(f"The {kind} was corrected; its old values are kept in the roll's history.")
    return redirect(url_for("rolls.show", roll=roll) + "#wear", code=303)


@bp.post("/rolls/<int:roll>/<any(measurement, cleaning):kind>/<int:entry>/remove")
def remove_entry(roll: int, kind: str, entry: int):
    current = _load(roll)
    message, status = form_gate("supervise")
    if message:
        return _roll_page(current, errors={"log": message}, status=status)
    try:
        store.remove_entry(
            get_db(), kind, roll, entry, request.form.get("version"), reason=request.form.get("reason", "")
        )
    except store.NotFound:
        flash("That entry was removed already.")
    except store.Conflict:
        flash("That entry was changed by someone else meanwhile; look at it again. Nothing was removed.")
    except InputError as exc:
        return _roll_page(current, errors={"log": exc.message}, status=400)
    else:
        flash(f"The {kind} was removed from the log; its values are kept in the roll's history.")
    return redirect(url_for("rolls.show", roll=roll) + "#logs", code=303)


# --- add and edit a roll ------------------------------------------------------------------------


def _roll_body(form: dict) -> dict:
    return {
        "roll_id": form["roll_id"],
        "screen": _quantity(form, "screen", "screen_unit", SCREEN_UNITS),
        "angle": form["angle"],
        "nominal_volume": _quantity(form, "nominal_volume", "volume_unit", VOLUME_UNITS),
        "certificate_volume": _quantity(form, "certificate_volume", "volume_unit", VOLUME_UNITS, required=False),
        "engraved_on": form["engraved_on"],
        "press": form["press"],
        "location": form["location"],
        "status": form["status"],
        "notes": form["notes"],
    }


def _roll_form(form, *, roll=None, errors=None, newer=None, status=200):
    return (
        render_template(
            "rolls/edit.html",
            form=form,
            roll=roll,
            errors=errors or {},
            newer=newer,
            statuses=rules.STATUS_NAMES,
            presses=store.presses(get_db()),
            today=date.today().isoformat(),
        ),
        status,
    )


@bp.route("/rolls/new", methods=["GET", "POST"])
def new():
    if request.method == "GET":
        return _roll_form(dict(ROLL_DEFAULTS, engraved_on=date.today().isoformat(), volume_unit=shown.volume_unit()))
    form = _form(ROLL_DEFAULTS)
    message, status = form_gate("supervise")
    if message:
        return _roll_form(form, errors={"passcode": message}, status=status)
    try:
        roll = store.create_roll(get_db(), _roll_body(form))
    except InputError as exc:
        return _roll_form(form, errors={exc.field or "form": exc.message}, status=400)
    flash(f"{roll['roll_id']} is in the register. Log its first measurement below.")
    return redirect(url_for("rolls.show", roll=roll["id"]), code=303)


def _fields_of(roll: dict) -> dict:
    return {
        "roll_id": roll["roll_id"],
        "screen": f"{roll['screen_lpi']:g}",
        "screen_unit": "lpi",
        "angle": str(roll["angle"]),
        "nominal_volume": shown.form_volume(roll["nominal_bcm"]),
        "volume_unit": shown.volume_unit(),
        "certificate_volume": shown.form_volume(roll["certificate_bcm"]),
        "engraved_on": roll["engraved_on"],
        "press": roll["press"],
        "location": roll["location"],
        "status": roll["status"],
        "notes": roll["notes"],
        "version": str(roll["version"]),
    }


@bp.route("/rolls/<int:roll>/edit", methods=["GET", "POST"])
def edit(roll: int):
    current = _load(roll)
    if request.method == "GET":
        return _roll_form(_fields_of(current), roll=current)
    form = _form({**ROLL_DEFAULTS, "version": ""})
    message, status = form_gate("supervise")
    if message:
        return _roll_form(form, roll=current, errors={"passcode": message}, status=status)
    try:
        store.update_roll(get_db(), roll, form["version"], _roll_body(form))
    except store.Conflict as exc:
        form["version"] = str(exc.current["version"])
        return _roll_form(form, roll=exc.current, errors={"form": exc.message}, newer=exc.current, status=409)
    except InputError as exc:
        return _roll_form(form, roll=current, errors={exc.field or "form": exc.message}, status=400)
    flash("Changes saved.")
    return redirect(url_for("rolls.show", roll=roll), code=303)


# --- which rolls fit this job? --------------------------------------------------------------------


@bp.get("/rolls/fit")
def fit():
    conn = get_db()
    form = {"plate_screen": request.args.get("plate_screen", "")[:20], "work": request.args.get("work", "")[:20]}
    answer, errors = None, {}
    if form["work"]:
        try:
            plate = None
            if form["plate_screen"].strip():
                plate = f"{parse_number(form['plate_screen'], 'plate_screen')!r} lpi"
            answer = register.fitting(
                store.all_rolls(conn), store.logs(conn), plate, form["work"], unit=shown.volume_unit()
            )
        except InputError as exc:
            errors[exc.field or "work"] = exc.message
    return respond(
        "rolls/fit.html",
        "rolls/_fit_answer.html",
        form=form,
        answer=answer,
        errors=errors,
        kinds=WORK_KINDS,
        work_names=WORK_NAMES,
    )


# --- CSV -----------------------------------------------------------------------------------------


@bp.get("/rolls/export/<any(rolls, measurements, cleanings):table>.csv")
def export_csv(table: str):
    return Response(
        exchange.export_csv(get_db(), table),
        mimetype="text/csv",
        headers={"Content-Disposition": f'attachment; filename="inkfilm-{table}.csv"'},
    )


@bp.route("/rolls/import", methods=["GET", "POST"])
def import_page():
    if request.method == "GET":
        return render_template("rolls/import.html", errors={}, problems=None, table="rolls")
    table = request.form.get("table", "rolls")
    if table not in exchange.COLUMNS:
        table = "rolls"
    message, status = form_gate("supervise")
    if message:
        return render_template("rolls/import.html", errors={"passcode": message}, problems=None, table=table), status
    upload = request.files.get("file")
    if upload is None or not upload.filename:
        return render_template(
            "rolls/import.html", errors={"file": "Choose a CSV file first."}, problems=None, table=table
        ), 400
    try:
        counts = exchange.import_csv(get_db(), table, upload.read().decode("utf-8-sig"))
    except UnicodeDecodeError:
        error = "This file is not UTF-8 text; save it from the spreadsheet as “CSV UTF-8”."
        return render_template("rolls/import.html", errors={"file": error}, problems=None, table=table), 400
    except exchange.ImportRefused as exc:
        error = f"Nothing was imported: {len(exc.errors)} problem(s) below. Fix them in the file and import it again."
        return render_template("rolls/import.html", errors={"file": error}, problems=exc.errors, table=table), 400
    flash(f"Imported {counts['added']} {table}; {counts['already_here']} were here already.")
    return redirect(url_for("rolls.index"), code=303)
