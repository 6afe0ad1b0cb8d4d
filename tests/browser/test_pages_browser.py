"""The pages in Chromium at phone and tablet sizes: what a person sees and taps."""

from __future__ import annotations

import re
from urllib.parse import urlsplit

import pytest
from playwright.sync_api import expect

from calc.display import format_number
from tests.browser.conftest import NARROW, PHONE, TABLET

pytestmark = pytest.mark.browser

PAGES = ["/", "/film", "/estimate", "/fit", "/cell", "/offline"]


def group_values(page, key) -> dict:
    """``{unit spelling: full value}`` of one group of the converter's result."""
    items = page.locator(f'[data-group="{key}"] data')
    return {item.get_attribute("data-unit"): float(item.get_attribute("value")) for item in items.all()}


@pytest.mark.parametrize("viewport", [PHONE, TABLET], ids=["phone", "tablet"])
def test_typing_a_value_shows_every_equivalent(open_context, viewport, screenshots):
    page = open_context(viewport).new_page()
    page.goto("/")
    page.get_by_label("Value").fill("4.5")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("6.98")
    # 1 BCM/in² = 1/0.64516 cm³/m² exactly (NIST SP 811: inch = 25.4 mm)
    assert group_values(page, "volume_per_area")["cm3/m2"] == pytest.approx(4.5 / 0.64516)
    page.get_by_label("Unit", exact=True).select_option("mil")
    page.get_by_label("Value").fill("0.6")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("15.2")
    assert group_values(page, "film_thickness")["um"] == pytest.approx(15.24)  # NIST SP 811: 1 mil = 25.4 µm
    page.get_by_label("Unit", exact=True).select_option("lpi")
    page.get_by_label("Value").fill("800")
    expect(page.locator('[data-group="line_screen"]')).to_contain_text("315")
    name = "phone" if viewport is PHONE else "tablet"
    page.screenshot(path=str(screenshots / f"converters-{name}.png"), full_page=True)


def test_a_bad_value_shows_a_message_beside_its_field(open_context):
    page = open_context(PHONE).new_page()
    page.goto("/")
    page.get_by_label("Value").fill("4..5")
    expect(page.locator("#value-error")).to_contain_text("not a number")
    expect(page.get_by_label("Value")).to_have_attribute("aria-invalid", "true")
    page.get_by_label("Value").fill("4.5")
    expect(page.locator("#value-error")).to_be_empty()
    expect(page.get_by_label("Value")).not_to_have_attribute("aria-invalid", "true")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("6.98")


def film_body():
    return {
        "anilox_volume": "4.5 BCM/in2",
        "anilox_to_plate": 0.45,
        "plate_to_substrate": 0.55,
        "ink_density": "1.05 g/cm3",
        "solids_by_volume": 0.35,
        "solids_by_weight": 0.4,
    }


def fill_film(page):
    page.get_by_label("Anilox volume").fill("4.5")
    page.get_by_label("Anilox to plate %").fill("45")
    page.get_by_label("Plate to substrate %").fill("55")
    page.locator("details.more-inputs summary").click()
    page.get_by_label("Ink density").fill("1.05")
    page.get_by_label("Solids by volume %").fill("35")
    page.get_by_label("Solids by weight %").fill("40")
    expect(page.locator('tr[data-key="dry_coat_weight"]')).to_be_visible()


def test_film_chain_matches_the_api(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/film")
    fill_film(page)
    answer = page.request.post("/api/v1/film", data=film_body()).json()
    rows = page.locator("tr[data-key]").all()
    assert {row.get_attribute("data-key") for row in rows} == set(answer)
    for row in rows:
        key = row.get_attribute("data-key")
        assert row.get_attribute("data-api-unit") == answer[key]["unit"]
        assert float(row.get_attribute("data-api-value")) == pytest.approx(answer[key]["value"], rel=1e-12)
        # metric display: µm and g/m², the API's own units, to three significant figures
        assert row.locator("data").inner_text() == format_number(answer[key]["value"])
    page.locator("details.working summary").click()
    expect(page.locator("details.working")).to_contain_text("t₂ = t₁ × T_ps")
    page.screenshot(path=str(screenshots / "film-phone.png"), full_page=True)


def test_film_drawing_is_to_scale_and_ordered(open_context):
    page = open_context(TABLET).new_page()
    page.goto("/film")
    fill_film(page)
    svg = page.locator("svg.film-drawing")
    expect(svg).to_be_visible()
    heights = {
        rect.get_attribute("data-layer"): float(rect.get_attribute("height"))
        for rect in svg.locator("rect[data-layer]").all()
    }
    assert list(heights) == ["theoretical_wet", "plate_wet", "substrate_wet", "dry"]
    assert heights["theoretical_wet"] > heights["plate_wet"] > heights["substrate_wet"] > heights["dry"]
    assert heights["plate_wet"] / heights["theoretical_wet"] == pytest.approx(0.45, abs=0.01)
    assert heights["dry"] / heights["substrate_wet"] == pytest.approx(0.35, abs=0.01)
    page.get_by_label("Anilox volume").fill("9")  # the drawing follows the numbers
    expect(svg.locator("text.layer-value").first).to_have_text(format_number(9 / 0.64516))


def test_imperial_changes_the_display_and_is_remembered(open_context, screenshots):
    context = open_context(PHONE)
    page = context.new_page()
    page.goto("/film")
    expect(page.locator(".headline-value")).to_contain_text("µm")
    page.get_by_label("Imperial").check()
    expect(page.locator(".headline-value")).to_contain_text("mil")
    page.goto("/film")
    expect(page.get_by_label("Imperial")).to_be_checked()
    expect(page.locator(".headline-value")).to_contain_text("mil")
    page.goto("/estimate")
    expect(page.locator('[data-key="total_mass"]')).to_contain_text("lb")
    page.screenshot(path=str(screenshots / "estimate-imperial-phone.png"), full_page=True)
    page.get_by_label("Metric").check()
    expect(page.locator('[data-key="total_mass"]')).to_contain_text("kg")


def test_units_switch_works_without_javascript(open_context):
    page = open_context(PHONE, java_script_enabled=False).new_page()
    page.goto("/film")
    page.get_by_label("Imperial").check()
    page.get_by_role("button", name="Apply").click()
    expect(page.locator(".headline-value")).to_contain_text("mil")
    page.get_by_label("Anilox volume").fill("7")
    page.get_by_label("Unit", exact=True).select_option("cm3/m2")
    page.get_by_role("button", name="Work it out").click()
    expect(page.locator('tr[data-key="theoretical_wet"] data')).to_have_text(format_number(7 / 25.4))


def test_estimate_stations_and_totals(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/estimate")
    expect(page.locator(".estimate-table tbody tr")).to_have_count(4)
    page.get_by_role("button", name="Add a station").click()
    expect(page.locator("fieldset.station")).to_have_count(5)
    page.get_by_label("Name").nth(4).fill("Opaque white")
    page.get_by_label("Anilox volume").nth(4).fill("8")
    page.get_by_label("Coverage %").nth(4).fill("60")
    expect(page.locator(".estimate-table tbody tr")).to_have_count(5)
    expect(page.locator(".estimate-table tbody")).to_contain_text("Opaque white")
    page.get_by_role("button", name="Remove station 1").click()
    expect(page.locator("fieldset.station")).to_have_count(4)
    expect(page.locator(".estimate-table tbody")).not_to_contain_text("Cyan")
    # the page's own caution (a picked ink's caution is beside its station)
    expect(page.locator(".caution:not(.ink-caution)")).to_contain_text("safety data sheet")
    page.screenshot(path=str(screenshots / "estimate-phone.png"), full_page=True)
    page.emulate_media(media="print")
    page.screenshot(path=str(screenshots / "estimate-print.png"), full_page=True)
    expect(page.locator("fieldset.station").first).to_be_hidden()
    expect(page.locator(".estimate-table")).to_be_visible()


@pytest.mark.parametrize("path", PAGES)
def test_no_sideways_scrolling_at_360_px(open_context, path, screenshots):
    page = open_context(NARROW).new_page()
    page.goto(path)
    if path == "/":
        page.get_by_label("Value").fill("12345.678")
        expect(page.locator('[data-group="volume_per_area"]')).to_be_visible()
    overflow = page.evaluate("document.documentElement.scrollWidth - document.documentElement.clientWidth")
    assert overflow <= 0
    small = page.evaluate(
        """() => [...document.querySelectorAll('a, button, input, select, summary, label:has(input)')]
              .filter(el => el.offsetParent !== null && !el.closest('.skip-link'))
              .filter(el => !(el.matches('input[type=radio], input[type=checkbox]')))
              .map(el => [el.outerHTML.slice(0, 60), el.getBoundingClientRect().height])
              .filter(([, h]) => h < 47.5)"""
    )
    assert small == [], "touch targets under 48 px"
    page.screenshot(path=str(screenshots / f"narrow{path.replace('/', '-') or '-'}.png"), full_page=True)


def test_pages_ask_no_other_host_and_break_no_policy(open_context, live_server):
    context = open_context(PHONE)
    page = context.new_page()
    problems = []
    page.on("console", lambda message: message.type in ("error", "warning") and problems.append(message.text))
    page.on("pageerror", lambda error: problems.append(str(error)))
    for path in PAGES:
        page.goto(path)
    page.goto("/")
    page.get_by_label("Value").fill("3")
    expect(page.locator('[data-group="film_thickness"]')).to_be_visible()
    assert context.requests.hosts() == {urlsplit(live_server).netloc}
    problems = [p for p in problems if "blocked by Playwright" not in p]  # this context blocks workers
    assert problems == []


@pytest.mark.parametrize("path", PAGES)
def test_axe_finds_no_serious_problems(open_context, check_axe, path):
    # The CSP forbids inline scripts, axe's included: this context bypasses it.
    page = open_context(PHONE, bypass_csp=True).new_page()
    page.goto(path)
    if path == "/":
        page.get_by_label("Value").fill("4.5")
        expect(page.locator('[data-group="film_thickness"]')).to_be_visible()
    check_axe(page, path)


def test_dark_theme_follows_the_device(open_context, screenshots):
    page = open_context(PHONE, color_scheme="dark").new_page()
    page.goto("/film")
    background = page.evaluate("getComputedStyle(document.body).backgroundColor")
    assert background == "rgb(18, 20, 24)"
    page.screenshot(path=str(screenshots / "film-dark-phone.png"), full_page=True)


def test_screenshots_of_every_page(open_context, screenshots):
    page = open_context(PHONE).new_page()
    for path in PAGES:
        page.goto(path)
        name = re.sub(r"[^a-z]+", "-", path).strip("-") or "converters-empty"
        page.screenshot(path=str(screenshots / f"page-{name}-phone.png"), full_page=True)
