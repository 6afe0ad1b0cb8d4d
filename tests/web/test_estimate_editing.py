"""The Job ink page while it is edited and after: the last good totals stay (marked not yet
updated), an empty field waits until it is left or the form submitted, stations are added,
copied and removed, hints beside % fields, coverage from the inked area per label or a rough
typical choice, the density hint, the shop's currency, the printout's header, and a saved
estimate's Print and CSV."""

from __future__ import annotations

import copy
import csv
import io
import json
import re
from urllib.parse import quote

import pytest

from calc import practice
from calc.display import format_money, format_number
from tests.web.test_estimate_page import API_BODY, HX, labels_form, text
from webapp import create_app
from webapp.common.formatting import check_currency

LIVE = {**HX, "HX-Target": "estimate-result"}
AREA = {**HX, "HX-Target": "estimate-area"}


def status(body: str) -> list[str]:
    return re.findall(r'id="estimate-status"[^>]*>([^<]*)<', body)


def errors(body: str) -> list[str]:
    return re.findall(r'class="field-error">([^<]*)<', body)


def notes(body: str) -> dict[str, str]:
    return dict(re.findall(r'id="([^"]+)-note"[^>]*><p class="field-note">([^<]*)<', body))


def total_mass(body: str) -> str | None:
    found = re.search(r'data-key="total_mass">([^<]*)<', body)
    return found and found.group(1)


def api(client, body) -> dict:
    response = client.post("/api/v1/estimate", json=body)
    assert response.status_code == 200, response.get_json()
    return response.get_json()


# --- keeping the answer while the form is edited ------------------------------------------


def test_switching_to_impressions_keeps_the_totals_and_waits_for_the_new_field(client):
    form = labels_form(run_basis="impressions", impressions="", _event="input")
    response = client.post("/estimate", data=form, headers=LIVE)
    body = text(response)
    assert response.status_code == 200
    assert response.headers["HX-Reswap"] == "none"  # the totals on screen stay as they are
    assert status(body) == ["Not yet updated: fill in impressions."]
    assert 'hx-swap-oob="true"' in body and "is-outdated" in body
    assert errors(body) == []  # an empty field just shown is not yet an error
    assert "Fix the value marked" not in body and "data-key" not in body


@pytest.mark.parametrize("how", [{"_event": "submit"}, {"_event": "input", "_left": "web_width impressions"}])
def test_an_empty_field_is_an_error_once_submitted_or_left(client, how):
    form = labels_form(run_basis="impressions", impressions="", **how)
    response = client.post("/estimate", data=form, headers=LIVE)
    body = text(response)
    assert response.headers["HX-Reswap"] == "none"
    assert status(body) == ["Not yet updated: fix the value marked beside its field."]
    assert re.search(r'id="impressions-error"[^>]*hx-swap-oob[^>]*><p class="field-error">needs a number<', body)


def test_a_wrong_value_keeps_the_totals_with_its_message_beside_the_field(client):
    body = text(client.post("/estimate", data=labels_form(**{"stations[1].transfer": "abc"}), headers=LIVE))
    assert status(body) == ["Not yet updated: fix the value marked beside its field."]
    assert re.search(r'id="stations-1-transfer-error"[^>]*><p class="field-error">[^<]*abc', body)


def test_a_plain_post_with_an_empty_field_names_it_at_once(client):
    # without script (no htmx) there is no "while editing": the message shows
    body = text(client.post("/estimate", data=labels_form(labels="")))
    assert "needs a number" in body and "Fix the value marked beside its field" in body


def test_a_valid_edit_replaces_the_totals_and_clears_the_status(client):
    response = client.post("/estimate", data=labels_form(_event="input"), headers=LIVE)
    body = text(response)
    assert "HX-Reswap" not in response.headers
    assert status(body) == [""]
    assert total_mass(body) == f"{format_number(api(client, API_BODY)['total_ink_mass']['value'])} kg"


def test_adding_a_station_keeps_the_totals_of_the_others_marked_not_yet_updated(client):
    # the fourth station starts as the demo job's black; the fifth starts empty
    four = text(client.post("/estimate", data=labels_form(station_count="4"), headers=LIVE))
    body = text(client.post("/estimate", data=labels_form(station_count="4", action="add"), headers=AREA))
    assert len(re.findall(r'<fieldset class="card station">', body)) == 5
    assert status(body) == ["Not yet updated: Station 5 counts once its fields are filled in."]
    assert total_mass(body) == total_mass(four) is not None
    assert errors(body) == []  # the new station's empty fields are not errors yet
    assert "Save this" not in body  # what is shown is not what the form now holds


def test_copying_a_station_adds_the_same_ink_again(client):
    body = text(client.post("/estimate", data=labels_form(action="copy-0"), headers=AREA))
    names = re.findall(r'class="station-summary-name">([^<]*)<', body)
    assert names == ["1. Cyan", "2. Spot", "3. Varnish", "4. Cyan copy"]
    assert 'id="stations-3-anilox_volume" name="stations[3].anilox_volume" type="text"' in body
    copied = copy.deepcopy(API_BODY)
    copied["stations"].append({**API_BODY["stations"][0], "name": "Cyan copy"})
    assert total_mass(body) == f"{format_number(api(client, copied)['total_ink_mass']['value'])} kg"
    assert status(body) == [""]


def test_removing_a_station_answers_for_the_rest(client):
    body = text(client.post("/estimate", data=labels_form(action="remove-1"), headers=AREA))
    rest = copy.deepcopy(API_BODY)
    del rest["stations"][1]
    assert re.findall(r'class="station-summary-name">([^<]*)<', body) == ["1. Cyan", "2. Varnish"]
    assert total_mass(body) == f"{format_number(api(client, rest)['total_ink_mass']['value'])} kg"


# --- hints beside fields -----------------------------------------------------------------


@pytest.mark.parametrize(("field", "typed", "meant"), [("stations[0].coverage", "0.5", "50"), ("waste", ".04", "4")])
def test_a_share_typed_in_a_percent_field_asks_did_you_mean(client, field, typed, meant):
    body = text(client.post("/estimate", data=labels_form(**{field: typed}), headers=LIVE))
    slot = field.replace("[", "-").replace("]", "").replace(".", "-")
    assert notes(body)[slot].startswith(f"Did you mean {meant} %?")
    assert errors(body) == [] and total_mass(body)  # a hint, not an error: the value is used as typed


def test_the_share_hint_is_used_as_typed_not_changed(client):
    body = text(client.post("/estimate", data=labels_form(**{"stations[0].coverage": "0.5"}), headers=LIVE))
    as_typed = copy.deepcopy(API_BODY)
    as_typed["stations"][0]["coverage"] = 0.005
    assert total_mass(body) == f"{format_number(api(client, as_typed)['total_ink_mass']['value'])} kg"
    assert "Did you mean" not in text(client.post("/estimate", data=labels_form(), headers=LIVE))


def test_coverage_from_the_inked_area_per_label_matches_the_api(client):
    # 12 cm² a label, 3 across × 2 around on 300 mm × 250 mm: c = 12 × 6 / 750 = 9.6 %
    form = labels_form(**{"stations[0].inked_area_per_label": "12", "stations[0].inked_area_unit": "cm2"})
    body = text(client.post("/estimate", data=form, headers=LIVE))
    by_area = copy.deepcopy(API_BODY)
    del by_area["stations"][0]["coverage"]
    by_area["stations"][0]["inked_area_per_label"] = "12 cm2"
    answer = api(client, by_area)
    assert answer["stations"][0]["coverage"] == pytest.approx(0.096)
    assert total_mass(body) == f"{format_number(answer['total_ink_mass']['value'])} kg"
    assert "9.6 %, " in body  # the coverage used, in the station's row
    assert notes(body)["stations-0-coverage"].startswith("Not used: the inked area per label")
    assert "Coverage from the inked area per label" in body  # in the working


def test_an_inked_area_larger_than_the_label_says_so_beside_its_field(client):
    form = labels_form(**{"stations[0].inked_area_per_label": "200", "stations[0].inked_area_unit": "cm2"})
    body = text(client.post("/estimate", data=form, headers=LIVE))
    assert re.search(r'id="stations-0-inked_area_per_label-error"[^>]*><p class="field-error">6 labels[^<]*160%', body)


@pytest.mark.parametrize("kind", list(practice.TYPICAL_COVERAGES))
def test_a_rough_coverage_without_script_uses_the_typical_value_and_says_so(client, kind):
    form = labels_form(**{"stations[0].coverage": "", "stations[0].coverage_kind": kind})
    body = text(client.post("/estimate", data=form))
    rough = copy.deepcopy(API_BODY)
    rough["stations"][0]["coverage"] = practice.TYPICAL_COVERAGES[kind]
    assert total_mass(body) == f"{format_number(api(client, rough)['total_ink_mass']['value'])} kg"
    assert "typical for " + kind in notes(body)["stations-0-coverage"]
    assert "(common practice)" in notes(body)["stations-0-coverage"]
    assert f'<option value="{kind}" data-typical=' in body


def test_the_rough_menu_offers_typical_values_and_an_edited_value_loses_the_mark(client):
    page = text(client.get("/estimate"))
    assert 'data-typical-for="stations-0-coverage"' in page
    assert '<option value="heavy" data-typical="60">Heavy (typical 60 %)</option>' in page
    edited = labels_form(**{"stations[0].coverage": "45", "stations[0].coverage_kind": "heavy"})
    assert "stations-0-coverage" not in notes(text(client.post("/estimate", data=edited, headers=LIVE)))


def test_the_density_hint_says_whites_are_heavier(client):
    page = text(client.get("/estimate"))
    assert "Most inks 0.9–1.1 g/cm³; opaque whites heavier, about 1.3–1.5 (common practice)." in page
    client.set_cookie("inkfilm_units", "imperial")
    # 1.3 and 1.5 g/cm³ × 8.345 lb/gal per g/cm³ (NIST Handbook 44 gallon, SP 811 pound)
    assert "opaque whites heavier, about 10.8–12.5 (common practice)" in text(client.get("/estimate"))


def test_a_white_left_at_the_default_density_gets_a_note(client):
    form = labels_form(**{"stations[1].name": "Opaque white", "stations[1].ink_density": "1.0"})
    note = notes(text(client.post("/estimate", data=form, headers=LIVE)))["stations-1-ink_density"]
    assert note.startswith("Whites are heavier: opaque whites are about 1.3–1.5 g/cm³")
    form["stations[1].ink_density"] = "1.4"
    assert "stations-1-ink_density" not in notes(text(client.post("/estimate", data=form, headers=LIVE)))


def test_the_run_wording_does_not_put_the_waste_in_the_printed_area(client):
    body = text(client.post("/estimate", data=labels_form(), headers=LIVE))
    assert "× web width = <strong>750 m²</strong> printed" in body
    assert "Web printed <strong>2,700 m</strong>: good run with 4 % waste" in body
    assert "waste added" not in body


# --- the shop's currency ------------------------------------------------------------------


@pytest.fixture
def euro_client(tmp_path):
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data"), "CURRENCY": "€"}).test_client()


def test_the_currency_is_beside_every_cost_on_the_page_and_print(euro_client):
    body = text(euro_client.post("/estimate", data=labels_form(), headers=LIVE))
    answer = api(euro_client, API_BODY)
    assert f'data-key="cost_per_1000_labels">€{format_money(answer["cost_per_1000_labels"])}<' in body
    assert f"€{format_money(answer['total_cost'])}" in body
    for station in answer["stations"]:
        assert f"€{format_money(station['cost'])}" in body
        assert f"€{format_money(station['cost_per_1000_labels'])}" in body
    assert "Cost (€)" in body and "Costs in €." in body
    assert "€20.00/kg" in body and "€10.00/kg" not in body and "€4.54/lb" in body  # prices as entered
    money = re.findall(r"(?<![€\d.,])\d[\d,]*\.\d\d(?![\d%])(?! (?:kg|m|l|µm|g|lb))", body.split("<details")[0])
    assert money == [], money  # no figure to the cent without its currency


def test_the_currency_heads_the_csv_money_columns(euro_client):
    raw = euro_client.get("/estimate?csv=" + quote(json.dumps(API_BODY))).get_data()
    header = next(csv.reader(io.StringIO(raw.decode("utf-8-sig"))))
    assert {"price_per_kg (€)", "cost (€)", "cost_per_1000_labels (€)", "cost_per_1000_impressions (€)"} <= set(header)
    assert "ink_kg" in header


def test_saved_costs_show_the_currency(euro_client):
    saved = euro_client.post("/api/v1/snippets", json={"kind": "estimate", "inputs": API_BODY, "title": "Job 7"})
    assert saved.status_code == 201
    page = text(euro_client.get(f"/snippets/{saved.get_json()['id']}"))
    assert f"€{format_money(saved.get_json()['results']['total_cost'])}" in page


def test_no_currency_set_shows_the_figure_alone(client):
    body = text(client.post("/estimate", data=labels_form(), headers=LIVE))
    assert "€" not in body and "Cost is in the currency of the prices given." in body


@pytest.mark.parametrize(("typed", "shown"), [(" € ", "€"), ("CHF", "CHF"), ("", ""), ("US$", "US$")])
def test_currency_setting_accepts_symbols_and_codes(typed, shown):
    assert check_currency(typed) == shown


@pytest.mark.parametrize("typed", ["12", "€€€€€€€€€", "a\nb"])
def test_currency_setting_refuses_digits_long_text_and_control_characters(typed):
    with pytest.raises(ValueError, match="at most 8 characters without digits"):
        check_currency(typed)


def test_serve_refuses_a_bad_currency_in_one_line(tmp_path, capsys):
    from webapp.cli import main

    code = main(["serve", "--no-https", "--worker", "--data-dir", str(tmp_path / "d"), "--currency", "12"])
    assert code == 2
    assert capsys.readouterr().err.startswith("inkfilm: --currency: the currency must be")


def test_a_code_goes_before_the_figure_with_a_space(tmp_path):
    client = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data"), "CURRENCY": "CHF"}).test_client()
    answer = api(client, API_BODY)
    assert f"CHF {format_money(answer['total_cost'])}" in text(client.post("/estimate", data=labels_form()))


# --- the printout and a saved estimate ----------------------------------------------------


def test_the_printout_header_holds_job_customer_press_and_who(client):
    form = labels_form(job_number="J-4471", customer="=Hill Farm Dairy", press="N2", prepared_by="R. Okafor")
    body = text(client.post("/estimate", data=form, headers=LIVE))
    head = re.search(r'<header class="ticket-head print-only">(.*?)</header>', body, re.S).group(1)
    for label, value in [
        ("Job", "J-4471"),
        ("Customer", "=Hill Farm Dairy"),
        ("Press", "N2"),
        ("Prepared by", "R. Okafor"),
    ]:
        assert f"<dt>{label}</dt><dd>{value}</dd>" in head
    assert re.search(r"Ink estimate · \d{4}-\d\d-\d\d", head)
    assert "x" * 80 + "<" in text(client.post("/estimate", data=labels_form(customer="x" * 500)))


def test_the_printout_lists_the_inputs_as_entered(client):
    body = text(client.post("/estimate", data=labels_form(), headers=LIVE))
    table = re.search(r'<table class="data-table print-only">(.*?)</table>', body, re.S).group(1)
    assert "web width 300 mm" in table
    assert '<th scope="row">Spot</th><td class="num">4 cm³/m²</td><td class="num">20 %</td>' in table
    assert "4.54/lb" in table and "1 kg" in table and "1.1 kg" in table


def save(client, **meta) -> int:
    response = client.post("/api/v1/snippets", json={"kind": "estimate", "inputs": API_BODY, **meta})
    assert response.status_code == 201, response.get_json()
    return response.get_json()["id"]


def test_a_saved_estimate_has_the_same_print_and_csv(client):
    snippet_id = save(client, title="Dairy lids", job_number="J-4471", press="N2", saved_by="R. Okafor")
    view = text(client.get(f"/snippets/{snippet_id}"))
    assert f'href="/estimate?snippet={snippet_id}">Print or CSV</a>' in view
    page = text(client.get(f"/estimate?snippet={snippet_id}"))
    live = text(client.post("/estimate", data=labels_form(), headers=LIVE))
    assert total_mass(page) == total_mass(live)
    for key in ("total_pull", "cost_per_1000_labels"):
        pattern = rf'data-key="{key}">([^<]*)<'
        assert re.search(pattern, page).group(1) == re.search(pattern, live).group(1)
    head = re.search(r'<header class="ticket-head">(.*?)</header>', page, re.S).group(1)
    assert "<dt>Job</dt><dd>J-4471</dd>" in head and "<dt>Prepared by</dt><dd>R. Okafor</dd>" in head
    assert "<dt>Press</dt><dd>N2</dd>" in head and "Dairy lids" in head
    assert "data-print>Print</button>" in page and "css/print.css" in page
    saved_csv = re.search(r'href="([^"]+)" download="ink-estimate.csv"', page).group(1)
    live_csv = re.search(r'href="([^"]+)" download="ink-estimate.csv"', live).group(1)
    assert client.get(saved_csv).get_data() == client.get(live_csv).get_data()
    assert "Save this" not in page  # it is saved already


@pytest.mark.parametrize("param", ["999", "0", "-1", "x", "99999999999999999999999"])
def test_a_missing_saved_estimate_is_a_404(client, param):
    assert client.get(f"/estimate?snippet={param}").status_code == 404


def test_another_kind_of_snippet_is_not_an_estimate(client):
    film = {"kind": "convert", "inputs": {"quantity": "7 cm3/m2", "to": "BCM/in2"}, "title": "Roll"}
    response = client.post("/api/v1/snippets", json=film)
    assert response.status_code == 201, response.get_json()
    assert client.get(f"/estimate?snippet={response.get_json()['id']}").status_code == 404


# --- a station's ink from the shop's list ---------------------------------------------------


def test_a_station_picks_an_ink_from_the_shop_s_list_and_gets_its_density_price_and_caution(client):
    from tests.web.test_inks_api import add_ink

    assert "Ink from the shop" not in text(client.get("/estimate"))  # no inks: the page is as it was
    ink = add_ink(client, name="Black SB", type="solvent_based", density="0.98 g/cm3", price=6.4, price_per="lb")
    page = text(client.get("/estimate"))
    stations = page.count('<fieldset class="card station">')
    assert stations >= 2 and page.count('data-ink-pick="estimate-form"') == stations  # one per station
    assert 'data-ink-prefix="stations[1]."' in page
    assert f'<option value="{ink["id"]}" data-density="0.98" data-price="6.4" data-price-per="lb"' in page
    # Without script: "Fill from this ink" posts the form and the station comes back filled, still editable,
    # with the ink's caution; the other stations keep what was typed.
    form = labels_form(**{"stations[1].ink": str(ink["id"]), "stations[0].ink_density": "1.05"}, action="ink-1")
    body = text(client.post("/estimate", data=form))
    assert re.search(r'name="stations\[1\]\.ink_density"[^>]*value="0\.98"', body)
    assert re.search(r'name="stations\[1\]\.price_per_kg"[^>]*value="6\.4"', body)
    assert re.search(r'name="stations\[0\]\.ink_density"[^>]*value="1\.05"', body)
    assert re.search(rf'data-ink-caution="{ink["id"]}">', body) and "Flammable liquid" in body
    # The totals use the ink's values: the same as the API with that station's density and price per lb.
    picked = copy.deepcopy(API_BODY)
    picked["stations"][0]["ink_density"] = "1.05 g/cm3"
    picked["stations"][1]["ink_density"] = "0.98 g/cm3"
    picked["stations"][1]["price_per_lb"] = 6.4
    answer = api(client, picked)
    assert total_mass(body) == f"{format_number(answer['total_ink_mass']['value'])} kg"
    assert format_money(answer["total_cost"]) in body


@pytest.mark.parametrize("ink", ["", "x", "99999999999999999999", "123456789012"])
def test_filling_from_an_unknown_or_missing_ink_leaves_the_station_as_typed(client, ink):
    form = labels_form(**{"stations[1].ink": ink, "stations[1].ink_density": "1.07"}, action="ink-1")
    response = client.post("/estimate", data=form)
    assert response.status_code == 200
    assert re.search(r'name="stations\[1\]\.ink_density"[^>]*value="1\.07"', text(response))
    assert client.post("/estimate", data=labels_form(action="ink-9")).status_code == 200
    assert client.post("/estimate", data=labels_form(action="ink-x")).status_code == 200
