"""The Job ink page in Chromium while it is edited: the totals stay (marked not yet updated)
when a station is added or the run switched to impressions, an empty field is an error once
left, focus follows add, copy and remove, the rough coverage menu, the "did you mean 50 %?"
hint; at desktop size the printout as a one-page PDF holding the totals, the CSV download,
and a saved estimate's Print and CSV; twelve stations on a phone."""

from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import pytest
from playwright.sync_api import expect

from calc.display import format_money, format_number
from tests.browser.conftest import PHONE
from tests.browser.test_estimate_browser import fill_labels_job
from tests.web.test_estimate_page import API_BODY

pytestmark = pytest.mark.browser

DESKTOP = {"width": 1280, "height": 900}
A4_PAGES = re.compile(rb"/Type\s*/Page(?![a-zA-Z])")


def api(page, body=API_BODY) -> dict:
    response = page.request.post(
        "/api/v1/estimate", data=json.dumps(body), headers={"Content-Type": "application/json"}
    )
    assert response.ok, response.text()
    return response.json()


def test_adding_a_station_keeps_the_totals_and_focus_goes_to_it(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    total = page.locator('[data-key="total_mass"]')
    expect(total).to_have_text(re.compile(r"kg$"))
    four = total.text_content()
    page.get_by_role("button", name="Add a station").click()
    expect(page.locator("fieldset.station")).to_have_count(5)
    expect(page.locator("#estimate-status")).to_have_text(
        "Not yet updated: Station 5 counts once its fields are filled in."
    )
    expect(total).to_have_text(four)  # not blanked
    expect(page.locator(".field-error")).to_have_count(0)
    expect(page.locator("#stations-4-name")).to_be_focused()
    page.screenshot(path=str(screenshots / "estimate-added-station-phone.png"))
    page.keyboard.press("Tab")  # on to the anilox volume, past the name
    page.keyboard.type("3")
    page.fill("#stations-4-coverage", "15")
    expect(page.locator(".estimate-table tbody tr")).to_have_count(5)
    expect(page.locator("#estimate-status")).to_have_text("")
    assert total.text_content() != four
    # remove the second station: focus goes to the one that took its place
    page.get_by_role("button", name="Remove station 2").click()
    expect(page.locator("fieldset.station")).to_have_count(4)
    expect(page.locator(".station-summary-name").nth(1)).to_have_text("2. Yellow")
    expect(page.locator("#stations-1-name")).to_be_focused()
    # copy the first: a fifth station with the same values, focused
    page.get_by_role("button", name="Copy to a new station").first.click()
    expect(page.locator(".station-summary-name").last).to_have_text("5. Cyan copy")
    expect(page.locator("#stations-4-name")).to_be_focused()
    expect(page.locator("#stations-4-coverage")).to_have_value("35")
    expect(page.locator(".estimate-table tbody tr")).to_have_count(5)


def test_switching_to_impressions_keeps_the_totals_until_the_field_is_left(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    total = page.locator('[data-key="total_mass"]')
    expect(total).to_have_text(re.compile(r"kg$"))
    before = total.text_content()
    page.get_by_role("radio", name="Impressions").check()
    expect(page.locator("#estimate-status")).to_have_text(
        re.compile(r"^Not yet updated: fill in (impressions|repeat)\.")
    )
    expect(total).to_have_text(before)
    expect(page.locator(".field-error")).to_have_count(0)  # nothing typed yet: no message
    page.locator("#impressions").focus()
    page.locator("#repeat").focus()  # the impressions field is left empty: now it is an error
    expect(page.locator("#impressions-error .field-error")).to_have_text("needs a number")
    expect(page.locator("#estimate-status")).to_have_text("Not yet updated: fix the value marked beside its field.")
    expect(total).to_have_text(before)
    page.screenshot(path=str(screenshots / "estimate-not-yet-updated-phone.png"))
    page.fill("#impressions", "40000")
    page.fill("#repeat", "300")
    expect(page.locator(".run-chain")).to_contain_text("40,000")
    expect(page.locator("#estimate-status")).to_have_text("")
    expect(page.locator(".field-error")).to_have_count(0)


def test_rough_coverage_and_the_share_hint(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    page.select_option("#stations-0-coverage_kind", "heavy")
    expect(page.locator("#stations-0-coverage")).to_have_value("60")
    expect(page.locator("#stations-0-coverage-note")).to_contain_text(
        "60 % is typical for heavy artwork (common practice)"
    )
    expect(page.locator(".estimate-table tbody tr").first).to_contain_text("60 %")
    page.fill("#stations-0-coverage", "55")  # editable: the typical mark goes
    expect(page.locator("#stations-0-coverage-note")).to_have_text("")
    page.fill("#stations-1-coverage", "0.5")
    expect(page.locator("#stations-1-coverage-note")).to_contain_text("Did you mean 50 %?")
    expect(page.locator("#stations-1-coverage")).to_have_value("0.5")  # not changed behind the user's back
    expect(page.locator(".estimate-table tbody tr").nth(1)).to_contain_text("0.5 %")
    page.locator("fieldset.station").nth(1).screenshot(path=str(screenshots / "estimate-share-hint-phone.png"))


def pdf_of(page, path: Path) -> bytes:
    page.emulate_media(media="print")
    data = page.pdf(path=str(path), format="A4", print_background=False)
    assert data.startswith(b"%PDF-")
    return data


def test_print_view_is_one_page_with_the_totals_and_the_csv_matches(open_context, screenshots):
    page = open_context(DESKTOP, accept_downloads=True).new_page()
    fill_labels_job(page)
    page.get_by_text("For the printout: job, customer, press (optional)").click()
    page.fill("#job_number", "J-4471")
    page.fill("#customer", "Hill Farm Dairy")
    page.fill("#press", "N2")
    page.fill("#prepared_by", "R. Okafor")
    answer = api(page)
    mass = f"{format_number(answer['total_ink_mass']['value'])} kg"
    expect(page.locator('[data-key="total_mass"]')).to_have_text(mass)
    expect(page.locator(".ticket-head")).to_contain_text("Hill Farm Dairy")
    data = pdf_of(page, screenshots / "estimate-print.pdf")
    assert len(A4_PAGES.findall(data)) == 1, "the printout spills onto a second page"
    page.screenshot(path=str(screenshots / "estimate-print-desktop.png"), full_page=True)
    # what prints: the header, the totals, the inputs, the chart; no form
    shown = page.locator("body").inner_text()
    costs = [format_money(answer["total_cost"]), format_money(answer["cost_per_1000_labels"])]
    for words in ["J-4471", "Hill Farm Dairy", "R. Okafor", mass, *costs, "Stations as entered", "safety data sheet"]:
        assert words in shown, words
    assert not page.locator("#estimate-form fieldset.station").first.is_visible()
    assert page.locator(".ink-chart-svg").is_visible()
    page.emulate_media(media="screen")
    with page.expect_download() as download:
        page.get_by_role("link", name="Download CSV").click()
    rows = list(csv.reader(io.StringIO(Path(download.value.path()).read_bytes().decode("utf-8-sig"))))
    header, *stations, total = rows
    column = {name: i for i, name in enumerate(header)}
    assert [row[0] for row in stations] == ["Cyan", "Spot", "Varnish"] and total[0] == "Total"
    assert float(total[column["ink_kg"]]) == answer["total_ink_mass"]["value"]
    assert float(total[column["cost_per_1000_labels"]]) == answer["cost_per_1000_labels"]


def test_a_saved_estimate_prints_on_one_page_with_the_same_csv(open_context, screenshots):
    context = open_context(DESKTOP, accept_downloads=True)
    page = context.new_page()
    saved = page.request.post(
        "/api/v1/snippets",
        data=json.dumps({"kind": "estimate", "inputs": API_BODY, "title": "Dairy lids", "job_number": "J-4471"}),
        headers={"Content-Type": "application/json"},
    )
    assert saved.status == 201, saved.text()
    page.goto(f"/snippets/{saved.json()['id']}")
    page.get_by_role("link", name="Print or CSV").click()
    answer = api(page)
    expect(page.locator('[data-key="total_mass"]')).to_have_text(
        f"{format_number(answer['total_ink_mass']['value'])} kg"
    )
    expect(page.locator(".ticket-head")).to_contain_text("J-4471")
    expect(page.get_by_role("button", name="Print")).to_be_visible()
    with page.expect_download() as download:
        page.get_by_role("link", name="Download CSV").click()
    saved_csv = Path(download.value.path()).read_bytes()
    assert saved_csv.startswith(b"\xef\xbb\xbf")
    fresh = page.request.get("/estimate", params={"csv": json.dumps(API_BODY, separators=(",", ":"))}).body()
    assert saved_csv == fresh
    data = pdf_of(page, screenshots / "estimate-saved-print.pdf")
    assert len(A4_PAGES.findall(data)) == 1
    assert format_money(answer["total_cost"]) in page.locator("body").inner_text()


def test_twelve_stations_print_on_one_page_and_read_on_a_phone(open_context, screenshots):
    body = json.loads(json.dumps(API_BODY))
    body["stations"] = [
        {**API_BODY["stations"][i % 3], "name": f"Unit {i + 1} {['cyan', 'spot', 'varnish'][i % 3]}"} for i in range(12)
    ]
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    for count in range(5, 13):
        page.get_by_role("button", name="Add a station").click()
        expect(page.locator("fieldset.station")).to_have_count(count)
        expect(page.locator(f"#stations-{count - 1}-name")).to_be_focused()
        page.keyboard.press("Tab")
        page.keyboard.type("3")
        page.fill(f"#stations-{count - 1}-coverage", str(5 * count))
        expect(page.locator(".estimate-table tbody tr")).to_have_count(count)
    expect(page.locator("#estimate-status")).to_have_text("")
    assert page.evaluate("document.documentElement.scrollWidth - document.documentElement.clientWidth") <= 0
    page.screenshot(path=str(screenshots / "estimate-12-stations-full-phone.png"), full_page=True)
    page.locator("#estimate-result").screenshot(path=str(screenshots / "estimate-12-stations-result-phone.png"))
    page.emulate_media(media="print")  # to look at; printed from a phone it is laid out on the paper (PDF below)
    page.screenshot(path=str(screenshots / "estimate-12-print-phone.png"), full_page=True)
    page.emulate_media(media="screen")
    page.set_viewport_size(DESKTOP)
    data = pdf_of(page, screenshots / "estimate-12-print.pdf")
    assert len(A4_PAGES.findall(data)) == 1, "twelve stations spill onto a second page"
    text = page.locator("body").inner_text()
    assert page.locator('[data-key="total_mass"]').text_content() in text
    page.screenshot(path=str(screenshots / "estimate-12-print-desktop.png"), full_page=True)


def test_a_full_twelve_station_labels_job_prints_on_one_a4_and_one_letter_page(open_context, screenshots):
    # The longest printout: twelve stations, each with a price, a system fill and ink on hand (so twelve
    # verdicts and a per-1,000 row each), the printout's header filled in.
    body = json.loads(json.dumps(API_BODY))
    body["stations"] = [
        {**API_BODY["stations"][i % 2], "name": f"Unit {i + 1} {'spot green' if i % 2 else 'process cyan'}"}
        for i in range(12)
    ]
    page = open_context(DESKTOP).new_page()
    saved = page.request.post(
        "/api/v1/snippets",
        data=json.dumps({"kind": "estimate", "inputs": body, "title": "Twelve colours", "job_number": "J-9912"}),
        headers={"Content-Type": "application/json"},
    )
    assert saved.status == 201, saved.text()
    page.goto(f"/estimate?snippet={saved.json()['id']}")
    answer = api(page, body)
    expect(page.locator(".on-hand-list li")).to_have_count(12)
    expect(page.locator(".per-1000-table tbody tr")).to_have_count(12)
    for paper in ("A4", "Letter"):
        page.emulate_media(media="print")
        data = page.pdf(path=str(screenshots / f"estimate-12-full-{paper}.pdf"), format=paper)
        assert len(A4_PAGES.findall(data)) == 1, f"a full twelve-station job spills onto a second {paper} page"
    shown = page.locator("body").inner_text()
    assert format_money(answer["cost_per_1000_labels"]) in shown and "J-9912" in shown
