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

from flask import Response, request

from calc import InputError
from calc.display import format_money, format_number, show_value
from calc.estimate import (
    IMPRESSIONS_HIGH,
    MAX_STATIONS,
    NAME_MAX,
    REPEAT_HIGH,
    RUN_LENGTH_HIGH,
    WEB_WIDTH_HIGH,
    Station,
    job_ink,
)
from calc.film import ANILOX_VOLUME_HIGH
from calc.units import DENSITY_HIGH, DENSITY_LOW
from webapp.calculators.spec import Answer, Calculator
from webapp.common.formatting import both, steps
from webapp.common.forms import (
    choose,
    field_errors,
    form_values,
    parse_amount,
    parse_number,
    parse_percent,
    quantity_text,
)
from webapp.common.htmx import is_htmx, respond
from webapp.common.jsonapi import check_fields, quantity_json
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


def _per_1000(station, job, system: str) -> tuple | None:
    """(ink, cost) per 1,000 labels, or else per 1,000 impressions, where the count is known."""
    for count, what in ((job.labels, "labels"), (job.impressions, "impressions")):
        if count:
            ink = getattr(station, f"ink_per_1000_{what}")
            cost = getattr(station, f"cost_per_1000_{what}")
            return both(ink, "mass", system)[0], None if cost is None else format_money(cost)
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
                "cost": None if station.cost is None else format_money(station.cost),
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
        "total_cost": None if job.total_cost is None else format_money(job.total_cost),
        "cost_per_1000_labels": None if job.cost_per_1000_labels is None else format_money(job.cost_per_1000_labels),
        "cost_per_1000_impressions": None
        if job.cost_per_1000_impressions is None
        else format_money(job.cost_per_1000_impressions),
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
    writer.writerow([name for name, _ in CSV_COLUMNS])
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
    }


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
    if action == "add" and len(stations) < MAX_STATIONS:
        stations.append(station_defaults(len(stations), system) | {"name": f"Station {len(stations) + 1}"})
    elif action.startswith("remove-") and len(stations) > 1:
        try:
            del stations[int(action.removeprefix("remove-"))]
        except (ValueError, IndexError):
            pass
    form["stations"] = stations
    form["station_count"] = str(len(stations))
    return form


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
            "coverage": parse_percent(station["coverage"], where + "coverage"),
            "transfer": parse_percent(station["transfer"], where + "transfer"),
            "ink_density": _quantity(station, "ink_density", DENSITY_UNITS, unit_field="ink_density_unit", **mine),
        }
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
        filled = all(station[key].strip() for key in ("name", "anilox_volume", "coverage", "transfer", "ink_density"))
        folded.append(filled and not mine and index < len(stations) - 1)
    return folded


def page():
    if request.method == "GET" and "csv" in request.args:
        return csv_download(request.args.get("csv", ""))
    form = estimate_form()
    context = {
        "form": form,
        "errors": {},
        "estimate": None,
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
        },
    }
    body = None
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, estimate=present(run(body), current_system()))
    except InputError as exc:
        context["errors"] = field_errors(exc, _renames(form))
    if body is not None and context["estimate"] is not None:
        context["csv_body"] = json.dumps(body, separators=(",", ":"))
        if request.form.get("action") == "csv" and not is_htmx():
            return csv_download(context["csv_body"])  # the no-script page's download button
    context["folded"] = _folded(form, context["errors"])
    if request.headers.get("HX-Target") == "estimate-area":
        return respond("calculators/estimate.html", "calculators/_estimate_area.html", oob=False, **context)
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
