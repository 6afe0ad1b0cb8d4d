"""The Job ink page in Chromium at phone size: a three-station labels job against the API,
the on-hand verdicts, the chart, the CSV link, and a twelve-station job on a phone."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from playwright.sync_api import expect

from calc.display import format_money, format_number
from tests.browser.conftest import PHONE
from tests.web.test_estimate_page import API_BODY

pytestmark = pytest.mark.browser

STATIONS = [
    # id prefix, name, anilox cm³/m², coverage %, transfer %, density g/cm³, price, per, fill, fill unit, on hand
    ("Cyan", "5", "40", "30", "1.2", "20", "kg", "2", "l", "3"),
    ("Spot", "4", "20", "25", "1.0", "4.5359237", "lb", "1", "kg", "1.1"),
    ("Varnish", "6", "0", "30", "1", "8", "kg", "", "l", ""),
]


def fill_labels_job(page) -> None:
    page.goto("/estimate")
    page.get_by_role("button", name="Remove station 4").click()
    expect(page.locator("fieldset.station")).to_have_count(3)
    page.fill("#web_width", "300")
    page.get_by_label("Labels", exact=True).check()
    expect(page.locator("#run_length")).to_be_hidden()
    page.fill("#labels", "60000")
    page.fill("#repeat", "250")
    page.select_option("#repeat_unit", "mm")
    page.fill("#across", "3")
    page.fill("#around", "2")
    page.fill("#makeready", "100")
    page.fill("#waste", "4")
    for i, (name, volume, coverage, transfer, density, price, per, fill, fill_unit, on_hand) in enumerate(STATIONS):
        p = f"#stations-{i}-"
        page.fill(p + "name", name)
        page.select_option(p + "anilox_unit", "cm3/m2")
        page.fill(p + "anilox_volume", volume)
        page.fill(p + "coverage", coverage)
        page.fill(p + "transfer", transfer)
        page.fill(p + "ink_density", density)
        page.fill(p + "price_per_kg", price)
        page.select_option(p + "price_unit", per)
        page.fill(p + "fill", fill)
        page.select_option(p + "fill_unit", fill_unit)
        page.fill(p + "on_hand", on_hand)


def test_a_three_station_labels_job_matches_the_api(open_context, screenshots):
    page = open_context(PHONE).new_page()
    fill_labels_job(page)
    api = page.request.post(
        "/api/v1/estimate", data=json.dumps(API_BODY), headers={"Content-Type": "application/json"}
    ).json()
    expect(page.locator('[data-key="total_mass"]')).to_have_text(f"{format_number(api['total_ink_mass']['value'])} kg")
    expect(page.locator('[data-key="total_pull"]')).to_have_text(f"{format_number(api['total_pull_mass']['value'])} kg")
    expect(page.locator('[data-key="cost_per_1000_labels"]')).to_have_text(format_money(api["cost_per_1000_labels"]))
    expect(page.locator(".estimate-table tfoot")).to_contain_text(format_money(api["total_cost"]))
    expect(page.locator(".run-chain")).to_contain_text("60,000 labels = 10,000 impressions × 3 across × 2 around")
    expect(page.locator(".on-hand-list")).to_contain_text("Short by 0.062 kg: prints about 36,200 of 60,000 labels")
    expect(page.locator(".ink-chart-name")).to_have_text(["Cyan", "Spot", "Varnish"])
    expect(page.locator(".estimate-table tbody tr")).to_have_count(3)
    assert page.evaluate("document.documentElement.scrollWidth - document.documentElement.clientWidth") <= 0
    page.screenshot(path=str(screenshots / "estimate-labels-phone.png"), full_page=True)
    page.locator("#estimate-result").screenshot(path=str(screenshots / "estimate-labels-result-phone.png"))
    page.emulate_media(color_scheme="dark")
    page.locator("#estimate-result").screenshot(path=str(screenshots / "estimate-labels-result-dark.png"))
    bar = page.locator(".ink-chart-bar").first.evaluate("el => getComputedStyle(el).fill")
    assert bar not in ("", "none", "rgb(0, 0, 0)")
    with page.expect_download() as download:
        page.get_by_role("link", name="Download CSV").click()
    data = Path(download.value.path()).read_bytes()
    assert data.startswith(b"\xef\xbb\xbf") and b"\r\nTotal," in data
    page.emulate_media(media="print", color_scheme="light")
    page.screenshot(path=str(screenshots / "estimate-labels-print.png"), full_page=True)


def test_twelve_stations_on_a_phone(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    for count in range(5, 13):
        page.get_by_role("button", name="Add a station").click()
        expect(page.locator("fieldset.station")).to_have_count(count)
        page.fill(f"#stations-{count - 1}-anilox_volume", "3")
        page.fill(f"#stations-{count - 1}-coverage", "10")
        # the live result has caught up with the new station before the next tap
        expect(page.locator(".estimate-table tbody tr")).to_have_count(count)
        expect(page.locator(".estimate-table tbody")).to_contain_text(f"Station {count}")
    expect(page.get_by_role("button", name="Add a station")).to_have_count(0)  # twelve is the most
    expect(page.locator(".estimate-table tbody tr")).to_have_count(12)
    # every station but the last folds to one line; one opens with a tap
    expect(page.locator("details.station-fold:not([open])")).to_have_count(11)
    first = page.locator("details.station-fold").first
    expect(first.locator(".station-summary")).to_contain_text("Cyan")
    heights = page.locator("details.station-fold:not([open]) > summary").evaluate_all(
        "els => els.map(el => el.getBoundingClientRect().height)"
    )
    assert all(47.5 <= h <= 80 for h in heights), heights
    assert page.evaluate("document.documentElement.scrollWidth - document.documentElement.clientWidth") <= 0
    page.screenshot(path=str(screenshots / "estimate-12-stations-phone.png"), full_page=True)
    first.locator(".station-summary").click()
    expect(page.locator("#stations-0-coverage")).to_be_visible()
    page.fill("#stations-0-coverage", "50")
    expect(page.locator(".ink-chart-name").first).to_have_text("Cyan")
