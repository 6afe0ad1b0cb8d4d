"""The pages people use: quick converters, film chain, job ink estimate.

Each page is a real form that posts to its own address; htmx adds live
results on top. A request with ``HX-Request`` gets the result fragment only
(or, for the estimate's add/remove-station buttons, the form and result, as
named by ``HX-Target``); any other request gets the whole page. Views read the
form into an API request body, call one ``calc`` function, render.
"""

from __future__ import annotations

import hashlib
from functools import cache
from pathlib import Path

from flask import Blueprint, Response, current_app, make_response, redirect, render_template, request, url_for

from calc import InputError
from calc.display import (
    SYSTEMS,
    check_system,
    format_percent,
    parse_number,
    parse_percent,
    unit_label,
)
from calc.equivalents import equivalents
from calc.estimate import MAX_STATIONS, Station, job_ink
from calc.film import TYPICAL_ANILOX_TO_PLATE, TYPICAL_PLATE_TO_SUBSTRATE, film_chain
from webapp import present

bp = Blueprint("pages", __name__)

UNITS_COOKIE = "inkfilm_units"
ONE_YEAR = 365 * 24 * 3600


def init_app(app) -> None:
    """Register the pages, the security headers and response compression."""
    from flask_compress import Compress

    from webapp import security

    app.register_blueprint(bp)
    security.init_app(app)
    Compress(app)
    app.after_request(prepare_static)
    app.add_template_global(asset)


def asset(filename: str) -> str:
    """The address of a static file with this build's version: cached for a year, renewed by each build."""
    return url_for("static", filename=filename, v=build_version())


def prepare_static(response: Response) -> Response:
    """Static files: read into memory (they are small) so that they are compressed
    whole and the file is closed with the response; versioned ones cached for long."""
    if request.endpoint != "static" or response.status_code != 200:
        return response
    response.direct_passthrough = False
    response.make_sequence()
    if request.args.get("v") == build_version():
        response.cache_control.no_cache = None
        response.cache_control.public = True
        response.cache_control.max_age = ONE_YEAR
        response.cache_control.immutable = True
    return response


@bp.app_template_filter("unit_label")
def unit_label_filter(spelling: str) -> str:
    return unit_label(spelling)


@bp.app_context_processor
def unit_preference() -> dict:
    return {"unit_system": current_system()}


def current_system() -> str:
    return check_system(request.cookies.get(UNITS_COOKIE))


def is_htmx() -> bool:
    return request.headers.get("HX-Request") == "true"


def respond(page: str, fragment: str, **context) -> Response:
    """The whole page, or only the fragment htmx asked for; never cached as the other.

    A fragment also refills the error slots beside the form's fields (out of
    band), unless it is the whole form anyway (``oob=False``).
    """
    context.setdefault("oob", is_htmx())
    response = make_response(render_template(fragment if is_htmx() else page, **context))
    response.vary.add("HX-Request")
    response.vary.add("Cookie")
    response.headers["Cache-Control"] = "no-cache"
    return response


def form_values(defaults: dict) -> dict:
    """The posted form over the defaults (a GET shows the defaults)."""
    values = dict(defaults)
    if request.method == "POST":
        values.update({key: value for key, value in request.form.items() if key in defaults or "[" in key})
    return values


def quantity_text(value: float, unit: str) -> str:
    return f"{value!r} {unit}"


def choose(value: str, allowed, field: str) -> str:
    if value not in allowed:
        raise InputError(field, "choose one of the units in the list")
    return value


# --- Quick converters ---------------------------------------------------------

CONVERTER_UNITS = (
    ("Anilox volume and film", ("BCM/in2", "cm3/m2", "um", "mil", "mm", "in")),
    ("Line screen", ("lpi", "lpcm")),
    ("Coat weight and mileage", ("g/m2", "lb/ream", "m2/kg", "ft2/lb", "MSI/lb")),
    ("Area", ("m2", "ft2", "MSI", "in2")),
    ("Ink volume and mass", ("l", "gal", "kg", "lb")),
    ("Density", ("g/cm3", "lb/gal")),
)
CONVERTER_UNIT_SET = {unit for _, units in CONVERTER_UNITS for unit in units}
DENSITY_UNITS = ("g/cm3", "lb/gal")
CONVERTER_DEFAULTS = {"value": "", "unit": "BCM/in2", "density": "", "density_unit": "g/cm3", "coverage": ""}
# The API names the typed value "quantity"; the form splits it into number and unit.
CONVERTER_FIELDS = {"quantity": "value"}


def converter_body(form: dict) -> dict | None:
    """The API request body for the form, or None while no value is typed."""
    unit = choose(form["unit"], CONVERTER_UNIT_SET, "unit")
    value = parse_number(form["value"], "value", required=False)
    if value is None:
        return None
    body: dict = {"quantity": quantity_text(value, unit)}
    density = parse_number(form["density"], "density", required=False)
    if density is not None:
        body["density"] = quantity_text(density, choose(form["density_unit"], DENSITY_UNITS, "density_unit"))
    coverage = parse_percent(form["coverage"], "coverage", required=False)
    if coverage is not None:
        body["coverage"] = coverage
    return body


@bp.route("/", methods=["GET", "POST"])
def converters():
    form = form_values(CONVERTER_DEFAULTS)
    system = current_system()
    context = {"form": form, "errors": {}, "result": None, "units": CONVERTER_UNITS, "snippet_kind": "equivalents"}
    try:
        body = converter_body(form)
        if body is not None:
            result = equivalents(body["quantity"], body.get("density"), body.get("coverage"))
            context.update(body=body, result=present.equivalents(result, system), snippet_inputs=body)
    except InputError as exc:
        context["errors"] = present.errors(exc, CONVERTER_FIELDS)
    return respond("converters.html", "_converter_result.html", **context)


# --- Film chain ---------------------------------------------------------------

ANILOX_UNITS = ("BCM/in2", "cm3/m2")
FILM_DEFAULTS = {
    "anilox_volume": "4.5",
    "anilox_unit": "BCM/in2",
    "anilox_to_plate": format_percent(TYPICAL_ANILOX_TO_PLATE),
    "plate_to_substrate": format_percent(TYPICAL_PLATE_TO_SUBSTRATE),
    "ink_density": "",
    "ink_density_unit": "g/cm3",
    "solids_by_volume": "",
    "solids_by_weight": "",
}


def film_body(form: dict) -> dict:
    """The ``/api/v1/film`` request body for the film chain form."""
    volume = parse_number(form["anilox_volume"], "anilox_volume")
    body: dict = {
        "anilox_volume": quantity_text(volume, choose(form["anilox_unit"], ANILOX_UNITS, "anilox_unit")),
        "anilox_to_plate": parse_percent(form["anilox_to_plate"], "anilox_to_plate"),
        "plate_to_substrate": parse_percent(form["plate_to_substrate"], "plate_to_substrate"),
    }
    density = parse_number(form["ink_density"], "ink_density", required=False)
    if density is not None:
        unit = choose(form["ink_density_unit"], DENSITY_UNITS, "ink_density_unit")
        body["ink_density"] = quantity_text(density, unit)
    for share in ("solids_by_volume", "solids_by_weight"):
        value = parse_percent(form[share], share, required=False)
        if value is not None:
            body[share] = value
    return body


@bp.route("/film", methods=["GET", "POST"])
def film():
    form = form_values(FILM_DEFAULTS)
    context = {
        "form": form,
        "errors": {},
        "chain": None,
        "snippet_kind": "film",
        "typical_to_plate": FILM_DEFAULTS["anilox_to_plate"],
        "typical_to_substrate": FILM_DEFAULTS["plate_to_substrate"],
    }
    try:
        body = film_body(form)
        context.update(snippet_inputs=body, chain=present.film(film_chain(**body), current_system()))
    except InputError as exc:
        context["errors"] = present.errors(exc)
    return respond("film.html", "_film_result.html", **context)


# --- Job ink estimate ---------------------------------------------------------

WIDTH_UNITS = ("mm", "in")
RUN_UNITS = ("m", "ft")
REPEAT_UNITS = ("mm", "in")
TYPICAL_TRANSFER = "25"  # about half to the plate, half of that to the substrate (common practice)
STATION_FIELDS = ("name", "anilox_volume", "anilox_unit", "coverage", "transfer", "ink_density", "ink_density_unit")
DEMO_STATIONS = (
    ("Cyan", "3.0", "35"),
    ("Magenta", "3.0", "30"),
    ("Yellow", "3.0", "25"),
    ("Black", "3.5", "20"),
)
ESTIMATE_DEFAULTS = {
    "web_width": "330",
    "web_width_unit": "mm",
    "run_basis": "length",
    "run_length": "12000",
    "run_length_unit": "m",
    "impressions": "",
    "repeat": "",
    "repeat_unit": "in",
    "waste": "5",
    "station_count": str(len(DEMO_STATIONS)),
}


def station_defaults(index: int) -> dict:
    name, volume, coverage = DEMO_STATIONS[index] if index < len(DEMO_STATIONS) else (f"Station {index + 1}", "", "")
    return {
        "name": name,
        "anilox_volume": volume,
        "anilox_unit": "BCM/in2",
        "coverage": coverage,
        "transfer": TYPICAL_TRANSFER,
        "ink_density": "1.0",
        "ink_density_unit": "g/cm3",
        "price_per_kg": "",
    }


def estimate_form() -> dict:
    """The estimate form as posted (or the demo job), with its stations as a list of dicts."""
    form = form_values(ESTIMATE_DEFAULTS)
    try:
        count = int(form["station_count"])
    except ValueError:
        count = len(DEMO_STATIONS)
    posted = request.method == "POST"
    action = request.form.get("action", "") if posted else ""
    stations = []
    for index in range(max(1, min(count, MAX_STATIONS))):
        station = station_defaults(index)
        if posted and f"stations[{index}].name" in request.form:
            station.update({key: request.form.get(f"stations[{index}].{key}", "") for key in station})
        stations.append(station)
    if action == "add" and len(stations) < MAX_STATIONS:
        stations.append(station_defaults(len(stations)) | {"name": f"Station {len(stations) + 1}"})
    elif action.startswith("remove-") and len(stations) > 1:
        try:
            del stations[int(action.removeprefix("remove-"))]
        except (ValueError, IndexError):
            pass
    form["stations"] = stations
    form["station_count"] = str(len(stations))
    return form


def estimate_body(form: dict) -> dict:
    """The ``/api/v1/estimate`` request body for the estimate form."""
    width = parse_number(form["web_width"], "web_width")
    body: dict = {"web_width": quantity_text(width, choose(form["web_width_unit"], WIDTH_UNITS, "web_width_unit"))}
    if form["run_basis"] == "impressions":
        impressions = parse_number(form["impressions"], "impressions")
        body["impressions"] = int(impressions) if impressions.is_integer() else impressions
        repeat = parse_number(form["repeat"], "repeat")
        body["repeat"] = quantity_text(repeat, choose(form["repeat_unit"], REPEAT_UNITS, "repeat_unit"))
    else:
        length = parse_number(form["run_length"], "run_length")
        body["run_length"] = quantity_text(length, choose(form["run_length_unit"], RUN_UNITS, "run_length_unit"))
    body["waste"] = parse_percent(form["waste"], "waste", required=False) or 0.0
    body["stations"] = []
    for index, station in enumerate(form["stations"]):
        where = f"stations[{index}]."
        volume = parse_number(station["anilox_volume"], where + "anilox_volume")
        density = parse_number(station["ink_density"], where + "ink_density")
        item = {
            "name": station["name"],
            "anilox_volume": quantity_text(volume, choose(station["anilox_unit"], ANILOX_UNITS, where + "anilox_unit")),
            "coverage": parse_percent(station["coverage"], where + "coverage"),
            "transfer": parse_percent(station["transfer"], where + "transfer"),
            "ink_density": quantity_text(
                density, choose(station["ink_density_unit"], DENSITY_UNITS, where + "ink_density_unit")
            ),
        }
        price = parse_number(station["price_per_kg"], where + "price_per_kg", required=False)
        if price is not None:
            item["price_per_kg"] = price
        body["stations"].append(item)
    return body


@bp.route("/estimate", methods=["GET", "POST"])
def estimate():
    form = estimate_form()
    context = {"form": form, "errors": {}, "estimate": None, "snippet_kind": "estimate", "max_stations": MAX_STATIONS}
    try:
        body = estimate_body(form)
        stations = [Station(**item) for item in body["stations"]]
        job = job_ink(stations=stations, **{key: value for key, value in body.items() if key != "stations"})
        context.update(snippet_inputs=body, estimate=present.estimate(job, current_system()))
    except InputError as exc:
        context["errors"] = present.errors(exc)
    whole_form = request.headers.get("HX-Target") == "estimate-area"
    if whole_form:
        return respond("estimate.html", "_estimate_area.html", oob=False, **context)
    return respond("estimate.html", "_estimate_result.html", **context)


# --- Unit preference, offline page, service worker -----------------------------


@bp.post("/units")
def set_units():
    """Remember metric or imperial on this device (a cookie), then go back (plain form post)."""
    system = request.form.get("system", "metric")
    target = request.form.get("next", "/")
    if not target.startswith("/") or target.startswith("//"):
        target = "/"
    response = redirect(target, code=303)
    if system in SYSTEMS:
        response.set_cookie(UNITS_COOKIE, system, max_age=ONE_YEAR, samesite="Lax", httponly=False)
    return response


@bp.get("/offline")
def offline():
    return render_template("offline.html")


SHELL_PAGES = ("/", "/film", "/estimate", "/offline")
STATIC_FILES = (
    "vendor/htmx-2.0.11.min.js",
    "css/inkfilm.css",
    "css/print.css",
    "js/inkfilm.js",
    "inkfilm.webmanifest",
    "icons/inkfilm.svg",
)


@cache
def _build_version(root: str) -> str:
    """A hash of every static file and template: a new build gets a new cache."""
    digest = hashlib.sha256()
    for folder in (Path(root) / "static", Path(root) / "templates"):
        for path in sorted(folder.rglob("*")):
            if path.is_file():
                digest.update(str(path.relative_to(root)).encode())
                digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


def build_version() -> str:
    return _build_version(current_app.root_path)


@bp.get("/sw.js")
def service_worker():
    shell = list(SHELL_PAGES) + [asset(name) for name in STATIC_FILES]
    body = render_template("sw.js", version=build_version(), shell=shell)
    response = make_response(body)
    response.mimetype = "text/javascript"
    response.headers["Cache-Control"] = "no-cache"
    return response
