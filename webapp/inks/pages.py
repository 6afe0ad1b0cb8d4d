"""The inks pages (phone first): the shop's ink list, the ink sets, and one set with its readings and curve.

Views read the form into the fields the store checks, call the store or
``webapp.inks.curves``, render. Every write form carries the CSRF token and
passes ``form_gate`` (adding and changing: ``write``; deleting and import:
``supervise``); a refused or wrong form comes back with the typed words kept
and the message beside the field. The set page's questions ("volume for a
target", "density from a volume") are GET forms: reading needs no passcode.
"""

from __future__ import annotations

from datetime import date

from flask import Blueprint, Response, abort, flash, redirect, render_template, request, url_for

from calc import InputError
from calc.density import density_from_volume, volume_for_density
from calc.display import format_number, format_percent
from calc.units import Q_
from webapp.auth.csrf import protect
from webapp.auth.gate import form_gate
from webapp.calculators import density as strength
from webapp.common.db import get_db
from webapp.common.forms import choose, parse_number, parse_percent, quantity_text
from webapp.common.preference import current_system
from webapp.inks import curves, exchange, rules, store

bp = Blueprint("inks", __name__)
protect(bp)

FILM_UNITS = ("um", "mil")
VOLUME_UNITS = ("BCM/in2", "cm3/m2")
DENSITY_UNITS = ("g/cm3", "lb/gal")
INK_DEFAULTS = {
    "name": "",
    "type": "water_based",
    "density": "",
    "density_unit": "g/cm3",
    "solids_by_volume": "",
    "solids_by_weight": "",
    "price": "",
    "price_per": "kg",
    "notes": "",
}
SET_DEFAULTS = {"name": "", "ink": "", "substrate": "", "notes": ""}
READING_DEFAULTS = {
    "read_on": "",
    "density": "",
    "basis": "volume",
    "value": "",
    "volume_unit": "BCM/in2",
    "film_unit": "um",
    "transfer": strength.TYPICAL_TRANSFER,
    "notes": "",
}
DEFAULT_TARGET = "1.40"


def _form(defaults: dict) -> dict:
    values = dict(defaults)
    values.update({key: request.form.get(key, "") for key in defaults if key in request.form})
    return values


def _percent_text(share) -> str:
    return "" if share is None else f"{share * 100:.4g}"


# --- inks ----------------------------------------------------------------------------------------


def _load_ink(ink: int) -> dict:
    try:
        return store.get_ink(get_db(), ink)
    except store.NotFound:
        abort(404)


@bp.get("/inks")
def index():
    conn = get_db()
    inks = store.all_inks(conn)
    used = {row[0]: row[1] for row in conn.execute("SELECT ink, count(*) FROM ink_set GROUP BY ink")}
    return render_template("inks/index.html", inks=inks, used=used)


def _ink_body(form: dict) -> dict:
    density = parse_number(form["density"], "density")
    return {
        "name": form["name"],
        "type": form["type"],
        "density": quantity_text(density, choose(form["density_unit"], DENSITY_UNITS, "density_unit")),
        "solids_by_volume": parse_percent(form["solids_by_volume"], "solids_by_volume", required=False),
        "solids_by_weight": parse_percent(form["solids_by_weight"], "solids_by_weight", required=False),
        "price": parse_number(form["price"], "price", required=False),
        "price_per": form["price_per"],
        "notes": form["notes"],
    }


def _ink_form(form, *, ink=None, errors=None, newer=None, status=200):
    return (
        render_template(
            "inks/ink_edit.html",
            form=form,
            ink=ink,
            errors=errors or {},
            newer=newer,
            types=rules.TYPE_NAMES,
            cautions=rules.CAUTIONS,
        ),
        status,
    )


@bp.route("/inks/new", methods=["GET", "POST"])
def new_ink():
    if request.method == "GET":
        return _ink_form(dict(INK_DEFAULTS))
    form = _form(INK_DEFAULTS)
    message, status = form_gate("write")
    if message:
        return _ink_form(form, errors={"passcode": message}, status=status)
    try:
        ink = store.create_ink(get_db(), _ink_body(form))
    except InputError as exc:
        return _ink_form(form, errors={exc.field or "form": exc.message}, status=400)
    flash(f"{ink['name']} is on the ink list.")
    return redirect(url_for("inks.index", _anchor=f"ink-{ink['id']}"), code=303)


def _ink_values(ink: dict) -> dict:
    return {
        "name": ink["name"],
        "type": ink["ink_type"],
        "density": f"{ink['density_g_cm3']:.6g}",
        "density_unit": "g/cm3",
        "solids_by_volume": _percent_text(ink["solids_by_volume"]),
        "solids_by_weight": _percent_text(ink["solids_by_weight"]),
        "price": "" if ink["price"] is None else f"{ink['price']:.6g}",
        "price_per": ink["price_per"],
        "notes": ink["notes"],
        "version": str(ink["version"]),
    }


@bp.route("/inks/<int:ink>/edit", methods=["GET", "POST"])
def edit_ink(ink: int):
    current = _load_ink(ink)
    if request.method == "GET":
        return _ink_form(_ink_values(current), ink=current)
    form = _form({**INK_DEFAULTS, "version": ""})
    message, status = form_gate("write")
    if message:
        return _ink_form(form, ink=current, errors={"passcode": message}, status=status)
    try:
        store.update_ink(get_db(), ink, form["version"], _ink_body(form))
    except store.Conflict as exc:
        form["version"] = str(exc.current["version"])
        return _ink_form(form, ink=exc.current, errors={"form": exc.message}, newer=exc.current, status=409)
    except InputError as exc:
        return _ink_form(form, ink=current, errors={exc.field or "form": exc.message}, status=400)
    flash("Changes saved.")
    return redirect(url_for("inks.index", _anchor=f"ink-{ink}"), code=303)


@bp.post("/inks/<int:ink>/delete")
def delete_ink(ink: int):
    current = _load_ink(ink)
    message, status = form_gate("supervise")
    if message:
        return _ink_form(_ink_values(current), ink=current, errors={"delete": message}, status=status)
    try:
        store.delete_ink(get_db(), ink, request.form.get("version"))
    except store.InUse as exc:
        return _ink_form(
            _ink_values(current),
            ink=current,
            errors={"delete": exc.message[0].upper() + exc.message[1:] + "."},
            status=409,
        )
    except store.Conflict:
        flash("That ink was changed by someone else meanwhile; look at it again. Nothing was deleted.")
        return redirect(url_for("inks.edit_ink", ink=ink), code=303)
    except InputError as exc:
        return _ink_form(_ink_values(current), ink=current, errors={"delete": exc.message}, status=400)
    flash(f"{current['name']} was deleted from the ink list.")
    return redirect(url_for("inks.index"), code=303)


# --- ink sets ------------------------------------------------------------------------------------


def _load_set(ink_set: int) -> dict:
    try:
        return store.get_set(get_db(), ink_set)
    except store.NotFound:
        abort(404)


@bp.get("/ink-sets")
def sets():
    conn = get_db()
    inks = {ink["id"]: ink for ink in store.all_inks(conn)}
    readings = store.readings(conn)
    rows = []
    for item in store.all_sets(conn):
        curve, reason = curves.fit_of(readings.get(item["id"], []))
        rows.append(
            {
                "set": item,
                "ink": inks[item["ink"]],
                "count": len(readings.get(item["id"], [])),
                "curve": curve,
                "reason": reason,
            }
        )
    return render_template("inks/sets.html", rows=rows, has_inks=bool(inks))


def _set_form(form, *, ink_set=None, errors=None, newer=None, status=200):
    return (
        render_template(
            "inks/set_edit.html",
            form=form,
            ink_set=ink_set,
            errors=errors or {},
            newer=newer,
            inks=store.all_inks(get_db()),
            types=rules.TYPE_NAMES,
        ),
        status,
    )


@bp.route("/ink-sets/new", methods=["GET", "POST"])
def new_set():
    if request.method == "GET":
        return _set_form({**SET_DEFAULTS, "ink": request.args.get("ink", "")[:12]})
    form = _form(SET_DEFAULTS)
    message, status = form_gate("write")
    if message:
        return _set_form(form, errors={"passcode": message}, status=status)
    try:
        ink_set = store.create_set(get_db(), form)
    except InputError as exc:
        return _set_form(form, errors={exc.field or "form": exc.message}, status=400)
    flash(f"{ink_set['name']} is set up. Add its readings below: three or more, from light to heavy films.")
    return redirect(url_for("inks.show_set", ink_set=ink_set["id"]) + "#add-reading", code=303)


@bp.route("/ink-sets/<int:ink_set>/edit", methods=["GET", "POST"])
def edit_set(ink_set: int):
    current = _load_set(ink_set)
    if request.method == "GET":
        return _set_form(
            {**{k: str(current[k]) for k in SET_DEFAULTS}, "version": str(current["version"])}, ink_set=current
        )
    form = _form({**SET_DEFAULTS, "version": ""})
    message, status = form_gate("write")
    if message:
        return _set_form(form, ink_set=current, errors={"passcode": message}, status=status)
    try:
        store.update_set(get_db(), ink_set, form["version"], {k: form[k] for k in SET_DEFAULTS})
    except store.Conflict as exc:
        form["version"] = str(exc.current["version"])
        return _set_form(form, ink_set=exc.current, errors={"form": exc.message}, newer=exc.current, status=409)
    except InputError as exc:
        return _set_form(form, ink_set=current, errors={exc.field or "form": exc.message}, status=400)
    flash("Changes saved.")
    return redirect(url_for("inks.show_set", ink_set=ink_set), code=303)


@bp.post("/ink-sets/<int:ink_set>/delete")
def delete_set(ink_set: int):
    current = _load_set(ink_set)
    message, status = form_gate("supervise")
    if message:
        form = {**{k: str(current[k]) for k in SET_DEFAULTS}, "version": str(current["version"])}
        return _set_form(form, ink_set=current, errors={"delete": message}, status=status)
    try:
        store.delete_set(get_db(), ink_set, request.form.get("version"))
    except store.Conflict:
        flash("That ink set was changed by someone else meanwhile; look at it again. Nothing was deleted.")
        return redirect(url_for("inks.edit_set", ink_set=ink_set), code=303)
    except InputError as exc:
        form = {**{k: str(current[k]) for k in SET_DEFAULTS}, "version": str(current["version"])}
        return _set_form(form, ink_set=current, errors={"delete": exc.message}, status=400)
    flash(f"{current['name']} and its readings were deleted.")
    return redirect(url_for("inks.sets"), code=303)


# --- one set: readings, curve, answers --------------------------------------------------------------


def _questions() -> dict:
    """The set page's GET questions as typed (kept short)."""
    args = request.args
    return {
        "target_density": args.get("target_density", DEFAULT_TARGET)[:40],
        "transfer": args.get("transfer", strength.TYPICAL_TRANSFER)[:40],
        "volume": args.get("volume", "")[:40],
        "volume_unit": args.get("volume_unit", "BCM/in2")[:20],
    }


def _answers(curve, asked: dict, errors: dict) -> dict:
    """The curve's answers to the page's questions; each bad value's message goes beside its field."""
    system = current_system()
    found: dict = {"strength": None, "from": None, "rolls": None}
    try:
        target = parse_number(asked["target_density"], "target_density")
        transfer = parse_percent(asked["transfer"], "transfer")
        if transfer == 0:
            raise InputError("transfer", "must be more than 0 %: with no transfer nothing prints")
        answer = volume_for_density(curve, target, transfer)
    except InputError as exc:
        errors[exc.field or "target_density"] = exc.message
        return found
    found["strength"] = strength.present(answer, system)
    if asked["volume"].strip():
        try:
            volume = parse_number(asked["volume"], "volume")
            unit = choose(asked["volume_unit"], VOLUME_UNITS, "volume_unit")
            expected, _ = density_from_volume(curve, quantity_text(volume, unit), transfer)
            found["from"] = {
                "volume": format_number(volume),
                "unit": "BCM/in²" if unit == "BCM/in2" else "cm³/m²",
                "density": format_number(expected.density),
                "band": None if expected.low is None else (format_number(expected.low), format_number(expected.high)),
            }
        except InputError as exc:
            errors["volume" if exc.field in (None, "anilox_volume") else exc.field] = exc.message
    from webapp.rolls import store as roll_store  # read only

    conn = get_db()
    on_rolls = curves.on_rolls(curve, target, transfer, roll_store.all_rolls(conn), roll_store.logs(conn))
    needed = on_rolls["needed"]
    found["rolls"] = {
        "target": format_number(target),
        "transfer": format_percent(transfer),
        "needed": None if needed is None else format_number(needed.anilox_volume.to("BCM/in2").magnitude, 2),
        "answers": [
            {
                "id": item["roll"]["id"],
                "roll_id": item["roll"]["roll_id"],
                "volume": format_number(item["volume_bcm"]),
                "judged_on": item["judged_on"],
                "percent": f"{item['percent_of_nominal']:.0f}",
                "density": format_number(item["expected"].density),
                "band": None
                if item["expected"].low is None
                else (format_number(item["expected"].low), format_number(item["expected"].high)),
                "reaches": item["reaches"],
            }
            for item in on_rolls["rolls"]
        ],
    }
    return found


def _set_page(ink_set: dict, *, reading=None, errors=None, status=200):
    conn = get_db()
    ink = store.get_ink(conn, ink_set["ink"])
    rows = store.readings(conn, [ink_set["id"]])[ink_set["id"]]
    curve, reason = curves.fit_of(rows)
    errors = dict(errors or {})
    asked = _questions()
    answers = _answers(curve, asked, errors) if curve is not None else {"strength": None, "from": None, "rolls": None}
    today = date.today().isoformat()
    return (
        render_template(
            "inks/set.html",
            ink_set=ink_set,
            ink=ink,
            caution=curves.caution(ink["ink_type"]),
            types=rules.TYPE_NAMES,
            rows=[
                {
                    **row,
                    "anilox_bcm": None
                    if row["anilox_cm3_m2"] is None
                    else Q_(row["anilox_cm3_m2"], "cm3/m2").to("BCM/in2").magnitude,
                }
                for row in rows
            ],
            curve=curve,
            reason=reason,
            fit={
                "d_inf": format_number(curve.d_inf),
                "d_inf_se": format_number(curve.d_inf_se, 2),
                "m": format_number(curve.m.to("1/um").magnitude),
                "m_se": format_number(curve.m_se.to("1/um").magnitude, 2),
                "residual_sd": format_number(curve.residual_sd, 2),
                "count": curve.count,
            }
            if curve is not None
            else None,
            asked=asked,
            strength=answers["strength"],
            density_from=answers["from"],
            on_rolls=answers["rolls"],
            reading=reading or {**READING_DEFAULTS, "read_on": today, **_kept()},
            errors=errors,
            today=today,
            film_units=FILM_UNITS,
            volume_units=VOLUME_UNITS,
            format_number=format_number,
        ),
        status,
    )


def _kept() -> dict:
    """The basis, units and transfer of the reading just added (the next of a series is like it)."""
    args, kept = request.args, {}
    if args.get("next_basis") in ("volume", "film"):
        kept["basis"] = args["next_basis"]
    if args.get("next_volume_unit") in VOLUME_UNITS:
        kept["volume_unit"] = args["next_volume_unit"]
    if args.get("next_film_unit") in FILM_UNITS:
        kept["film_unit"] = args["next_film_unit"]
    if args.get("next_transfer"):
        kept["transfer"] = args["next_transfer"][:20]
    return kept


@bp.get("/ink-sets/<int:ink_set>")
def show_set(ink_set: int):
    return _set_page(_load_set(ink_set))


def _reading_body(form: dict) -> dict:
    body = {"density": parse_number(form["density"], "density"), "read_on": form["read_on"], "notes": form["notes"]}
    value = parse_number(form["value"], "value")
    if form["basis"] == "film":
        body["film"] = quantity_text(value, choose(form["film_unit"], FILM_UNITS, "film_unit"))
    else:
        body["anilox_volume"] = quantity_text(value, choose(form["volume_unit"], VOLUME_UNITS, "volume_unit"))
        body["transfer"] = parse_percent(form["transfer"], "transfer")
    return body


# The reading's API fields to the form fields that show their messages.
READING_RENAMES = {"film": "value", "anilox_volume": "value"}


@bp.post("/ink-sets/<int:ink_set>/readings")
def add_reading(ink_set: int):
    current = _load_set(ink_set)
    form = _form(READING_DEFAULTS)
    message, status = form_gate("write")
    if message:
        return _set_page(current, reading=form, errors={"r-passcode": message}, status=status)
    try:
        store.add_reading(get_db(), ink_set, _reading_body(form))
    except InputError as exc:
        field = READING_RENAMES.get(exc.field, exc.field or "density")
        return _set_page(current, reading=form, errors={f"r-{field}": exc.message}, status=400)
    flash("Reading added; the curve is fitted again with it.")
    # Keep the basis, units and transfer for the next reading of a series.
    keep = {k: form[k] for k in ("basis", "volume_unit", "film_unit", "transfer")}
    return redirect(
        url_for("inks.show_set", ink_set=ink_set, **{f"next_{k}": v for k, v in keep.items()}) + "#add-reading",
        code=303,
    )


@bp.post("/ink-sets/<int:ink_set>/readings/<int:reading>/remove")
def remove_reading(ink_set: int, reading: int):
    current = _load_set(ink_set)
    message, status = form_gate("supervise")
    if message:
        return _set_page(current, errors={"readings": message}, status=status)
    try:
        store.delete_reading(get_db(), ink_set, reading, request.form.get("version"))
    except store.NotFound:
        flash("That reading was removed already.")
    except store.Conflict:
        flash("That reading was changed by someone else meanwhile; look at it again. Nothing was removed.")
    except InputError as exc:
        return _set_page(current, errors={"readings": exc.message}, status=400)
    else:
        flash("Reading removed; the curve is fitted again without it.")
    return redirect(url_for("inks.show_set", ink_set=ink_set) + "#readings", code=303)


# --- picking an ink in the film chain ------------------------------------------------------------

FILM_KEEPS = ("anilox_volume", "anilox_unit", "anilox_to_plate", "plate_to_substrate")


@bp.get("/inks/pick")
def pick():
    """Without script: the film chain again with the picked ink's density and solids filled (still editable)."""
    values = {key: request.args[key][:40] for key in FILM_KEEPS if key in request.args}
    ident = request.args.get("ink", "").strip()
    if ident.isdigit():
        try:
            ink = store.get_ink(get_db(), int(ident[:12]))
        except store.NotFound:
            ink = None
        if ink is not None:
            values.update(
                ink=str(ink["id"]),
                ink_density=f"{ink['density_g_cm3']:.6g}",
                ink_density_unit="g/cm3",
                solids_by_volume=_percent_text(ink["solids_by_volume"]),
                solids_by_weight=_percent_text(ink["solids_by_weight"]),
            )
    return redirect(url_for("calculators.film", **values), code=303)


# --- CSV -----------------------------------------------------------------------------------------


def _csv(text: str, name: str) -> Response:
    return Response(
        text, mimetype="text/csv", headers={"Content-Disposition": f'attachment; filename="inkfilm-{name}.csv"'}
    )


@bp.get("/inks/export.csv")
def export_inks():
    return _csv(exchange.export_csv(get_db(), "inks"), "inks")


@bp.get("/ink-sets/export/readings.csv")
def export_readings():
    return _csv(exchange.export_csv(get_db(), "readings"), "ink-readings")


@bp.route("/inks/import", methods=["GET", "POST"])
def import_page():
    if request.method == "GET":
        table = request.args.get("table", "inks")
        return render_template(
            "inks/import.html", errors={}, problems=None, table=table if table in exchange.COLUMNS else "inks"
        )
    table = request.form.get("table", "inks")
    if table not in exchange.COLUMNS:
        table = "inks"

    def again(errors, problems=None, status=400):
        return render_template("inks/import.html", errors=errors, problems=problems, table=table), status

    message, status = form_gate("supervise")
    if message:
        return again({"passcode": message}, status=status)
    upload = request.files.get("file")
    if upload is None or not upload.filename:
        return again({"file": "Choose a CSV file first."})
    try:
        counts = exchange.import_csv(get_db(), table, upload.read().decode("utf-8-sig"))
    except UnicodeDecodeError:
        return again({"file": "This file is not UTF-8 text; save it from the spreadsheet as “CSV UTF-8”."})
    except exchange.ImportRefused as exc:
        error = f"Nothing was imported: {len(exc.errors)} problem(s) below. Fix them in the file and import it again."
        return again({"file": error}, exc.errors)
    what = "inks" if table == "inks" else "readings"
    flash(f"Imported {counts['added']} {what}; {counts['already_here']} were here already.")
    return redirect(url_for("inks.index" if table == "inks" else "inks.sets"), code=303)
