"""The Ink strength page in Chromium at phone size: six readings in, the curve, the volume for a target."""

from __future__ import annotations

import math

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from webapp.calculators import CALCULATIONS

pytestmark = pytest.mark.browser

# Six prints of an invented ink: wet film [µm] and the density read on each.
FILMS = ("0.4", "0.8", "1.2", "1.8", "2.6", "4.0")
DENSITIES = tuple(
    f"{1.5 * (1 - math.exp(-0.9 * float(x))) + e:.2f}"
    for x, e in zip(FILMS, (0.01, -0.01, 0, 0.02, -0.01, 0), strict=True)
)


def test_six_readings_give_the_curve_and_the_volume_for_a_target(open_context, screenshots):
    page = open_context(PHONE).new_page()
    page.goto("/ink-strength")
    page.get_by_role("radio", name="Wet film").check()
    for index, (film, density) in enumerate(zip(FILMS, DENSITIES, strict=True)):
        page.locator(f"#readings-{index}-value").fill(film)
        page.locator(f"#readings-{index}-density").fill(density)
    expect(page.locator('label[for="readings-0-value"] .when-film')).to_be_visible()
    expect(page.locator('label[for="readings-0-value"] .when-volume')).to_be_hidden()
    expect(page.locator("#readings-0-transfer")).to_be_hidden()
    page.get_by_role("textbox", name="Target density").fill("1.3")
    page.locator("#transfer").fill("30")

    body = {
        "readings": [{"film": f"{x} um", "density": float(d)} for x, d in zip(FILMS, DENSITIES, strict=True)],
        "target_density": 1.3,
        "transfer": 0.3,
    }
    answer = CALCULATIONS["density_volume_for"](body)
    volume = page.locator('[data-key="anilox_volume"] data')
    expect(volume).to_have_attribute("value", repr(answer["anilox_volume"]["value"]))
    expect(page.locator("svg.strength-chart circle.reading")).to_have_count(6)
    expect(page.locator("svg.strength-chart polyline.curve")).to_have_count(1)
    expect(page.locator("svg.strength-chart line.needed")).to_have_count(1)
    expect(page.locator('[data-key="count"]')).to_have_text("6")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    page.screenshot(path=str(screenshots / "ink-strength-phone.png"), full_page=True)
    page.locator("svg.strength-chart").screenshot(path=str(screenshots / "ink-strength-chart-phone.png"))

    # A seventh row comes and goes; the answer is still there.
    page.get_by_role("button", name="Add a reading").click()
    expect(page.locator(".strength-row")).to_have_count(7)
    page.get_by_role("button", name="Remove reading 7").click()
    expect(page.locator(".strength-row")).to_have_count(6)
    expect(page.locator('[data-key="count"]')).to_have_text("6")

    # An unreachable target: the message beside the field, the typed words kept.
    page.get_by_role("textbox", name="Target density").fill("1.8")
    expect(page.locator("#target_density-error")).to_contain_text("cannot be reached")
    expect(page.get_by_role("textbox", name="Target density")).to_have_value("1.8")
    page.screenshot(path=str(screenshots / "ink-strength-unreachable-phone.png"), full_page=True)
