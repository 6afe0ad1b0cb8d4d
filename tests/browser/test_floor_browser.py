"""What the floor asked of the calculator pages, in Chromium at phone and
tablet sizes: the converter's answer first and above the on-screen keyboard,
units typed with a value, the film chain's headline in view while inputs
change, the Metric/Imperial focus ring, the offline banner's words."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from calc.display import format_number
from tests.browser.conftest import PHONE, TABLET

pytestmark = pytest.mark.browser

# A phone with its on-screen keyboard up leaves about 500 px of a 390 px wide screen.
KEYBOARD_UP = {"width": 390, "height": 500}


def in_viewport(page, locator) -> bool:
    box = locator.bounding_box()
    height = page.viewport_size["height"]
    return box is not None and box["y"] >= 0 and box["y"] + box["height"] <= height


def test_convert_leads_with_the_other_systems_answer_above_the_keyboard(open_context, screenshots):
    page = open_context(KEYBOARD_UP).new_page()
    page.goto("/")
    page.get_by_label("Unit", exact=True).select_option("cm3/m2")
    value = page.get_by_label("Value")
    value.focus()
    value.press_sequentially("7", delay=20)
    answer = page.locator(".answer-value")
    # 7 cm³/m² = 7 × 0.64516 BCM/in² (NIST SP 811: 1 in = 25.4 mm, so 1 in² = 645.16 mm²)
    expect(answer).to_have_text(f"{format_number(7 * 0.64516)} BCM/in²")
    expect(page.locator(".answer-label")).to_have_text("7 cm³/m² is")
    assert in_viewport(page, answer), "the answer is below the keyboard"
    assert in_viewport(page, value)
    page.screenshot(path=str(screenshots / "floor-convert-keyboard-390x500.png"))


def test_answer_in_is_picked_and_remembered_on_the_device(open_context, screenshots):
    context = open_context(PHONE)
    page = context.new_page()
    page.goto("/")
    page.get_by_label("Answer in").select_option("mil")
    page.get_by_label("Value").fill("4.5")
    # 4.5 BCM/in² = 4.5 / 0.64516 µm = 4.5 / 0.64516 / 25.4 mil (NIST SP 811)
    expect(page.locator(".answer-value")).to_have_text(f"{format_number(4.5 / 0.64516 / 25.4)} mil")
    page.goto("/")
    expect(page.get_by_label("Answer in")).to_have_value("mil")
    page.get_by_label("Value").fill("800")
    page.get_by_label("Unit", exact=True).select_option("lpi")
    # mil is no unit for a line screen: the other system's unit, and a word why
    expect(page.locator(".answer-value")).to_have_text(f"{format_number(800 / 2.54)} lines/cm")
    expect(page.locator(".answer-note")).to_contain_text("not a unit for a line screen")
    page.screenshot(path=str(screenshots / "floor-convert-answer-in-phone.png"), full_page=True)


def test_a_unit_typed_with_the_value_sets_the_menu(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/")
    unit = page.get_by_label("Unit", exact=True)
    unit.select_option("mil")
    page.get_by_label("Value").fill("4.5 bcm")
    expect(unit).to_have_value("BCM/in2")
    expect(page.locator("#value-error")).to_be_empty()
    expect(page.locator(".answer-value")).to_have_text(f"{format_number(4.5 / 0.64516)} cm³/m²")
    page.get_by_label("Value").fill("7 cm3/m2")
    expect(unit).to_have_value("cm3/m2")
    # picking from the menu takes over: the typed unit goes, the number stays
    unit.select_option("um")
    expect(page.get_by_label("Value")).to_have_value("7")
    expect(page.locator(".answer-value")).to_have_text(f"{format_number(7 / 25.4)} mil")
    page.get_by_label("Value").fill("7 furlong")
    expect(page.locator("#value-error")).to_contain_text("is not one of this field's units")
    expect(page.get_by_label("Value")).to_have_value("7 furlong")
    page.screenshot(path=str(screenshots / "floor-convert-typed-unit-error-phone.png"), full_page=True)
