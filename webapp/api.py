"""The JSON API, ``/api/v1``: a stable contract over the calculation core.

Requests give quantities as strings ``"<number> <unit>"`` and shares as plain
numbers from 0 to 1; answers give quantities as ``{"value", "unit"}``. Every
bad input gets a 4xx answer ``{"error": {"field", "message"}}``.
"""

from __future__ import annotations

from flask import Blueprint, jsonify, request

from calc import InputError
from calc.equivalents import equivalents
from calc.estimate import MAX_STATIONS, Station, job_ink
from calc.film import film_chain
from calc.units import convert

bp = Blueprint("api", __name__, url_prefix="/api/v1")

MAX_BODY = 64 * 1024


def error_response(field: str | None, message: str, status: int = 400):
    response = jsonify(error={"field": field, "message": message})
    response.status_code = status
    return response


@bp.errorhandler(InputError)
def input_error(exc: InputError):
    return error_response(exc.field, exc.message, 400)


@bp.before_request
def limit_body():
    # Flask reads this per request: calculation bodies are small.
    request.max_content_length = MAX_BODY


def quantity_json(quantity, unit: str | None = None) -> dict:
    """``{"value": <full precision>, "unit": <spelling>}`` in ``unit`` (as spelt)."""
    if unit is not None:
        quantity = quantity.to(unit)
    spelling = unit if unit is not None else f"{quantity.units:~P}"
    return {"value": float(quantity.magnitude), "unit": spelling}


def check_fields(body, required: set[str], optional: set[str] = frozenset(), prefix: str = "") -> dict:
    """``body`` checked for missing and unknown fields; optional ``null`` fields count as absent."""
    where = f"{prefix}." if prefix else ""
    if not isinstance(body, dict):
        raise InputError(prefix or None, "must be a JSON object")
    for name in body:
        if name not in required and name not in optional:
            raise InputError(f"{where}{name}", "is not a field of this request")
    for name in sorted(required):
        if body.get(name) is None:
            raise InputError(f"{where}{name}", "is required")
    return {name: value for name, value in body.items() if value is not None}


def request_body() -> dict:
    """The request's JSON body, which must be an object."""
    body = request.get_json(force=True, silent=True)
    if not isinstance(body, dict):
        raise InputError(None, "the request body must be a JSON object")
    return body


# Each calculation takes a request body (as sent to the API) and gives the
# API's answer; saved snippets store exactly these two and re-run them here.


def compute_convert(body: dict) -> dict:
    body = check_fields(body, {"quantity", "to"}, {"density"})
    if not isinstance(body["to"], str):
        raise InputError("to", "must be a unit spelling such as 'cm3/m2'")
    result = convert(body["quantity"], body["to"], body.get("density"))
    return {"result": {"value": float(result.magnitude), "unit": body["to"].strip()}}


def compute_film(body: dict) -> dict:
    body = check_fields(
        body,
        {"anilox_volume", "anilox_to_plate", "plate_to_substrate"},
        {"solids_by_volume", "solids_by_weight", "ink_density"},
    )
    chain = film_chain(**body)
    answer = {
        "theoretical_wet": quantity_json(chain.theoretical_wet, "um"),
        "plate_wet": quantity_json(chain.plate_wet, "um"),
        "substrate_wet": quantity_json(chain.substrate_wet, "um"),
    }
    if chain.dry is not None:
        answer["dry"] = quantity_json(chain.dry, "um")
    if chain.wet_coat_weight is not None:
        answer["wet_coat_weight"] = quantity_json(chain.wet_coat_weight, "g/m2")
    if chain.dry_coat_weight is not None:
        answer["dry_coat_weight"] = quantity_json(chain.dry_coat_weight, "g/m2")
    return answer


STATION_REQUIRED = {"name", "anilox_volume", "coverage", "transfer", "ink_density"}
STATION_OPTIONAL = {"price_per_kg"}


def compute_estimate(body: dict) -> dict:
    body = check_fields(body, {"web_width", "stations"}, {"run_length", "impressions", "repeat", "waste"})
    stations_in = body.pop("stations")
    if not isinstance(stations_in, list) or not 1 <= len(stations_in) <= MAX_STATIONS:
        raise InputError("stations", f"must be a list of 1 to {MAX_STATIONS} stations")
    stations = [
        Station(**check_fields(item, STATION_REQUIRED, STATION_OPTIONAL, prefix=f"stations[{index}]"))
        for index, item in enumerate(stations_in)
    ]
    estimate = job_ink(stations=stations, **body)
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


def compute_equivalents(body: dict) -> dict:
    """Every useful equivalent of one value, grouped by meaning (the quick converters)."""
    body = check_fields(body, {"quantity"}, {"density", "coverage"})
    result = equivalents(body["quantity"], body.get("density"), body.get("coverage"))
    return {
        "kind": result.kind,
        "groups": [
            {
                "key": group.key,
                "title": group.title,
                "note": group.note,
                "values": [quantity_json(value, unit) for value, unit in zip(group.values, group.units, strict=True)],
            }
            for group in result.groups
        ],
    }


CALCULATIONS = {
    "convert": compute_convert,
    "film": compute_film,
    "estimate": compute_estimate,
    "equivalents": compute_equivalents,
}


@bp.post("/<any(convert, film, estimate, equivalents):kind>")
def calculate(kind: str):
    return jsonify(CALCULATIONS[kind](request_body()))
