"""The roll fit (/fit) and cell geometry (/cell) pages through Flask's test
client: whole pages and htmx fragments, the answer against the API, every bad
input with its message beside the field and the typed text kept, the units
preference, the drawings to scale, and saving and re-running as a snippet.

References: inch = 25.4 mm (NIST SP 811); the 2 % dot at 150 lpi ≈ 27 µm and
the cell volume model are the derivations in REFERENCES.md.
"""

from __future__ import annotations

import html
import json
import re

import pytest

from webapp.calculators import CALCULATIONS

HX = {"HX-Request": "true"}
UNFIT_FORM = {
    "plate_screen": "150",
    "plate_screen_unit": "lpi",
    "work": "process",
    "anilox_screen": "600",
    "anilox_screen_unit": "lpi",
    "anilox_volume": "4",
    "anilox_volume_unit": "BCM/in2",
}
FITS_FORM = {**UNFIT_FORM, "anilox_screen": "1000", "anilox_volume": "1.5"}
CELL_FORM = {
    "screen": "800",
    "screen_unit": "lpi",
    "wall": "3",
    "wall_unit": "um",
    "angle": "60",
    "shape": "bowl",
    "given": "depth",
    "depth": "12",
    "depth_unit": "um",
    "volume": "",
    "volume_unit": "BCM/in2",
}


def text(response) -> str:
    return html.unescape(response.get_data(as_text=True))


def slot(body: str, field: str) -> str | None:
    found = re.search(rf'<div id="{field}-error"[^>]*>(.*?)</div>', body, re.S)
    return found.group(1) if found else None


def saved_inputs(body: str) -> tuple[str, dict]:
    found = re.search(r'name="kind" value="([a-z]+)".*?name="inputs" value=\'([^\']*)\'', body, re.S)
    assert found, "no Save button"
    return found.group(1), json.loads(found.group(2))


def verdict(body: str) -> str:
    return re.search(r'<p class="verdict[^"]*" data-verdict="[a-z]+">([^<]*)</p>', body).group(1)


# --- whole pages, fragments ------------------------------------------------------


@pytest.mark.parametrize(("path", "nav"), [("/fit", "Roll fit"), ("/cell", "Cell")])
def test_pages_are_in_the_nav_and_whole_documents(client, path, nav):
    response = client.get(path)
    body = text(response)
    assert response.status_code == 200 and body.startswith("<!doctype html>")
    assert f'<a href="{path}" aria-current="page">{nav}</a>' in body
    assert f'href="{"/cell" if path == "/fit" else "/fit"}"' in body  # each page's nav names the other
    raw = response.get_data(as_text=True)
    assert re.findall(r"<script(?![^>]*\bsrc=)[^>]*>", raw) == []
    assert re.findall(r"\sstyle=|<style|\son[a-z]+=|\shx-on", raw) == []


@pytest.mark.parametrize(("path", "form"), [("/fit", UNFIT_FORM), ("/cell", CELL_FORM)])
def test_htmx_gets_the_fragment_and_a_plain_post_the_page(client, path, form):
    page = client.post(path, data=form)
    fragment = client.post(path, data=form, headers=HX)
    assert "HX-Request" in page.headers["Vary"] and "HX-Request" in fragment.headers["Vary"]
    assert "<html" in text(page) and "<html" not in text(fragment)
    assert "<form id=" in text(page) and "<form id=" not in text(fragment)
    assert 'hx-swap-oob="innerHTML"' in text(fragment) and "hx-swap-oob" not in text(page)
    assert "How this was worked out" in text(fragment)


# --- the fit page ----------------------------------------------------------------


def test_a_coarse_heavy_roll_does_not_fit_and_says_both_reasons(client):
    body = text(client.post("/fit", data=UNFIT_FORM, headers=HX))
    assert verdict(body) == "Does not fit: screen too coarse and volume too high"
    codes = re.findall(r'<li class="reason reason-problem" data-code="([a-z_]+)"', body)
    assert codes == ["screen_too_coarse", "volume_too_high"]
    api = client.post("/api/v1/fit", json=saved_inputs(body)[1]).get_json()
    for problem in api["problems"]:
        assert problem["message"] in body  # the reasons are the API's messages
    assert '<svg class="fit-drawing"' in body
    assert "The dot is narrower than one cell opening, so a dot over a cell can dip into it." in body


def test_a_fine_light_roll_fits(client):
    body = text(client.post("/fit", data=FITS_FORM, headers=HX))
    assert verdict(body) == "Fits"
    assert re.findall(r'data-code="([a-z_]+)"', body) == ["screen_fine_enough", "volume_in_range"]
    assert "rests on the cell walls" in body


def test_recommendations_and_the_dot_are_stated_in_the_preferred_units(client):
    body = text(client.post("/fit", data=UNFIT_FORM, headers=HX))
    # metric: 750 lpi = 295 l/cm; 1–2.5 BCM/in² = 1.55–3.88 cm³/m² (NIST SP 811)
    assert '<strong class="nowrap">295 lines/cm</strong> or finer' in body and "750 lpi" in body
    assert "<strong>1.55–3.88 cm³/m²</strong>" in body and "1–2.5 BCM/in²" in body
    assert '<strong class="nowrap">27 µm</strong> across' in body  # REFERENCES.md: 2 % dot at 150 lpi
    assert "common practice" in body
    client.set_cookie("inkfilm_units", "imperial")
    body = text(client.post("/fit", data=UNFIT_FORM, headers=HX))
    assert '<strong class="nowrap">750 lpi</strong> or finer' in body and "<strong>1–2.5 BCM/in²</strong>" in body
    assert '<strong class="nowrap">1.06 mil</strong> across' in body  # 27.02 µm / 25.4


def test_the_drawing_is_to_scale(client):
    body = text(client.post("/fit", data=UNFIT_FORM, headers=HX))
    dot_r = float(re.search(r'<circle class="fit-dot" data-dot-r="([0-9.]+)"', body).group(1))
    hexagon = re.search(r'<polygon class="fit-cell" points="([^"]+)"', body).group(1)
    xs = [float(point.split(",")[0]) for point in hexagon.split()]
    across_flats = max(xs) - min(xs)  # pointy-topped: left and right sides are flat
    dot_um = 2 * 25_400 / 150 * (0.02 / 3.141592653589793) ** 0.5
    opening_um = 25_400 / 600 - 3
    assert (2 * dot_r) / across_flats == pytest.approx(dot_um / opening_um, rel=0.01)
    assert '<title id="fit-drawing-title">' in body and '<desc id="fit-drawing-desc">' in body


@pytest.mark.parametrize("kind", ["line", "solid", "white", "coating"])
def test_every_kind_of_work_answers(client, kind):
    body = text(client.post("/fit", data={**FITS_FORM, "work": kind}, headers=HX))
    assert verdict(body).startswith(("Fits", "Does not fit: volume too"))
    assert saved_inputs(body)[1]["work"] == kind


def test_without_a_roll_the_page_gives_the_advice_and_blank_fields_are_absent(client):
    form = {**UNFIT_FORM, "anilox_screen": "", "anilox_volume": " "}
    body = text(client.post("/fit", data=form, headers=HX))
    assert verdict(body) == "The roll to look for, for process (halftone) work"
    kind, inputs = saved_inputs(body)
    assert kind == "fit" and inputs == {"work": "process", "plate_screen": "150.0 lpi"}
    assert "Add the roll's screen and volume" in body and "<svg" not in body
    # solid work: no plate screen needed, no screen limit
    body = text(client.post("/fit", data={**form, "work": "solid", "plate_screen": ""}, headers=HX))
    assert "No limit from the plate" in body and "plate_screen" not in saved_inputs(body)[1]


@pytest.mark.parametrize(
    ("change", "field", "words"),
    [
        ({"plate_screen": "15o"}, "plate_screen", "is not a number"),
        ({"plate_screen": ""}, "plate_screen", "needs the plate's screen ruling"),
        ({"plate_screen": "5"}, "plate_screen", ""),
        ({"plate_screen_unit": "furlong"}, "plate_screen_unit", "choose one of the units"),
        ({"work": "poster"}, "work", "must be one of: process"),
        ({"anilox_screen": "6OO"}, "anilox_screen", "is not a number"),
        ({"anilox_screen": "-600"}, "anilox_screen", ""),
        ({"anilox_screen": ""}, "anilox_screen", "give both"),
        ({"anilox_screen_unit": "BCM/in2"}, "anilox_screen_unit", "choose one of the units"),
        ({"anilox_volume": "4..5"}, "anilox_volume", "is not a number"),
        ({"anilox_volume": ""}, "anilox_volume", "give both"),
        ({"anilox_volume": "0"}, "anilox_volume", ""),
        ({"anilox_volume": "1e999"}, "anilox_volume", "far too large"),
        ({"anilox_volume_unit": "lpi"}, "anilox_volume_unit", "choose one of the units"),
    ],
)
def test_fit_errors_sit_beside_their_field_with_the_typed_text_kept(client, change, field, words):
    form = {**UNFIT_FORM, **change}
    for headers in ({}, HX):
        response = client.post("/fit", data=form, headers=headers)
        assert response.status_code == 200
        message = slot(text(response), field)
        assert message and "field-error" in message and words in message, message
    page = text(client.post("/fit", data=form))
    typed = change[field]
    if not field.endswith("_unit") and field != "work":
        assert re.search(rf'id="{field}" name="{field}"[^>]*value="{re.escape(typed)}"', page)
    for other, value in UNFIT_FORM.items():  # nothing else lost
        if other not in change and not other.endswith("_unit") and other != "work":
            assert re.search(rf'name="{other}"[^>]*value="{re.escape(value)}"', page)


# --- the cell page ---------------------------------------------------------------


def headline(body: str) -> tuple[str, float, str]:
    found = re.search(r'data-key="([a-z]+)"><data class="num" value="([^"]+)" data-unit="([^"]+)">', body)
    return found.group(1), float(found.group(2)), found.group(3)


def test_cell_page_gives_the_volume_of_800_lpi_3_um_12_um_bowl(client):
    body = text(client.post("/cell", data=CELL_FORM, headers=HX))
    key, value, unit = headline(body)
    assert (key, unit) == ("volume", "cm3/m2")
    assert value == pytest.approx(client.post("/api/v1/cell", json=saved_inputs(body)[1]).get_json()["volume"]["value"])
    assert value == pytest.approx(4.92, abs=0.005)  # REFERENCES.md model: (28.75/31.75)² × 12 × ½
    assert ">4.92</data> cm³/m²" in body and "3.17 BCM/in²" in body
    assert "28.8 µm" in body and "31.8 µm" in body and "82 %" in body
    assert "0.417" in body and "deeper than usual: 0.23–0.33" in body
    assert 'data-code="cell_too_deep"' in body


def test_cell_page_from_a_volume_gives_the_depth(client):
    form = {**CELL_FORM, "given": "volume", "depth": "junk ignored", "volume": "3.174"}
    body = text(client.post("/cell", data=form, headers=HX))
    key, value, unit = headline(body)
    assert (key, unit) == ("depth", "um") and value == pytest.approx(12.0, abs=0.01)
    assert saved_inputs(body)[1] == {
        "screen": "800.0 lpi",
        "wall": "3.0 um",
        "angle": 60,
        "shape": "bowl",
        "volume": "3.174 BCM/in2",
    }


def test_cell_page_in_imperial(client):
    client.set_cookie("inkfilm_units", "imperial")
    body = text(client.post("/cell", data=CELL_FORM, headers=HX))
    assert headline(body)[2] == "BCM/in2" and ">3.17</data> BCM/in²" in body
    assert "1.13 mil" in body  # opening 28.75 µm / 25.4 (NIST SP 811)


@pytest.mark.parametrize(("shape", "command"), [("bowl", " Q "), ("cone", " L "), ("prism", " L ")])
def test_the_section_is_drawn_to_scale(client, shape, command):
    body = text(client.post("/cell", data={**CELL_FORM, "shape": shape}, headers=HX))
    ink = re.search(r'<path class="cell-ink" data-shape="[^"]+" d="([^"]+)"', body).group(1)
    numbers = [float(n) for n in re.findall(r"-?\d+\.\d+", ink)]
    xs, ys = numbers[0::2], numbers[1::2]
    assert command in ink
    opening_px = max(xs) - min(xs)
    depth_px = (max(ys) - min(ys)) / (2 if shape == "bowl" else 1)  # the Bézier control point lies at 2h
    assert depth_px / opening_px == pytest.approx(12 / 28.75, rel=0.01)


@pytest.mark.parametrize(
    ("change", "field", "words"),
    [
        ({"screen": "8oo"}, "screen", "is not a number"),
        ({"screen": ""}, "screen", "needs a number"),
        ({"screen": "5"}, "screen", ""),
        ({"screen_unit": "um"}, "screen_unit", "choose one of the units"),
        ({"wall": "40"}, "wall", "as wide as the cell pitch"),
        ({"wall": "-3"}, "wall", ""),
        ({"wall_unit": "lpi"}, "wall_unit", "choose one of the units"),
        ({"angle": "50"}, "angle", "choose one of the angles"),
        ({"shape": "round"}, "shape", "choose one of the shapes"),
        ({"given": "both"}, "given", "depth or the volume"),
        ({"depth": "twelve"}, "depth", "is not a number"),
        ({"depth": "0"}, "depth", ""),
        ({"depth": "5000"}, "depth", ""),
        ({"depth_unit": "BCM/in2"}, "depth_unit", "choose one of the units"),
        ({"given": "volume", "volume": ""}, "volume", "needs a number"),
        ({"given": "volume", "volume": "-2"}, "volume", ""),
        ({"given": "volume", "volume_unit": "um"}, "volume_unit", "choose one of the units"),
    ],
)
def test_cell_errors_sit_beside_their_field_with_the_typed_text_kept(client, change, field, words):
    form = {**CELL_FORM, **change}
    for headers in ({}, HX):
        response = client.post("/cell", data=form, headers=headers)
        assert response.status_code == 200
        message = slot(text(response), field)
        assert message and "field-error" in message and words in message, message
    page = text(client.post("/cell", data=form))
    if field in ("screen", "wall", "depth", "volume"):
        assert re.search(rf'id="{field}" name="{field}"[^>]*value="{re.escape(form[field])}"', page)
    assert re.search(r'name="screen"[^>]*value="' + re.escape(form["screen"]) + '"', page)


@pytest.mark.parametrize("path", ["/fit", "/cell"])
@pytest.mark.parametrize("junk", ["", " ", "-1", "1e999", "nan", "∞", "4,5,6", "<script>", "9" * 50, "0"])
def test_any_typed_junk_gives_a_message_never_a_500(client, path, junk):
    form = UNFIT_FORM if path == "/fit" else CELL_FORM
    for name in list(form) + ["given"]:
        for headers in ({}, HX):
            response = client.post(path, data={**form, name: junk}, headers=headers)
            assert response.status_code == 200, (name, junk)
            assert "<script>" not in response.get_data(as_text=True)


# --- saved and re-run as snippets --------------------------------------------------


def csrf(client) -> str:
    page = client.get("/snippets/import").get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


@pytest.mark.parametrize(
    ("path", "form", "kind", "title"),
    [("/fit", UNFIT_FORM, "fit", "Roll fit: 150.0 lpi"), ("/cell", CELL_FORM, "cell", "Cell geometry: 800.0 lpi")],
)
def test_save_and_rerun_as_a_snippet(client, path, form, kind, title):
    body = text(client.post(path, data=form, headers=HX))
    found_kind, inputs = saved_inputs(body)
    assert found_kind == kind
    new = text(
        client.post("/snippets/new", data={"csrf_token": csrf(client), "kind": kind, "inputs": json.dumps(inputs)})
    )
    assert f'value="{title}"' in new
    response = client.post(
        "/snippets",
        data={
            "csrf_token": csrf(client),
            "kind": kind,
            "inputs": json.dumps(inputs),
            "title": f"{kind} for job 24-0117",
        },
    )
    assert response.status_code == 303, text(response)
    snippet_id = int(response.headers["Location"].rsplit("/", 1)[1])
    saved = client.get(f"/api/v1/snippets/{snippet_id}").get_json()
    assert saved["kind"] == kind and saved["results"] == CALCULATIONS[kind](inputs)
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert ("Roll fit" if kind == "fit" else "Cell geometry") in page
    assert "the same results" in text(client.get(f"/snippets/{snippet_id}?rerun=1"))
    rerun = client.get(f"/api/v1/snippets/{snippet_id}/rerun").get_json()
    assert rerun["same"] is True and rerun["changes"] == []
