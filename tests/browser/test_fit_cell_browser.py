"""The roll fit and cell geometry pages in Chromium at phone size (390 px):
what an operator types and sees, the drawings, axe in light and dark.

References: the 2 % dot at 150 lpi ≈ 27 µm and the cell volume model
((o/p)² × h × ½ for a bowl ≈ 4.92 cm³/m² at 800 lpi, 3 µm wall, 12 µm deep)
are the derivations in REFERENCES.md; inch = 25.4 mm (NIST SP 811).
"""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import NARROW, PHONE

pytestmark = pytest.mark.browser


def no_sideways_scroll(page, width=PHONE["width"]):
    assert page.evaluate("document.documentElement.scrollWidth") <= width


def test_choosing_a_roll_for_a_150_lpi_process_plate(open_context, check_axe, screenshots):
    page = open_context(PHONE, bypass_csp=True).new_page()
    page.goto("/fit")
    page.get_by_label("Plate screen", exact=True).fill("150")
    page.get_by_label("Kind of work").select_option("process")
    expect(page.locator(".verdict")).to_contain_text("The roll to look for")
    page.get_by_label("Roll screen", exact=True).fill("600")
    page.get_by_label("Roll volume", exact=True).fill("4")
    verdict = page.locator(".verdict")
    expect(verdict).to_have_text("Does not fit: screen too coarse and volume too high")
    expect(verdict).to_contain_text("does not fit", ignore_case=True)
    problems = page.locator(".reason-problem")
    expect(problems).to_have_count(2)
    expect(problems.nth(0)).to_contain_text("only 4.0 times the plate's")
    expect(problems.nth(1)).to_contain_text("more than the 1–2.5 BCM/in²")
    drawing = page.locator("svg.fit-drawing")
    expect(drawing).to_be_visible()
    expect(drawing.locator("desc")).to_contain_text("27 µm across")
    expect(drawing.locator("desc")).to_contain_text("can dip into it")
    # the dot is drawn smaller than one cell opening at 600 lpi (39 µm)
    dot = drawing.locator("circle.fit-dot").bounding_box()
    cell = drawing.locator("polygon.fit-cell").first.bounding_box()
    stroke = float(drawing.locator("circle.fit-dot").evaluate("e => parseFloat(getComputedStyle(e).strokeWidth)"))
    assert dot["width"] < cell["width"]
    assert (dot["width"] - stroke) / cell["width"] == pytest.approx(27.02 / 39.33, rel=0.02)
    no_sideways_scroll(page)
    page.screenshot(path=str(screenshots / "fit-does-not-fit-phone.png"), full_page=True)
    check_axe(page, "/fit does not fit")

    page.get_by_label("Roll screen", exact=True).fill("1000")
    page.get_by_label("Roll volume", exact=True).fill("1.5")
    expect(verdict).to_have_text("Fits")
    expect(page.locator(".reason-problem")).to_have_count(0)
    expect(page.locator(".reason-ok")).to_have_count(2)
    expect(drawing.locator("desc")).to_contain_text("rests on the cell walls")
    page.locator("details.working summary").click()
    expect(page.locator("details.working")).to_contain_text("r = S / L")
    expect(page.locator("details.working")).to_contain_text("r = 6.67")
    expect(page.get_by_role("button", name="Save this…")).to_be_visible()
    no_sideways_scroll(page)
    page.screenshot(path=str(screenshots / "fit-fits-phone.png"), full_page=True)
    page.emulate_media(color_scheme="dark")
    page.screenshot(path=str(screenshots / "fit-fits-dark-phone.png"), full_page=True)


def test_a_bad_roll_value_shows_beside_its_field_and_keeps_the_rest(open_context):
    page = open_context(PHONE).new_page()
    page.goto("/fit")
    page.get_by_label("Roll screen", exact=True).fill("600")
    expect(page.locator("#anilox_volume-error")).to_contain_text("give both")
    page.get_by_label("Roll volume", exact=True).fill("4..5")
    expect(page.locator("#anilox_volume-error")).to_contain_text("not a number")
    expect(page.get_by_label("Roll volume", exact=True)).to_have_value("4..5")
    expect(page.get_by_label("Roll screen", exact=True)).to_have_value("600")
    page.get_by_label("Roll volume", exact=True).fill("1.2")
    expect(page.locator("#anilox_volume-error")).to_be_empty()
    expect(page.locator(".verdict")).to_contain_text("Does not fit: screen too coarse")


def test_cell_geometry_of_an_800_lpi_bowl(open_context, check_axe, screenshots):
    page = open_context(PHONE, bypass_csp=True).new_page()
    page.goto("/cell")
    page.get_by_label("Screen", exact=True).fill("800")
    page.get_by_label("Wall", exact=True).fill("3")
    page.get_by_label("Cell shape").select_option("bowl")
    page.get_by_label("Cell depth").fill("12")
    value = page.locator(".headline-value data")
    expect(value).to_have_text("4.92")
    assert float(value.get_attribute("value")) == pytest.approx(4.92, abs=0.005)
    expect(page.locator(".headline-value")).to_contain_text("cm³/m²")
    expect(page.locator("svg.cell-drawing")).to_be_visible()
    expect(page.locator('tr[data-key="open_area"]')).to_contain_text("82 %")
    no_sideways_scroll(page)
    page.screenshot(path=str(screenshots / "cell-phone.png"), full_page=True)
    check_axe(page, "/cell result")
    # the other way round: the volume given, the depth worked out; the depth field steps aside
    page.get_by_role("radio", name="Volume").check()
    expect(page.get_by_label("Cell depth")).to_be_hidden()
    page.get_by_label("Cell volume").fill("3.174")
    expect(page.locator(".headline-label")).to_contain_text("Depth")
    expect(value).to_have_text("12")
    page.emulate_media(color_scheme="dark")
    page.screenshot(path=str(screenshots / "cell-volume-dark-phone.png"), full_page=True)


def test_results_fit_a_360_px_phone(open_context, screenshots):
    page = open_context(NARROW).new_page()
    page.goto("/fit")
    page.get_by_label("Plate screen", exact=True).fill("175")
    page.get_by_label("Roll screen", exact=True).fill("360")
    page.get_by_label("Screen unit").select_option("lpcm")
    page.get_by_label("Roll volume", exact=True).fill("2.5")
    page.get_by_label("Volume unit").select_option("cm3/m2")
    expect(page.locator(".verdict")).to_have_text("Fits")
    page.locator("details.working summary").click()
    no_sideways_scroll(page, NARROW["width"])
    page.screenshot(path=str(screenshots / "fit-metric-narrow.png"), full_page=True)
    page.goto("/cell")
    page.get_by_role("radio", name="Volume").check()
    page.get_by_label("Cell volume").fill("8")
    page.get_by_label("Screen", exact=True).fill("400")
    expect(page.locator(".headline-label")).to_contain_text("Depth")
    page.locator("details.working summary").click()
    no_sideways_scroll(page, NARROW["width"])
    page.screenshot(path=str(screenshots / "cell-narrow.png"), full_page=True)
