"""The roll register in Chromium: at tablet size add a roll, log three measurements and a cleaning,
see the chart and the forecast; at phone size find the rolls for a 150 lpi process job and open
one in the film chain."""

from __future__ import annotations

import random
from datetime import date, timedelta

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE, TABLET

pytestmark = pytest.mark.browser


def log_measurement(page, day: date, volume: str, condition: str):
    form = page.locator("#measure form")
    form.get_by_label("Measured on").fill(day.isoformat())
    form.get_by_label("Volume", exact=True).fill(volume)
    form.get_by_label("After cleaning" if condition == "after_cleaning" else "As found").check()
    form.get_by_role("button", name="Log measurement").click()
    expect(page.get_by_text("Measurement logged.")).to_be_visible()


def test_add_a_roll_log_and_see_the_chart_then_fit_on_a_phone(open_context, screenshots):
    roll_id = f"T-{random.randint(1000, 9999)}"
    today = date.today()
    page = open_context(TABLET).new_page()
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
    phone.get_by_label("Plate screen (lpi)").fill("150")
    phone.get_by_label("Kind of work").select_option("process")
    phone.get_by_role("button", name="Find rolls").click()
    fitting = phone.locator("#fitting")
    expect(fitting.get_by_role("link", name=roll_id)).to_be_visible()
    assert phone.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    phone.screenshot(path=str(screenshots / "rolls-fit-phone.png"), full_page=True)
    article = fitting.locator("article", has=phone.get_by_role("link", name=roll_id))
    article.get_by_role("link", name="Film chain with 1.45 BCM/in²").click()
    expect(phone.get_by_label("Anilox volume")).to_have_value("1.45")
    expect(phone.locator("#film-result, .result").first).to_be_visible()
