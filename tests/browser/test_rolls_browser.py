"""The roll register in Chromium: at tablet size add a roll, log three measurements and a cleaning,
see the chart and the forecast, correct a measurement from the roll page; at phone size find the
rolls for a 150 lpi process job and open one in the film chain and in the job estimate. The fit
form and the overview filter update live; axe-core finds no serious problem on the register's pages
(the demo shop's register) at tablet and phone size; screenshots of each; offline, a register page
says plainly that it needs the server."""

from __future__ import annotations

import json
import random
import re
import urllib.request
from datetime import date, timedelta

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE, TABLET
from tests.browser.test_offline_and_budget import wait_for_worker
from tests.conftest import serving

pytestmark = pytest.mark.browser


def log_measurement(page, day: date, volume: str, condition: str):
    form = page.locator("#measure form")
    form.get_by_label("Measured on").fill(day.isoformat())
    form.get_by_label("Volume", exact=True).fill(volume)
    form.get_by_label("After cleaning" if condition == "after_cleaning" else "As found").check()
    form.get_by_role("button", name="Log measurement").click()
    expect(page.get_by_text("Measurement logged.")).to_be_visible()


def test_add_a_roll_log_and_see_the_chart_then_fit_on_a_phone(open_context, screenshots, live_server):
    roll_id = f"T-{random.randint(1000, 9999)}"
    today = date.today()
    tablet = open_context(TABLET)
    # This supervisor works in BCM/in²; the phone below has no preference yet (metric).
    tablet.add_cookies([{"name": "inkfilm_units", "value": "imperial", "url": live_server}])
    page = tablet.new_page()
    page.goto("/rolls/new")
    page.get_by_label("Shop ID").fill(roll_id)
    page.get_by_label("Line screen").fill("900")
    page.get_by_label("Nominal volume").fill("1.8")
    page.get_by_label("Engraved on").fill((today - timedelta(days=720)).isoformat())
    page.get_by_label("Press", exact=True).fill("Narrow 9")
    page.get_by_label("Station or rack place").fill("station 2")
    page.get_by_label("Status").select_option("in_use")
    page.get_by_role("button", name="Add roll").click()
    expect(page.get_by_role("heading", name=roll_id)).to_be_visible()

    log_measurement(page, today - timedelta(days=540), "1.74", "after_cleaning")
    log_measurement(page, today - timedelta(days=200), "1.66", "after_cleaning")
    log_measurement(page, today - timedelta(days=20), "1.45", "as_found")
    clean = page.locator("#clean form")
    clean.get_by_label("Cleaned on").fill((today - timedelta(days=19)).isoformat())
    clean.get_by_label("Method").fill("ultrasonic")
    clean.get_by_role("button", name="Log cleaning").click()
    expect(page.get_by_text("Cleaning logged.")).to_be_visible()

    chart = page.locator("svg.chart")
    expect(chart).to_be_visible()
    expect(chart.locator("circle.after-cleaning")).to_have_count(2)
    expect(chart.locator("polygon.as-found")).to_have_count(1)
    expect(chart.locator("polygon.cleaning-mark")).to_have_count(1)
    expect(chart.locator("line.wear-line")).to_have_count(1)
    expect(page.get_by_text("Replace by", exact=True)).to_be_visible()
    assert page.evaluate("document.documentElement.scrollWidth") <= TABLET["width"]
    page.screenshot(path=str(screenshots / "rolls-roll-tablet.png"), full_page=True)
    page.goto("/rolls")
    expect(page.get_by_role("link", name=roll_id)).to_be_visible()
    page.screenshot(path=str(screenshots / "rolls-overview-tablet.png"), full_page=True)

    phone = open_context(PHONE).new_page()
    phone.goto("/rolls/fit")
    phone.evaluate("window.stillThisPage = true")
    phone.get_by_label("Plate screen (lpi)").fill("150")
    phone.get_by_label("Kind of work").select_option("process")
    # No button pressed: the answer follows the form (htmx), and the address says what it shows.
    fitting = phone.locator("#fitting")
    expect(fitting.get_by_role("link", name=roll_id)).to_be_visible()
    assert phone.evaluate("window.stillThisPage") is True
    expect(phone).to_have_url(re.compile(r"/rolls/fit\?plate_screen=150&work=process$"))
    assert phone.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    phone.screenshot(path=str(screenshots / "rolls-fit-phone.png"), full_page=True)
    # Metric on this phone: 1.45 BCM/in² is 2.25 cm³/m².
    article = fitting.locator("article", has=phone.get_by_role("link", name=roll_id))
    article.get_by_role("link", name="Film chain with 2.25 cm³/m²").click()
    expect(phone.get_by_label("Anilox volume")).to_have_value("2.248")
    expect(phone.locator("#film-result, .result").first).to_be_visible()
    phone.go_back()
    article = phone.locator("#fitting article", has=phone.get_by_role("link", name=roll_id))
    article.get_by_role("link", name="Job estimate with 2.25 cm³/m²").click()
    expect(phone.locator('[name="stations[0].anilox_volume"]')).to_have_value("2.248")
    expect(phone.locator('[name="stations[0].anilox_unit"]')).to_have_value("cm3/m2")
    expect(phone.locator("#estimate-result")).to_contain_text("kg")


@pytest.fixture(scope="module")
def demo_shop(tmp_path_factory):
    """A server of its own with the demo shop's register (about twenty rolls with their logs)."""
    with serving(tmp_path_factory.mktemp("demo-data"), "--demo") as (_process, base):
        with urllib.request.urlopen(base + "/api/v1/rolls", timeout=10) as answer:
            rolls = {roll["roll_id"]: roll["id"] for roll in json.load(answer)["rolls"]}
        yield base, rolls


def register_pages(rolls: dict) -> dict:
    plugged = rolls["NW-104"]  # plugged, then recovered after a deep clean
    return {
        "overview": "/rolls",
        "roll": f"/rolls/{plugged}",
        "replace": f"/rolls/{rolls['NW-203']}",
        "fit": "/rolls/fit?plate_screen=150&work=process",
        "new": "/rolls/new",
        "edit": f"/rolls/{plugged}/edit",
        "import": "/rolls/import",
    }


@pytest.mark.parametrize(("size", "viewport"), [("tablet", TABLET), ("phone", PHONE)])
def test_axe_and_screenshots_of_the_register_pages(open_context, check_axe, screenshots, demo_shop, size, viewport):
    base, rolls = demo_shop
    pages = register_pages(rolls)
    plugged = rolls["NW-104"]
    for kinds in ("measurements", "cleanings"):
        with urllib.request.urlopen(f"{base}/api/v1/rolls/{plugged}/{kinds}", timeout=10) as answer:
            entry = json.load(answer)[kinds][0]["id"]
        pages[f"correct-{kinds[:-1]}"] = f"/rolls/{plugged}/{kinds[:-1]}/{entry}/correct"
    page = open_context(viewport, bypass_csp=True, base_url=base).new_page()
    for name, path in pages.items():
        page.goto(path)
        expect(page.locator("main h1, h1").first).to_be_visible()
        assert page.evaluate("document.documentElement.scrollWidth") <= viewport["width"], name
        check_axe(page, f"{path} at {size}")
        page.emulate_media(color_scheme="light")
        page.screenshot(path=str(screenshots / f"rolls-{name}-{size}.png"), full_page=True)


def test_the_overview_filter_updates_the_list_in_place(open_context, demo_shop):
    base, rolls = demo_shop
    page = open_context(TABLET, base_url=base).new_page()
    page.goto("/rolls")
    page.evaluate("window.stillThisPage = true")
    rows = page.locator(".rolls-table tbody tr")
    everything = rows.count()
    assert everything == len(rolls)
    page.get_by_label("Status").select_option("retired")
    expect(rows).not_to_have_count(everything)
    expect(page).to_have_url(re.compile(r"status=retired"))
    for row in rows.all():
        expect(row).to_contain_text("retired")
    page.get_by_label("Status").select_option("")
    page.get_by_label("Screen from (lpi)").fill("fine")
    expect(page.locator("#e-screen_min")).to_contain_text("must be a line screen")
    page.get_by_label("Screen from (lpi)").fill("800")
    expect(page.locator("#e-screen_min")).to_have_count(0)
    for cell in page.locator(".rolls-table tbody td:nth-child(3)").all():
        assert float(cell.inner_text().split()[0]) >= 800
    assert page.evaluate("window.stillThisPage") is True


def test_on_a_phone_each_roll_of_the_overview_shows_every_figure_without_scrolling_sideways(
    open_context, screenshots, demo_shop
):
    base, rolls = demo_shop
    page = open_context(PHONE, base_url=base).new_page()
    page.goto("/rolls")
    box = page.locator(".table-wrap")
    assert box.evaluate("element => element.scrollWidth <= element.clientWidth")
    first = page.locator(".rolls-table tbody tr").first
    for name in ("Screen", "Nominal", "Latest", "Where", "Replace by"):
        cell = first.locator(f'td[data-label^="{name}"]')
        expect(cell).to_be_visible()
        right = cell.evaluate("element => element.getBoundingClientRect().right")
        assert right <= PHONE["width"], name
        label = cell.evaluate("element => getComputedStyle(element, '::before').content")
        assert label.startswith(f'"{name}'), name
    # What the roll needs sits beside its name, on the card's first line.
    roll = first.locator("th").bounding_box()
    needs = first.locator("td.needs").bounding_box()
    assert needs["x"] > roll["x"] and abs(needs["y"] - roll["y"]) < roll["height"]
    page.emulate_media(color_scheme="light")
    first.scroll_into_view_if_needed()
    page.screenshot(path=str(screenshots / "rolls-overview-cards-phone.png"), full_page=False)


def test_offline_a_register_page_says_it_needs_the_server(open_context, screenshots, demo_shop):
    base, rolls = demo_shop
    context = open_context(PHONE, service_workers="allow", base_url=base)
    page = context.new_page()
    page.goto("/")
    wait_for_worker(page)
    context.set_offline(True)
    for path in ("/rolls", register_pages(rolls)["roll"], "/rolls/fit?plate_screen=150&work=process"):
        page.goto(path)
        expect(page.get_by_role("heading", name="The inkfilm server is out of reach")).to_be_visible()
        expect(page.get_by_text("The anilox roll register and saved work live on the server")).to_be_visible()
    page.screenshot(path=str(screenshots / "rolls-offline-phone.png"), full_page=True)
    context.set_offline(False)
    page.goto("/rolls")
    expect(page.get_by_role("heading", name="Anilox rolls")).to_be_visible()


def _post_json(base: str, path: str, body: dict) -> dict:
    request = urllib.request.Request(
        base + path, data=json.dumps(body).encode(), headers={"Content-Type": "application/json"}, method="POST"
    )
    with urllib.request.urlopen(request, timeout=10) as answer:
        return json.load(answer)


def test_a_supervisor_corrects_a_measurement_on_a_tablet(open_context, live_server):
    today = date.today()
    roll = _post_json(
        live_server,
        "/api/v1/rolls",
        {
            "roll_id": f"C-{random.randint(1000, 9999)}",
            "screen": "900 lpi",
            "angle": 60,
            "nominal_volume": "1.8 BCM/in2",
            "engraved_on": (today - timedelta(days=400)).isoformat(),
            "status": "in_use",
        },
    )
    day = (today - timedelta(days=10)).isoformat()
    body = {"measured_on": day, "volume": "1.48 BCM/in2", "condition": "as_found", "by": "Ines"}
    _post_json(live_server, f"/api/v1/rolls/{roll['id']}/measurements", body)
    tablet = open_context(TABLET)
    tablet.add_cookies([{"name": "inkfilm_units", "value": "imperial", "url": live_server}])
    page = tablet.new_page()
    page.goto(f"/rolls/{roll['id']}")
    rows = page.locator("#logs tbody tr")
    expect(rows.first).to_contain_text("1.48")
    rows.first.get_by_role("link", name=re.compile("^Correct")).click()
    expect(page.get_by_label("Volume", exact=True)).to_have_value("1.48")
    expect(page.get_by_label("Measured by")).to_have_value("Ines")
    page.get_by_label("Volume", exact=True).fill("1.84")
    page.get_by_label("Why the correction").fill("digits swapped")
    page.get_by_role("button", name="Save the correction").click()
    expect(page.get_by_text("The measurement was corrected")).to_be_visible()
    expect(page.locator("#logs tbody tr").first).to_contain_text("1.84")
    expect(page.locator("#logs")).not_to_contain_text("1.48")
    assert page.evaluate("document.documentElement.scrollWidth") <= TABLET["width"]
