"""A saved Ink strength snippet opened in its calculator in Chromium at phone size (issue 10, point 7):
every reading and setting on the form, the same answer, changed and saved as a new snippet."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from tests.web.test_density_reopen import BY_VOLUME, STRENGTH
from webapp.calculators import CALCULATIONS

pytestmark = pytest.mark.browser


def test_a_saved_ink_strength_opens_with_every_reading_and_saves_as_a_new_snippet(open_context, screenshots):
    page = open_context(PHONE).new_page()
    body = {"kind": "density_volume_for", "title": "Magenta on PE, press 2", "inputs": STRENGTH}
    response = page.request.post("/api/v1/snippets", data=body)
    assert response.ok, response.text()
    saved = response.json()

    page.goto(f"/snippets/{saved['id']}")
    page.get_by_role("link", name="Open in the calculator").click()
    expect(page.get_by_role("heading", name="Ink strength", exact=True)).to_be_visible()
    expect(page.locator(".strength-row")).to_have_count(len(BY_VOLUME))
    for index, reading in enumerate(BY_VOLUME):
        expect(page.locator(f"#readings-{index}-value")).to_have_value(reading["anilox_volume"].split()[0])
        expect(page.locator(f"#readings-{index}-transfer")).to_have_value(f"{reading['transfer'] * 100:g}")
        expect(page.locator(f"#readings-{index}-density")).to_have_value(repr(reading["density"]))
    expect(page.get_by_role("radio", name="Anilox volume and transfer")).to_be_checked()
    expect(page.get_by_role("textbox", name="Target density")).to_have_value("1.3")
    expect(page.locator("#transfer")).to_have_value("28")
    volume = page.locator('[data-key="anilox_volume"] data')
    expect(volume).to_have_attribute("value", repr(saved["results"]["anilox_volume"]["value"]))
    expect(page.locator("svg.strength-chart circle.reading")).to_have_count(len(BY_VOLUME))
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]
    page.screenshot(path=str(screenshots / "ink-strength-reopened-phone.png"), full_page=True)

    # Changed (a new target) and saved as a new snippet; the one it came from stays as it was.
    page.get_by_role("textbox", name="Target density").fill("1.25")
    changed = CALCULATIONS["density_volume_for"]({**STRENGTH, "target_density": 1.25})
    expect(volume).to_have_attribute("value", repr(changed["anilox_volume"]["value"]))
    page.get_by_role("button", name="Save this…").click()
    expect(page.get_by_role("heading", name="Save this ink strength")).to_be_visible()
    page.get_by_role("button", name="Save", exact=True).click()
    expect(page.get_by_text("Saved. Anyone on the shop network")).to_be_visible()
    page.screenshot(path=str(screenshots / "ink-strength-reopened-saved-phone.png"), full_page=True)
    newest_id = int(page.url.split("?")[0].rstrip("/").rsplit("/", 1)[1])
    assert newest_id != saved["id"]
    newest = page.request.get(f"/api/v1/snippets/{newest_id}").json()
    assert newest["kind"] == "density_volume_for" and newest["inputs"]["target_density"] == 1.25
    assert len(newest["inputs"]["readings"]) == len(BY_VOLUME)
    first = page.request.get(f"/api/v1/snippets/{saved['id']}").json()
    assert first["version"] == 1 and first["inputs"] == STRENGTH
