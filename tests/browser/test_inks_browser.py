"""The inks pages in Chromium at phone size: an ink, an ink set with six readings, its fit, the volume for a target."""

from __future__ import annotations

import math

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from webapp.calculators import CALCULATIONS

pytestmark = pytest.mark.browser

# Six prints of an invented ink at 25 % transfer: anilox volume [BCM/in²] and the density read on each.
VOLUMES = ("1.5", "2.5", "3.5", "4.5", "6", "8")
DENSITIES = tuple(
    f"{1.55 * (1 - math.exp(-0.85 * float(v) * 1.55 * 0.25)) + e:.2f}"
    for v, e in zip(VOLUMES, (0.01, -0.01, 0, 0.015, -0.01, 0), strict=True)
)


def test_an_ink_set_with_six_readings_gives_its_fit_and_the_volume_for_a_target(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/inks")
    page.get_by_role("link", name="Add an ink").click()
    page.get_by_label("Name").fill("Phone test cyan UV")
    page.get_by_label("Type").select_option("uv")
    page.get_by_label("Press-ready density").fill("1.1")
    page.get_by_label("Price").fill("19.5")
    page.get_by_role("button", name="Add ink").click()
    expect(page.locator(".flash")).to_contain_text("is on the ink list")
    expect(page.locator(".ink-item", has_text="Phone test cyan UV")).to_contain_text("skin and eye sensitiser")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    page.screenshot(path=str(screenshots / "inks-list-phone.png"), full_page=True)

    page.locator(".ink-item", has_text="Phone test cyan UV").get_by_role("link", name="New ink set with it").click()
    page.get_by_label("Name").fill("Phone test cyan on white PE")
    page.get_by_label("Substrate").fill("white PE film")
    page.get_by_role("button", name="Add ink set").click()
    expect(page.locator("#set-fit")).to_contain_text("No curve yet")
    expect(page.locator(".ink-caution")).to_contain_text("sensitise skin and eyes")

    for volume, density in zip(VOLUMES, DENSITIES, strict=True):
        page.get_by_role("textbox", name="Solid ink density").fill(density)
        page.get_by_role("textbox", name="Volume or film").fill(volume)
        expect(page.get_by_role("textbox", name="Transfer to the stock, %").last).to_be_visible()
        page.get_by_role("button", name="Add reading").click()
        expect(page.locator(".flash")).to_contain_text("Reading added")
    expect(page.locator('[data-key="count"]')).to_have_text("6")
    expect(page.locator("svg.strength-chart circle.reading")).to_have_count(6)
    expect(page.locator("svg.strength-chart polyline.curve")).to_have_count(1)

    # The wet-film basis hides the transfer (CSS only, no script).
    page.get_by_role("radio", name="Wet film").check()
    expect(page.locator(".reading-transfer")).to_be_hidden()
    page.get_by_role("radio", name="Anilox volume").check()

    page.get_by_role("textbox", name="Target density").fill("1.35")
    page.get_by_role("textbox", name="Transfer to the stock, %").first.fill("25")
    page.get_by_role("button", name="Work it out").click()
    body = {
        "readings": [
            {"anilox_volume": f"{v} BCM/in2", "transfer": 0.25, "density": float(d)}
            for v, d in zip(VOLUMES, DENSITIES, strict=True)
        ],
        "target_density": 1.35,
        "transfer": 0.25,
    }
    answer = CALCULATIONS["density_volume_for"](body)
    shown = float(page.locator('#volume-for [data-key="anilox_volume"] data').get_attribute("value"))
    assert shown == pytest.approx(answer["anilox_volume"]["value"], rel=1e-9)
    expect(page.locator("svg.strength-chart line.needed")).to_have_count(1)
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    page.screenshot(path=str(screenshots / "inks-set-phone.png"), full_page=True)
    page.locator("#questions").screenshot(path=str(screenshots / "inks-set-answer-phone.png"))

    # An unreachable target: the message beside the field, the typed words kept.
    page.get_by_role("textbox", name="Target density").fill("1.9")
    page.get_by_role("button", name="Work it out").click()
    expect(page.locator("#e-target_density")).to_contain_text("cannot be reached")
    expect(page.get_by_role("textbox", name="Target density")).to_have_value("1.9")


def test_picking_an_ink_in_the_film_chain_fills_its_fields_and_shows_its_caution(open_context, screenshots):
    page = open_context(PHONE).new_page()
    response = page.request.post(
        "/api/v1/inks",
        data={
            "name": "Phone pick black SB",
            "type": "solvent_based",
            "density": "0.97 g/cm3",
            "solids_by_volume": 0.28,
        },
    )
    assert response.status == 201
    page.goto("/film")
    page.locator("details.more-inputs summary").click()
    page.get_by_label("From the shop's inks").select_option(label="Phone pick black SB (solvent-based — flammable)")
    expect(page.locator('[name="ink_density"][form="film-form"]')).to_have_value("0.97")
    expect(page.locator('[name="solids_by_volume"][form="film-form"]')).to_have_value("28")
    expect(page.locator(".ink-pick .caution:visible")).to_contain_text("Flammable liquid")
    expect(page.locator('#film-result tr[data-key="dry"]')).to_have_count(1)
    page.locator('[name="solids_by_volume"][form="film-form"]').fill("30")  # still editable
    expect(page.locator('[name="solids_by_volume"][form="film-form"]')).to_have_value("30")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    page.locator("#film-settings").screenshot(path=str(screenshots / "inks-film-pick-phone.png"))


def test_picking_an_ink_for_an_estimate_station_fills_its_density_and_price_and_shows_its_caution(
    open_context, screenshots
):
    page = open_context(PHONE).new_page()
    response = page.request.post(
        "/api/v1/inks",
        data={
            "name": "Station pick orange UV",
            "type": "uv",
            "density": "1.12 g/cm3",
            "price": 14.5,
            "price_per": "kg",
        },
    )
    assert response.status == 201
    page.goto("/estimate")
    total = page.locator('[data-key="total_mass"]')
    before = total.inner_text()
    station = page.locator("fieldset.station").nth(1)
    station.get_by_label("Ink from the shop's list").select_option(
        label="Station pick orange UV (UV — skin/eye sensitiser)"
    )
    expect(station.locator('[name="stations[1].ink_density"]')).to_have_value("1.12")
    expect(station.locator('[name="stations[1].ink_density_unit"]')).to_have_value("g/cm3")
    expect(station.locator('[name="stations[1].price_per_kg"]')).to_have_value("14.5")
    expect(station.locator(".ink-caution:visible")).to_contain_text("UV ink can sensitise skin")
    # only this station's caution shows; the others' picks are untouched
    expect(page.locator("fieldset.station").nth(0).locator(".ink-caution:visible")).to_have_count(0)
    expect(total).not_to_have_text(before)  # the totals are worked out again with the ink's density
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    station.screenshot(path=str(screenshots / "inks-estimate-pick-phone.png"))
