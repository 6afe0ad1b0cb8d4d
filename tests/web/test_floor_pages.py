"""What the floor asked of the calculator pages, through Flask's test client:
the converter leads with the other system's answer, an anilox volume read as
a film says what it is, the working shows the step asked about, the typed
unit's card comes first, and a unit typed with a value is read (and sets the
unit menu) in every quantity field of the calculator pages."""

from __future__ import annotations

import html
import re

import pytest

from calc.display import format_number
from tests.web.test_pages import HX, estimate_form, film_rows, text

# NIST SP 811 Appendix B: 1 in = 25.4 mm exactly, so 1 in² = 645.16 mm² and
# 1 BCM/in² = 1 mm³ / 645.16 mm² = 1/0.64516 cm³/m² = 1.550 003 1 cm³/m² to eight figures.
BCM_IN2_IN_CM3_M2 = 1 / 0.64516


def plain(body: str) -> str:
    return html.unescape(body).replace("\u202f", " ")


def answer(body: str) -> tuple[str, str]:
    found = re.search(
        r'<span class="answer-value"><data class="num" value="[^"]+" data-unit="([^"]+)">([^<]+)</data>', body
    )
    assert found, "no answer shown"
    return found.group(1), found.group(2)


def group_order(body: str) -> list[str]:
    return re.findall(r'<div class="group" data-group="([a-z_]+)"', body)


# --- 1. the answer is the other system's unit, not a repeat of the input -------------


@pytest.mark.parametrize(
    ("value", "unit", "answer_unit", "expected"),
    [
        ("7", "cm3/m2", "BCM/in2", 7 / BCM_IN2_IN_CM3_M2),  # NIST SP 811
        ("4.5", "BCM/in2", "cm3/m2", 4.5 * BCM_IN2_IN_CM3_M2),
        ("0.6", "mil", "um", 15.24),  # NIST SP 811: 1 mil = 25.4 µm exactly
        ("800", "lpi", "lpcm", 800 / 2.54),  # NIST SP 811: 1 in = 2.54 cm
        ("1", "lb", "kg", 0.45359237),  # NIST SP 811: 1 lb = 0.453 592 37 kg exactly
    ],
)
def test_converter_leads_with_the_other_systems_unit(client, value, unit, answer_unit, expected):
    for headers in ({}, HX):
        body = text(client.post("/", data={"value": value, "unit": unit}, headers=headers))
        assert answer(body) == (answer_unit, format_number(expected))
    fragment = text(client.post("/", data={"value": value, "unit": unit}, headers=HX))
    assert '<div id="converter-answer" hx-swap-oob="innerHTML">' in fragment


def test_answer_in_a_unit_the_user_picks_and_remembers(client):
    body = text(client.post("/", data={"value": "4.5", "unit": "BCM/in2", "answer_in": "mil"}))
    assert answer(body) == ("mil", format_number(4.5 * BCM_IN2_IN_CM3_M2 / 25.4))
    # its working starts with that conversion, the factor to eight figures
    assert "t in mil = t in BCM/in² × 0.061 023 744" not in plain(body)  # not a film symbol for a volume
    assert "V in mil = V in BCM/in² ÷ 16.387 064" in plain(body)  # 1/(1.5500031/25.4) (NIST SP 811)
    client.set_cookie("inkfilm_answer_in", "mil")
    assert re.search(r'<option value="mil" selected>mil</option>', text(client.get("/")).split('id="answer_in"')[1])
    client.set_cookie("inkfilm_answer_in", "furlong")  # a cookie from elsewhere: ignored
    page = text(client.get("/"))
    assert '<option value="" selected>' in page.split('id="answer_in"')[1]


def test_answer_in_that_does_not_fit_the_value_says_so(client):
    body = text(client.post("/", data={"value": "800", "unit": "lpi", "answer_in": "mil"}))
    assert answer(body) == ("lpcm", format_number(800 / 2.54))
    assert "mil is not a unit for a line screen" in body
    response = client.post("/", data={"value": "8", "unit": "lpi", "answer_in": "m**9**9**9"})
    assert re.search(r'<div id="answer_in-error"[^>]*><p class="field-error">choose one of the units', text(response))


# --- 2. a volume per area read as a film -------------------------------------------


def test_film_of_an_anilox_volume_says_the_cells_emptied_and_links_to_film_chain(client):
    body = text(client.post("/", data={"value": "7", "unit": "cm3/m2"}))
    film = re.search(r'<div class="group" data-group="film_thickness">(.*?)</div>', body, re.S).group(1)
    assert "if the cells emptied completely" in film
    # about a quarter reaches the substrate at the typical 50 % and 50 % (common practice)
    assert f"about {format_number(7 * 0.25)} µm at typical transfer" in film
    link = html.unescape(re.search(r'<a href="([^"]+)">Work it out on Film chain</a>', film).group(1))
    assert link == "/film?anilox_volume=7&anilox_unit=cm3/m2"
    rows = film_rows(text(client.get(link)))  # the link opens the film chain with that volume
    assert rows["theoretical_wet"] == pytest.approx(7.0)
    assert rows["substrate_wet"] == pytest.approx(7.0 * 0.25)
    typed_film = text(client.post("/", data={"value": "0.6", "unit": "mil"}))
    assert "cells emptied" not in typed_film and "Work it out on Film chain" not in typed_film


def test_how_this_was_worked_out_shows_the_step_asked_about(client):
    body = plain(text(client.post("/", data={"value": "7", "unit": "cm3/m2"})))
    working = body[body.index("How this was worked out") :]
    # NIST SP 811: 1 in = 25.4 mm exactly; 1 BCM/in² = 1/0.64516 cm³/m² = 1.550 003 1 cm³/m²
    assert "V in BCM/in² = V in cm³/m² ÷ 1.550 003 1" in working
    assert "1 BCM/in² = 1.550 003 1 cm³/m², as 1 in = 25.4 mm exactly" in working
    assert f"V = {format_number(7 / BCM_IN2_IN_CM3_M2)} BCM/in²" in working
    assert working.index("÷ 1.550 003 1") < working.index("1 cm³/m² spreads to 1 µm")
    imperial = client.post("/units", data={"system": "imperial", "next": "/"})
    assert imperial.status_code == 303
    body = plain(text(client.post("/", data={"value": "0.6", "unit": "mil"})))
    assert "t in µm = t in mil × 25.4" in body and "t = 15.2 µm" in body  # the step's own unit, whatever the preference


# --- 3. the typed unit's card comes first ------------------------------------------


@pytest.mark.parametrize(
    ("value", "unit", "first"),
    [
        ("0.6", "mil", "film_thickness"),
        ("15", "um", "film_thickness"),
        ("4.5", "BCM/in2", "volume_per_area"),
        ("0.5", "mm", "thickness_other"),
        ("1.6", "lb/ream", "coat_weight"),
        ("500", "m2/kg", "mileage"),
    ],
)
def test_the_typed_units_card_comes_first(client, value, unit, first):
    body = text(client.post("/", data={"value": value, "unit": unit, "density": "1"}))
    assert group_order(body)[0] == first


# --- 5. a unit typed with the value ---------------------------------------------


@pytest.mark.parametrize(
    ("typed", "menu", "unit", "expected"),
    [
        ("4.5 bcm", "mil", "BCM/in2", 4.5 * BCM_IN2_IN_CM3_M2),  # a bare BCM is per in² (trade usage)
        ("4,5 BCM/in²", "mil", "BCM/in2", 4.5 * BCM_IN2_IN_CM3_M2),
        ("7 cm3/m2", "BCM/in2", "cm3/m2", 7.0),
        ("0.6 mil", "BCM/in2", "mil", 15.24),  # NIST SP 811: 1 mil = 25.4 µm
        ("15,24 µm", "BCM/in2", "um", 15.24),
    ],
)
def test_converter_reads_a_unit_typed_with_the_value(client, typed, menu, unit, expected):
    page = text(client.post("/", data={"value": typed, "unit": menu}))
    assert re.search(rf'<option value="{re.escape(unit)}" selected>', page.split('id="unit"')[1])
    assert f'value="{html.escape(typed)}"' in page  # the typed words are kept
    film = re.search(r'data-group="film_thickness".*?<data class="num" value="([^"]+)" data-unit="um"', page, re.S)
    assert float(film.group(1)) == pytest.approx(expected, rel=1e-12)
    fragment = text(client.post("/", data={"value": typed, "unit": menu}, headers=HX))
    assert f'<span hidden data-set-menu="unit" data-value="{unit}"></span>' in fragment


@pytest.mark.parametrize(
    ("typed", "words"),
    [
        ("7 furlong", "is not one of this field's units"),
        ("4.5 ft3", "is not one of this field's units"),
        ("4.5 m**9**9**9", "powers above 4"),
        ("4.5 bcm/in2 bananas", "not understood"),
    ],
)
def test_a_typed_unit_the_menu_does_not_offer_is_a_message_beside_the_field(client, typed, words):
    form = {"anilox_volume": typed, "anilox_unit": "BCM/in2", "anilox_to_plate": "50", "plate_to_substrate": "50"}
    for path, data, field in [("/", {"value": typed, "unit": "lpi"}, "value"), ("/film", form, "anilox_volume")]:
        for headers in ({}, HX):
            response = client.post(path, data=data, headers=headers)
            assert response.status_code == 200
            slot = re.search(rf'<div id="{field}-error"[^>]*>(.*?)</div>', text(response), re.S)
            assert slot and words in html.unescape(slot.group(1)), (path, typed)


def test_film_chain_reads_units_typed_with_its_values(client):
    form = {
        "anilox_volume": "4.5 bcm",
        "anilox_unit": "cm3/m2",
        "anilox_to_plate": "50",
        "plate_to_substrate": "50",
        "ink_density": "8.76 lb/gal",
        "ink_density_unit": "g/cm3",
    }
    page = text(client.post("/film", data=form))
    assert re.search(r'<option value="BCM/in2" selected>', page.split('id="anilox_unit"')[1])
    assert re.search(r'<option value="lb/gal" selected>', page.split('id="ink_density_unit"')[1])
    rows = film_rows(page)
    assert rows["theoretical_wet"] == pytest.approx(4.5 * BCM_IN2_IN_CM3_M2, rel=1e-12)
    # 8.76 lb/gal = 8.76 × 0.453 592 37 kg / 3.785 411 784 l (NIST SP 811; Handbook 44: gal = 231 in³)
    density = 8.76 * 0.45359237 / 3.785411784
    assert rows["wet_coat_weight"] == pytest.approx(4.5 * BCM_IN2_IN_CM3_M2 * 0.25 * density, rel=1e-9)
    fragment = text(client.post("/film", data=form, headers=HX))
    assert 'data-set-menu="anilox_unit" data-value="BCM/in2"' in fragment
    assert 'data-set-menu="ink_density_unit" data-value="lb/gal"' in fragment
    assert '<div id="film-headline" hx-swap-oob="innerHTML">' in fragment


def test_estimate_reads_units_typed_with_its_values(client):
    form = estimate_form(
        web_width="13 in",
        **{"stations[1].anilox_volume": "7 cm3/m2", "stations[1].ink_density": "1,05 g/cm3"},
    )
    typed = text(client.post("/estimate", data=form))
    same = text(
        client.post(
            "/estimate",
            data=estimate_form(
                web_width="13",
                web_width_unit="in",
                **{
                    "stations[1].anilox_volume": "7",
                    "stations[1].anilox_unit": "cm3/m2",
                    "stations[1].ink_density": "1.05",
                },
            ),
        )
    )
    totals = re.compile(r'data-key="total_mass">([^<]+)<')
    assert totals.search(typed).group(1) == totals.search(same).group(1)
    assert re.search(r'<option value="in" selected>', typed.split('id="web_width_unit"')[1])
    assert re.search(r'<option value="cm3/m2" selected>', typed.split('id="stations-1-anilox_unit"')[1])
    fragment = text(client.post("/estimate", data=form, headers=HX))
    assert 'data-set-menu="stations-1-anilox_unit" data-value="cm3/m2"' in fragment
    bad = text(client.post("/estimate", data=estimate_form(**{"stations[0].anilox_volume": "3 mil"}), headers=HX))
    slot = re.search(r'<div id="stations-0-anilox_volume-error"[^>]*><p class="field-error">(.*?)</p>', bad)
    assert html.unescape(slot.group(1)) == "'mil' is not one of this field's units: type the value in BCM/in² or cm³/m²"
