"""The Ink strength page: readings in, the curve, its chart and the volume for a target out."""

from __future__ import annotations

import html
import json
import re

import pytest

from webapp.calculators import CALCULATIONS

HX = {"HX-Request": "true"}
VOLUMES = ("1.5", "2.5", "3.5", "4.5", "6", "8")
DENSITIES = ("0.64", "0.89", "1.10", "1.22", "1.37", "1.45")


def text(response) -> str:
    assert response.status_code == 200, response.status_code
    return response.get_data(as_text=True)


def strength_form(basis="volume", values=VOLUMES, densities=DENSITIES, **extra) -> dict:
    form = {
        "basis": basis,
        "volume_unit": "BCM/in2",
        "film_unit": "um",
        "target_density": "1.40",
        "transfer": "25",
        "reading_count": str(len(values)),
    }
    for index, (value, density) in enumerate(zip(values, densities, strict=True)):
        form[f"readings[{index}].value"] = value
        form[f"readings[{index}].transfer"] = "25"
        form[f"readings[{index}].density"] = density
    form.update(extra)
    return form


def api_body(form: dict) -> dict:
    readings = []
    for index in range(int(form["reading_count"])):
        readings.append(
            {
                "anilox_volume": f"{form[f'readings[{index}].value']} BCM/in2",
                "transfer": 0.25,
                "density": float(form[f"readings[{index}].density"]),
            }
        )
    return {"readings": readings, "target_density": 1.4, "transfer": 0.25}


def test_page_in_the_nav_shows_the_example_curve(client):
    body = text(client.get("/ink-strength"))
    assert 'href="/ink-strength"' in body and "Ink strength" in body
    assert '<svg class="strength-chart"' in body and body.count('<circle class="reading"') == 6
    assert '<polygon class="band"' in body and '<line class="target"' in body and '<line class="needed"' in body
    assert "How this was worked out" in body


def test_page_agrees_with_the_api(client):
    form = strength_form()
    body = text(client.post("/ink-strength", data=form))
    answer = CALCULATIONS["density_volume_for"](api_body(form))
    shown = float(re.search(r'data-key="anilox_volume"><data class="num" value="([^"]+)"', body).group(1))
    assert shown == pytest.approx(answer["anilox_volume"]["value"], rel=1e-12)  # metric: cm³/m²
    assert f"{answer['d_inf']:.3g}" in re.search(r'data-key="d_inf">([^<]+)', body).group(1)


def test_imperial_preference_shows_bcm_and_mil(client):
    client.post("/units", data={"system": "imperial", "next": "/ink-strength"})
    body = text(client.post("/ink-strength", data=strength_form()))
    assert re.search(r'data-key="anilox_volume">.*?</data> BCM/in²</span>', body, re.S)
    assert re.search(r'data-key="film">[\d.]+ mil<', body)
    assert "wet film, mil" in body


def test_film_readings(client):
    films = ("0.5", "1", "1.5", "2", "3", "4")
    densities = ("0.63", "1.01", "1.24", "1.38", "1.52", "1.57")
    body = text(client.post("/ink-strength", data=strength_form("film", films, densities), headers=HX))
    assert 'data-key="anilox_volume"' in body and 'class="field-error"' not in body


def test_unreachable_target_sits_beside_its_field_with_the_words_kept(client):
    body = text(client.post("/ink-strength", data=strength_form(target_density="1.9")))
    slot = re.search(r'id="target_density-error".*?</div>', body, re.S).group(0)
    assert "cannot be reached" in slot and "D∞ = 1.5" in slot
    assert 'value="1.9"' in body


def test_bad_row_names_its_row(client):
    densities = (*DENSITIES[:3], "dark", *DENSITIES[4:])
    body = text(client.post("/ink-strength", data=strength_form(densities=densities), headers=HX))
    slot = re.search(r'id="readings-3-density-error"[^>]*>(.*?)</div>', body, re.S).group(1)
    assert "not a number" in slot
    body = text(client.post("/ink-strength", data=strength_form(values=(*VOLUMES[:5], "900")), headers=HX))
    assert "an anilox volume must be" in re.search(r'id="readings-5-value-error"[^>]*>(.*?)</div>', body, re.S).group(1)


def test_two_readings_say_so(client):
    form = strength_form(values=VOLUMES[:2], densities=DENSITIES[:2])
    body = text(client.post("/ink-strength", data=form, headers=HX))
    assert "at least 3 readings" in re.search(r'id="readings-error"[^>]*>(.*?)</div>', body, re.S).group(1)


def test_empty_rows_are_skipped(client):
    form = strength_form(values=(*VOLUMES, ""), densities=(*DENSITIES, ""))
    body = text(client.post("/ink-strength", data=form, headers=HX))
    assert 'data-key="count">6<' in body


def test_add_and_remove_readings_without_javascript(client):
    body = text(client.post("/ink-strength", data=strength_form(action="add")))
    assert body.count('class="strength-row"') == 7 and 'name="reading_count" value="7"' in body
    body = text(client.post("/ink-strength", data=strength_form(action="remove-0")))
    assert body.count('class="strength-row"') == 5
    assert re.search(r'name="readings\[0\]\.value"[^>]*value="2\.5"', body)


def test_add_reading_with_htmx_returns_the_form(client):
    headers = {**HX, "HX-Target": "strength-area"}
    body = text(client.post("/ink-strength", data=strength_form(action="add"), headers=headers))
    assert body.lstrip().startswith('<div id="strength-area"') and "hx-swap-oob" not in body


def test_save_button_carries_a_body_that_runs(client):
    body = text(client.post("/ink-strength", data=strength_form(), headers=HX))
    found = re.search(r'name="kind" value="([a-z_]+)".*?name="inputs" value=\'([^\']*)\'', body, re.S)
    assert found.group(1) == "density_volume_for"
    inputs = json.loads(html.unescape(found.group(2)))
    assert CALCULATIONS["density_volume_for"](inputs)["anilox_volume"]["unit"] == "cm3/m2"


def test_saved_and_rerun(client):
    inputs = api_body(strength_form())
    response = client.post(
        "/api/v1/snippets", json={"kind": "density_volume_for", "inputs": inputs, "title": "Cyan on PE"}
    )
    assert response.status_code == 201, response.get_json()
    snippet = response.get_json()
    rerun = client.get(f"/api/v1/snippets/{snippet['id']}/rerun").get_json()
    assert rerun["same"] is True and rerun["today"] == snippet["results"]
    assert snippet["results"]["anilox_volume"]["unit"] == "cm3/m2"
    assert "Ink strength" in text(client.get(f"/snippets/{snippet['id']}"))


def test_no_inline_script_style_or_handler(client):
    body = text(client.get("/ink-strength"))
    assert re.findall(r"<script(?![^>]*\bsrc=)[^>]*>", body) == []
    assert re.findall(r"\sstyle=", body) == []
    assert re.findall(r"\son[a-z]+=", body) == []
    assert re.findall(r"https?://", body) == []


@pytest.mark.parametrize("junk", ["", "‮", "1e999", "-3", "1,2,3", "NaN", "9" * 50])
def test_typed_junk_never_gives_a_500(client, junk):
    for key in ("readings[0].value", "readings[2].density", "readings[1].transfer", "target_density", "transfer"):
        assert client.post("/ink-strength", data=strength_form(**{key: junk}), headers=HX).status_code == 200
    assert client.post("/ink-strength", data=strength_form(reading_count=junk)).status_code == 200
    assert client.post("/ink-strength", data=strength_form(volume_unit=junk)).status_code == 200
