"""The installed app at 390 px with the network gone after the first load: the
converter and the film chain are worked out on the phone, marked so, with
the working and the errors as the server gives them; the job estimate says it
needs the server; with the network back the answers come from the server."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from tests.browser.test_offline_and_budget import wait_for_worker

pytestmark = pytest.mark.browser

NOTE = "Worked out on this phone — the server is out of reach."


def test_converter_and_film_chain_worked_out_on_the_phone(open_context, screenshots):
    context = open_context(PHONE, service_workers="allow")
    page = context.new_page()
    page.goto("/")
    wait_for_worker(page)
    page.goto("/estimate")  # opened once with the network: kept by the worker
    page.goto("/")
    page.wait_for_function(
        """async () => {
            const names = await caches.keys();
            const cache = await caches.open(names[0]);
            return (await cache.keys()).some((request) => request.url.includes('/offline-data.json'))
                && (await cache.keys()).some((request) => request.url.includes('/estimate'));
        }"""
    )
    context.set_offline(True)
    page.reload()

    # 4.5 BCM/in² = 4.5 × 1.550 003 1 cm³/m² = 6.975 cm³/m² (NIST SP 811: 1 in = 25.4 mm exactly)
    page.get_by_label("Value").fill("4.5")
    expect(page.locator(".answer-value")).to_have_text("6.98 cm³/m²")
    expect(page.locator(".offline-note")).to_have_text(NOTE)
    expect(page.locator("#reach")).to_contain_text("worked out on this phone")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("6.98 µm")
    page.get_by_text("How this was worked out").click()
    expect(page.locator(".working .step-formula").first).to_contain_text("× 1.550\u202f003\u202f1")
    page.screenshot(path=str(screenshots / "offline-phone-convert.png"), full_page=True)

    # a unit typed with the value sets the menu, as online
    page.get_by_label("Value").fill("7 cm3/m2")
    expect(page.locator(".answer-value")).to_have_text("4.52 BCM/in²")
    expect(page.get_by_label("Unit", exact=True)).to_have_value("cm3/m2")

    # errors offline read like the server's, beside the same field
    page.get_by_label("Value").fill("abc")
    expect(page.locator("#value-error")).to_have_text("'abc' is not a number; type digits, e.g. 4.5")
    page.screenshot(path=str(screenshots / "offline-phone-convert-error.png"), full_page=True)

    # the film chain: 4 BCM/in² = 6.2 cm³/m² of cells; at 50 % and 50 %, a quarter reaches the substrate
    # (the trade's rule of thumb, common practice): 1.55 µm
    page.goto("/film")
    page.get_by_label("Anilox volume").fill("4")
    page.get_by_label("Anilox to plate %").fill("50")
    page.get_by_label("Plate to substrate %").fill("50")
    expect(page.locator(".headline-value")).to_have_text("1.55 µm")
    expect(page.locator('tr[data-key="plate_wet"]')).to_contain_text("3.1 µm")
    expect(page.locator("#film-result .offline-note")).to_have_text(NOTE)
    page.get_by_text("Ink (optional)").click()
    page.get_by_label("Solids by weight %").fill("40")  # needs the density: the server's words, beside it
    expect(page.locator("#ink_density-error")).to_have_text("the dry coat weight needs the ink's density as well")
    page.get_by_label("Solids by weight %").fill("")
    expect(page.locator(".headline-value")).to_have_text("1.55 µm")
    page.get_by_text("How this was worked out").click()
    expect(page.locator(".working .step-result").last).to_have_text("t₂ = 1.55 µm")
    page.screenshot(path=str(screenshots / "offline-phone-film.png"), full_page=True)

    # the job estimate needs the server, and says so
    page.goto("/estimate")
    expect(page.locator("[data-server-only]")).to_be_visible()
    page.screenshot(path=str(screenshots / "offline-phone-estimate.png"), full_page=True)

    # with the network back, the next answer comes from the server
    context.set_offline(False)
    page.goto("/")
    page.get_by_label("Value").fill("4.5")
    expect(page.locator(".answer-value")).to_have_text("6.98 cm³/m²")
    expect(page.locator(".offline-note")).to_have_count(0)
    expect(page.locator("#reach")).to_be_hidden()
