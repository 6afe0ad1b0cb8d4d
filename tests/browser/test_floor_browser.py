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


def test_film_headline_stays_in_view_while_the_transfer_changes(open_context, screenshots):
    page = open_context(KEYBOARD_UP).new_page()
    page.goto("/film")
    page.get_by_label("Plate to substrate %").fill("40")
    sticky = page.locator(".film-sticky-value")
    # t = V × T_ap × T_ps with V = 4.5 BCM/in² = 4.5 / 0.64516 µm (NIST SP 811), 50 % and 40 %
    expect(sticky).to_have_text(f"{format_number(4.5 / 0.64516 * 0.5 * 0.4)} µm")
    assert in_viewport(page, sticky), "the headline left the screen"
    page.screenshot(path=str(screenshots / "floor-film-transfer-390x500.png"))
    page.locator("details.more-inputs summary").click()
    page.get_by_label("Solids by volume %").fill("35")  # far down the inputs
    expect(page.locator('tr[data-key="dry"]')).to_be_attached()
    page.get_by_label("Anilox to plate %").fill("45")
    expect(sticky).to_have_text(f"{format_number(4.5 / 0.64516 * 0.45 * 0.4)} µm")
    assert in_viewport(page, sticky)
    page.get_by_label("Solids by volume %").scroll_into_view_if_needed()
    assert in_viewport(page, sticky)
    page.screenshot(path=str(screenshots / "floor-film-solids-390x500.png"))


@pytest.mark.parametrize("viewport", [TABLET, {"width": 1280, "height": 800}], ids=["tablet", "desktop"])
def test_film_inputs_sit_together_beside_the_result(open_context, viewport, screenshots):
    page = open_context(viewport).new_page()
    page.goto("/film")
    volume = page.locator("#film-form").bounding_box()
    transfer = page.locator("#film-settings").bounding_box()
    result = page.locator("#film-result").bounding_box()
    gap = transfer["y"] - (volume["y"] + volume["height"])
    assert 0 <= gap <= 20, f"{gap:.0f} px between the volume card and the transfer card"
    assert result["x"] > volume["x"] + volume["width"]  # the result beside the inputs
    expect(page.locator("#film-headline")).to_be_hidden()  # the compact copy is for phones
    name = "tablet" if viewport is TABLET else "desktop"
    page.screenshot(path=str(screenshots / f"floor-film-{name}.png"), full_page=True)


def test_units_focus_ring_goes_round_the_pill(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/film")
    page.get_by_label("Anilox volume").focus()
    page.keyboard.press("Shift+Tab")  # leave the field, then reach the units switch from the end of the page
    page.get_by_label("Metric").focus()
    page.keyboard.press("ArrowRight")  # a keyboard move: Imperial, focus visible
    expect(page.get_by_label("Imperial")).to_be_focused()
    ring = page.evaluate(
        """() => {
            const input = document.activeElement, label = input.closest('label');
            const l = getComputedStyle(label), i = getComputedStyle(input);
            return [l.outlineStyle, l.outlineWidth, i.outlineStyle];
        }"""
    )
    assert ring == ["solid", "3px", "none"]
    page.locator(".units-form").screenshot(path=str(screenshots / "floor-units-focus-phone.png"))


def test_offline_banner_speaks_of_numbers_only_when_some_are_shown(open_context):
    context = open_context(PHONE)
    page = context.new_page()
    page.goto("/")  # nothing typed: no numbers on screen
    context.set_offline(True)
    reach = page.locator("#reach")
    expect(reach).to_be_visible()
    assert "numbers on screen" not in reach.inner_text()  # what is shown, not hidden words
    assert "when the shop network is back" in reach.inner_text()
    context.set_offline(False)
    page.goto("/film")  # the film chain shows its numbers at once
    context.set_offline(True)
    expect(reach).to_be_visible()
    assert "The numbers on screen are from before" in reach.inner_text()
    context.set_offline(False)
