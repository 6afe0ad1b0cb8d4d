"""The ink strength API: /api/v1/density/fit, /density/volume-for, /density/density-from."""

from __future__ import annotations

import math
import subprocess
import sys

import pytest

from webapp.calculators import CALCULATIONS

FILMS = (0.5, 1.0, 1.5, 2.0, 3.0, 4.0)


def exact_readings(d_inf=1.6, m=1.0):
    return [{"film": f"{x} um", "density": d_inf * (1 - math.exp(-m * x))} for x in FILMS]


READINGS = exact_readings()


def post(client, path, body):
    return client.post(path, json=body)


def test_fit_answers_the_parameters(client):
    answer = post(client, "/api/v1/density/fit", {"readings": READINGS}).get_json()
    assert answer["d_inf"] == pytest.approx(1.6, rel=1e-7)
    assert answer["m"] == {"value": pytest.approx(1.0, rel=1e-7), "unit": "1/um"}
    assert answer["count"] == 6 and answer["residual_sd"] == pytest.approx(0, abs=1e-7)
    assert {"d_inf_se", "m_se", "correlation"} <= set(answer)
    assert [point["film"]["value"] for point in answer["points"]] == pytest.approx(FILMS)


def test_registry_kind_and_named_route_agree(client):
    named = post(client, "/api/v1/density/fit", {"readings": READINGS}).get_json()
    assert post(client, "/api/v1/density_fit", {"readings": READINGS}).get_json() == named
    assert CALCULATIONS["density_fit"]({"readings": READINGS}) == named


def test_volume_for_target_by_hand(client):
    # D∞ = 1.6, m = 1 /µm: D = 1.30 needs x = −ln(1 − 1.30/1.6) = 1.67398 µm; at 25 % transfer 6.69592 cm³/m²
    body = {"d_inf": 1.6, "m": "1 /um", "target_density": 1.3, "transfer": 0.25}
    answer = post(client, "/api/v1/density/volume-for", body).get_json()
    assert answer["film"] == {"value": pytest.approx(1.67398, abs=5e-6), "unit": "um"}
    assert answer["anilox_volume"] == {"value": pytest.approx(6.69592, abs=5e-5), "unit": "cm3/m2"}
    assert answer["anilox_volume_band"] is None  # parameters without their uncertainty


def test_a_fit_answer_feeds_the_answers(client):
    noisy = [
        dict(r, density=r["density"] + e) for r, e in zip(READINGS, (0.01, -0.02, 0.015, 0.0, -0.01, 0.02), strict=True)
    ]
    fit = post(client, "/api/v1/density/fit", {"readings": noisy}).get_json()
    fit.pop("points")
    from_fit = post(client, "/api/v1/density/volume-for", {**fit, "target_density": 1.3, "transfer": 0.25}).get_json()
    from_readings = post(
        client, "/api/v1/density/volume-for", {"readings": noisy, "target_density": 1.3, "transfer": 0.25}
    ).get_json()
    assert from_fit["anilox_volume"]["value"] == pytest.approx(from_readings["anilox_volume"]["value"], rel=1e-12)
    low, high = from_fit["anilox_volume_band"]["low"]["value"], from_fit["anilox_volume_band"]["high"]["value"]
    assert low == pytest.approx(from_readings["anilox_volume_band"]["low"]["value"], rel=1e-9)
    assert low < from_fit["anilox_volume"]["value"] < high


def test_density_from_volume_with_band(client):
    noisy = [
        dict(r, density=r["density"] + e) for r, e in zip(READINGS, (0.01, -0.02, 0.015, 0.0, -0.01, 0.02), strict=True)
    ]
    answer = post(
        client, "/api/v1/density/density-from", {"readings": noisy, "anilox_volume": "4 BCM/in2", "transfer": 0.25}
    ).get_json()
    # 4 BCM/in² × 0.25 = 1.55000 µm (exact inch, NIST SP 811)
    assert answer["film"]["value"] == pytest.approx(1.55, abs=5e-6)
    band = answer["density_band"]
    assert band["low"] < answer["density"] < band["high"]
    assert band["low"] < 1.6 * (1 - math.exp(-1.55)) < band["high"]
    assert post(client, "/api/v1/density_from", {"readings": noisy, "film": "1.55 um"}).status_code == 200


@pytest.mark.parametrize(
    ("path", "body", "field", "words"),
    [
        ("/api/v1/density/fit", {"readings": READINGS[:2]}, "readings", "at least 3"),
        ("/api/v1/density/fit", {}, "readings", "required"),
        ("/api/v1/density/fit", {"readings": "many"}, "readings", "list"),
        (
            "/api/v1/density/fit",
            {"readings": [*READINGS[:5], {"film": "2 um", "density": -1}]},
            "readings[5].density",
            "negative",
        ),
        (
            "/api/v1/density/fit",
            {"readings": [*READINGS[:5], {"film": "2 g/m2", "density": 1}]},
            "readings[5].film",
            "film thickness",
        ),
        ("/api/v1/density/fit", {"readings": [*READINGS[:5], {"film": "2 um"}]}, "readings[5].density", "required"),
        (
            "/api/v1/density/fit",
            {"readings": [*READINGS[:5], {"film": "2 um", "density": 1, "x": 1}]},
            "readings[5].x",
            "not a field",
        ),
        (
            "/api/v1/density/fit",
            {"readings": [{"film": f"{x} um", "density": 0.3 * x} for x in FILMS]},
            "readings",
            "do not level off",
        ),
        (
            "/api/v1/density/volume-for",
            {"readings": READINGS, "target_density": 1.6, "transfer": 0.25},
            "target_density",
            "cannot be reached",
        ),
        ("/api/v1/density/volume-for", {"readings": READINGS, "target_density": 1.3}, "transfer", "required"),
        (
            "/api/v1/density/volume-for",
            {"readings": READINGS, "target_density": 1.3, "transfer": 2},
            "transfer",
            "fraction",
        ),
        ("/api/v1/density/volume-for", {"target_density": 1.3, "transfer": 0.25}, "readings", "give the readings"),
        ("/api/v1/density/volume-for", {"m": "1 /um", "target_density": 1.3, "transfer": 0.25}, "d_inf", "required"),
        (
            "/api/v1/density/volume-for",
            {"d_inf": 1.6, "m": "1 um", "target_density": 1.3, "transfer": 0.25},
            "m",
            "rate per film",
        ),
        (
            "/api/v1/density/volume-for",
            {"d_inf": 1.6, "m": "1 /um", "d_inf_se": 0.1, "target_density": 1.3, "transfer": 0.25},
            "m_se",
            "band",
        ),
        (
            "/api/v1/density/volume-for",
            {"readings": READINGS, "d_inf": 1.6, "target_density": 1.3, "transfer": 0.25},
            "d_inf",
            "not both",
        ),
        ("/api/v1/density/density-from", {"readings": READINGS}, "anilox_volume", "give the anilox volume"),
        ("/api/v1/density/density-from", {"readings": READINGS, "anilox_volume": "4 BCM/in2"}, "transfer", "required"),
    ],
)
def test_bad_input_names_the_field(client, path, body, field, words):
    response = post(client, path, body)
    assert response.status_code == 400
    error = response.get_json()["error"]
    assert error["field"] == field
    assert words in error["message"]


@pytest.mark.parametrize(
    "junk", [None, [], "x", 1e308, {"density": True}, [None] * 3, [{"film": "1e999 um", "density": 1}] * 3]
)
def test_junk_readings_never_give_a_500(client, junk):
    for path in ("/api/v1/density/fit", "/api/v1/density/volume-for", "/api/v1/density/density-from"):
        response = post(client, path, {"readings": junk, "target_density": 1.3, "transfer": 0.25})
        assert response.status_code == 400, (path, junk)


def test_start_up_loads_no_numerical_library(tmp_path):
    # The fit is plain Python (calc.density); start-up imports no numpy or scipy of ours.
    code = (
        "import sys; import webapp; from webapp import create_app;"
        f"create_app({{'DATA_DIR': {str(tmp_path)!r}}});"
        "loaded = {'numpy', 'scipy', 'scipy.optimize'} & set(sys.modules);"
        "assert not loaded, loaded"
    )
    subprocess.run([sys.executable, "-c", code], check=True)
