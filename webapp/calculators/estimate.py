"""Job ink: how much ink a job takes per station and in all, and what it costs."""

from __future__ import annotations

from flask import request

from calc import InputError
from calc.display import format_money, show_value
from calc.estimate import MAX_STATIONS, Station, job_ink
from webapp.calculators.spec import Calculator
from webapp.common.formatting import both, steps
from webapp.common.forms import field_errors, form_values, parse_amount, parse_number, parse_percent, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import check_fields, quantity_json
from webapp.common.preference import current_system

STATION_REQUIRED = {"name", "anilox_volume", "coverage", "transfer", "ink_density"}
STATION_OPTIONAL = {"price_per_kg"}
SHARES = frozenset({"coverage", "transfer", "waste"})
MONEY = frozenset({"cost", "total_cost", "price_per_kg"})


def run(body: dict):
    body = check_fields(body, {"web_width", "stations"}, {"run_length", "impressions", "repeat", "waste"})
    stations_in = body.pop("stations")
    if not isinstance(stations_in, list) or not 1 <= len(stations_in) <= MAX_STATIONS:
        raise InputError("stations", f"must be a list of 1 to {MAX_STATIONS} stations")
    stations = [
        Station(**check_fields(item, STATION_REQUIRED, STATION_OPTIONAL, prefix=f"stations[{index}]"))
        for index, item in enumerate(stations_in)
    ]
    return job_ink(stations=stations, **body)


def compute(body: dict) -> dict:
    estimate = run(body)
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
        if result.cost is not None:
            item["cost"] = result.cost
        answer["stations"].append(item)
    if estimate.total_cost is not None:
        answer["total_cost"] = estimate.total_cost
    return answer


# --- the page -------------------------------------------------------------------


def present(job, system: str) -> dict:
    stations = []
    for station in job.stations:
        stations.append(
            {
                "name": station.name,
                "film": both(station.substrate_wet, "film", system),
                "mass": both(station.ink_mass, "mass", system),
                "volume": both(station.ink_volume, "volume", system),
                "cost": None if station.cost is None else format_money(station.cost),
                "steps": steps(station.steps, system),
            }
        )
    return {
        "area": both(job.printed_area, "area", system),
        "run_length": both(job.run_length, "length", system),
        "waste": show_value(job.waste, system),
        "stations": stations,
        "total_mass": both(job.total_ink_mass, "mass", system),
        "total_volume": both(job.total_ink_volume, "volume", system),
        "total_cost": None if job.total_cost is None else format_money(job.total_cost),
        "priced": any(station.cost is not None for station in job.stations),
        "steps": steps(job.steps, system),
    }


ANILOX_UNITS = ("BCM/in2", "cm3/m2")
DENSITY_UNITS = ("g/cm3", "lb/gal")
WIDTH_UNITS = ("mm", "in")
RUN_UNITS = ("m", "ft")
REPEAT_UNITS = ("mm", "in")
TYPICAL_TRANSFER = "25"  # about half to the plate, half of that to the substrate (common practice)
DEMO_STATIONS = (
    ("Cyan", "3.0", "35"),
    ("Magenta", "3.0", "30"),
    ("Yellow", "3.0", "25"),
    ("Black", "3.5", "20"),
)
DEFAULTS = {
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
    form = form_values(DEFAULTS)
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


def form_body(form: dict) -> dict:
    """The ``/api/v1/estimate`` request body for the estimate form."""
    body: dict = {"web_width": quantity_text(*parse_amount(form, "web_width", "web_width_unit", WIDTH_UNITS))}
    if form["run_basis"] == "impressions":
        impressions = parse_number(form["impressions"], "impressions")
        body["impressions"] = int(impressions) if impressions.is_integer() else impressions
        body["repeat"] = quantity_text(*parse_amount(form, "repeat", "repeat_unit", REPEAT_UNITS))
    else:
        body["run_length"] = quantity_text(*parse_amount(form, "run_length", "run_length_unit", RUN_UNITS))
    body["waste"] = parse_percent(form["waste"], "waste", required=False) or 0.0
    body["stations"] = []
    for index, station in enumerate(form["stations"]):
        where = f"stations[{index}]."
        volume = parse_amount(station, "anilox_volume", "anilox_unit", ANILOX_UNITS, prefix=where, record=form)
        density = parse_amount(station, "ink_density", "ink_density_unit", DENSITY_UNITS, prefix=where, record=form)
        item = {
            "name": station["name"],
            "anilox_volume": quantity_text(*volume),
            "coverage": parse_percent(station["coverage"], where + "coverage"),
            "transfer": parse_percent(station["transfer"], where + "transfer"),
            "ink_density": quantity_text(*density),
        }
        price = parse_number(station["price_per_kg"], where + "price_per_kg", required=False)
        if price is not None:
            item["price_per_kg"] = price
        body["stations"].append(item)
    return body


def page():
    form = estimate_form()
    context = {"form": form, "errors": {}, "estimate": None, "snippet_kind": "estimate", "max_stations": MAX_STATIONS}
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, estimate=present(run(body), current_system()))
    except InputError as exc:
        context["errors"] = field_errors(exc)
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
)
