"""The /api/v1 contract, through Flask's test client."""

import json

import pytest

from tests.bodies import ESTIMATE


def post(client, path, body):
    return client.post(path, data=json.dumps(body), content_type="application/json")


def test_convert_answers_in_the_unit_as_spelt(client):
    response = post(client, "/api/v1/convert", {"quantity": "3.5 BCM/in2", "to": "cm³/m²"})
    assert response.status_code == 200
    result = response.get_json()["result"]
    assert result["unit"] == "cm³/m²"
    # Exact from the inch (NIST SP 811): 3.5 / 0.64516
    assert result["value"] == pytest.approx(3.5 / 0.64516, rel=1e-12)
    assert set(response.get_json()) == {"result"}


def test_convert_with_density(client):
    response = post(client, "/api/v1/convert", {"quantity": "2 um", "to": "g/m2", "density": "1.05 g/cm3"})
    assert response.get_json() == {"result": {"value": pytest.approx(2.1), "unit": "g/m2"}}


WRITES = [
    ("post", "/api/v1/convert"),
    ("post", "/api/v1/film"),
    ("post", "/api/v1/estimate"),
    ("post", "/api/v1/equivalents"),
    ("post", "/api/v1/snippets"),
    ("put", "/api/v1/snippets/1"),
    ("patch", "/api/v1/snippets/1"),
    ("post", "/api/v1/snippets/1/restore"),
    ("post", "/api/v1/snippets/import"),
]


@pytest.mark.parametrize(("method", "path"), WRITES)
@pytest.mark.parametrize(
    "content_type",
    [None, "text/plain", "application/x-www-form-urlencoded", "multipart/form-data; boundary=x", "text/json"],
)
def test_a_body_not_sent_as_json_is_refused_with_415(client, method, path, content_type):
    # text/plain, form and multipart posts are "simple" requests any web page can send cross-site.
    headers = {} if content_type is None else {"Content-Type": content_type}
    response = getattr(client, method)(path, data='{"quantity": "1 mil", "to": "um"}', headers=headers)
    assert response.status_code == 415
    error = response.get_json()["error"]
    assert error["field"] is None
    assert "application/json" in error["message"]


@pytest.mark.parametrize("content_type", ["application/json", "application/json; charset=utf-8", "application/x+json"])
def test_json_content_types_are_read(client, content_type):
    response = client.post("/api/v1/convert", data='{"quantity": "1 mil", "to": "um"}', content_type=content_type)
    assert response.status_code == 200
    assert response.get_json()["result"]["value"] == pytest.approx(25.4)


def test_reading_needs_no_content_type(client):
    assert client.get("/api/v1/snippets").status_code == 200


def test_film_answers_the_whole_chain(client):
    body = {
        "anilox_volume": "4 BCM/in2",
        "anilox_to_plate": 0.5,
        "plate_to_substrate": 0.5,
        "solids_by_volume": 0.3,
        "solids_by_weight": 0.4,
        "ink_density": "1.05 g/cm3",
    }
    answer = post(client, "/api/v1/film", body).get_json()
    assert set(answer) == {
        "theoretical_wet",
        "plate_wet",
        "substrate_wet",
        "dry",
        "wet_coat_weight",
        "dry_coat_weight",
    }
    t0 = 4 / 0.64516
    assert answer["theoretical_wet"] == {"value": pytest.approx(t0, rel=1e-12), "unit": "um"}
    assert answer["plate_wet"]["value"] == pytest.approx(t0 / 2, rel=1e-12)
    assert answer["substrate_wet"]["value"] == pytest.approx(t0 / 4, rel=1e-12)
    assert answer["dry"] == {"value": pytest.approx(t0 / 4 * 0.3, rel=1e-12), "unit": "um"}
    assert answer["wet_coat_weight"] == {"value": pytest.approx(t0 / 4 * 1.05, rel=1e-12), "unit": "g/m2"}
    assert answer["dry_coat_weight"]["value"] == pytest.approx(t0 / 4 * 1.05 * 0.4, rel=1e-12)


def test_film_leaves_out_what_the_inputs_do_not_allow(client):
    body = {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 0.5, "plate_to_substrate": 0.5}
    assert set(post(client, "/api/v1/film", body).get_json()) == {"theoretical_wet", "plate_wet", "substrate_wet"}


def test_estimate_contract(client):
    answer = post(client, "/api/v1/estimate", ESTIMATE).get_json()
    # the first release's fields (later ones only add; tests/web/test_estimate_api.py checks their values)
    assert {"printed_area", "stations", "total_ink_mass", "total_cost"} <= set(answer)
    assert answer["printed_area"] == {"value": pytest.approx(3960.0), "unit": "m2"}
    (station,) = answer["stations"]
    assert {"name", "substrate_wet", "ink_mass", "ink_volume", "cost"} <= set(station)
    assert station["name"] == "Cyan"
    assert station["substrate_wet"]["unit"] == "um"
    assert station["ink_mass"]["unit"] == "kg"
    assert station["ink_volume"]["unit"] == "l"
    # Worked by hand in tests/calc/test_film.py: 2.32017 kg, 29.0021 in the price's currency
    assert round(station["ink_mass"]["value"], 5) == 2.32017
    assert round(answer["total_cost"], 4) == 29.0021
    assert answer["total_ink_mass"] == station["ink_mass"]


def test_estimate_by_impressions_and_without_prices(client):
    body = {**ESTIMATE, "impressions": 50000, "repeat": "18 in"}
    del body["run_length"]
    body["stations"] = [{k: v for k, v in ESTIMATE["stations"][0].items() if k != "price_per_kg"}]
    answer = post(client, "/api/v1/estimate", body).get_json()
    assert "total_cost" not in answer
    assert "cost" not in answer["stations"][0]
    assert answer["printed_area"]["value"] == pytest.approx(0.33 * 22860, rel=1e-12)


@pytest.mark.parametrize(
    ("path", "body", "field", "words"),
    [
        ("/api/v1/convert", {"quantity": "1 m"}, "to", "is required"),
        ("/api/v1/convert", {"quantity": "1 m", "to": "mm", "extra": 1}, "extra", "not a field"),
        ("/api/v1/convert", {"quantity": 5, "to": "mm"}, "quantity", "must be a text"),
        ("/api/v1/convert", {"quantity": "1 m", "to": 5}, "to", "unit spelling"),
        ("/api/v1/convert", {"quantity": "1 m", "to": "kg"}, "to", "cannot convert a length"),
        ("/api/v1/convert", {"quantity": "1 glorp", "to": "kg"}, "quantity", "'glorp' is not understood"),
        ("/api/v1/convert", {"quantity": "-2 BCM/in2", "to": "um"}, "quantity", "negative"),
        ("/api/v1/convert", {"quantity": "2 um", "to": "g/m2"}, "density", "density"),
        ("/api/v1/film", {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 0.5}, "plate_to_substrate", "required"),
        (
            "/api/v1/film",
            {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 7, "plate_to_substrate": 0.5},
            "anilox_to_plate",
            "fraction",
        ),
        ("/api/v1/estimate", {**ESTIMATE, "stations": "Cyan"}, "stations", "list"),
        ("/api/v1/estimate", {**ESTIMATE, "stations": [ESTIMATE["stations"][0]] * 13}, "stations", "1 to 12"),
        ("/api/v1/estimate", {**ESTIMATE, "stations": [1]}, "stations[0]", "JSON object"),
        (
            "/api/v1/estimate",
            {**ESTIMATE, "stations": [{**ESTIMATE["stations"][0], "colour": "blue"}]},
            "stations[0].colour",
            "not a field",
        ),
        (
            "/api/v1/estimate",
            {**ESTIMATE, "stations": [{**ESTIMATE["stations"][0], "ink_density": "1 g"}]},
            "stations[0].ink_density",
            "density",
        ),
        ("/api/v1/estimate", {**ESTIMATE, "waste": -0.1}, "waste", "fraction"),
    ],
)
def test_bad_input_names_the_field(client, path, body, field, words):
    response = post(client, path, body)
    assert response.status_code == 400
    error = response.get_json()["error"]
    assert error["field"] == field
    assert words in error["message"]


@pytest.mark.parametrize("raw", ["", "not json", "[1, 2]", '"text"', "null", "{", '{"quantity": NaN, "to": "m"}'])
def test_malformed_bodies_get_a_plain_400(client, raw):
    response = client.post("/api/v1/convert", data=raw, content_type="application/json")
    assert response.status_code == 400
    assert response.get_json()["error"]["message"]


def test_non_finite_numbers_are_refused(client):
    # Python's json reads the non-standard NaN and Infinity literals; refuse them by field.
    raw = '{"anilox_volume": "4 BCM/in2", "anilox_to_plate": Infinity, "plate_to_substrate": 0.5}'
    response = client.post("/api/v1/film", data=raw, content_type="application/json")
    assert response.status_code == 400
    assert response.get_json()["error"]["field"] == "anilox_to_plate"


def test_body_over_64_kb_is_refused(client):
    body = {"quantity": "1 m", "to": "mm", "padding": "x" * (64 * 1024)}
    response = post(client, "/api/v1/convert", body)
    assert response.status_code == 413
    assert "too large" in response.get_json()["error"]["message"]


def test_unknown_paths_and_methods_answer_json(client):
    missing = client.get("/api/v1/nowhere")
    assert missing.status_code == 404
    assert missing.get_json()["error"]["message"]
    wrong_method = client.get("/api/v1/convert")
    assert wrong_method.status_code == 405
    assert "GET" in wrong_method.get_json()["error"]["message"]
