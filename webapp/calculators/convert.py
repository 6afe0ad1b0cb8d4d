"""Converting one value: to one unit (``convert``, API only) and to every
useful equivalent at once (``equivalents``, the quick converters page at ``/``)."""

from __future__ import annotations

from calc import InputError
from calc.display import in_order, show
from calc.equivalents import equivalents
from calc.units import MAX_UNIT_CHARS, convert
from webapp.calculators.spec import Answer, Calculator
from webapp.common.formatting import steps
from webapp.common.forms import choose, field_errors, form_values, parse_number, parse_percent, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import check_fields, quantity_json
from webapp.common.preference import current_system

# --- convert: one value to one unit (API) -----------------------------------------


CONVERT_REQUIRED = {"quantity": "quantity", "to": "text"}
CONVERT_OPTIONAL = {"density": "quantity"}


def compute_convert(body: dict) -> dict:
    body = check_fields(body, CONVERT_REQUIRED, CONVERT_OPTIONAL)
    if not isinstance(body["to"], str):
        raise InputError("to", "must be a unit spelling such as 'cm3/m2'")
    result = convert(body["quantity"], body["to"], body.get("density"))
    return {"result": {"value": float(result.magnitude), "unit": body["to"].strip()}}


CONVERT = Calculator(
    kind="convert",
    title="Conversion",
    compute=compute_convert,
    main_input="quantity",
    required=CONVERT_REQUIRED,
    optional=CONVERT_OPTIONAL,
    limits={
        "quantity": {"description": "the value to convert, e.g. '3.5 BCM/in2'"},
        "to": {
            "minLength": 1,
            "maxLength": MAX_UNIT_CHARS,
            "description": "the unit to convert to, e.g. 'cm3/m2'; the answer's unit is spelt as sent",
        },
        "density": {"description": "the ink's density (0.3 to 5 g/cm3), where the conversion needs one"},
    },
    answer=Answer({"result": "quantity"}),
)

# --- equivalents: the quick converters ---------------------------------------------


EQUIVALENTS_REQUIRED = {"quantity": "quantity"}
EQUIVALENTS_OPTIONAL = {"density": "quantity", "coverage": "share"}


def run_equivalents(body: dict):
    body = check_fields(body, EQUIVALENTS_REQUIRED, EQUIVALENTS_OPTIONAL)
    return equivalents(body["quantity"], body.get("density"), body.get("coverage"))


def compute_equivalents(body: dict) -> dict:
    """Every useful equivalent of one value, grouped by meaning (the quick converters)."""
    result = run_equivalents(body)
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


def present(result, system: str) -> dict:
    groups = []
    for group in result.groups:
        by_unit = dict(zip(group.units, group.values, strict=True))
        shown = [show(by_unit[unit], unit) for unit in in_order(group.units, system)]
        groups.append({"key": group.key, "title": group.title, "note": group.note, "values": shown})
    return {"kind": result.kind, "groups": groups, "steps": steps(result.steps, system)}


UNITS = (
    ("Anilox volume and film", ("BCM/in2", "cm3/m2", "um", "mil", "mm", "in")),
    ("Line screen", ("lpi", "lpcm")),
    ("Coat weight and mileage", ("g/m2", "lb/ream", "m2/kg", "ft2/lb", "MSI/lb")),
    ("Area", ("m2", "ft2", "MSI", "in2")),
    ("Ink volume and mass", ("l", "gal", "kg", "lb")),
    ("Density", ("g/cm3", "lb/gal")),
)
UNIT_SET = {unit for _, units in UNITS for unit in units}
DENSITY_UNITS = ("g/cm3", "lb/gal")
DEFAULTS = {"value": "", "unit": "BCM/in2", "density": "", "density_unit": "g/cm3", "coverage": ""}
# The API names the typed value "quantity"; the form splits it into number and unit.
FORM_FIELDS = {"quantity": "value"}


def form_body(form: dict) -> dict | None:
    """The API request body for the form, or None while no value is typed."""
    unit = choose(form["unit"], UNIT_SET, "unit")
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


def page():
    form = form_values(DEFAULTS)
    context = {"form": form, "errors": {}, "result": None, "units": UNITS, "snippet_kind": "equivalents"}
    try:
        body = form_body(form)
        if body is not None:
            result = run_equivalents(body)
            context.update(body=body, result=present(result, current_system()), snippet_inputs=body)
    except InputError as exc:
        context["errors"] = field_errors(exc, FORM_FIELDS)
    return respond("calculators/converters.html", "calculators/_converter_result.html", **context)


EQUIVALENTS = Calculator(
    kind="equivalents",
    title="Quick converter",
    compute=compute_equivalents,
    path="/",
    view=page,
    nav="Convert",
    shares=frozenset({"coverage"}),
    main_input="quantity",
    required=EQUIVALENTS_REQUIRED,
    optional=EQUIVALENTS_OPTIONAL,
    limits={
        "quantity": {"description": "the value to show in every useful unit, more than 0, e.g. '4.5 BCM/in2'"},
        "density": {"description": "the ink's density (0.3 to 5 g/cm3): adds coat weights and masses"},
        "coverage": {"description": "share of the area inked: adds ink per printed area"},
    },
    answer=Answer(
        {
            "kind": "text",
            "groups": [Answer({"key": "text", "title": "text", "note": "text or null", "values": ["quantity"]})],
        }
    ),
)
