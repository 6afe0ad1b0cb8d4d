"""Converting one value: to one unit (``convert``, API only) and to every
useful equivalent at once (``equivalents``, the quick converters page at ``/``)."""

from __future__ import annotations

from flask import request, url_for

from calc import InputError
from calc.display import in_order, role_units, show, unit_label
from calc.equivalents import (
    COUNTERPARTS,
    EMPTIED_NOTE,
    KINDS,
    SYMBOLS,
    VOLUME_PER_AREA_UNITS,
    conversion_step,
    equivalents,
    typed_spelling,
)
from calc.film import TYPICAL_ANILOX_TO_PLATE, TYPICAL_PLATE_TO_SUBSTRATE
from calc.units import MAX_UNIT_CHARS, Q_, convert
from webapp.calculators.spec import Answer, Calculator
from webapp.common.formatting import steps
from webapp.common.forms import choose, field_errors, form_values, parse_amount, parse_percent, quantity_text
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
    title="Convert to one unit",
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


def _plain(number) -> str:
    """A number for a link, at full precision: ``7.0`` → ``'7'``, ``4.55`` → ``'4.55'``."""
    text = repr(float(number))
    return text.removesuffix(".0")


def _typed_first(groups, typed: str | None) -> list:
    """The groups with the one stating the typed unit first: the question's own card leads."""
    return sorted(groups, key=lambda group: typed not in group.units)


def _find(groups, spelling: str | None):
    """The value of ``spelling`` in the first group that states it, or None."""
    for group in groups:
        if spelling in group.units:
            return group.values[group.units.index(spelling)]
    return None


def present(result, system: str, typed: str | None = None, answer_in: str = "") -> dict:
    """The converter's answer for the page: the answer first, then the cards.

    ``typed`` is the unit the value was typed in (the menu's spelling) and
    ``answer_in`` the unit the user asked the answer in ("" for the other
    system's unit); the answer is the typed value in that unit, never a repeat
    of it. The card of the typed unit comes first.
    """
    typed = typed if typed is not None else typed_spelling(result.quantity)
    counterpart = COUNTERPARTS.get(typed)
    lead_unit, lead_note = counterpart, None
    if answer_in and answer_in != typed:
        if _find(result.groups, answer_in) is not None:
            lead_unit = answer_in
        elif result.quantity.dimensionality == Q_(1.0, answer_in).dimensionality:
            lead_unit = answer_in  # a unit of the same kind the cards do not list
        else:
            lead_note = f"{unit_label(answer_in)} is not a unit for {KINDS[result.kind]}"
    answer = None
    working = list(result.steps)
    if lead_unit is not None:
        value = _find(result.groups, lead_unit)
        if value is None:
            value = result.quantity.to(lead_unit)
        answer = {"typed": show(result.quantity, typed), "shown": show(value, lead_unit), "note": lead_note}
        if lead_unit != counterpart and result.quantity.dimensionality == value.dimensionality:
            symbol = SYMBOLS["volume_per_area" if typed in VOLUME_PER_AREA_UNITS else result.kind]
            working.insert(0, conversion_step(result.quantity, typed, lead_unit, symbol))
    groups = []
    for group in _typed_first(result.groups, typed):
        by_unit = dict(zip(group.units, group.values, strict=True))
        shown = [show(by_unit[unit], unit) for unit in in_order(group.units, system)]
        entry = {"key": group.key, "title": group.title, "note": group.note, "values": shown}
        if group.note == EMPTIED_NOTE and typed in VOLUME_PER_AREA_UNITS:
            # The cells never empty completely: about half goes to the plate and half of that to the substrate.
            share = TYPICAL_ANILOX_TO_PLATE * TYPICAL_PLATE_TO_SUBSTRATE
            entry["substrate"] = show(by_unit["um"] * share, role_units("film", system)[0])
            entry["film_link"] = url_for(
                "calculators.film", anilox_volume=_plain(result.quantity.magnitude), anilox_unit=typed
            )
        groups.append(entry)
    return {"kind": result.kind, "answer": answer, "groups": groups, "steps": steps(working, system)}


UNITS = (
    ("Anilox volume and film", ("BCM/in2", "cm3/m2", "um", "mil", "mm", "in")),
    ("Line screen", ("lpi", "lpcm")),
    ("Coat weight and mileage", ("g/m2", "lb/ream", "m2/kg", "ft2/lb", "MSI/lb")),
    ("Area", ("m2", "ft2", "MSI", "in2")),
    ("Ink volume and mass", ("l", "gal", "kg", "lb")),
    ("Density", ("g/cm3", "lb/gal")),
)
UNIT_ORDER = tuple(unit for _, units in UNITS for unit in units)
UNIT_SET = set(UNIT_ORDER)
DENSITY_UNITS = ("g/cm3", "lb/gal")
# "Answer in": a unit the user picks for the answer, remembered on the device
# in this cookie (and localStorage, by inkfilm.js); "" is the other system's unit.
ANSWER_COOKIE = "inkfilm_answer_in"
DEFAULTS = {"value": "", "unit": "BCM/in2", "density": "", "density_unit": "g/cm3", "coverage": "", "answer_in": ""}
# The API names the typed value "quantity"; the form splits it into number and unit.
FORM_FIELDS = {"quantity": "value"}
# The unit menus of the form, by the field whose text may carry a unit.
UNIT_MENUS = {"value": "unit", "density": "density_unit"}


def remembered_answer_in() -> str:
    """The "answer in" unit this device chose, if it is one the menu offers."""
    chosen = request.cookies.get(ANSWER_COOKIE, "")
    return chosen if chosen in UNIT_SET else ""


def form_body(form: dict) -> dict | None:
    """The API request body for the form, or None while no value is typed.

    The value may carry its unit (``4.5 bcm``): the unit menu is then set from it.
    """
    amount = parse_amount(form, "value", "unit", UNIT_ORDER, required=False)
    if amount is None:
        choose(form["unit"], UNIT_SET, "unit")
        return None
    body: dict = {"quantity": quantity_text(*amount)}
    density = parse_amount(form, "density", "density_unit", DENSITY_UNITS, required=False)
    if density is not None:
        body["density"] = quantity_text(*density)
    coverage = parse_percent(form["coverage"], "coverage", required=False)
    if coverage is not None:
        body["coverage"] = coverage
    return body


def page():
    form = form_values(DEFAULTS | {"answer_in": remembered_answer_in()})
    context = {
        "form": form,
        "errors": {},
        "result": None,
        "units": UNITS,
        "density_units": DENSITY_UNITS,
        "snippet_kind": "equivalents",
    }
    try:
        answer_in = choose(form["answer_in"], UNIT_SET | {""}, "answer_in")
        body = form_body(form)
        if body is not None:
            result = run_equivalents(body)
            shown = present(result, current_system(), form["unit"], answer_in)
            context.update(body=body, result=shown, snippet_inputs=body)
    except InputError as exc:
        context["errors"] = field_errors(exc, FORM_FIELDS)
    return respond("calculators/converters.html", "calculators/_converter_result.html", **context)


EQUIVALENTS = Calculator(
    kind="equivalents",
    title="Convert",
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
    precache=True,
)
