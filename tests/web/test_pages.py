"""The pages through Flask's test client: whole pages, htmx fragments, plain
form posts, errors beside fields, headers, the service worker and the manifest."""

from __future__ import annotations

import hashlib
import html
import json
import re
from pathlib import Path

import brotli
import pytest

from calc.display import format_number
from tests.web.worker import read_worker
from webapp.calculators import CALCULATIONS
from webapp.common import security

ROOT = Path(__file__).resolve().parents[2]
HTMX = ROOT / "webapp" / "static" / "vendor" / "htmx-2.0.11.min.js"
# sha256 of htmx.org 2.0.11's dist/htmx.min.js as published on the npm registry
HTMX_SHA256 = "d6fdc75f204e6bdefa99b69bf1e6d4ac69b8a364f77929f45c13476b4000f717"
HX = {"HX-Request": "true"}
PAGES = ["/", "/film", "/estimate", "/fit", "/cell", "/offline"]


def text(response) -> str:
    return response.get_data(as_text=True)


def test_vendored_htmx_is_the_published_file():
    assert hashlib.sha256(HTMX.read_bytes()).hexdigest() == HTMX_SHA256


@pytest.mark.parametrize("path", PAGES)
def test_pages_are_whole_documents_with_the_shared_layout(client, path):
    response = client.get(path)
    assert response.status_code == 200
    body = text(response)
    assert body.startswith("<!doctype html>")
    assert '<meta name="viewport"' in body
    assert 'href="/snippets"' in body and ">Saved</a>" in body
    assert "htmx-2.0.11.min.js" in body


@pytest.mark.parametrize("path", PAGES)
def test_no_inline_script_style_or_handler(client, path):
    body = text(client.get(path))
    assert re.findall(r"<script(?![^>]*\bsrc=)[^>]*>", body) == []
    assert re.findall(r"\sstyle=", body) == []
    assert re.findall(r"<style", body) == []
    assert re.findall(r"\son[a-z]+=", body) == []
    assert re.findall(r"\shx-on", body) == []
    assert re.findall(r"https?://", body) == []  # no other origin


# Which headers each kind of answer carries, and why (webapp/common/security.py): every byte of
# a header is paid on each answer of the first load, so an answer carries those a browser reads
# on it. nosniff is on every answer: a file is only ever read as the type it is sent as.
DOCUMENT_ONLY = ("X-Frame-Options", "Cross-Origin-Opener-Policy", "Permissions-Policy")


def test_an_svg_opened_on_its_own_is_a_document_and_gets_a_policy_that_allows_it_nothing(client):
    versioned = re.search(r'href="(/static/icons/inkfilm\.svg\?v=[^"]+)"', text(client.get("/"))).group(1)
    for path in ["/static/icons/inkfilm.svg", versioned]:
        with client.get(path) as response:
            assert response.status_code == 200
            csp = response.headers["Content-Security-Policy"]
            assert "default-src 'none'" in csp and "frame-ancestors 'none'" in csp and "script-src" not in csp
            assert response.headers["X-Content-Type-Options"] == "nosniff"


@pytest.mark.parametrize(
    "path",
    [
        "/static/css/inkfilm.css",
        "/static/vendor/htmx-2.0.11.min.js",
        "/static/js/inkfilm.js",
        "/static/icons/inkfilm-192.png",
        "/static/inkfilm.webmanifest",
    ],
)
def test_other_static_files_run_nothing_opened_on_their_own_and_carry_only_nosniff(client, path):
    # A stylesheet, script, picture or manifest opened on its own is shown as text or a picture:
    # a policy there would never be read. A script runs under the policy of the page that loads it.
    with client.get(path) as response:
        assert response.status_code == 200
        assert response.headers["X-Content-Type-Options"] == "nosniff"
        assert "Content-Security-Policy" not in response.headers
        assert not any(name in response.headers for name in DOCUMENT_ONLY + ("Referrer-Policy",))


def test_the_manifest_is_sent_as_a_manifest(client):
    with client.get("/static/inkfilm.webmanifest") as response:
        assert response.mimetype == "application/manifest+json"


def test_the_worker_gets_its_own_policy_and_referrer_policy_but_no_document_headers(client):
    # A service worker runs under the CSP and the referrer policy of its script's answer;
    # framing, the opener and the permissions policy are read on documents only.
    with client.get("/sw.js") as response:
        assert response.headers["Content-Security-Policy"] == security.CONTENT_SECURITY_POLICY
        assert response.headers["Referrer-Policy"] == "same-origin"
        assert response.headers["X-Content-Type-Options"] == "nosniff"
        assert not any(name in response.headers for name in DOCUMENT_ONLY)


def test_the_script_the_worker_imports_carries_only_nosniff(client):
    # An imported script runs under the worker's policy; its own CSP would never be read.
    url = re.search(r'importScripts\("([^"]+)"\)', read_worker(client).body).group(1)
    with client.get(url) as response:
        assert response.status_code == 200 and response.mimetype == "text/javascript"
        assert response.headers["X-Content-Type-Options"] == "nosniff"
        assert "Content-Security-Policy" not in response.headers
        assert not any(name in response.headers for name in DOCUMENT_ONLY + ("Referrer-Policy",))


def test_a_page_carries_every_document_header_and_its_304_only_nosniff(client):
    # A 304 updates the stored answer's headers with those it sends: the stored page keeps its
    # whole set (the service worker asks again for the page the browser has just loaded).
    accept = {"Accept-Encoding": "gzip, deflate, br, zstd"}
    with client.get("/", headers=accept) as response:
        assert response.status_code == 200
        for name, value in security.HEADERS.items():
            assert response.headers[name] == value, name
        etag = response.headers["ETag"]
    with client.get("/", headers={**accept, "If-None-Match": etag}) as again:
        assert again.status_code == 304
        assert again.headers["X-Content-Type-Options"] == "nosniff"
        assert "Content-Security-Policy" not in again.headers
        assert not any(name in again.headers for name in DOCUMENT_ONLY)


@pytest.mark.parametrize("path", ["/", "/film", "/api/v1/film", "/sw.js"])
def test_security_headers(client, path):
    response = client.get(path) if not path.startswith("/api") else client.post(path, json={})
    response.close()
    csp = response.headers["Content-Security-Policy"]
    assert "script-src 'self'" in csp and "style-src 'self'" in csp and "default-src 'self'" in csp
    assert "unsafe-inline" not in csp and "http" not in csp
    assert response.headers["X-Content-Type-Options"] == "nosniff"
    assert response.headers["Referrer-Policy"] == "same-origin"


def test_text_responses_are_compressed(client):
    for path in ["/", "/static/vendor/htmx-2.0.11.min.js", "/static/css/inkfilm.css"]:
        with client.get(path, headers={"Accept-Encoding": "gzip, deflate, br, zstd"}) as response:
            assert response.headers.get("Content-Encoding") in {"gzip", "br", "zstd"}, path


def test_versioned_static_files_are_cached_for_long(client):
    page = text(client.get("/"))
    href = re.search(r'href="(/static/css/inkfilm\.css\?v=[0-9a-f]+)"', page).group(1)
    with client.get(href) as response:
        assert response.cache_control.max_age == 365 * 24 * 3600
        assert response.cache_control.immutable


# --- fragments and plain posts ---------------------------------------------------


def test_htmx_gets_a_fragment_and_others_the_page(client):
    page = client.post("/", data={"value": "4.5", "unit": "BCM/in2"})
    fragment = client.post("/", data={"value": "4.5", "unit": "BCM/in2"}, headers=HX)
    assert "HX-Request" in page.headers["Vary"] and "HX-Request" in fragment.headers["Vary"]
    assert "<html" in text(page) and "<html" not in text(fragment)
    for body in (text(page), text(fragment)):
        # 4.5 BCM/in² = 4.5 / 0.64516 cm³/m² (NIST SP 811: inch = 25.4 mm)
        assert f">{format_number(4.5 / 0.64516)}</data>" in body


def test_converter_without_a_value_shows_a_hint(client):
    body = text(client.get("/"))
    assert "Type a value above" in body
    assert 'data-group="' not in body


@pytest.mark.parametrize(
    ("form", "field", "words"),
    [
        ({"value": "4..5", "unit": "BCM/in2"}, "value", "is not a number"),
        ({"value": "4.5", "unit": "furlong"}, "unit", "choose one of the units"),
        ({"value": "0", "unit": "BCM/in2"}, "value", "must be more than 0"),
        ({"value": "2", "unit": "um", "density": "9"}, "density", "ink density must be"),
        ({"value": "2", "unit": "m2", "coverage": "150"}, "coverage", "percentage from 0 to 100"),
    ],
)
def test_converter_errors_sit_beside_their_field(client, form, field, words):
    for headers in ({}, HX):
        response = client.post("/", data=form, headers=headers)
        assert response.status_code == 200
        slot = re.search(rf'<div id="{field}-error"[^>]*>(.*?)</div>', text(response), re.S)
        assert slot and words in html.unescape(slot.group(1))
    assert 'hx-swap-oob="innerHTML"' in text(client.post("/", data=form, headers=HX))


def test_converter_with_density_and_coverage(client):
    body = text(client.post("/", data={"value": "2", "unit": "um", "density": "1.05", "density_unit": "g/cm3"}))
    assert 'data-group="coat_weight"' in body and ">2.1</data>" in body
    body = text(client.post("/", data={"value": "1000", "unit": "m2", "coverage": "35"}))
    assert 'data-group="inked_area"' in body and ">350</data>" in body


def film_rows(body: str) -> dict:
    return {key: float(value) for key, value in re.findall(r'<tr data-key="([a-z_]+)" data-api-value="([^"]+)"', body)}


def test_film_page_agrees_with_the_api(client):
    form = {
        "anilox_volume": "4.5",
        "anilox_unit": "BCM/in2",
        "anilox_to_plate": "45",
        "plate_to_substrate": "55",
        "ink_density": "1,05",
        "ink_density_unit": "g/cm3",
        "solids_by_volume": "35",
        "solids_by_weight": "40",
    }
    rows = film_rows(text(client.post("/film", data=form, headers=HX)))
    api = client.post(
        "/api/v1/film",
        json={
            "anilox_volume": "4.5 BCM/in2",
            "anilox_to_plate": 0.45,
            "plate_to_substrate": 0.55,
            "ink_density": "1.05 g/cm3",
            "solids_by_volume": 0.35,
            "solids_by_weight": 0.4,
        },
    ).get_json()
    assert rows == {key: pytest.approx(value["value"], rel=1e-12) for key, value in api.items()}


def test_film_page_defaults_state_the_typical_transfer(client):
    body = text(client.get("/film"))
    assert body.count("Typical: 50 %") == 2
    assert '<svg class="film-drawing"' in body
    assert set(film_rows(body)) == {"theoretical_wet", "plate_wet", "substrate_wet"}


def test_film_error_beside_the_field_not_a_500(client):
    response = client.post("/film", data={"anilox_volume": "400", "anilox_to_plate": "50", "plate_to_substrate": "50"})
    assert response.status_code == 200
    assert re.search(r'<div id="anilox_volume-error"[^>]*><p class="field-error">an anilox volume must', text(response))


def estimate_form(**changes) -> dict:
    form = {
        "web_width": "330",
        "web_width_unit": "mm",
        "run_basis": "length",
        "run_length": "12000",
        "run_length_unit": "m",
        "waste": "5",
        "station_count": "2",
    }
    for index, (name, coverage) in enumerate([("Cyan", "40"), ("Spot orange", "60")]):
        form |= {
            f"stations[{index}].name": name,
            f"stations[{index}].anilox_volume": "3",
            f"stations[{index}].anilox_unit": "BCM/in2",
            f"stations[{index}].coverage": coverage,
            f"stations[{index}].transfer": "30",
            f"stations[{index}].ink_density": "1.0",
            f"stations[{index}].ink_density_unit": "g/cm3",
            f"stations[{index}].price_per_kg": "12.5",
        }
    return form | changes


def test_estimate_page_matches_the_api_and_shows_the_caution(client):
    body = text(client.post("/estimate", data=estimate_form()))
    api = client.post(
        "/api/v1/estimate",
        json={
            "web_width": "330 mm",
            "run_length": "12000 m",
            "waste": 0.05,
            "stations": [
                {
                    "name": name,
                    "anilox_volume": "3 BCM/in2",
                    "coverage": coverage,
                    "transfer": 0.3,
                    "ink_density": "1.0 g/cm3",
                    "price_per_kg": 12.5,
                }
                for name, coverage in [("Cyan", 0.4), ("Spot orange", 0.6)]
            ],
        },
    ).get_json()
    assert f"{format_number(api['total_ink_mass']['value'])} kg" in body
    assert f"{api['total_cost']:,.2f}" in body
    assert "Spot orange" in body
    assert "safety data sheet" in body and "local fire and environmental codes" in body
    assert 'media="print"' in body


def test_estimate_impressions_and_repeat(client):
    form = estimate_form(run_basis="impressions", impressions="50000", repeat="18", repeat_unit="in", run_length="")
    body = text(client.post("/estimate", data=form))
    # 50 000 × 18 in = 22 860 m exactly (NIST SP 811: inch = 25.4 mm)
    assert "22,900 m" in body


def test_estimate_add_and_remove_stations_without_javascript(client):
    body = text(client.post("/estimate", data=estimate_form(action="add")))
    assert body.count('<fieldset class="card station') == 3
    body = text(client.post("/estimate", data=estimate_form(action="remove-0")))
    assert body.count('<fieldset class="card station') == 1
    assert 'value="Spot orange"' in body and 'value="Cyan"' not in body


def test_estimate_add_station_with_htmx_returns_the_form(client):
    response = client.post("/estimate", data=estimate_form(action="add"), headers=HX | {"HX-Target": "estimate-area"})
    body = text(response)
    assert body.lstrip().startswith('<div id="estimate-area"')
    assert "hx-swap-oob" not in body


def test_estimate_station_error_names_the_station_field(client):
    response = client.post("/estimate", data=estimate_form(**{"stations[1].coverage": "140"}), headers=HX)
    assert re.search(
        r'<div id="stations-1-coverage-error"[^>]*hx-swap-oob="innerHTML"><p class="field-error">must be a percentage',
        text(response),
    )


@pytest.mark.parametrize(
    ("path", "form", "kind"),
    [
        ("/", {"value": "4.5", "unit": "BCM/in2", "density": "1"}, "equivalents"),
        ("/film", {"anilox_volume": "4.5", "anilox_to_plate": "50", "plate_to_substrate": "50"}, "film"),
        ("/estimate", estimate_form(), "estimate"),
    ],
)
def test_save_button_carries_an_api_body_that_runs(client, path, form, kind):
    body = text(client.post(path, data=form, headers=HX))
    found = re.search(r'name="kind" value="([a-z]+)".*?name="inputs" value=\'([^\']*)\'', body, re.S)
    if found is None:
        pytest.skip("the saved-snippets partial is not installed")
    assert found.group(1) == kind
    inputs = json.loads(html.unescape(found.group(2)))
    assert CALCULATIONS[kind](inputs)


# --- unit preference ---------------------------------------------------------------


def test_units_preference_is_a_cookie_and_changes_the_display(client):
    response = client.post("/units", data={"system": "imperial", "next": "/film"})
    assert response.status_code == 303 and response.headers["Location"] == "/film"
    assert "inkfilm_units=imperial" in response.headers["Set-Cookie"]
    body = text(client.get("/film"))
    assert re.search(r'<span class="headline-value">.*?</data> mil</span>', body, re.S)
    assert re.search(r'value="imperial" checked', body)


def test_units_redirect_stays_on_this_site(client):
    for target in ["https://elsewhere.example/", "//elsewhere.example/"]:
        assert client.post("/units", data={"system": "metric", "next": target}).headers["Location"] == "/"


# --- installable app -------------------------------------------------------------


def test_service_worker_is_served_from_the_root(client):
    response = client.get("/sw.js")
    assert response.mimetype == "text/javascript"
    assert response.headers["Cache-Control"] == "no-cache"
    worker = read_worker(client)
    shell = worker.shell
    # fetched at install: the quick pages and the offline page; every calculator page is kept once opened
    assert {"/", "/film", "/offline"} <= set(shell) and "/estimate" not in shell
    assert {"/", "/film", "/estimate", "/fit", "/cell", "/ink-strength", "/offline"} <= set(worker.pages)
    # and the static files every page links, not the print stylesheet only the Job ink pages link
    assert not any("print.css" in url for url in shell)
    for url in shell:
        with client.get(url) as page:
            assert page.status_code == 200, url
    # calculations, the API and saved snippets always go to the server
    assert worker.has('request.method !== "GET"') and worker.has('request.headers.has("HX-Request")')
    assert worker.has('url.pathname.startsWith("/api/")') and worker.has('url.pathname.startsWith("/snippets")')


def test_the_worker_is_sent_small_and_asked_again_with_a_validator(client):
    # Part of every first load: without comments and spaces, compressed once at Brotli's best.
    with client.get("/sw.js", headers={"Accept-Encoding": ""}) as plain:
        body = plain.get_data()
    source = (ROOT / "webapp" / "templates" / "sw.js").read_text()
    assert "// " not in body.decode() and len(body) < len(source) * 0.8
    with client.get("/sw.js", headers={"Accept-Encoding": "gzip, deflate, br, zstd"}) as response:
        assert response.headers["Content-Encoding"] == "br"
        assert brotli.decompress(response.get_data()) == body
        etag = response.headers["ETag"]
    # The browser checks the worker on navigations: an unchanged build costs a 304.
    with client.get("/sw.js", headers={"Accept-Encoding": "gzip, deflate, br, zstd", "If-None-Match": etag}) as again:
        assert again.status_code == 304


def test_manifest_and_icons(client):
    with client.get("/static/inkfilm.webmanifest") as response:
        manifest = json.loads(response.get_data())
    assert manifest["start_url"] == "/" and manifest["display"] == "standalone"
    sizes = {icon["sizes"] for icon in manifest["icons"]}
    assert {"192x192", "512x512"} <= sizes
    for icon in manifest["icons"]:
        with client.get(icon["src"]) as response:
            assert response.status_code == 200


@pytest.mark.parametrize("path", ["/", "/film", "/estimate"])
@pytest.mark.parametrize(
    "junk",
    ["", " ", "-1", "1e999", "nan", "∞", "4,5,6", "<script>", "9" * 50, "0", "1e-300"],
)
def test_any_typed_junk_gives_a_message_never_a_500(client, path, junk):
    names = {
        "/": ["value", "unit", "density", "density_unit", "coverage"],
        "/film": list(FILM_FIELDS),
        "/estimate": list(estimate_form()) + ["action"],
    }[path]
    for name in names:
        for headers in ({}, HX):
            response = client.post(path, data={"value": "4", name: junk}, headers=headers)
            assert response.status_code == 200, (name, junk)
            assert "<script>" not in text(response)


FILM_FIELDS = (
    "anilox_volume",
    "anilox_unit",
    "anilox_to_plate",
    "plate_to_substrate",
    "ink_density",
    "ink_density_unit",
    "solids_by_volume",
    "solids_by_weight",
)


def test_the_pages_fetched_at_install_link_only_the_stylesheet_every_page_needs(client):
    # The other calculators' styles (calculators.css) are no part of the first load: the pages the
    # worker fetches when it installs do not link them; every other page does.
    installed = read_worker(client).shell
    for path in ["/", "/film", "/offline"]:
        assert path in installed
        page = text(client.get(path))
        assert "css/inkfilm.css?v=" in page and "css/calculators.css" not in page, path
    for path in ["/estimate", "/fit", "/cell", "/ink-strength", "/snippets", "/rolls", "/inks"]:
        assert "css/calculators.css?v=" in text(client.get(path)), path
    assert not any("calculators.css" in url for url in installed)
