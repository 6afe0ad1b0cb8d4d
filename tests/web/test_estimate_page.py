"""The Job ink page: labels jobs, make-ready, fill, ink on hand, prices per kg or lb; the run's
conversions, the on-hand verdict in words, errors beside their fields, the bar chart and the CSV download."""

from __future__ import annotations

import csv
import html
import io
import re
from urllib.parse import parse_qs, urlparse

import pytest

from calc.display import format_money, format_number

HX = {"HX-Request": "true"}


def text(response) -> str:
    return html.unescape(response.get_data(as_text=True))


def station(index, name, volume, coverage, transfer, density, price, price_unit, fill, fill_unit, on_hand, on_unit):
    p = f"stations[{index}]."
    return {
        p + "name": name,
        p + "anilox_volume": volume,
        p + "anilox_unit": "cm3/m2",
        p + "coverage": coverage,
        p + "transfer": transfer,
        p + "ink_density": density,
        p + "ink_density_unit": "g/cm3",
        p + "price_per_kg": price,
        p + "price_unit": price_unit,
        p + "fill": fill,
        p + "fill_unit": fill_unit,
        p + "on_hand": on_hand,
        p + "on_hand_unit": on_unit,
    }


def labels_form(**changes) -> dict:
    """The labels job of tests/web/test_estimate_api.py, as the page's form (coverage typed for the spot)."""
    form = {
        "web_width": "300",
        "web_width_unit": "mm",
        "run_basis": "labels",
        "labels": "60,000",
        "across": "3",
        "around": "2",
        "repeat": "250",
        "repeat_unit": "mm",
        "run_length": "",
        "run_length_unit": "m",
        "impressions": "",
        "makeready": "100",
        "makeready_unit": "m",
        "waste": "4",
        "station_count": "3",
    }
    form |= station(0, "Cyan", "5", "40", "30", "1.2", "20", "kg", "2", "l", "3", "kg")
    form |= station(1, "Spot", "4", "20", "25", "1.0", "4.5359237", "lb", "1", "kg", "1.1", "kg")
    form |= station(2, "Varnish", "6", "0", "30", "1.0", "8", "kg", "", "l", "", "kg")
    return form | changes


API_BODY = {
    "web_width": "300 mm",
    "labels": 60000,
    "across": 3,
    "around": 2,
    "repeat": "250 mm",
    "makeready": "100 m",
    "waste": 0.04,
    "stations": [
        {
            "name": "Cyan",
            "anilox_volume": "5 cm3/m2",
            "coverage": 0.4,
            "transfer": 0.3,
            "ink_density": "1.2 g/cm3",
            "price_per_kg": 20,
            "fill": "2 l",
            "on_hand": "3 kg",
        },
        {
            "name": "Spot",
            "anilox_volume": "4 cm3/m2",
            "coverage": 0.2,
            "transfer": 0.25,
            "ink_density": "1.0 g/cm3",
            "price_per_lb": 4.5359237,
            "fill": "1 kg",
            "on_hand": "1.1 kg",
        },
        {"name": "Varnish", "anilox_volume": "6 cm3/m2", "coverage": 0, "transfer": 0.3, "ink_density": "1 g/cm3"},
    ],
}
API_BODY["stations"][2]["price_per_kg"] = 8


def test_a_labels_job_on_the_page_matches_the_api(client):
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    api = client.post("/api/v1/estimate", json=API_BODY).get_json()
    assert f'data-key="total_mass">{format_number(api["total_ink_mass"]["value"])} kg<' in body
    assert f'data-key="total_pull">{format_number(api["total_pull_mass"]["value"])} kg<' in body
    assert f'data-key="cost_per_1000_labels">{format_money(api["cost_per_1000_labels"])}<' in body
    assert format_money(api["total_cost"]) in body
    # the conversions: labels ↔ impressions ↔ length ↔ area, then the web printed
    assert "60,000</strong> labels = 10,000 impressions × 3 across × 2 around" in body
    assert "10,000</strong> impressions × 250 mm repeat = 2,500 m good run" in body
    assert "<strong>750 m²</strong> printed" in body
    assert "Web printed <strong>2,700 m</strong>: good run with 4 % waste and 100 m make-ready" in body
    # the on-hand verdicts in words (hand arithmetic in test_estimate_api.py: 3 − 2.9832 = 0.0168 kg spare;
    # the spot is 0.062 kg short and its 1.1 kg prints 36,150 labels)
    assert "<strong>Cyan</strong>: Enough, 0.0168 kg to spare" in body
    assert "<strong>Spot</strong>: Short by 0.062 kg: prints about 36,200 of 60,000 labels" in body
    assert "<strong>Varnish</strong>:" not in body  # no ink on hand typed: no verdict


def test_the_working_shows_the_new_steps(client):
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    for label in [
        "Impressions (whole, for the labels ordered)",
        "Labels the good run prints",
        "Web printed (good run, waste, make-ready)",
        "Ink to pull, all stations",
        "System fill as mass",
        "Price per kg",
        "Ink per 1,000 labels",
        "Short by (0 when the ink on hand is enough)",
        "Labels the ink on hand prints",
        "Cost per 1,000 labels, all stations",
    ]:
        assert label in body, label


def test_the_safety_cautions_stay(client):
    page = text(client.get("/estimate"))
    assert "safety data sheet" in page and "local fire and environmental codes" in page
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    assert "subject to the inks' safety data sheets and local fire codes for flammable liquids" in body


def test_imperial_preference_words_and_starting_units(client):
    client.set_cookie("inkfilm_units", "imperial")
    page = text(client.get("/estimate"))
    for name, unit in [
        ("web_width_unit", "in"),
        ("run_length_unit", "ft"),
        ("repeat_unit", "in"),
        ("makeready_unit", "ft"),
        ("stations-0-ink_density_unit", "lb/gal"),
        ("stations-0-price_unit", "lb"),
        ("stations-0-on_hand_unit", "lb"),
        ("stations-0-fill_unit", "gal"),
    ]:
        select = re.search(rf'<select id="{re.escape(name)}".*?</select>', page, re.S).group(0)
        assert re.search(rf'<option value="{re.escape(unit)}" selected>', select), name
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    # 0.062 kg = 0.1367 lb (lb = 0.45359237 kg, NIST SP 811)
    assert "Short by 0.137 lb: prints about 36,200 of 60,000 labels" in body
    assert "Enough, 0.037 lb to spare" in body


def test_an_old_form_without_a_price_unit_is_per_kg_even_for_imperial(client):
    client.set_cookie("inkfilm_units", "imperial")
    form = labels_form()
    for index in range(3):
        del form[f"stations[{index}].price_unit"]
    body = text(client.post("/estimate", data=form, headers=HX))
    assert "Price per kg" not in body.split("How Cyan was worked out")[1].split("How Spot")[0]


@pytest.mark.parametrize(
    ("changes", "field", "words"),
    [
        ({"labels": "60k"}, "labels", "'60k' is not a number"),
        ({"labels": "2.5"}, "labels", "whole number"),
        ({"across": ""}, "across", "needs a number"),
        ({"around": "0"}, "around", "whole number"),
        ({"repeat": ""}, "repeat", "needs a number"),
        ({"makeready": "lots"}, "makeready", "'lots' is not a number"),
        ({"makeready_unit": "km**9"}, "makeready_unit", "choose one"),
        ({"stations[1].on_hand": "plenty"}, "stations[1].on_hand", "'plenty' is not a number"),
        ({"stations[2].on_hand": "-4"}, "stations[2].on_hand", "negative"),
        ({"stations[0].fill": "2,5,5"}, "stations[0].fill", "not a number"),
        ({"stations[0].fill_unit": "m"}, "stations[0].fill_unit", "choose one"),
        ({"stations[1].price_per_kg": "cheap"}, "stations[1].price_per_kg", "not a number"),
        ({"stations[1].price_unit": "oz"}, "stations[1].price_unit", "choose one"),
    ],
)
def test_errors_beside_the_field_with_the_typed_words_kept(client, changes, field, words):
    form = labels_form(**changes)
    slot = field.replace("[", "-").replace("]", "").replace(".", "-") + "-error"
    fragment = text(client.post("/estimate", data=form, headers=HX))
    found = re.search(
        rf'<div id="{re.escape(slot)}"[^>]*hx-swap-oob="innerHTML"><p class="field-error">([^<]+)</p>', fragment
    )
    assert found and words in found.group(1), fragment[:1500]
    whole = text(client.post("/estimate", data=form))  # without script: the whole page, the typed words kept
    assert re.search(rf'<div id="{re.escape(slot)}"[^>]*><p class="field-error">[^<]*{re.escape(words)}', whole)
    typed = changes[field]
    if "unit" not in field:
        assert f'value="{typed}"' in whole


def test_labels_typed_with_impressions_chosen_are_ignored_and_impressions_need_no_layout(client):
    form = labels_form(run_basis="impressions", impressions="10000", across="", around="", labels="junk")
    body = text(client.post("/estimate", data=form, headers=HX))
    assert "Ink for this job" in body and "per 1,000 labels" not in body
    assert "prints about" in body and "of 10,000 impressions" in body


def test_a_long_job_folds_filled_stations_to_one_line(client):
    form = labels_form(station_count="7")
    for index in (3, 4, 5, 6):
        form |= station(index, f"Spot {index}", "4", "10", "25", "1.0", "", "kg", "", "l", "", "kg")
    form["stations[3].coverage"] = ""  # not filled in: stays open
    page = text(client.post("/estimate", data=form))
    folds = re.findall(r'<details class="station-fold no-print"( open)?>', page)
    assert folds == ["", "", "", " open", "", "", " open"]
    assert re.search(r'<summary class="station-summary"><span class="station-summary-name">1\. Cyan</span>', page)
    with_all = text(client.post("/estimate", data=form | {"stations[3].coverage": "10", "action": "add"}))
    assert re.findall(r'<details class="station-fold no-print"( open)?>', with_all) == [""] * 7 + [" open"]
    five = {k: v for k, v in form.items() if not k.startswith(("stations[5]", "stations[6]"))} | {"station_count": "5"}
    assert " open" * 5 in "".join(
        re.findall(r'<details class="station-fold no-print"( open)?>', text(client.post("/estimate", data=five)))
    )


def test_the_bar_chart_is_sorted_labelled_and_styled_by_class(client):
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    svg = re.search(r"<svg .*?</svg>", body, re.S).group(0)
    assert 'role="img"' in svg and "<title" in svg and "<desc" in svg
    names = re.findall(r'<text class="ink-chart-name"[^>]*>([^<]+)</text>', svg)
    assert names == ["Cyan", "Spot", "Varnish"]  # 0.583, 0.162, 0 kg
    widths = [float(w) for w in re.findall(r'class="ink-chart-bar"[^>]*width="([0-9.]+)"', svg)]
    assert widths[0] > widths[1] > widths[2] == 0.0
    assert widths[1] / widths[0] == pytest.approx(0.162 / 0.5832, rel=0.01)
    assert "Ink per station, most first: Cyan 0.583 kg; Spot 0.162 kg; Varnish 0 kg." in svg
    assert "style=" not in svg and "fill=" not in svg  # colours from the stylesheet (dark mode, print)


def csv_rows(response) -> list[list[str]]:
    raw = response.get_data()
    assert raw.startswith(b"\xef\xbb\xbf")  # UTF-8 with a byte-order mark, for spreadsheets
    return list(csv.reader(io.StringIO(raw.decode("utf-8-sig"))))


def test_csv_download_from_the_result_link(client):
    body = text(client.post("/estimate", data=labels_form(), headers=HX))
    href = re.search(r'<a class="button button-quiet" href="([^"]+)" download', body).group(1)
    assert urlparse(href).path == "/estimate" and "csv" in parse_qs(urlparse(href).query)
    response = client.get(href)
    assert response.status_code == 200 and response.mimetype == "text/csv"
    assert "attachment" in response.headers["Content-Disposition"]
    rows = csv_rows(response)
    header, *stations, total = rows
    assert header[:5] == ["station", "coverage_share", "wet_film_um", "ink_kg", "ink_l"]
    assert [row[0] for row in stations] == ["Cyan", "Spot", "Varnish"] and total[0] == "Total"
    column = {name: i for i, name in enumerate(header)}
    api = client.post("/api/v1/estimate", json=API_BODY).get_json()
    assert float(stations[0][column["ink_kg"]]) == pytest.approx(0.5832)
    assert float(stations[1][column["price_per_kg"]]) == pytest.approx(10.0)
    assert stations[1][column["enough"]] == "no" and float(stations[1][column["short_by_kg"]]) == pytest.approx(0.062)
    assert float(total[column["ink_kg"]]) == api["total_ink_mass"]["value"]
    assert float(total[column["pull_kg"]]) == api["total_pull_mass"]["value"]
    assert float(total[column["cost_per_1000_labels"]]) == api["cost_per_1000_labels"]
    for row in stations + [total]:
        for cell in row[1:]:
            assert cell in ("", "yes", "no") or float(cell) == float(cell)  # plain numbers


@pytest.mark.parametrize("name", ["=1+2", "+SUM(A1)", "-2+3", "@cmd", "\t=x"])
def test_csv_makes_formula_like_names_inert(client, name):
    body = {**API_BODY, "stations": [{**API_BODY["stations"][0], "name": name}]}
    import json
    from urllib.parse import quote

    rows = csv_rows(client.get("/estimate?csv=" + quote(json.dumps(body))))
    cell = rows[1][0]
    assert cell.startswith("'") and cell[1:] == name.strip()


def test_csv_without_script_from_the_form(client):
    response = client.post("/estimate", data=labels_form(action="csv"))
    assert response.mimetype == "text/csv"
    assert [row[0] for row in csv_rows(response)][1:] == ["Cyan", "Spot", "Varnish", "Total"]


@pytest.mark.parametrize(
    ("param", "words"),
    [
        ("not json", "request body as JSON"),
        ("[1]", "JSON object"),
        ('{"web_width": "300 mm"}', "stations: is required"),
        ('{"web_width": "3 kg", "run_length": "1 m", "stations": []}', "stations: must be a list of 1 to 12"),
        ("[" * 5000 + "]" * 5000, "nested"),
        ("x" * 40000, "too large"),
    ],
)
def test_bad_csv_requests_get_a_plain_400_naming_the_field(client, param, words):
    response = client.get("/estimate", query_string={"csv": param})
    assert response.status_code == 400 and response.mimetype == "text/plain"
    assert words in response.get_data(as_text=True)
