"""/api/v1/estimate, extended: labels jobs, make-ready, system fill, ink on hand, price per lb,
per-1,000 figures; old bodies answer as before; every new bad input names its field."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tests.bodies import ESTIMATE, fresh
from webapp.calculators import MONEY, SHARES
from webapp.calculators import estimate as module

V1 = json.loads((Path(__file__).with_name("estimate_v1_answers.json")).read_text(encoding="utf-8"))


def post(client, body):
    return client.post("/api/v1/estimate", data=json.dumps(body), content_type="application/json")


def answer(client, body) -> dict:
    response = post(client, body)
    assert response.status_code == 200, response.get_json()
    return response.get_json()


# A labels job worked by hand. 300 mm web, 250 mm repeat, 3 across × 2 around:
#   n = ⌈60 000 / 6⌉ = 10 000 impressions;  L = 10 000 × 0.25 m = 2 500 m
#   L_p = 2 500 m × 1.04 + 100 m make-ready = 2 700 m
# Station "Cyan": 5 cm³/m² × 0.3 = 1.5 µm wet; coverage 0.4
#   V = 1.5 µm × 0.3 m × 2 700 m × 0.4 = 486 cm³ = 0.486 l;  m = 0.486 l × 1.2 kg/l = 0.5832 kg
#   cost = 0.5832 × 20 = 11.664;  fill 2 l × 1.2 = 2.4 kg;  pull = 2.9832 kg
#   on hand 3 kg ≥ 2.9832 kg: enough; L_good = ((3 − 2.4) / (1.5e-6 × 0.3 × 0.4 × 1200) − 100) / 1.04
#     = (0.6 / 2.16e-4 − 100) / 1.04 = (2 777.78 − 100) / 1.04 = 2 574.79 m → ⌊/0.25⌋ = 10 299 impr., 61 794 labels
#   per 1,000 impressions 0.5832 / 10 = 0.05832 kg; per 1,000 labels 0.5832 / 60 = 0.00972 kg, cost 11.664 / 60 = 0.1944
#   mileage = 1 / (1.5 µm × 1.2 kg/l) = 1 / (1.8 g/m²) = 555.56 m²/kg
# Station "Spot": each label is 0.3 × 0.25 / 6 = 125 cm²; 25 cm² inked → c = 0.2
#   4 cm³/m² × 0.25 = 1 µm;  V = 1 µm × 0.3 × 2 700 × 0.2 = 162 cm³;  m = 0.162 kg (1 kg/l)
#   price 4.5359237 per lb = 10 per kg exactly (lb = 0.45359237 kg, NIST SP 811 App. B) → cost 1.62
#   fill 1 kg → pull 1.162 kg;  on hand 1.1 kg: short by 0.062 kg
#   L_good = ((1.1 − 1) / (1e-6 × 0.3 × 0.2 × 1000) − 100) / 1.04 = (1 666.67 − 100) / 1.04 = 1 506.41 m
#     → ⌊1 506.41 / 0.25⌋ = 6 025 impressions, × 6 = 36 150 labels
# Totals: ink 0.7452 kg, 0.648 l; pull 4.1452 kg; cost 13.284 → per 1,000 labels 0.2214, per 1,000 impr. 1.3284
LABELS_JOB = {
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
            "inked_area_per_label": "25 cm2",
            "transfer": 0.25,
            "ink_density": "1.0 g/cm3",
            "price_per_lb": 4.5359237,
            "fill": "1 kg",
            "on_hand": "1.1 kg",
        },
        {
            "name": "Varnish",
            "anilox_volume": "6 cm3/m2",
            "coverage": 0.0,
            "transfer": 0.3,
            "ink_density": "1.0 g/cm3",
            "price_per_kg": 8,
            "on_hand": "0 kg",
        },
    ],
}


def q(value, unit, rel=1e-9):
    return {"value": pytest.approx(value, rel=rel), "unit": unit}


def test_a_labels_job_against_hand_arithmetic(client):
    got = answer(client, LABELS_JOB)
    assert got["impressions"] == 10000 and got["labels"] == 60000
    assert got["run_length"] == q(2500.0, "m")
    assert got["printed_length"] == q(2700.0, "m")
    assert got["printed_area"] == q(750.0, "m2")
    cyan, spot, varnish = got["stations"]
    assert cyan["ink_volume"] == q(0.486, "l") and cyan["ink_mass"] == q(0.5832, "kg")
    assert cyan["cost"] == pytest.approx(11.664)
    assert cyan["coverage"] == pytest.approx(0.4)
    assert cyan["mileage"] == q(1000 / 1.8, "m2/kg")
    assert cyan["pull_mass"] == q(2.9832, "kg")
    assert cyan["ink_per_1000_impressions"] == q(0.05832, "kg")
    assert cyan["ink_per_1000_labels"] == q(0.00972, "kg")
    assert cyan["cost_per_1000_labels"] == pytest.approx(0.1944)
    assert cyan["enough"] is True and cyan["short_by"] == {"value": 0.0, "unit": "kg"}
    assert cyan["on_hand_prints"]["run_length"] == q((0.6 / 2.16e-4 - 100) / 1.04, "m")
    assert cyan["on_hand_prints"]["impressions"] == 10299 and cyan["on_hand_prints"]["labels"] == 61794
    assert spot["coverage"] == pytest.approx(0.2)
    assert spot["ink_mass"] == q(0.162, "kg") and spot["cost"] == pytest.approx(1.62)
    assert spot["price_per_kg"] == pytest.approx(10.0, rel=1e-12)
    assert spot["pull_mass"] == q(1.162, "kg")
    assert spot["enough"] is False and spot["short_by"] == q(0.062, "kg")
    assert spot["on_hand_prints"] == {
        "run_length": q((0.1 / 6e-5 - 100) / 1.04, "m"),
        "impressions": 6025,
        "labels": 36150,
    }
    # a varnish station that lays no ink and has no fill: the ink on hand sets no limit
    assert varnish["ink_mass"]["value"] == 0.0 and varnish["enough"] is True and "on_hand_prints" not in varnish
    assert varnish["mileage"] == q(1000 / 1.8, "m2/kg")  # mileage is per mass of ink laid, coverage aside
    assert got["total_ink_mass"] == q(0.7452, "kg") and got["total_ink_volume"] == q(0.648, "l")
    assert got["total_pull_mass"] == q(4.1452, "kg")
    assert got["total_cost"] == pytest.approx(13.284)
    assert got["cost_per_1000_labels"] == pytest.approx(0.2214)
    assert got["cost_per_1000_impressions"] == pytest.approx(1.3284)


@pytest.mark.parametrize("case", V1["cases"], ids=lambda case: case["body"]["stations"][0]["name"])
def test_old_bodies_give_every_old_field_the_same_value(client, case):
    """The answers saved from the release before this extension: the same fields with the same values."""
    got = answer(client, case["body"])
    old = case["answer"]
    for key, value in old.items():
        if key != "stations":
            assert got[key] == value, key
    for new, was in zip(got["stations"], old["stations"], strict=True):
        assert {key: new[key] for key in was} == was


def test_old_bodies_gain_only_the_new_fields(client):
    got = answer(client, ESTIMATE)
    assert set(got) == {
        "printed_area",
        "stations",
        "total_ink_mass",
        "total_cost",
        "run_length",
        "printed_length",
        "total_ink_volume",
        "total_pull_mass",
    }
    assert got["run_length"] == q(12000.0, "m") and got["printed_length"] == q(12600.0, "m")
    (station,) = got["stations"]
    assert station["pull_mass"] == station["ink_mass"]  # no fill given
    assert "ink_per_1000_impressions" not in station and "enough" not in station


def test_impressions_job_with_across_and_around_gives_labels_and_costs_per_1000(client):
    body = fresh(ESTIMATE) | {"impressions": 50000, "repeat": "12 in", "across": 4, "around": 1}
    del body["run_length"]
    got = answer(client, body)
    assert got["impressions"] == 50000 and got["labels"] == 200000
    # 50 000 × 12 in = 15 240 m (inch = 25.4 mm, NIST SP 811)
    assert got["run_length"] == q(15240.0, "m")
    assert got["cost_per_1000_labels"] == pytest.approx(got["total_cost"] / 200)
    assert got["cost_per_1000_impressions"] == pytest.approx(got["total_cost"] / 50)


def test_fill_and_on_hand_as_volumes_and_a_price_per_lb(client):
    body = fresh(ESTIMATE)
    station = body["stations"][0]
    del station["price_per_kg"]
    station |= {"price_per_lb": 5.67, "fill": "0.5 gal", "on_hand": "2 gal"}
    got = answer(client, body)["stations"][0]
    # US gallon = 3.785411784 l (NIST Handbook 44, App. C); density 1 kg/l
    assert got["pull_mass"]["value"] == pytest.approx(got["ink_mass"]["value"] + 0.5 * 3.785411784, rel=1e-12)
    assert got["on_hand_mass"] == q(2 * 3.785411784, "kg", 1e-12)
    assert got["price_per_kg"] == pytest.approx(5.67 / 0.45359237, rel=1e-12)
    assert got["enough"] is True
    assert got["on_hand_prints"]["run_length"]["unit"] == "m" and set(got["on_hand_prints"]) == {"run_length"}


def test_no_total_cost_figures_unless_every_station_has_a_price(client):
    body = fresh(LABELS_JOB)
    del body["stations"][2]["price_per_kg"]
    got = answer(client, body)
    assert "total_cost" not in got and "cost_per_1000_labels" not in got
    assert "cost_per_1000_labels" in got["stations"][0]


def with_station(index, **changes):
    body = fresh(LABELS_JOB)
    for key, value in changes.items():
        if value is None:
            body["stations"][index].pop(key, None)
        else:
            body["stations"][index][key] = value
    return body


def without(*keys, **changes):
    body = fresh(LABELS_JOB)
    for key in keys:
        del body[key]
    return body | changes


BAD = [
    (without("across"), "across", "needs the across"),
    (without("around"), "around", "needs the around"),
    (without("repeat"), "repeat", "needs the repeat"),
    (without(labels=0), "labels", "whole number"),
    (without(labels=2.5), "labels", "whole number"),
    (without(labels="many"), "labels", "whole number"),
    (without(labels=True), "labels", "whole number"),
    (without(across=0), "across", "whole number"),
    (without(around=1.5), "around", "whole number"),
    (without(labels=10**13), "labels", "whole number"),
    (without(makeready="5 kg"), "makeready", "length"),
    (without(makeready="-1 m"), "makeready", "negative"),
    (without(makeready=12), "makeready", "text"),
    (without(run_length="100 m"), "run_length", "not both"),
    (without("repeat", run_length="100 m"), "labels", "only one"),
    (without("labels", "across", "around", impressions=100, across=3), "around", "labels around"),
    (without("labels", "repeat", "around", run_length="100 m"), "across", "repeat"),
    (with_station(2, on_hand="3 m"), "stations[2].on_hand", "volume or a mass"),
    (with_station(2, on_hand="-3 kg"), "stations[2].on_hand", "negative"),
    (with_station(2, on_hand="1e9 kg"), "stations[2].on_hand", "ink on hand"),
    (with_station(0, fill="abc"), "stations[0].fill", "number"),
    (with_station(0, fill="2 m2"), "stations[0].fill", "volume or a mass"),
    (with_station(0, price_per_lb=5), "stations[0].price_per_lb", "not both"),
    (with_station(1, price_per_lb="cheap"), "stations[1].price_per_lb", "number"),
    (with_station(0, inked_area_per_label="3 cm2"), "stations[0].inked_area_per_label", "not both"),
    (with_station(1, inked_area_per_label="3 m"), "stations[1].inked_area_per_label", "area"),
    (with_station(1, inked_area_per_label="200 cm2"), "stations[1].inked_area_per_label", "more than all of it"),
    (with_station(1, inked_area_per_label=None), "stations[1].coverage", "is required"),
    (with_station(1, colour="red"), "stations[1].colour", "not a field"),
]


@pytest.mark.parametrize(("body", "field", "words"), BAD)
def test_every_new_bad_input_names_its_field(client, body, field, words):
    response = post(client, body)
    assert response.status_code == 400
    error = response.get_json()["error"]
    assert error["field"] == field, error
    assert words in error["message"], error


def test_inked_area_per_label_needs_the_label_layout(client):
    body = fresh(ESTIMATE)
    del body["stations"][0]["coverage"]
    body["stations"][0]["inked_area_per_label"] = "10 cm2"
    error = post(client, body).get_json()["error"]
    assert error["field"] == "stations[0].inked_area_per_label" and "across and around" in error["message"]


def test_request_fields_are_declared_with_their_kinds():
    kinds = {"quantity", "share", "number", "integer", "text", "boolean", "list"}
    for fields in (module.REQUIRED, module.OPTIONAL, module.STATION_REQUIRED, module.STATION_OPTIONAL):
        assert isinstance(fields, dict) and set(fields.values()) <= kinds
    assert module.OPTIONAL["labels"] == "integer" and module.STATION_OPTIONAL["on_hand"] == "quantity"
    assert module.STATION_OPTIONAL["coverage"] == "share" and module.OPTIONAL["waste"] == "share"


def test_saved_snippets_show_shares_and_money_right():
    assert {"coverage", "transfer", "waste"} <= SHARES
    assert {"cost_per_1000_labels", "cost_per_1000_impressions", "price_per_lb", "price_per_kg"} <= MONEY
