"""Job ink: how much ink a job takes per station and in all, what to pull and what it costs.

The API (``/api/v1/estimate``), the page (``/estimate``), its CSV download
(``/estimate?csv=<API body>``) and its bar chart of ink per station. Old
request bodies get every field and value they got before; new fields are only
added.
"""

from __future__ import annotations

import csv
import io
import json
from datetime import date

from flask import Response, abort, current_app, has_app_context, render_template, request

from calc import InputError, practice
from calc.display import format_money, format_number, format_percent, show_value, unit_label
from calc.estimate import (
    IMPRESSIONS_HIGH,
    MAX_STATIONS,
    NAME_MAX,
    REPEAT_HIGH,
    RUN_LENGTH_HIGH,
    UNIT,
    WEB_WIDTH_HIGH,
    Station,
    job_ink,
)
from calc.film import ANILOX_VOLUME_HIGH
from calc.units import DENSITY_HIGH, DENSITY_LOW
from webapp.calculators.spec import Answer, Calculator
from webapp.common.formatting import both, currency, field_name, shown, steps, when
from webapp.common.forms import (
    FormValues,
    choose,
    field_errors,
    form_values,
    parse_amount,
    parse_number,
    parse_percent,
    quantity_text,
)
from webapp.common.htmx import is_htmx, respond
from webapp.common.jsonapi import check_fields
from webapp.common.preference import current_system

# Request fields, name → kind (see PHASE2's request-field convention). ``stations`` is a
# list of objects, each with the STATION_* fields below.
REQUIRED = {"web_width": "quantity", "stations": "list"}
OPTIONAL = {
    "run_length": "quantity",
    "impressions": "integer",
    "repeat": "quantity",
    "waste": "share",
    "labels": "integer",
    "across": "integer",
    "around": "integer",
    "makeready": "quantity",
}
STATION_REQUIRED = {"name": "text", "anilox_volume": "quantity", "transfer": "share", "ink_density": "quantity"}
STATION_OPTIONAL = {
    # one of coverage and inked_area_per_label is needed (checked below)
    "coverage": "share",
    "inked_area_per_label": "quantity",
    "price_per_kg": "number",
    "price_per_lb": "number",
    "fill": "quantity",
    "on_hand": "quantity",
}
LIMITS = {
    "web_width": {"description": f"printed web width, more than 0 and at most {WEB_WIDTH_HIGH:~P}"},
    "run_length": {
        "description": f"good run length, more than 0 and at most {RUN_LENGTH_HIGH:~P}; or give impressions"
    },
    "impressions": {"minimum": 1, "maximum": IMPRESSIONS_HIGH, "description": "impressions; with the repeat"},
    "repeat": {"description": f"repeat length, more than 0 and at most {REPEAT_HIGH:~P}; with impressions"},
    "waste": {"description": "share of the run added for waste"},
    "stations": {"minItems": 1, "maxItems": MAX_STATIONS},
    "stations.name": {"minLength": 1, "maxLength": NAME_MAX, "pattern": r"\S"},
    "stations.anilox_volume": {"description": f"cell volume per area, more than 0 and at most {ANILOX_VOLUME_HIGH:~P}"},
    "stations.coverage": {"description": "share of the printed area this station inks"},
    "stations.transfer": {"description": "share of the cell volume that reaches the substrate (about 0.25)"},
    "stations.ink_density": {"description": f"press-ready ink density, {DENSITY_LOW:~P} to {DENSITY_HIGH:~P}"},
    "stations.price_per_kg": {"minimum": 0, "maximum": 1e15, "description": "ink price per kg, shop's currency"},
    "stations.price_per_lb": {"minimum": 0, "maximum": 1e15, "description": "ink price per lb (instead of per kg)"},
    "stations.inked_area_per_label": {"description": "inked area of one label (instead of coverage)"},
    "stations.fill": {"description": "ink held by chamber or pan, pump and hoses: a volume or a mass"},
    "stations.on_hand": {"description": "ink on hand for this station: a volume or a mass"},
    "labels": {"minimum": 1, "description": "labels to print; with repeat, across and around"},
    "across": {"minimum": 1, "description": "labels across the web"},
    "around": {"minimum": 1, "description": "labels around the repeat"},
    "makeready": {"description": "web run for make-ready, a length (default 0)"},
}
SHARES = frozenset({"coverage", "transfer", "waste"})
MONEY = frozenset(
    {"cost", "total_cost", "price_per_kg", "price_per_lb", "cost_per_1000_labels", "cost_per_1000_impressions"}
)


def run(body: dict):
    body = check_fields(body, REQUIRED, OPTIONAL)
    stations_in = body.pop("stations")
    if not isinstance(stations_in, list) or not 1 <= len(stations_in) <= MAX_STATIONS:
        raise InputError("stations", f"must be a list of 1 to {MAX_STATIONS} stations")
    stations = []
    for index, item in enumerate(stations_in):
        where = f"stations[{index}]"
        fields = check_fields(item, STATION_REQUIRED, STATION_OPTIONAL, prefix=where)
        if "coverage" not in fields and "inked_area_per_label" not in fields:
            raise InputError(f"{where}.coverage", "is required (or give inked_area_per_label for a labels job)")
        stations.append(Station(**{"coverage": None} | fields))
    return job_ink(stations=stations, **body)


def quantity_json(quantity, unit: str) -> dict:
    """As ``webapp.common.jsonapi.quantity_json``, with the unit parsed once (``calc.estimate.UNIT``)."""
    return {"value": float(quantity.m_as(UNIT[unit])), "unit": unit}


def _optional(item: dict, key: str, value, unit: str | None = None) -> None:
    if value is not None:
        item[key] = quantity_json(value, unit) if unit else value


def compute(body: dict) -> dict:
    estimate = run(body)
    # The fields every earlier release answered, in the same order and with the same values.
    answer = {
        "printed_area": quantity_json(estimate.printed_area, "m2"),
        "stations": [],
        "total_ink_mass": quantity_json(estimate.total_ink_mass, "kg"),
    }
    for result in estimate.stations:
        item = {
            "name": result.name,
            "substrate_wet": quantity_json(result.substrate_wet, "um"),
            "ink_mass": quantity_json(result.ink_mass, "kg"),
            "ink_volume": quantity_json(result.ink_volume, "l"),
        }
        _optional(item, "cost", result.cost)
        item["coverage"] = float(result.coverage)
        _optional(item, "mileage", result.mileage, "m2/kg")
        _optional(item, "price_per_kg", result.price_per_kg)
        item["pull_mass"] = quantity_json(result.pull_mass, "kg")
        _optional(item, "ink_per_1000_impressions", result.ink_per_1000_impressions, "kg")
        _optional(item, "ink_per_1000_labels", result.ink_per_1000_labels, "kg")
        _optional(item, "cost_per_1000_impressions", result.cost_per_1000_impressions)
        _optional(item, "cost_per_1000_labels", result.cost_per_1000_labels)
        if result.on_hand_mass is not None:
            item["on_hand_mass"] = quantity_json(result.on_hand_mass, "kg")
            if result.on_hand_prints is not None:
                prints = {"run_length": quantity_json(result.on_hand_prints.run_length, "m")}
                _optional(prints, "impressions", result.on_hand_prints.impressions)
                _optional(prints, "labels", result.on_hand_prints.labels)
                item["on_hand_prints"] = prints
            item["enough"] = bool(result.enough)
            item["short_by"] = quantity_json(result.short_by, "kg")
        answer["stations"].append(item)
    _optional(answer, "total_cost", estimate.total_cost)
    answer["run_length"] = quantity_json(estimate.run_length, "m")
    answer["printed_length"] = quantity_json(estimate.printed_length, "m")
    _optional(answer, "impressions", estimate.impressions)
    _optional(answer, "labels", estimate.labels)
    answer["total_ink_volume"] = quantity_json(estimate.total_ink_volume, "l")
    answer["total_pull_mass"] = quantity_json(estimate.total_pull_mass, "kg")
    _optional(answer, "cost_per_1000_impressions", estimate.cost_per_1000_impressions)
    _optional(answer, "cost_per_1000_labels", estimate.cost_per_1000_labels)
    return answer


# --- the page -------------------------------------------------------------------


def _verdict(station, job, system: str) -> str | None:
    """The ink on hand in plain words: enough and what is to spare, or short and what it prints."""
    if station.enough is None:
        return None
    if station.enough:
        spare = station.on_hand_mass - station.pull_mass
        return f"Enough, {both(spare, 'mass', system)[0]} to spare"
    text = f"Short by {both(station.short_by, 'mass', system)[0]}"
    prints = station.on_hand_prints
    if prints is None:
        return text
    if prints.labels is not None and job.labels:
        return f"{text}: prints about {format_number(prints.labels)} of {job.labels:,} labels"
    if prints.impressions is not None and job.impressions:
        return f"{text}: prints about {format_number(prints.impressions)} of {job.impressions:,} impressions"
    good, whole = both(prints.run_length, "length", system)[0], both(job.run_length, "length", system)[0]
    return f"{text}: prints about {good} of the {whole} run"


def _money(value: float) -> str:
    """A cost to the cent with the shop's currency symbol (the ``CURRENCY`` setting), if it has one."""
    return currency(format_money(value))


def _per_1000(station, job, system: str) -> tuple | None:
    """(ink, cost) per 1,000 labels, or else per 1,000 impressions, where the count is known."""
    for count, what in ((job.labels, "labels"), (job.impressions, "impressions")):
        if count:
            ink = getattr(station, f"ink_per_1000_{what}")
            cost = getattr(station, f"cost_per_1000_{what}")
            return both(ink, "mass", system)[0], None if cost is None else _money(cost)
    return None


def present(job, system: str) -> dict:
    stations = []
    for station in job.stations:
        stations.append(
            {
                "name": station.name,
                "film": both(station.substrate_wet, "film", system),
                "mass": both(station.ink_mass, "mass", system),
                "mass_kg": float(station.ink_mass.to("kg").magnitude),
                "volume": both(station.ink_volume, "volume", system),
                "pull": both(station.pull_mass, "mass", system),
                "fill": station.fill_mass is not None and station.fill_mass.magnitude > 0,
                "coverage": show_value(station.coverage, system),
                "mileage": None if station.mileage is None else both(station.mileage, "mileage", system),
                "cost": None if station.cost is None else _money(station.cost),
                "per_1000": _per_1000(station, job, system),
                "verdict": _verdict(station, job, system),
                "enough": station.enough,
                "steps": steps(station.steps, system),
            }
        )
    makeready = job.makeready is not None and job.makeready.magnitude > 0
    return {
        "area": both(job.printed_area, "area", system),
        "run_length": both(job.run_length, "length", system),
        "printed_length": both(job.printed_length, "length", system),
        "makeready": both(job.makeready, "length", system) if makeready else None,
        "repeat": None if job.repeat is None else both(job.repeat, "width", system),
        "impressions": None if job.impressions is None else f"{job.impressions:,}",
        "labels": None if job.labels is None else f"{job.labels:,}",
        "across": job.across,
        "around": job.around,
        "waste": show_value(job.waste, system),
        "stations": stations,
        "chart": chart(stations, system),
        "total_mass": both(job.total_ink_mass, "mass", system),
        "total_volume": both(job.total_ink_volume, "volume", system),
        "total_pull": both(job.total_pull_mass, "mass", system),
        "any_fill": any(s["fill"] for s in stations),
        "total_cost": None if job.total_cost is None else _money(job.total_cost),
        "cost_per_1000_labels": None if job.cost_per_1000_labels is None else _money(job.cost_per_1000_labels),
        "cost_per_1000_impressions": None
        if job.cost_per_1000_impressions is None
        else _money(job.cost_per_1000_impressions),
        "priced": any(station.cost is not None for station in job.stations),
        "per_1000_of": "labels" if job.labels else "impressions" if job.impressions else None,
        "on_hand": any(station.enough is not None for station in job.stations),
        "steps": steps(job.steps, system),
    }


# The bar chart of ink per station: drawn on the server as inline SVG (no script, no
# inline style: colours come from classes, so dark mode and print restyle it).
CHART_WIDTH = 320
CHART_ROW = 30
CHART_LABEL = 120  # room for the station's name, left of the bars
CHART_VALUE = 64  # room for the figure, right of the bars
CHART_NAME_MAX = 16


def chart(stations: list[dict], system: str) -> dict:
    """Bars of ink per station, most first: geometry in SVG user units, and the text alternative."""
    ordered = sorted(stations, key=lambda s: -s["mass_kg"])
    largest = max((s["mass_kg"] for s in ordered), default=0.0)
    room = CHART_WIDTH - CHART_LABEL - CHART_VALUE
    bars = []
    for row, station in enumerate(ordered):
        share = station["mass_kg"] / largest if largest > 0 else 0.0
        name = station["name"]
        short = name if len(name) <= CHART_NAME_MAX else name[: CHART_NAME_MAX - 1] + "…"
        bars.append(
            {
                "name": name,
                "short": short,
                "value": str(station["mass"][0]),
                "y": row * CHART_ROW + 6,
                "text_y": row * CHART_ROW + 20,
                "width": round(max(share * room, 1.0 if station["mass_kg"] > 0 else 0.0), 1),
            }
        )
    description = "; ".join(f"{bar['name']} {bar['value']}" for bar in bars)
    return {
        "bars": bars,
        "width": CHART_WIDTH,
        "height": len(bars) * CHART_ROW + 6,
        "bar_x": CHART_LABEL,
        "value_x": CHART_WIDTH - 2,
        "label_x": CHART_LABEL - 6,
        "description": f"Ink per station, most first: {description}.",
    }


# --- the CSV download -------------------------------------------------------------

CSV_COLUMNS = (
    ("station", None),
    ("coverage_share", lambda s, a: a.get("coverage")),
    ("wet_film_um", lambda s, a: a["substrate_wet"]["value"]),
    ("ink_kg", lambda s, a: a["ink_mass"]["value"]),
    ("ink_l", lambda s, a: a["ink_volume"]["value"]),
    ("pull_kg", lambda s, a: a.get("pull_mass", {}).get("value")),
    ("mileage_m2_per_kg", lambda s, a: (a.get("mileage") or {}).get("value")),
    ("price_per_kg", lambda s, a: a.get("price_per_kg")),
    ("cost", lambda s, a: a.get("cost")),
    ("ink_per_1000_impressions_kg", lambda s, a: (a.get("ink_per_1000_impressions") or {}).get("value")),
    ("ink_per_1000_labels_kg", lambda s, a: (a.get("ink_per_1000_labels") or {}).get("value")),
    ("cost_per_1000_impressions", lambda s, a: a.get("cost_per_1000_impressions")),
    ("cost_per_1000_labels", lambda s, a: a.get("cost_per_1000_labels")),
    ("on_hand_kg", lambda s, a: (a.get("on_hand_mass") or {}).get("value")),
    ("enough", lambda s, a: None if "enough" not in a else ("yes" if a["enough"] else "no")),
    ("short_by_kg", lambda s, a: (a.get("short_by") or {}).get("value")),
)
CSV_MONEY = frozenset({"price_per_kg", "cost", "cost_per_1000_impressions", "cost_per_1000_labels"})
# A spreadsheet runs a cell that starts with one of these as a formula.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def inert(text: str) -> str:
    """User text made safe for a spreadsheet: a leading formula character is quoted away.

    >>> inert("=HYPERLINK(1)"), inert("Cyan")
    ("'=HYPERLINK(1)", 'Cyan')
    """
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value)
    return str(value)


def csv_text(body: dict) -> str:
    """The estimate as CSV: one row per station with plain numbers in SI units, then a totals row."""
    answer = compute(body)
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    symbol = current_app.config.get("CURRENCY", "") if has_app_context() else ""
    writer.writerow([f"{name} ({symbol})" if symbol and name in CSV_MONEY else name for name, _ in CSV_COLUMNS])
    for station_in, station in zip(body["stations"], answer["stations"], strict=True):
        writer.writerow([inert(station["name"])] + [_cell(get(station_in, station)) for _, get in CSV_COLUMNS[1:]])
    totals = {
        "ink_kg": answer["total_ink_mass"]["value"],
        "ink_l": answer["total_ink_volume"]["value"],
        "pull_kg": answer["total_pull_mass"]["value"],
        "cost": answer.get("total_cost"),
        "cost_per_1000_impressions": answer.get("cost_per_1000_impressions"),
        "cost_per_1000_labels": answer.get("cost_per_1000_labels"),
    }
    writer.writerow(["Total"] + [_cell(totals.get(name)) for name, _ in CSV_COLUMNS[1:]])
    return "\ufeff" + out.getvalue()


CSV_BODY_MAX = 32 * 1024


def csv_download(text: str):
    """``/estimate?csv=<the API body as JSON>`` as a file; bad input gets a plain-text 400 naming the field."""
    try:
        if len(text) > CSV_BODY_MAX:
            raise InputError(None, "the estimate is too large to export")
        try:
            body = json.loads(text)
        except ValueError:
            raise InputError(None, "the csv parameter must be the estimate's request body as JSON") from None
        if not isinstance(body, dict):
            raise InputError(None, "the csv parameter must be a JSON object")
        data = csv_text(body)
    except InputError as exc:
        where = f"{exc.field}: " if exc.field else ""
        return Response(f"{where}{exc.message}\n", status=400, mimetype="text/plain")
    except RecursionError:
        return Response("the csv parameter is nested too deeply\n", status=400, mimetype="text/plain")
    response = Response(data.encode("utf-8"), mimetype="text/csv")
    response.charset = "utf-8"
    response.headers["Content-Disposition"] = 'attachment; filename="ink-estimate.csv"'
    response.headers["Cache-Control"] = "no-store"
    return response


# --- the form ---------------------------------------------------------------------

ANILOX_UNITS = ("BCM/in2", "cm3/m2")
DENSITY_UNITS = ("g/cm3", "lb/gal")
WIDTH_UNITS = ("mm", "in")
RUN_UNITS = ("m", "ft")
REPEAT_UNITS = ("mm", "in")
FILL_UNITS = ("l", "kg", "gal", "lb")
ON_HAND_UNITS = ("kg", "l", "lb", "gal")
PRICE_UNITS = ("kg", "lb")  # the price is per kg or per lb of ink
LABEL_AREA_UNITS = ("cm2", "mm2", "in2")
# The rough coverage menu: a kind of artwork → the typical share it fills in (common practice).
COVERAGE_KINDS = tuple(practice.TYPICAL_COVERAGES)
RUN_BASES = ("length", "impressions", "labels")
TYPICAL_TRANSFER = "25"  # about half to the plate, half of that to the substrate (common practice)
DEMO_STATIONS = (
    ("Cyan", "3.0", "35"),
    ("Magenta", "3.0", "30"),
    ("Yellow", "3.0", "25"),
    ("Black", "3.5", "20"),
)
# Units and demo figures a form starts with, by the user's preference (the same demo job).
START = {
    "metric": {
        "width": ("330", "mm"),
        "run": ("12000", "m"),
        "length": "m",
        "repeat": "mm",
        "density": ("1.0", "g/cm3"),
    },
    "imperial": {
        "width": ("13", "in"),
        "run": ("40000", "ft"),
        "length": "ft",
        "repeat": "in",
        "density": ("8.35", "lb/gal"),
    },
}
STATION_KEYS = (
    "name",
    "anilox_volume",
    "anilox_unit",
    "coverage",
    "transfer",
    "ink_density",
    "ink_density_unit",
    "fill",
    "fill_unit",
    "on_hand",
    "on_hand_unit",
    "inked_area_per_label",
    "inked_area_unit",
    "coverage_kind",
    # the price as typed, per kg or per lb as ``price_unit`` says (the name is the first release's)
    "price_per_kg",
    "price_unit",
)
# Form fields a result fragment refills the message slots of (out of band).
JOB_FIELDS = (
    "web_width",
    "web_width_unit",
    "run_basis",
    "run_length",
    "run_length_unit",
    "impressions",
    "labels",
    "repeat",
    "repeat_unit",
    "across",
    "around",
    "makeready",
    "makeready_unit",
    "waste",
    "stations",
    "_form",
)
# Words for the print view's header; never part of the calculation (at most TICKET_MAX characters each).
TICKET_FIELDS = (
    ("job_number", "Job"),
    ("customer", "Customer"),
    ("press", "Press"),
    ("prepared_by", "Prepared by"),
)
TICKET_MAX = 80
# The fields typed as a percentage: a share typed as 0.5 gets a "did you mean 50 %?" beside it.
PERCENT_FIELDS = ("coverage", "transfer")


def defaults(system: str) -> dict:
    start = START[system]
    return {
        "web_width": start["width"][0],
        "web_width_unit": start["width"][1],
        "run_basis": "length",
        "run_length": start["run"][0],
        "run_length_unit": start["run"][1],
        "impressions": "",
        "labels": "",
        "repeat": "",
        "repeat_unit": start["repeat"],
        "across": "",
        "around": "",
        "makeready": "",
        "makeready_unit": start["length"],
        "waste": "5",
        "station_count": str(len(DEMO_STATIONS)),
    } | {name: "" for name, _ in TICKET_FIELDS}


def station_defaults(index: int, system: str = "metric") -> dict:
    name, volume, coverage = DEMO_STATIONS[index] if index < len(DEMO_STATIONS) else (f"Station {index + 1}", "", "")
    imperial = system == "imperial"
    density, density_unit = START[system]["density"]
    return {
        "name": name,
        "anilox_volume": volume,
        "anilox_unit": "BCM/in2",
        "coverage": coverage,
        "transfer": TYPICAL_TRANSFER,
        "ink_density": density,
        "ink_density_unit": density_unit,
        "fill": "",
        "fill_unit": "gal" if imperial else "l",
        "on_hand": "",
        "on_hand_unit": "lb" if imperial else "kg",
        "price_per_kg": "",
        "price_unit": "lb" if imperial else "kg",
        "inked_area_per_label": "",
        "inked_area_unit": "in2" if imperial else "cm2",
        "coverage_kind": "",
        "ink": "",  # the id of the shop's ink picked for the station, if any (fills density and price)
    }


def estimate_form() -> dict:
    """The estimate form as posted (or the demo job), with its stations as a list of dicts."""
    system = current_system()
    form = form_values(defaults(system))
    try:
        count = int(form["station_count"])
    except ValueError:
        count = len(DEMO_STATIONS)
    posted = request.method == "POST"
    action = request.form.get("action", "") if posted else ""
    # A link may fill the stations too (a saved estimate's "Open in the calculator").
    given = request.form if posted else request.args
    stations = []
    for index in range(max(1, min(count, MAX_STATIONS))):
        station = station_defaults(index, system)
        if f"stations[{index}].name" in given:
            # a field the form did not post (an older page) keeps its default
            station.update(
                {
                    key: given[f"stations[{index}].{key}"][: None if posted else 100]
                    for key in station
                    if f"stations[{index}].{key}" in given
                }
            )
        if (
            posted
            and f"stations[{index}].price_per_kg" in request.form
            and f"stations[{index}].price_unit" not in request.form
        ):
            station["price_unit"] = "kg"  # a form from before prices per lb
        stations.append(station)
    if not posted:
        # A link may fill the first station's anilox (the roll register's "job estimate with this roll");
        # the values are checked like typed ones.
        stations[0].update(
            {key: request.args[key][:40] for key in ("anilox_volume", "anilox_unit") if key in request.args}
        )
    if action == "add" and len(stations) < MAX_STATIONS:
        stations.append(station_defaults(len(stations), system) | {"name": f"Station {len(stations) + 1}"})
    elif action.startswith("copy-") and len(stations) < MAX_STATIONS:
        try:
            source = stations[int(action.removeprefix("copy-"))]
        except (ValueError, IndexError):
            source = None
        if source is not None:
            stations.append(source | {"name": f"{source['name'].strip()} copy"[:NAME_MAX]})
    elif action.startswith("ink-"):
        _fill_from_ink(stations, action.removeprefix("ink-"))
    elif action.startswith("remove-") and len(stations) > 1:
        try:
            del stations[int(action.removeprefix("remove-"))]
        except (ValueError, IndexError):
            pass
    form["stations"] = stations
    form["station_count"] = str(len(stations))
    for name, _ in TICKET_FIELDS:
        form[name] = str(form[name])[:TICKET_MAX]
    return form


def _fill_from_ink(stations: list[dict], index: str) -> None:
    """The no-script page's "Fill from this ink": the station's density and price from the shop's ink
    it picked (the fields stay editable). An unknown station or ink leaves the fields as typed."""
    from webapp.common.db import get_db
    from webapp.inks import store as inks

    station = stations[int(index)] if index.isdigit() and int(index) < len(stations) else None
    ident = station["ink"].strip() if station else ""
    if not (ident.isdigit() and len(ident) <= 12):
        return
    try:
        ink = inks.get_ink(get_db(), int(ident))
    except inks.NotFound:
        return
    station.update(ink_density=f"{ink['density_g_cm3']:.6g}", ink_density_unit="g/cm3")
    if ink["price"] is not None:
        station.update(price_per_kg=f"{ink['price']:.6g}", price_unit=ink["price_per"])


def _count(text, field: str, *, required: bool = True):
    """A whole count as typed; a fraction goes on to the core, which names the field."""
    value = parse_number(text, field, required=required)
    if value is None:
        return None
    return int(value) if value.is_integer() else value


def _quantity(
    form: dict, name: str, units, *, required: bool = True, unit_field: str | None = None, prefix="", record=None
):
    """A quantity field and its unit menu as API text; a unit typed with the number sets the menu."""
    unit_field = unit_field or f"{name}_unit"
    amount = parse_amount(form, name, unit_field, units, required=required, prefix=prefix, record=record)
    return None if amount is None else quantity_text(*amount)


def form_body(form: dict) -> dict:
    """The ``/api/v1/estimate`` request body for the estimate form."""
    body: dict = {"web_width": _quantity(form, "web_width", WIDTH_UNITS)}
    basis = form["run_basis"] if form["run_basis"] in RUN_BASES else "length"
    if basis == "length":
        body["run_length"] = _quantity(form, "run_length", RUN_UNITS)
    else:
        if basis == "impressions":
            body["impressions"] = _count(form["impressions"], "impressions")
        else:
            body["labels"] = _count(form["labels"], "labels")
        body["repeat"] = _quantity(form, "repeat", REPEAT_UNITS)
        required = basis == "labels"
        across = _count(form["across"], "across", required=required)
        around = _count(form["around"], "around", required=required)
        if across is not None or around is not None:
            body["across"], body["around"] = across, around
    makeready = _quantity(form, "makeready", RUN_UNITS, required=False)
    if makeready is not None:
        body["makeready"] = makeready
    body["waste"] = parse_percent(form["waste"], "waste", required=False) or 0.0
    body["stations"] = []
    for index, station in enumerate(form["stations"]):
        where = f"stations[{index}]."
        mine = {"prefix": where, "record": form}
        item = {
            "name": station["name"],
            "anilox_volume": _quantity(station, "anilox_volume", ANILOX_UNITS, unit_field="anilox_unit", **mine),
        }
        area = _quantity(
            station, "inked_area_per_label", LABEL_AREA_UNITS, required=False, unit_field="inked_area_unit", **mine
        )
        if area is not None:
            item["inked_area_per_label"] = area  # instead of the coverage, which is then not used
        elif not station["coverage"].strip() and station.get("coverage_kind") in practice.TYPICAL_COVERAGES:
            item["coverage"] = practice.TYPICAL_COVERAGES[station["coverage_kind"]]  # the rough choice, no script
        else:
            item["coverage"] = parse_percent(station["coverage"], where + "coverage")
        item["transfer"] = parse_percent(station["transfer"], where + "transfer")
        item["ink_density"] = _quantity(station, "ink_density", DENSITY_UNITS, unit_field="ink_density_unit", **mine)
        for key, units in (("fill", FILL_UNITS), ("on_hand", ON_HAND_UNITS)):
            value = _quantity(station, key, units, required=False, **mine)
            if value is not None:
                item[key] = value
        price = parse_number(station["price_per_kg"], where + "price_per_kg", required=False)
        if price is not None:
            per = choose(station["price_unit"], PRICE_UNITS, where + "price_unit")
            item[f"price_per_{per}"] = price
        body["stations"].append(item)
    return body


def _renames(form: dict) -> dict:
    """API field → the form field that shows its message."""
    renames = {f"stations[{i}].price_per_lb": f"stations[{i}].price_per_kg" for i in range(len(form["stations"]))}
    if form["run_basis"] != "labels":
        renames["labels"] = "impressions" if form["run_basis"] == "impressions" else "run_length"
    return renames


# From this many stations on, a full form shows the stations already filled in folded (a press's
# process colours plus a spot or two still fit on a phone's screens; six and more do not).
FOLD_FROM = 6


def _folded(form: dict, errors: dict) -> list[bool]:
    """Which stations show as a one-line summary: in a long job, those filled in without a message
    (the last one stays open, for the station just added)."""
    stations = form["stations"]
    if len(stations) < FOLD_FROM:
        return [False] * len(stations)
    folded = []
    for index, station in enumerate(stations):
        mine = any(name.startswith(f"stations[{index}].") for name in errors)
        filled = all(station[key].strip() for key in ("name", "anilox_volume", "transfer", "ink_density")) and (
            station["coverage"].strip() or station["inked_area_per_label"].strip()
        )
        folded.append(filled and not mine and index < len(stations) - 1)
    return folded


def entered(body: dict) -> dict:
    """The inputs as the printout lists them, read from the API request body (as a saved estimate keeps it)."""

    def text(key, value):
        if isinstance(value, str) and " " in value.strip():  # "300.0 mm" as the page wrote it: 300 mm
            amount, _, unit = value.strip().rpartition(" ")
            try:
                return f"{format_number(float(amount))} {unit_label(unit)}"
            except ValueError:
                pass
        return "—" if value is None else shown(key, value, shares=SHARES, money=MONEY)

    rows = []
    for station in body.get("stations", []):
        if "inked_area_per_label" in station:
            cover = f"{text('area', station['inked_area_per_label'])} a label"
        else:
            cover = text("coverage", station.get("coverage"))
        price = "—"
        for per in PRICE_UNITS:
            if station.get(f"price_per_{per}") is not None:
                price = f"{currency(format_money(float(station[f'price_per_{per}'])))}/{per}"
        rows.append(
            [
                station.get("name", ""),
                text("anilox_volume", station.get("anilox_volume")),
                cover,
                text("transfer", station.get("transfer")),
                text("ink_density", station.get("ink_density")),
                price,
                text("fill", station.get("fill")),
                text("on_hand", station.get("on_hand")),
            ]
        )
    return {"web_width": text("web_width", body.get("web_width")), "rows": rows}


def _share_hint(text) -> str | None:
    """ "Did you mean 50 %?" for a share typed as 0.5 in a percentage field (a hint: the value is used as typed)."""
    try:
        value = parse_percent(text, None, required=False)
    except InputError:
        return None
    if value is None or not 0.0 < value * 100.0 < 1.0:
        return None
    typed = format_number(value * 100.0, 4)
    return f"Did you mean {format_percent(value * 100.0)} %? This field is in percent: {typed} here is {typed} %."


def notes(form: dict) -> dict:
    """Hints beside fields, by form field (not errors, nothing changed): a share typed where a
    percentage is asked, a coverage the inked area per label stands in for, a typical coverage."""
    found = {}
    waste = _share_hint(form["waste"])
    if waste:
        found["waste"] = waste
    for index, station in enumerate(form["stations"]):
        p = f"stations[{index}]."
        for key in PERCENT_FIELDS:
            hint = _share_hint(station[key])
            if hint:
                found[p + key] = hint
        kind = station.get("coverage_kind", "")
        if station["inked_area_per_label"].strip():
            found[p + "coverage"] = "Not used: the inked area per label below gives this station's coverage."
        elif p + "coverage" not in found and kind in practice.TYPICAL_COVERAGES:
            typical = format_percent(practice.TYPICAL_COVERAGES[kind])
            typed = station["coverage"].replace("%", "").strip()
            if not typed or typed == typical:
                found[p + "coverage"] = (
                    f"{typical} % is typical for {kind} artwork (common practice): a rough guess, "
                    "change it to match the job."
                )
        density, unit = START[current_system()]["density"]
        if "white" in station["name"].lower() and (station["ink_density"].strip(), station["ink_density_unit"]) == (
            density,
            unit,
        ):
            found[p + "ink_density"] = f"Whites are heavier: {density_hint(current_system(), whites_only=True)}."
    return found


def density_hint(system: str, *, whites_only: bool = False) -> str:
    """Typical press-ready densities in the user's units (common practice, calc.practice)."""
    unit = START[system]["density"][1]

    def span(r) -> str:
        return f"{format_number(r.low.to(unit).magnitude)}–{format_number(r.high.to(unit).magnitude)}"

    whites = span(practice.WHITE_DENSITY_TYPICAL)
    if whites_only:
        return f"opaque whites are about {whites} {unit_label(unit)} (common practice): check this station's density"
    most = span(practice.INK_DENSITY_TYPICAL)
    return f"Most inks {most} {unit_label(unit)}; opaque whites heavier, about {whites} (common practice)."


def _typed(form: dict, name: str):
    """What the form holds for a field name of a message (``stations[2].coverage`` too)."""
    if name.startswith("stations[") and "]." in name:
        index, _, key = name.removeprefix("stations[").partition("].")
        try:
            return form["stations"][int(index)].get(key)
        except (ValueError, IndexError):
            return None
    return form.get(name)


def _not_yet(form: dict, errors: dict, *, live: bool) -> str | None:
    """While the form is being edited (``live``), an empty field is not yet an error: the field
    that is left empty, or None when the message stands (a wrong value, a field left, a submit)."""
    if not live or len(errors) != 1:
        return None
    name = next(iter(errors))
    typed = _typed(form, name)
    if not isinstance(typed, str) or typed.strip():
        return None
    if request.form.get("_event") == "submit" or name in request.form.get("_left", "").split():
        return None
    return name


def _work_out(form: dict, context: dict, *, live: bool) -> None:
    """Fill ``context`` with the estimate of ``form`` (or its errors and what is not yet updated)."""
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, estimate=present(run(body), current_system()), entered=entered(body))
        context["csv_body"] = json.dumps(body, separators=(",", ":"))
    except InputError as exc:
        errors = field_errors(exc, _renames(form))
        empty = _not_yet(form, errors, live=live)
        if empty is not None:
            context["status"] = f"Not yet updated: fill in {field_name(empty).lower()}."
        else:
            context["errors"] = errors
            context["status"] = "Not yet updated: fix the value marked beside its field."


def saved_page(text: str):
    """``/estimate?snippet=<id>``: a saved estimate as the page shows it, with the same Print and CSV.

    Worked out with today's core from the saved inputs (the saved snippet's page compares them
    with the results as saved); the header holds the snippet's job, press, who saved it and when.
    """
    from webapp.common.db import get_db
    from webapp.snippets import store

    try:
        snippet = store.get(get_db(), int(text))
    except (ValueError, OverflowError, store.NotFound):
        abort(404)
    if snippet["kind"] != "estimate":
        abort(404)
    context = {"snippet": snippet, "estimate": None, "error": None, "currency": current_app.config.get("CURRENCY", "")}
    try:
        body = snippet["inputs"]
        context.update(estimate=present(run(dict(body)), current_system()), entered=entered(body))
        context["csv_body"] = json.dumps(body, separators=(",", ":"))
    except InputError as exc:
        context["error"] = exc
    meta = [("Job", snippet.get("job_number")), ("Press", snippet.get("press")), ("Station", snippet.get("station"))]
    meta += [("Prepared by", snippet.get("saved_by")), ("Saved", when(snippet.get("created_at")))]
    context["ticket"] = [(label, value) for label, value in meta if value]
    context["today"] = snippet["title"]
    return render_template("calculators/estimate_saved.html", **context)


def page():
    if request.method == "GET" and "csv" in request.args:
        return csv_download(request.args.get("csv", ""))
    if request.method == "GET" and "snippet" in request.args:
        return saved_page(request.args.get("snippet", ""))
    form = estimate_form()
    action = request.form.get("action", "") if request.method == "POST" else ""
    target = request.headers.get("HX-Target") if is_htmx() else None
    context = {
        "form": form,
        "errors": {},
        "estimate": None,
        "status": None,
        "notes": notes(form),
        "today": date.today().isoformat(),
        "density_hint": density_hint(current_system()),
        "ticket_fields": TICKET_FIELDS,
        "ticket": [(label, form[name]) for name, label in TICKET_FIELDS if form[name].strip()],
        "currency": current_app.config.get("CURRENCY", ""),
        "snippet_kind": "estimate",
        "max_stations": MAX_STATIONS,
        "job_fields": JOB_FIELDS,
        "station_keys": STATION_KEYS,
        "units": {
            "width": WIDTH_UNITS,
            "run": RUN_UNITS,
            "repeat": REPEAT_UNITS,
            "anilox": ANILOX_UNITS,
            "density": DENSITY_UNITS,
            "fill": FILL_UNITS,
            "on_hand": ON_HAND_UNITS,
            "price": PRICE_UNITS,
            "label_area": LABEL_AREA_UNITS,
        },
        "coverage_kinds": [(kind, format_percent(share)) for kind, share in practice.TYPICAL_COVERAGES.items()],
    }
    _work_out(form, context, live=target is not None)
    if context["estimate"] is None and action == "add" and target == "estimate-area":
        # The station just added is empty: keep the totals of the stations before it, marked so.
        before = FormValues(form)
        before["stations"] = form["stations"][:-1]
        earlier = {"errors": {}, "estimate": None, "status": None}
        _work_out(before, earlier, live=True)
        if earlier["estimate"] is not None:
            new = form["stations"][-1]["name"]
            context.update(earlier, status=f"Not yet updated: {new} counts once its fields are filled in.")
            context.pop("snippet_inputs", None)
    elif context["estimate"] is not None and action == "csv" and not is_htmx():
        return csv_download(context["csv_body"])  # the no-script page's download button
    context["folded"] = _folded(form, context["errors"])
    if target == "estimate-area":
        return respond("calculators/estimate.html", "calculators/_estimate_area.html", oob=False, **context)
    if target is not None and context["estimate"] is None:
        # While the form is edited the last good totals stay on screen: only the messages beside
        # the fields and the "not yet updated" line change (out of band).
        response = respond("calculators/estimate.html", "calculators/_estimate_result.html", stale=True, **context)
        response.headers["HX-Reswap"] = "none"
        return response
    return respond("calculators/estimate.html", "calculators/_estimate_result.html", **context)


ESTIMATE = Calculator(
    kind="estimate",
    title="Job ink estimate",
    compute=compute,
    path="/estimate",
    view=page,
    nav="Job ink",
    shares=SHARES,
    money=MONEY,
    main_input="web_width",
    required=REQUIRED,
    optional=OPTIONAL,
    nested={"stations": (STATION_REQUIRED, STATION_OPTIONAL)},
    limits=LIMITS,
    answer=Answer(
        {
            "printed_area": "quantity",
            "stations": [
                Answer(
                    {
                        "name": "text",
                        "substrate_wet": "quantity",
                        "ink_mass": "quantity",
                        "ink_volume": "quantity",
                        "coverage": "number",
                        "pull_mass": "quantity",
                    },
                    optional={
                        "cost": "number",
                        "mileage": "quantity",
                        "price_per_kg": "number",
                        "ink_per_1000_impressions": "quantity",
                        "ink_per_1000_labels": "quantity",
                        "cost_per_1000_impressions": "number",
                        "cost_per_1000_labels": "number",
                        "on_hand_mass": "quantity",
                        "on_hand_prints": Answer(
                            {"run_length": "quantity"}, optional={"impressions": "integer", "labels": "integer"}
                        ),
                        "enough": "boolean",
                        "short_by": "quantity",
                    },
                )
            ],
            "total_ink_mass": "quantity",
            "run_length": "quantity",
            "printed_length": "quantity",
            "total_ink_volume": "quantity",
            "total_pull_mass": "quantity",
        },
        optional={
            "total_cost": "number",
            "impressions": "integer",
            "labels": "integer",
            "cost_per_1000_impressions": "number",
            "cost_per_1000_labels": "number",
        },
    ),
)
