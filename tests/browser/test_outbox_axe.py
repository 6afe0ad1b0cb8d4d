"""The phone with no connection after the first load (390 px, service worker on):
an answer worked out on the phone is saved from its own fragment into the
outbox, the outbox page passes axe in light and dark, and back online the
save arrives once. Screenshots: the offline answer with its banner, the outbox
page."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from tests.browser.test_offline_and_budget import wait_for_worker
from tests.browser.test_outbox_browser import snippets_on, wait_for_snippets
from tests.conftest import serving

pytestmark = pytest.mark.browser


def test_an_answer_worked_out_offline_is_saved_through_the_outbox_and_the_outbox_passes_axe(
    open_context, check_axe, tmp_path, screenshots
):
    with serving(tmp_path / "data") as (_process, base):
        context = open_context(PHONE, service_workers="allow", base_url=base, bypass_csp=True)
        page = context.new_page()
        page.goto("/")
        wait_for_worker(page)
        page.goto("/outbox")  # opened once with the server: the worker keeps it
        expect(page.locator("[data-outbox-empty]")).to_be_visible()
        check_axe(page, "/outbox, empty")
        page.goto("/")

        context.set_offline(True)
        # NIST SP 811: 1 in = 25.4 mm, so 4.5 BCM/in² = 4.5 × 1.5500031 = 6.975 cm³/m² → 6.98.
        page.get_by_label("Value").fill("4.5 BCM/in2")
        expect(page.locator(".offline-note")).to_be_visible()
        expect(page.locator('[data-group="volume_per_area"]')).to_contain_text("6.98")
        expect(page.locator("#reach")).to_contain_text("worked out on this phone")
        page.screenshot(path=str(screenshots / "offline-answer-banner-phone.png"), full_page=True)
        page.get_by_role("button", name="Save this…").click()
        expect(page.locator(".outbox-note")).to_contain_text("waits on this phone")
        expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (1)")

        page.locator("#outbox-link").click()
        expect(page.locator(".outbox-item")).to_have_count(1)
        expect(page.locator(".outbox-item").first).to_contain_text("Convert: 4.5 BCM/in²")
        page.screenshot(path=str(screenshots / "outbox-offline-answer-phone.png"), full_page=True)
        check_axe(page, "/outbox, one save waiting")
        assert snippets_on(base) == []

        context.set_offline(False)
        page.get_by_role("button", name="Send now").click()
        expect(page.locator(".outbox-item")).to_have_count(0, timeout=15_000)
        wait_for_snippets(base, 1)
        saved = snippets_on(base)
        assert len(saved) == 1 and saved[0]["kind"] == "equivalents"
        assert saved[0]["inputs"]["quantity"] == "4.5 BCM/in2"
        page.get_by_role("button", name="Send now").click()  # sent again: still once
        expect(page.locator("[data-outbox-status]")).to_be_visible()
        assert len(snippets_on(base)) == 1
