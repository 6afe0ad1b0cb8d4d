"""Hostile input through HTTP: every calculation answers 400 naming the field, never 500, never a hang.

Each request runs in a forked child with a time limit (``tests.timelimit``):
a unit spelling that makes pint evaluate a huge exact power would otherwise
hang the test run the way it hangs a server worker.
"""

from __future__ import annotations

import copy
import html
import json
import re

import pytest

from tests.conftest import csrf_from
from tests.timelimit import run_within

LIMIT_S = 5.0

STATION = {"name": "Cyan", "anilox_volume": "3 BCM/in2", "coverage": 0.3, "transfer": 0.25, "ink_density": "1 g/cm3"}
VALID = {
    "convert": {"quantity": "2 um", "to": "g/m2", "density": "1.05 g/cm3"},
    "film": {
        "anilox_volume": "4 BCM/in2",
        "anilox_to_plate": 0.5,
        "plate_to_substrate": 0.5,
        "ink_density": "1.05 g/cm3",
        "solids_by_volume": 0.4,
        "solids_by_weight": 0.5,
    },
    "estimate": {
        "web_width": "330 mm",
        "run_length": "12000 m",
        "waste": 0.05,
        "stations": [{**STATION, "price_per_kg": 12.5}],
    },
    "estimate_by_impressions": {
        "web_width": "330 mm",
        "impressions": 50000,
        "repeat": "18 in",
        "stations": [STATION],
    },
    "equivalents": {"quantity": "2 um", "density": "1.05 g/cm3", "coverage": 0.5},
}
ADDRESS = {name: "/api/v1/" + name.removesuffix("_by_impressions") for name in VALID}

# (body, field): every field that carries a unit; "to" is a bare unit, the rest "<number> <unit>".
UNIT_FIELDS = [
    ("convert", "quantity"),
    ("convert", "to"),
    ("convert", "density"),
    ("film", "anilox_volume"),
    ("film", "ink_density"),
    ("estimate", "web_width"),
    ("estimate", "run_length"),
    ("estimate_by_impressions", "repeat"),
    ("estimate", "stations[0].anilox_volume"),
    ("estimate", "stations[0].ink_density"),
    ("equivalents", "quantity"),
    ("equivalents", "density"),
]
NUMBER_FIELDS = [
    ("film", "anilox_to_plate"),
    ("film", "plate_to_substrate"),
    ("film", "solids_by_volume"),
    ("film", "solids_by_weight"),
    ("estimate", "waste"),
    ("estimate_by_impressions", "impressions"),
    ("estimate", "stations[0].coverage"),
    ("estimate", "stations[0].transfer"),
    ("estimate", "stations[0].price_per_kg"),
    ("equivalents", "coverage"),
]
HOSTILE_UNITS = [
    "m**9**9**9",
    "m³³³³",
    "m^9^9^9",
    "m**999",
    "BCM/in2**99999",
    "(((m)))**2",
    "m**-99",
    "m" * 10_000,
    "\ud800",
    "m\x00",
]


def with_field(name: str, field: str, value) -> dict:
    """The valid body ``name`` with ``field`` (``a`` or ``stations[0].a``) set to ``value``."""
    body = copy.deepcopy(VALID[name])
    if field.startswith("stations[0]."):
        body["stations"][0][field.removeprefix("stations[0].")] = value
    else:
        body[field] = value
    return body


def post_json(client, address: str, text: str) -> tuple[int, dict]:
    response = client.post(address, data=text, content_type="application/json")
    return response.status_code, response.get_json(silent=True)


def test_the_valid_bodies_are_answered(client):
    for name, body in VALID.items():
        status, answer = post_json(client, ADDRESS[name], json.dumps(body))
        assert status == 200, (name, answer)


@pytest.mark.parametrize(("name", "field"), UNIT_FIELDS)
@pytest.mark.parametrize("spelling", HOSTILE_UNITS, ids=lambda value: repr(value)[:24])
def test_a_hostile_unit_in_any_unit_field_is_a_400_naming_it(client, name, field, spelling):
    value = spelling if field == "to" else "1 " + spelling
    # json.dumps writes a lone surrogate as the escape \ud800, as a hostile client would
    text = json.dumps(with_field(name, field, value))
    outcome = run_within(LIMIT_S, post_json, client, ADDRESS[name], text)
    status, answer = outcome.returned()
    assert status == 400, (status, answer)
    assert answer["error"]["field"] == field
    assert answer["error"]["message"]


@pytest.mark.parametrize(("name", "field"), NUMBER_FIELDS)
@pytest.mark.parametrize("number", ["1" + "0" * 400, "-1" + "0" * 400, "1e400"])
def test_a_number_too_large_for_a_float_is_a_400_naming_it(client, name, field, number):
    text = json.dumps(with_field(name, field, "HUGE")).replace('"HUGE"', number)
    status, answer = post_json(client, ADDRESS[name], text)
    assert status == 400, (status, answer)
    assert answer["error"]["field"] == field


@pytest.mark.parametrize("impressions", ["abc", "50000", [50000], {"n": 1}, True])
def test_impressions_that_are_not_a_number_are_a_400_naming_them(client, impressions):
    status, answer = post_json(
        client, ADDRESS["estimate"], json.dumps(with_field("estimate_by_impressions", "impressions", impressions))
    )
    assert status == 400, (status, answer)
    assert answer["error"]["field"] == "impressions"


def test_a_tiny_quantity_is_refused_rather_than_answered_with_infinity(client):
    status, answer = post_json(client, ADDRESS["equivalents"], json.dumps({"quantity": "1e-320 g/m2"}))
    assert status == 400, (status, answer)
    assert answer["error"]["field"] == "quantity"


# --- the pages ------------------------------------------------------------------------------------

CONVERTER_FORM = {"value": "4.5", "unit": "BCM/in2", "density": "1.05", "density_unit": "g/cm3", "coverage": ""}
FILM_FORM = {
    "anilox_volume": "4.5",
    "anilox_unit": "BCM/in2",
    "anilox_to_plate": "50",
    "plate_to_substrate": "50",
    "ink_density": "1.05",
    "ink_density_unit": "g/cm3",
    "solids_by_volume": "",
    "solids_by_weight": "",
}
ESTIMATE_FORM = {
    "web_width": "330",
    "web_width_unit": "mm",
    "run_basis": "length",
    "run_length": "12000",
    "run_length_unit": "m",
    "impressions": "50000",
    "repeat": "18",
    "repeat_unit": "in",
    "waste": "5",
    "station_count": "1",
    "stations[0].name": "Cyan",
    "stations[0].anilox_volume": "3",
    "stations[0].anilox_unit": "BCM/in2",
    "stations[0].coverage": "30",
    "stations[0].transfer": "25",
    "stations[0].ink_density": "1.0",
    "stations[0].ink_density_unit": "g/cm3",
    "stations[0].price_per_kg": "",
}
FORMS = {"/": CONVERTER_FORM, "/film": FILM_FORM, "/estimate": ESTIMATE_FORM}
BY_IMPRESSIONS = {"run_basis": "impressions"}

# (page, field, extra form fields): the unit menus, which a client can fill with anything.
PAGE_UNIT_FIELDS = [
    ("/", "unit", {}),
    ("/", "density_unit", {}),
    ("/film", "anilox_unit", {}),
    ("/film", "ink_density_unit", {}),
    ("/estimate", "web_width_unit", {}),
    ("/estimate", "run_length_unit", {}),
    ("/estimate", "repeat_unit", BY_IMPRESSIONS),
    ("/estimate", "stations[0].anilox_unit", {}),
    ("/estimate", "stations[0].ink_density_unit", {}),
]
# (page, field, extra form fields): the typed numbers.
PAGE_NUMBER_FIELDS = [
    ("/", "value", {}),
    ("/", "density", {}),
    ("/", "coverage", {}),
    ("/film", "anilox_volume", {}),
    ("/film", "anilox_to_plate", {}),
    ("/film", "ink_density", {}),
    ("/film", "solids_by_volume", {}),
    ("/estimate", "web_width", {}),
    ("/estimate", "run_length", {}),
    ("/estimate", "impressions", BY_IMPRESSIONS),
    ("/estimate", "repeat", BY_IMPRESSIONS),
    ("/estimate", "waste", {}),
    ("/estimate", "stations[0].anilox_volume", {}),
    ("/estimate", "stations[0].coverage", {}),
    ("/estimate", "stations[0].price_per_kg", {}),
]
SHARES_AND_PRICES = {
    "coverage",
    "anilox_to_plate",
    "solids_by_volume",
    "waste",
    "stations[0].coverage",
    "stations[0].price_per_kg",
}
HOSTILE_TYPED = ["m**9**9**9", "m³³³³", "9" * 39, "9" * 400, "1e999", "abc", "1e-320"]


def fid(name: str) -> str:
    """The element id the page templates give a field (as ``_macros.html``'s ``fid``)."""
    return name.replace("[", "-").replace("]", "").replace(".", "-")


def post_form(client, page: str, form: dict) -> tuple[int, str]:
    response = client.post(page, data=form)
    return response.status_code, html.unescape(response.get_data(as_text=True))


def message_beside(page_text: str, field: str) -> str | None:
    found = re.search(rf'id="{re.escape(fid(field))}-error"[^>]*>\s*<p class="field-error">([^<]+)</p>', page_text)
    return found.group(1) if found else None


@pytest.mark.parametrize(("page", "field", "extra"), PAGE_UNIT_FIELDS)
@pytest.mark.parametrize("spelling", ["m**9**9**9", "m³³³³", "BCM/in2**99999", "m" * 2000])
def test_a_hostile_unit_in_a_page_form_gets_a_message_beside_the_field(client, page, field, extra, spelling):
    form = {**FORMS[page], **extra, field: spelling}
    status, text = run_within(LIMIT_S, post_form, client, page, form).returned()
    assert status in (200, 400)
    assert message_beside(text, field), text[:2000]


@pytest.mark.parametrize(("page", "field", "extra"), PAGE_NUMBER_FIELDS)
@pytest.mark.parametrize("typed", HOSTILE_TYPED)
def test_a_hostile_number_in_a_page_form_gets_a_message_beside_the_field(client, page, field, extra, typed):
    form = {**FORMS[page], **extra, field: typed}
    status, text = run_within(LIMIT_S, post_form, client, page, form).returned()
    assert status in (200, 400)
    if typed == "1e-320" and field in SHARES_AND_PRICES:
        assert status == 200  # a share or price that small is simply 0
        return
    assert message_beside(text, field), text[:2000]
    if len(typed) <= 40:
        assert f'value="{typed}"' in text  # the typed words are kept


def test_the_page_forms_as_sent_give_results(client):
    for page, form in FORMS.items():
        status, text = post_form(client, page, form)
        assert status == 200
        assert 'class="field-error"' not in text, page


# --- the save form ---------------------------------------------------------------------------------


def csrf(client) -> str:
    return csrf_from(client)


@pytest.mark.parametrize("address", ["/snippets/new", "/snippets"])
@pytest.mark.parametrize("spelling", ["m**9**9**9", "m³³³³", "BCM/in2**99999", "\\ud800"])
def test_the_save_form_refuses_a_hostile_unit_quickly(client, address, spelling):
    inputs = json.dumps(with_field("film", "anilox_volume", "SPELLING")).replace("SPELLING", "4 " + spelling)
    form = {"csrf_token": csrf(client), "kind": "film", "inputs": inputs, "title": "Hostile"}
    status, text = run_within(LIMIT_S, post_form, client, address, form).returned()
    assert status == 400, text[:2000]
    assert "cannot be saved" in text
    if spelling != "\\ud800":  # that one cannot even be read back as text: the inputs are refused whole
        assert "anilox volume" in text.lower()
    assert client.get("/api/v1/snippets").get_json()["total"] == 0
